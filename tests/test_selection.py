"""Sector selection: solve(model, sectors=[...]) (symcluster/blocks/selection.py,
symcluster/verify/selected.py, docs/sectors.md).

Expected values come from the independent Jordan-Wigner reference and the translation
built in tests/helpers_selection.py, which share no code with symcluster.
"""

import math

import mpmath
import pytest
import sympy

import symcluster as sc
from symcluster.errors import InputError, ModelError, VerificationError
from symcluster.pipeline.resources import block_dimensions, estimate_cost
from symcluster.verify.core import verify_spectrum

from helpers_selection import ring_levels

POINT = {"t": 1, "U": sympy.Rational(37, 10)}


def _selected_reference(L, n, s, k=None):
    """Reference energies of states with N = n, spin s (in the sector Sz = s, one state per
    multiplet) and, if given, momentum k (a multiple of pi; k and -k together)."""
    n_up, n_dn = (n + int(2 * s)) // 2, (n - int(2 * s)) // 2
    out = []
    for e, spin, cosk in ring_levels(L, {"t": 1, "U": 3.7}, n_up, n_dn):
        if spin != s:
            continue
        if k is not None and abs(cosk - math.cos(math.pi * k)) > 1e-6:
            continue
        out.append(e)
    return sorted(out)


def _values(spec, qn_filter=None):
    """Sorted float values of the levels, one per state of the multiplet's Sz = S member."""
    out = []
    for lev, (x, _) in zip(spec.levels, [(l.numeric(POINT, digits=20), 0) for l in spec.levels]):
        qn = lev.quantum_numbers
        per = lev.degeneracy // (int(2 * qn["S"]) + 1)
        out.extend([float(x)] * per)
    return sorted(out)


@pytest.mark.parametrize("L, sel, n, s, k", [
    (4, {"N": 4, "S": 0}, 4, 0, None),
    (4, {"N": 3, "S": "1/2", "k": 1}, 3, 0.5, 1),
    (6, {"N": 5, "S": "1/2", "k": 0}, 5, 0.5, 0),
    (6, {"N": 6, "S": 1, "k": "2/3"}, 6, 1, sympy.Rational(2, 3)),
])
def test_selected_levels_are_the_reference_eigenvalues(L, sel, n, s, k):
    # the reference: eigenvalues of the Jordan-Wigner matrix with S and cos k read off the
    # eigenvectors (tests/helpers_selection.py)
    spec = sc.solve(sc.hubbard(sc.ring(L)), sectors=[sel], seed=3)
    want = _selected_reference(L, n, s, None if k is None else float(k))
    got = _values(spec)
    assert len(got) == len(want) > 0
    assert max(abs(a - b) for a, b in zip(got, want)) < 1e-9
    assert all(l.quantum_numbers["N"] == n for l in spec.levels)


def test_a_union_of_selections_equals_the_matching_levels_of_the_full_solve():
    sel = [{"N": 6, "S": 0}, {"N": 5, "S": "1/2", "k": 0}]
    part = sc.solve(sc.hubbard(sc.ring(6)), sectors=sel, seed=2)
    full = sc.solve(sc.hubbard(sc.ring(6)), electrons=[5, 6], seed=2)

    def keyed(levels):
        out = []
        for l in levels:
            qn = l.quantum_numbers
            out.append((qn["N"], qn["S"], qn["irrep"], l.degeneracy,
                        mpmath.nstr(l.numeric(POINT, digits=25), 20)))
        return sorted(out, key=str)
    want = [l for l in full.levels
            if (l.quantum_numbers["N"] == 6 and l.quantum_numbers["S"] == 0)
            or (l.quantum_numbers["N"] == 5 and l.quantum_numbers["S"] == sympy.Rational(1, 2)
                and l.quantum_numbers["k"] == 0)]
    assert keyed(part.levels) == keyed(want)
    # and the reference agrees on the N = 6, S = 0 part (every momentum)
    six = sorted(float(v) for l in part.levels if l.quantum_numbers["N"] == 6
                 for v in [l.numeric(POINT, digits=20)] * l.degeneracy)
    assert max(abs(a - b) for a, b in zip(six, _selected_reference(6, 6, 0))) < 1e-9
    assert part.sectors is not None and part.is_selection and not full.is_selection


def test_selection_by_eta_and_by_sz_without_spin_symmetry():
    # eta = 1 at N = 4 on ring(4): the states eta+ |psi> of the eta = 1 multiplets; count
    # them with the reference: eta^2 multiplets are not separated there, so compare with
    # the full solve's eta = 1 levels (verified against the plain route) instead
    spec = sc.solve(sc.hubbard(sc.ring(4)), sectors=[{"N": 4, "eta": 1}], seed=1)
    assert spec.levels and all(l.quantum_numbers["eta"] == 1 for l in spec.levels)
    full = sc.solve(sc.hubbard(sc.ring(4)), electrons=4, seed=1)
    assert spec.n_states == sum(l.degeneracy for l in full.levels
                                if l.quantum_numbers["eta"] == 1)
    # without spin SU(2) the levels carry Sz: N = 2, Sz = 0 holds all C(4,1)^2 = 16 states
    spec = sc.solve(sc.hubbard(sc.ring(4)), spin=False, sectors=[{"N": 2, "Sz": 0}], seed=1)
    assert spec.n_states == 16


@pytest.mark.parametrize("sel, words", [
    ([{"n": 4}], "unknown"),
    ([{"N": 4, "spin": 0}], "unknown"),
    ([{"N": 9}], "impossible"),
    ([{"N": 4, "S": "1/2"}], "impossible"),
    ([{"N": 4, "S": "1/3"}], "impossible"),
    ([{"N": 4, "S": -1}], "impossible"),
    ([{"N": 4, "k": "1/3"}], "not a momentum"),
    ([{"N": 4, "irrep": "Gamma"}], "not a label"),
    ([{"N": 4, "Sz": 0}], "select by S"),
    ([{"N": 2, "eta": "1/2"}], "impossible"),
    ([{"N": 2, "eta": "5/2"}], "impossible"),
    ([{}], "empty"),
    ([], "selects nothing"),
    ("N=4", "not a list"),
    ([{"N": True}], "not an electron number"),
])
def test_bad_selections_are_refused_with_one_line(sel, words):
    with pytest.raises(InputError) as err:
        sc.solve(sc.hubbard(sc.ring(4)), sectors=sel)
    msg = str(err.value)
    assert words in msg and "\n" not in msg


def test_selection_keys_the_levels_do_not_carry_are_refused():
    with pytest.raises(InputError, match="carry no S"):
        sc.solve(sc.hubbard(sc.ring(4)), spin=False, sectors=[{"N": 2, "S": 0}])
    with pytest.raises(InputError, match="no lattice label"):
        sc.solve(sc.hubbard(sc.ring(4)), lattice=False, sectors=[{"N": 2, "k": 0}])
    with pytest.raises(ModelError, match="either electrons= or sectors="):
        sc.solve(sc.hubbard(sc.ring(4)), electrons=2, sectors=[{"N": 2}])


def test_the_memory_estimate_counts_only_the_selected_blocks():
    from symcluster.blocks.build import plan_symmetries, sectors_to_solve
    from symcluster.blocks.selection import block_needed, normalise_selection
    model = sc.hubbard(sc.ring(8))
    plan = plan_symmetries(model)
    sectors = sectors_to_solve(model.space, plan, [8])
    sel = normalise_selection([{"N": 8, "S": 0, "k": 0}])

    def keep(sector, irrep):
        return block_needed(sel, plan, 8, sector, irrep)
    full = estimate_cost(model.space, sectors, plan)
    part = estimate_cost(model.space, sectors, plan, keep=keep)
    assert part < full
    # the algebra's part: two of ring(8)'s irreps and one spin (S = 0 in (4, 4) and the
    # eta members below it), so far less than a tenth of the cubes of the block sizes
    every = block_dimensions(model.space, sectors, plan)
    kept = block_dimensions(model.space, sectors, plan, keep)
    assert 0 < len(kept) < len(every)
    assert sum(m ** 3 for m in kept) < sum(m ** 3 for m in every) / 10
    # nothing kept: only the fixed part and the detection are left
    none = estimate_cost(model.space, sectors, plan, keep=lambda sector, irrep: False)
    assert none < part


def test_analyses_refuse_a_partial_spectrum():
    from symcluster.analysis.gaps import spin_gap
    from symcluster.analysis.thermo import partition_function
    spec = sc.solve(sc.hubbard(sc.ring(4)), sectors=[{"N": 4, "S": 0}], seed=1)
    # "a quantity that needs data the result does not hold is refused"
    with pytest.raises(ModelError, match="grand-canonical ensemble needs"):
        partition_function(spec)
    with pytest.raises(ModelError, match="only the selected sectors N=4,S=0"):
        partition_function(spec, n_electrons=4)
    with pytest.raises(ModelError, match="only the selected sectors"):
        spin_gap(spec, 4, {"t": 1, "U": 4})
    # a selection of a whole electron number holds that sector: the spin gap is computed
    whole = sc.solve(sc.hubbard(sc.ring(4)), sectors=[{"N": 4}], seed=1)
    assert whole.sectors is not None
    spin_gap(whole, 4, {"t": 1, "U": 4})
    partition_function(whole, n_electrons=4)


def test_outputs_record_the_selection():
    from symcluster.export import format_table, latex_table, spectrum_to_dict
    spec = sc.solve(sc.hubbard(sc.ring(4)), sectors=[{"N": 3, "S": "1/2", "k": 1}], seed=1)
    assert "# selected sectors only: N=3,S=1/2,k=1" in format_table(spec)
    assert "selected sectors only: N=3,S=1/2,k=1" in latex_table(spec)
    assert spectrum_to_dict(spec)["sectors"] == "N=3,S=1/2,k=1"
    full = sc.solve(sc.hubbard(sc.chain(2)), seed=1)
    assert spectrum_to_dict(full)["sectors"] is None


def _large_check(spec, seed=4):
    """verify_spectrum on a selection with float_dim lowered so that ring(6)'s (3, 3)
    sector (400 states) takes the projected Lanczos path."""
    return verify_spectrum(spec, digits=30, seed=seed, lattice=_lattice(spec),
                           float_dim=100, selection=spec.sectors)


def _lattice(spec):
    from symcluster.blocks.build import plan_symmetries
    return plan_symmetries(spec.model).lattice


def test_projected_lanczos_accepts_the_right_levels_and_counts():
    spec = sc.solve(sc.hubbard(sc.ring(6)), sectors=[{"N": 6, "S": 0, "k": 0}], seed=5)
    report = _large_check(spec)
    assert any("Lanczos" in c["check"] and c["sectors"] == 1 for c in report.checks)


def _shift_level(lev, delta):
    """Move one level by delta * t, its polynomial with it (so that the per-level checks,
    closed form against polynomial, still pass)."""
    from symcluster.numeric.implicit import ImplicitRoot
    E, *cs = lev.polynomial.gens
    t = next(c for c in cs if c.name == "t")
    poly = sympy.Poly(lev.polynomial.as_expr().subs(E, E - delta * t), E, *cs)
    if lev.is_closed_form:
        lev.energy = lev.energy + delta * t
    else:
        lev.energy = ImplicitRoot(poly, lev.energy.index)
    lev.polynomial = poly


def test_exact_selected_traces_reject_a_moved_level():
    # mutation test of the exact trace check (Tr P H at each point, from characters and the
    # plain matrices): the lowest selected level moved by t/1000
    spec = sc.solve(sc.hubbard(sc.ring(6)), sectors=[{"N": 6, "S": 0, "k": 0}], seed=5)
    low = min(spec.levels, key=lambda l: l.numeric(POINT))
    _shift_level(low, sympy.Rational(1, 1000))
    with pytest.raises(VerificationError, match="exact trace of H"):
        _large_check(spec)


def test_projected_lanczos_rejects_a_moved_lowest_level():
    # mutation test of the large-sector tier alone: with eta selected there is no exact
    # count or trace (docs/verification.md), so only the projected Lanczos iteration (the
    # (3, 3) sector's 400 states above the lowered float_dim) can see the moved level
    spec = sc.solve(sc.hubbard(sc.ring(6)), sectors=[{"N": 6, "S": 0, "eta": 0, "k": 0}],
                    seed=5)
    _large_check(spec)
    low = min(spec.levels, key=lambda l: l.numeric(POINT))
    _shift_level(low, sympy.Rational(1, 1000))
    with pytest.raises(VerificationError, match="Lanczos"):
        _large_check(spec)


def test_selected_dense_tier_rejects_a_missing_level():
    # a small sector (dense tier): drop one selected level; the count by characters fails
    spec = sc.solve(sc.hubbard(sc.ring(4)), sectors=[{"N": 4, "S": 0}], seed=1)
    spec.levels.pop()
    with pytest.raises(VerificationError, match="selected subspace"):
        verify_spectrum(spec, digits=30, seed=2, lattice=_lattice(spec), selection=spec.sectors)


def test_selected_dense_tier_rejects_a_moved_level():
    spec = sc.solve(sc.hubbard(sc.ring(4)), sectors=[{"N": 4, "S": 0}], seed=1)
    lev = max(spec.levels, key=lambda l: l.numeric(POINT))
    _shift_level(lev, sympy.Rational(1, 1000))
    with pytest.raises(VerificationError, match="selected"):
        verify_spectrum(spec, digits=30, seed=2, lattice=_lattice(spec), selection=spec.sectors)


@pytest.mark.parametrize("text, words", [
    ("N=4,spin=0", "key 'spin' is unknown"),
    ("N=4,S", "is not KEY=VALUE"),
    ("N=4;;N=3", "an empty group"),
    ("N=four", "not an electron number"),
    ("N=4,S=1/3", "impossible"),
    ("N=4,N=3", "given twice"),
    ("N=9", "impossible on 4 sites"),
    ("N=4,k=1/3", "not a momentum"),
    ("N=4,S=__import__('os')", "not a number"),
])
def test_command_line_bad_sectors_exit_2_with_one_line(tmp_path, capsys, text, words):
    from symcluster.cli import main
    from helpers_cli import error_line
    out = tmp_path / "x.json"
    assert main(["levels", "ring", "4", "--sectors", text, "--json", str(out)]) == 2
    line = error_line(capsys, quiet_stdout=True)
    assert words in line
    assert not out.exists()                 # nothing written


def test_command_line_sectors_with_electrons_is_refused(capsys):
    from symcluster.cli import main
    from helpers_cli import error_line
    assert main(["levels", "ring", "4", "--sectors", "N=4", "--electrons", "4"]) == 2
    assert "--sectors and --electrons" in error_line(capsys, quiet_stdout=True)


def test_command_line_sectors_solves_and_records_the_selection(tmp_path, capsys):
    import json
    from symcluster.cli import main
    out = tmp_path / "x.json"
    assert main(["levels", "ring", "4", "--sectors", "N=3,S=1/2,k=1;N=4,S=0,k=0",
                 "--at", "t=1,U=37/10", "--json", str(out)]) == 0
    text = capsys.readouterr().out
    assert "# selected sectors only: N=3,S=1/2,k=1;N=4,S=0,k=0" in text
    doc = json.loads(out.read_text())
    assert doc["sectors"] == "N=3,S=1/2,k=1;N=4,S=0,k=0"
    got = sorted(float(lev["values"]["12"]) for lev in doc["levels"]
                 if lev["quantum_numbers"]["N"] == 3
                 for _ in range(lev["degeneracy"] // 2))
    assert max(abs(a - b) for a, b in zip(got, _selected_reference(4, 3, 0.5, 1.0))) < 1e-9
    assert len(got) == len(_selected_reference(4, 3, 0.5, 1.0))


@pytest.mark.parametrize("model, sel, full_options", [
    (sc.heisenberg(sc.ring(6)), {"S": 0, "k": 0}, {}),
    (sc.hubbard(sc.ring(4)), {"N": 3, "Sz": "-1/2", "k": "1/2"}, {"electrons": 3}),
])
def test_selection_on_spin_models_and_without_spin_symmetry(model, sel, full_options):
    # the selection equals the matching levels of the full solve (whose levels the suite
    # checks against independent references); the verification's projectors act on the
    # spin space and on Sz-labelled levels too
    spin = "Sz" not in sel
    part = sc.solve(model, sectors=[sel], spin=spin, seed=3)
    full = sc.solve(model, spin=spin, seed=3, **full_options)
    point = {s.name: v for s, v in zip(full.symbols, (1, sympy.Rational(37, 10)))}
    keys = [k for k in sel if k != "k"]

    def wanted(l):
        qn = l.quantum_numbers
        ks = qn["k"] if isinstance(qn["k"], tuple) else (qn["k"],)
        return all(qn[k] == sympy.Rational(sel[k]) for k in keys) and any(
            x == sympy.Rational(sel["k"]) * sympy.pi for x in ks)

    def values(levels):
        return sorted(mpmath.nstr(l.numeric(point, digits=25), 18) for l in levels
                      for _ in range(l.degeneracy))
    assert part.levels and values(part.levels) == values([l for l in full.levels if wanted(l)])


def test_dense_selected_eigenvalues_keep_close_distinct_eigenvalues_apart():
    # found by worked/ring_ground_sector.py at U/t = 0.02: two distinct eigenvalues 5e-9
    # apart (relative), one selected, must not be merged into their mean
    import numpy as np
    from symcluster.verify.selected import selected_eigenvalues
    rng = np.random.default_rng(1)
    q, _ = np.linalg.qr(rng.standard_normal((6, 6)))
    vals = np.array([-1.0, 0.0, 5e-9, 5e-9, 0.5, 1.0])       # 5e-9 twice: one eigenspace
    h = q @ np.diag(vals) @ q.T
    pick = q[:, [2, 4]]                                     # one of the pair, and 0.5
    ev, scale = selected_eigenvalues(h, lambda x: pick @ (pick.T @ x))
    assert scale == 1.0 and len(ev) == 2
    assert abs(ev[0] - 5e-9) < 1e-14 and abs(ev[1] - 0.5) < 1e-14
    pick = q[:, [1]]                                        # 0, next to the pair at 5e-9
    ev, _ = selected_eigenvalues(h, lambda x: pick @ (pick.T @ x))
    assert len(ev) == 1 and abs(ev[0]) < 1e-14


def test_selection_in_a_field():
    # a uniform field splits the multiplets (levels carry S and Sz); the S^z sectors do not
    # share energies, so the exact traces take no differences of them.  The selection
    # equals the matching levels of the full solve.
    model = sc.with_field(sc.hubbard(sc.ring(4)))
    part = sc.solve(model, sectors=[{"N": 3, "S": "1/2", "Sz": "-1/2"}], seed=2)
    full = sc.solve(model, electrons=3, seed=2)
    point = {"t": 1, "U": sympy.Rational(37, 10), "h": sympy.Rational(2, 7)}

    def values(levels):
        return sorted(mpmath.nstr(l.numeric(point, digits=25), 18) for l in levels
                      for _ in range(l.degeneracy))
    want = [l for l in full.levels if l.quantum_numbers["S"] == sympy.Rational(1, 2)
            and l.quantum_numbers["Sz"] == sympy.Rational(-1, 2)]
    assert part.levels and values(part.levels) == values(want)
