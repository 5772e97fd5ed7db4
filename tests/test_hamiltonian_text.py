"""The Hamiltonian as the outputs print it (Model.sums, Model.hamiltonian_text,
Model.describe and the LaTeX table's H): every term, signs read naturally, one sum per
kind and coefficient."""

from fractions import Fraction

import symcluster as sc
from symcluster.export.latex import latex_table
from symcluster.models.terms import hopping, number_product


def test_tj_in_a_field_reads_with_minus_signs_not_plus_minus():
    text = sc.with_field(sc.t_j(sc.ring(3))).hamiltonian_text()
    assert text == ("-t sum_<ab in {(0,1),(0,2),(1,2)}>,s (c+_a,s c_b,s + h.c.) + J sum_<ab in "
                    "{(0,1),(0,2),(1,2)}> S_a.S_b - J/4 sum_<ab in {(0,1),(0,2),(1,2)}> n_a n_b "
                    "- h sum_a 2 Sz_a")


def test_kanamori_sums_merge_u_prime_and_both_spin_orders():
    sums = sc.kanamori(3).sums()
    # U n n, U' (opposite spins), U' - J (equal spins), spin flip, pair hopping
    assert [(k, sp) for k, sp, _, _ in sums] == [
        ("hubbard_u", None), ("number_product", "opposite"), ("number_product", "same"),
        ("spin_flip", None), ("pair_hopping", None)]
    coeffs = [dict(c) for _, _, c, _ in sums]
    assert coeffs[1] == {"U": 1, "J": -2} and coeffs[2] == {"U": 1, "J": -3}
    assert coeffs[3] == {"J": -1} and coeffs[4] == {"J": 1}


def test_sums_keep_different_spins_or_coefficients_apart():
    cl = sc.chain(2)
    m = sc.make_model(cl, [number_product(0, 0, 1, 1, "W"), number_product(0, 1, 1, 0, "W", 2),
                           hopping(0, 1, "t", spin=0)])
    sums = m.sums()
    assert [sp for _, sp, _, _ in sums] == [(0, 1), (1, 0), 0]
    assert m.hamiltonian_text() == ("W n_0,up n_1,dn + 2*W n_0,dn n_1,up "
                                    "- t (c+_0,up c_1,up + h.c.)")


def test_a_coefficient_of_several_couplings_is_parenthesised_and_cancelling_terms_vanish():
    m = sc.make_model(sc.chain(2), [hopping(0, 1, "t"), hopping(0, 1, "tp", scale=Fraction(3, 2)),
                                    number_product(0, 0, 1, 1, "a"),
                                    number_product(0, 0, 1, 1, "b", -1),
                                    number_product(0, 1, 1, 0, "c"),
                                    number_product(0, 1, 1, 0, "c", -1)])
    assert m.hamiltonian_text() == "(-t - 3*tp/2) sum_s (c+_0,s c_1,s + h.c.) " \
                                   "+ (a - b) n_0,up n_1,dn"


def test_latex_hamiltonian_of_a_heisenberg_ring_and_the_geometry_line():
    spec = sc.solve(sc.heisenberg(sc.ring(4)), executor="serial")
    tex = " ".join(latex_table(spec, point={"J": 1}).split())
    assert (r"\noindent ring(4): 4 sites, 4 bonds; {\raggedright $H = J \sum_{(a,b) \in "
            r"\{(0,1),(0,3),(1,2),(2,3)\}} \mathbf{S}_{a} \cdot \mathbf{S}_{b}$.\par}") in tex
