"""sc.load: a JSON result back into a Spectrum that every analysis accepts, exactly.

Expected values come from the independent Jordan-Wigner reference (tests/reference_fock.py)
or from two-site formulas written in tests/helpers_export.py (from memory); the round trip
itself is checked as an invariant (reloaded objects equal the written ones).
"""


import collections
import json

import pytest
import sympy

import symcluster as sc
from symcluster.analysis import charge_gap, thermo_table, transitions
from symcluster.errors import InputError
from symcluster.export import dumps_spectrum, latex_table, write_json

from reference_fock import FockReference, expand, max_deviation

t, U = sympy.symbols("t U", real=True)


def _same_levels(a, b):
    """Equal as multisets of (degeneracy, quantum numbers, energy, polynomial), compared by
    sympy's structural equality (hash and ==), not by printing: printing 10,000 cube
    levels takes minutes."""
    def keys(spec):
        return collections.Counter(
            (l.degeneracy, tuple(sorted((k, str(v)) for k, v in l.quantum_numbers.items())),
             l.energy, l.polynomial) for l in spec.levels)
    assert keys(a) == keys(b)


@pytest.mark.parametrize("make", [lambda: sc.hubbard(sc.chain(2)),
                                  lambda: sc.hubbard(sc.ring(4)),
                                  lambda: sc.heisenberg(sc.ring(4))])
def test_small_clusters_round_trip_exactly(tmp_path, make):
    spec = sc.solve(make())
    path = tmp_path / "r.json"
    write_json(spec, path)
    back = sc.load(path)
    assert isinstance(back, sc.Spectrum)
    assert back.model.name == spec.model.name
    assert back.symbols == spec.symbols
    assert back.n_states == spec.n_states
    _same_levels(spec, back)
    # writing the reloaded spectrum again gives the same document (timings aside)
    first, again = json.loads(dumps_spectrum(spec)), json.loads(dumps_spectrum(back))
    assert first["levels"] == again["levels"]
    assert first["polynomials"] == again["polynomials"]


def test_reloaded_ring_matches_the_independent_reference(tmp_path):
    spec = sc.solve(sc.hubbard(sc.ring(4)))
    write_json(spec, tmp_path / "ring.json")
    back = sc.load(tmp_path / "ring.json")
    ref = FockReference(4, [(0, 1, "t"), (1, 2, "t"), (2, 3, "t"), (0, 3, "t")])
    point = {"t": 1, "U": sympy.Rational(7, 2)}
    got = expand(back.numeric(point, digits=20))
    assert max_deviation(got, ref.eigenvalues({"t": 1.0, "U": 3.5})) < 1e-9


def test_every_analysis_accepts_a_reloaded_spectrum(tmp_path):
    spec = sc.solve(sc.hubbard(sc.chain(2)))
    write_json(spec, tmp_path / "d.json")
    back = sc.load(tmp_path / "d.json")
    # dimer, from memory: E0(1) = -t, E0(2) = (U - sqrt(U^2 + 16 t^2))/2, E0(3) = U - t,
    # so the charge gap E0(3) + E0(1) - 2 E0(2) = sqrt(U^2 + 16 t^2) - 2 t ... at t=1, U=3: 3
    gap = charge_gap(back, 2, {"t": 1, "U": 3})
    assert abs(float(gap.value) - 3.0) < 1e-12
    rows = thermo_table(back, {"t": 1, "U": 3}, [1], n_electrons=2)
    assert len(rows) == 1
    # N = 2 ground state: the singlet stays lowest for U > 0 (no transition, from memory)
    assert transitions(back, 2, "U", (0, 10), {"t": 1}) == []
    assert "\\begin{longtable}" in latex_table(back, {"t": 1, "U": 3})


def test_a_model_no_family_rebuilds_reloads_as_saved_data(tmp_path):
    model = sc.make_model(sc.chain(2), [sc.models.terms.hopping(0, 1, "t"),
                                        sc.models.terms.onsite(0, "eps")])
    spec = sc.solve(model)
    write_json(spec, tmp_path / "c.json")
    back = sc.load(tmp_path / "c.json")
    assert [s.name for s in back.symbols] == [s.name for s in spec.symbols]
    assert back.model.hamiltonian_text() == model.hamiltonian_text()
    _same_levels(spec, back)


def test_a_bad_file_is_an_input_error(tmp_path):
    (tmp_path / "x.json").write_text('{"format": "other"}')
    with pytest.raises(InputError, match="format"):
        sc.load(tmp_path / "x.json")


def test_negative_non_integer_rational_coefficients_keep_their_sign(tmp_path):
    """Planted bug of the issue: -3/2 written as 3/2 (or -5/7 as 5/7) in the round trip."""
    E = sympy.Symbol("E", real=True)
    p = sympy.Poly(E**2 - sympy.Rational(3, 2) * U * E - sympy.Rational(5, 7) * t**2, E, t, U)
    level = sc.Level(sympy.Rational(-3, 4) * U - sympy.Rational(1, 3) * t, 1, {"N": 2}, p)
    spec = sc.Spectrum(sc.hubbard(sc.chain(2)), [level])
    write_json(spec, tmp_path / "p.json")
    back = sc.load(tmp_path / "p.json").levels[0]
    assert back.polynomial == p
    assert back.polynomial.coeff_monomial(E * U) == sympy.Rational(-3, 2)
    assert back.polynomial.coeff_monomial(t**2) == sympy.Rational(-5, 7)
    assert back.energy == sympy.Rational(-3, 4) * U - sympy.Rational(1, 3) * t


def test_a_negative_value_keeps_its_minus_sign_in_the_latex_table():
    """Planted bug of the issue: a negative value printed without its sign."""
    level = sc.Level(-t - U / 7, 1, {"N": 1})
    spec = sc.Spectrum(sc.hubbard(sc.chain(2)), [level])
    tex = latex_table(spec, {"t": 1, "U": 0})
    row = next(line for line in tex.splitlines() if line.startswith("$1$"))
    # the value stands in two cells aligned on the decimal point: integer part, fraction
    cells = [c.strip() for c in row.rstrip("\\ ").split("&")]
    assert cells[-2] == "-1" and cells[-1].lstrip(".").strip("0") == ""


@pytest.mark.slow
def test_cube_result_round_trips_exactly(tmp_path):
    """The 8-site cube (about 30 s to solve): written, reloaded, equal level by level."""
    spec = sc.solve(sc.hubbard(sc.cube()))
    write_json(spec, tmp_path / "cube.json")
    back = sc.load(tmp_path / "cube.json")
    assert back.n_states == 4 ** 8
    _same_levels(spec, back)
    pt = {"t": 1, "U": sympy.Rational(13, 3)}
    a = back.numeric(pt, digits=20)
    b = spec.numeric(pt, digits=20)
    assert max_deviation(expand(a), expand(b)) < 1e-18
