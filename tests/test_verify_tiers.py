"""Each verification tier catches a wrong input that only it can catch (docs/verification.md).

Every test starts from a spectrum that passes, changes it so that every other tier still
passes, and asserts the error of the tier under test.  The wrong inputs are derived by
hand in the comments (Vieta's formulas and Newton's identities: any algebra text).
"""

from fractions import Fraction

import mpmath
import pytest
import sympy

import symcluster as sc
from symcluster.verify.large import check_large_sector
from symcluster.verify.plain import sector_matrix
from symcluster.errors import VerificationError
from symcluster.verify.core import verify_spectrum


def _gens(spec):
    lev = next(l for l in spec.levels if l.polynomial is not None)
    return lev.polynomial.gens          # (E, couplings...)


def test_certified_eigenvalue_tier_catches_levels_with_the_right_traces():
    # Hubbard dimer, N = 2, sector (1, 1) (dimension 4 <= MP_DIM): levels 0 (the triplet's
    # Sz = 0 member), U, and the roots of E^2 - U E - 4 t^2.  Replace U by U + t and the
    # quadratic by E^2 - (U - t) E - 3 t^2: the sum stays (U + t) + (U - t) + 0 = 2U, and the
    # sum of squares (U + t)^2 + (U - t)^2 + 6 t^2 = 2 U^2 + 8 t^2 is that of
    # U^2 + (U^2 + 8 t^2) (Vieta: r1^2 + r2^2 = e1^2 - 2 e2).  The sum rules, the root
    # checks and the counting pass; only the eigenvalues of the sector can tell.
    spec = sc.solve(sc.hubbard(sc.chain(2)), electrons=2, seed=1)
    verify_spectrum(spec, electrons=[2], seed=5)
    E, t, U = _gens(spec)
    quad = [l for l in spec.levels if l.polynomial.degree(E) == 2]
    lin = next(l for l in spec.levels if l.energy == U)
    assert len(quad) == 2
    lin.energy, lin.polynomial = U + t, sympy.Poly(E - U - t, E, t, U)
    wrong = sympy.Poly(E**2 - (U - t) * E - 3 * t**2, E, t, U)
    root = sympy.sqrt((U - t) ** 2 + 12 * t**2)
    for lev, sign in zip(quad, (-1, 1)):
        lev.energy, lev.polynomial = ((U - t) + sign * root) / 2, wrong
    with pytest.raises(VerificationError, match="differ from the eigenvalues of the sector"):
        verify_spectrum(spec, electrons=[2], seed=5)


def _quartic_levels(spec):
    E, t, U = _gens(spec)
    levels = [l for l in spec.levels if l.polynomial.degree(E) == 4]
    assert len({id(l.polynomial) for l in levels}) == 1 and len(levels) == 4
    return levels, (E, t, U)


def _wrong_quartic(levels, gens):
    # ring(4), N = 3: P = E^4 - 2U E^3 + (U^2 - 16t^2) E^2 + 16 t^2 U E - 3 t^2 U^2, roots
    # U/2 +- sqrt(A +- t sqrt(3U^2 + 64t^2)), A = U^2/4 + 8t^2, i.e. with x = E - U/2,
    # x^4 - (U^2/2 + 16t^2) x^2 + U^4/16 + U^2 t^2.  Lowering only the constant term by
    # t^2 U^2 gives x^2 = A +- 2t sqrt(U^2 + 16t^2) (quadratic formula), real roots for all
    # couplings; the top three coefficients, all that the sum rules see, are unchanged
    E, t, U = gens
    wrong = sympy.Poly(E**4 - 2 * U * E**3 + (U**2 - 16 * t**2) * E**2 + 16 * t**2 * U * E
                       - 4 * t**2 * U**2, E, t, U)
    a = U**2 / 4 + 8 * t**2
    b = 2 * t * sympy.sqrt(U**2 + 16 * t**2)
    forms = [U / 2 - sympy.sqrt(a + b), U / 2 - sympy.sqrt(a - b),
             U / 2 + sympy.sqrt(a - b), U / 2 + sympy.sqrt(a + b)]
    for lev, form in zip(levels, forms):
        lev.energy, lev.polynomial = form, wrong


def test_sector_charpoly_tier_catches_a_wrong_constant_term():
    # the N = 3 sectors (2, 1) and (1, 2) have dimension 24 (MP_DIM < 24 <= EXACT_DIM): the
    # forms are roots of their (wrong) polynomial and distinct, the sum rules hold; only the
    # exact characteristic polynomial of the sector differs
    spec = sc.solve(sc.hubbard(sc.ring(4)), electrons=3, lattice=False, seed=2)
    verify_spectrum(spec, electrons=[3], seed=7)
    _wrong_quartic(*_quartic_levels(spec))
    with pytest.raises(VerificationError, match="characteristic polynomial"):
        verify_spectrum(spec, electrons=[3], seed=7)


def test_large_sector_power_traces_catch_a_wrong_constant_term():
    # the same wrong quartic in sectors above a lowered float_dim (24 > 10): no eigenvalue
    # tier runs there; the exact Tr H^3, Tr H^4 at the point do not match (the sum rules,
    # m = 1, 2, still hold)
    spec = sc.solve(sc.hubbard(sc.ring(4)), electrons=3, lattice=False, seed=2)
    verify_spectrum(spec, electrons=[3], seed=7, float_dim=10)
    entry = next(c for c in spec.verification.checks if c["check"].startswith("large sectors"))
    assert entry["sectors"] == 2 and entry["scope"] == "sectors with dim > 10"
    _wrong_quartic(*_quartic_levels(spec))
    with pytest.raises(VerificationError, match=r"Tr H\^[34]"):
        verify_spectrum(spec, electrons=[3], seed=7, float_dim=10)


def test_heisenberg_ring_verifies_through_the_large_sector_path():
    # Heisenberg ring(8): with spin SU(2) proven, the sectors Sz = 0, 1 (70, 56 states) above
    # float_dim = 30 take the power traces and Lanczos (Sz = -1 is their spin-flip image);
    # the traces agree to the 30 digits of the values, Lanczos converges
    spec = sc.solve(sc.heisenberg(sc.ring(8)), seed=3)
    verify_spectrum(spec, seed=4, float_dim=30, proven=("spin",))
    entry = next(c for c in spec.verification.checks if c["check"].startswith("large sectors"))
    assert entry["sectors"] == 2
    assert entry["worst"] < 1e-30 and entry["lanczos_residual"] < 1e-8


def test_lanczos_catches_levels_with_the_right_power_traces():
    # Open chain of 5 sites, one electron: eigenvalues -2t cos(k pi / 6), k = 1..5
    # (tight binding, e.g. Ashcroft & Mermin ch. 10), roots of x^5 - 4t^2 x^3 + 3t^4 x.
    # Adding t^5 / 2 to the constant term keeps e1..e4, so by Newton's identities the power
    # sums p1..p4 (the traces Tr H^m, m <= 4) are unchanged, and the five roots stay real
    # (|t^5/2| is below the local extrema 1.03 t^5 and 1.43 t^5 of the quintic); the lowest
    # moves, which only the Lanczos comparison sees
    h = sector_matrix(sc.hubbard(sc.chain(5)), 1, 0)
    t = sympy.Rational(3, 7)
    point = {"t": t, "U": sympy.Rational(5, 2)}
    with mpmath.workdps(60):
        tv = mpmath.mpf(3) / 7
        right = mpmath.polyroots([1, 0, -4 * tv**2, 0, 3 * tv**4, 0], maxsteps=200, extraprec=200)
        wrong = mpmath.polyroots([1, 0, -4 * tv**2, 0, 3 * tv**4, tv**5 / 2], maxsteps=200,
                                 extraprec=200)
        right = [(mpmath.re(x), 1) for x in right]
        wrong = [(mpmath.re(x), 1) for x in wrong]
    check_large_sector(h, [right], [point], (1, 0), 30)
    with pytest.raises(VerificationError, match="lowest level"):
        check_large_sector(h, [wrong], [point], (1, 0), 30)


@pytest.mark.parametrize("relative, caught", [(Fraction(1, 10**25), True),
                                               (Fraction(1, 10**40), False)])
def test_root_check_tolerance(relative, caught):
    # a cubic's closed form off by 1e-25 relative at 30 digits: in the N = 2 sector (1, 1) of
    # ring(4) (dimension 16) the characteristic polynomial tier compares polynomials, not
    # values, the sum rules are symbolic and the distinct-roots disks are far apart: only
    # the root check (backward error below 1e-30) sees it, and it would not with a tolerance
    # ten orders looser (1e-20).  Off by 1e-40 (below the 35 digits the values are
    # evaluated with) it must pass: the tolerance is not tighter than the evaluation.
    spec = sc.solve(sc.hubbard(sc.ring(4)), electrons=2, lattice=False, seed=2)
    E = _gens(spec)[0]
    lev = next(l for l in spec.levels if l.polynomial.degree(E) == 3)
    lev.energy = lev.energy * (1 + sympy.Rational(relative.numerator, relative.denominator))
    if caught:
        with pytest.raises(VerificationError, match="is not a root of its polynomial"):
            verify_spectrum(spec, electrons=[2], seed=6)
    else:
        verify_spectrum(spec, electrons=[2], seed=6)


def test_flipped_sz_labels_are_caught_with_spin_symmetry_unused():
    # spin SU(2) holds but is not used (spin=False): the sectors Sz and -Sz have equal
    # spectra, so flipping every Sz label changes no energy check; the levels' basis states
    # (blocks of dimension <= 4) carry their own Sz and must agree
    spec = sc.solve(sc.hubbard(sc.chain(3)), spin=False, seed=2)
    assert all("Sz" in l.quantum_numbers and "S" not in l.quantum_numbers for l in spec.levels)
    verify_spectrum(spec, seed=2)
    for lev in spec.levels:
        lev.quantum_numbers["Sz"] = -lev.quantum_numbers["Sz"]
    with pytest.raises(VerificationError, match="its states have Sz"):
        verify_spectrum(spec, seed=2)


def test_flipped_sz_labels_in_a_field_fail_the_sum_rules():
    # in a field -h sum 2 S^z_i the sectors Sz and -Sz differ by -2h Sz per state: Tr H of
    # sector (0, 1) holds +h per state, which the flipped levels (Sz = +1/2) do not carry
    spec = sc.solve(sc.with_field(sc.hubbard(sc.chain(3))), spin=False, seed=2)
    for lev in spec.levels:
        lev.quantum_numbers["Sz"] = -lev.quantum_numbers["Sz"]
        lev.source = None           # no basis states: the energies alone must catch it
    with pytest.raises(VerificationError, match="sum rule"):
        verify_spectrum(spec, seed=2)


def test_float_tier_split_by_site_permutations_catches_a_wrong_constant_term(monkeypatch):
    # the same wrong quartic with the exact tier lowered below the N = 3 sectors (24 > 10):
    # the float64 tier compares the levels with the eigenvalues of the sector, block by
    # block under the ring's translations; the blocks must show the wrong roots
    import symcluster.verify.core as core
    from symcluster.blocks.build import plan_symmetries
    monkeypatch.setattr(core, "EXACT_DIM", 10)
    spec = sc.solve(sc.hubbard(sc.ring(4)), electrons=3, lattice=False, seed=2)
    lattice = plan_symmetries(sc.hubbard(sc.ring(4))).lattice
    verify_spectrum(spec, electrons=[3], seed=7, lattice=lattice)
    # the last such entry: the solve's own verification wrote the first ones
    entry = [c for c in spec.verification.checks if c["check"].startswith("float64 eigenvalues")]
    assert entry[-1]["split_sectors"] == 2
    _wrong_quartic(*_quartic_levels(spec))
    with pytest.raises(VerificationError, match="differ from float64 eigenvalues"):
        verify_spectrum(spec, electrons=[3], seed=7, lattice=lattice)
