"""Tests of symcluster.export.exprtree and symcluster.export.jsonio."""

import json
import os

import mpmath

import pytest
import sympy
from hypothesis import HealthCheck, given, settings, strategies as st

from symcluster.errors import InputError, ModelError
from symcluster.export.exprtree import MAX_DEPTH, from_tree, poly_from_tree, to_tree
from symcluster.export.jsonio import (dumps_spectrum, loads_spectrum, read_json,
                                      spectrum_to_dict, write_json)

from helpers_export import DELTA, E, R, StandInRoot, U, t, two_site_spectrum

tp = sympy.Symbol("tp", real=True)
BAD = (sympy.zoo, sympy.nan, sympy.oo, -sympy.oo)


def _leaf():
    return st.one_of(
        st.sampled_from([t, U, tp]),
        st.integers(-6, 6).map(sympy.Integer),
        st.fractions(min_value=-5, max_value=5, max_denominator=7).map(
            lambda f: sympy.Rational(f.numerator, f.denominator)),
        st.just(sympy.pi),
    )


def _grow(children):
    half = st.sampled_from([R(k, 2) for k in (-3, -1, 1, 3)] + [R(2), R(-1), R(1, 3)])
    return st.one_of(
        st.tuples(children, children).map(lambda ab: ab[0] + ab[1]),
        st.tuples(children, children).map(lambda ab: ab[0] * ab[1]),
        st.tuples(children, half).map(lambda ab: ab[0] ** ab[1]),
        children.map(sympy.sqrt),
        children.map(sympy.cos),
        children.map(sympy.acos),
        st.tuples(children, children).map(lambda ab: sympy.atan2(ab[0], ab[1])),
        # unevaluated forms such as factor_terms produces must survive too
        children.map(sympy.factor_terms),
    )


EXPRS = st.recursive(_leaf(), _grow, max_leaves=10).filter(
    lambda e: not any(e.has(b) for b in BAD))


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(EXPRS)
def test_random_expressions_round_trip_exactly(expr):
    tree = to_tree(expr)
    again = from_tree(json.loads(json.dumps(tree)))
    assert again == expr
    assert sympy.srepr(again) == sympy.srepr(expr)


@pytest.mark.parametrize("expr", [
    U / 2 - DELTA / 2,
    sympy.Mul(2, t + U, evaluate=False),
    2 * sympy.sqrt(U**2 + 3 * t**2) / 3 * sympy.cos(
        sympy.acos((U**3 - 9 * U * t**2) / (U**2 + 3 * t**2) ** R(3, 2)) / 3) + U / 3,
    sympy.Integer(10) ** 60 + R(1, 3),
    sympy.I * t + sympy.E,
])
def test_known_expressions_round_trip(expr):
    assert from_tree(json.loads(json.dumps(to_tree(expr)))) == expr


def test_tree_shape_is_documented_form():
    assert to_tree(sympy.sqrt(t)) == {"op": "pow", "args": [{"sym": "t"}, {"rat": "1/2"}]}
    assert to_tree(R(-3, 2)) == {"rat": "-3/2"}
    assert to_tree(sympy.pi) == {"const": "pi"}
    x = sympy.Symbol("x")
    assert to_tree(x) == {"sym": "x", "assume": []}
    assert from_tree(to_tree(x)) == x and from_tree({"sym": "t"}) == t


def test_floats_and_unknown_functions_are_refused_when_writing():
    with pytest.raises(ModelError, match="Float"):
        to_tree(sympy.Float(1.5) * t)
    with pytest.raises(ModelError, match="gamma"):
        to_tree(sympy.gamma(t))


def test_polynomial_and_root_round_trip():
    p = sympy.Poly(E**5 - t**4 * E - U**5, E, t, U)
    assert poly_from_tree(to_tree(p)) == p
    q = sympy.Poly(E**2 / 2 - t, E, t, domain="QQ")
    assert poly_from_tree(json.loads(json.dumps(to_tree(q)))) == q
    root = StandInRoot(p, 3)
    tree = to_tree(root)
    assert tree["root"]["index"] == 3 and tree["root"]["var"] == "E"
    assert from_tree(tree, root_factory=StandInRoot) == root


@pytest.mark.parametrize("tree, words", [
    ({"op": "__import__", "args": [{"int": "1"}]}, "unknown operation"),
    ({"op": "add", "args": [{"int": "1"}]}, "at least 2"),
    ({"int": "1+1"}, "string of digits"),
    ({"int": 3}, "string of digits"),
    ({"rat": "1/0"}, "zero denominator"),
    ({"sym": "os.system"}, "not valid"),
    ({"sym": "t", "assume": ["commutative"]}, "assume"),
    ({"const": "oo"}, "unknown constant"),
    ({"float": "1.5"}, "unknown node"),
    ({"int": "1", "extra": 1}, "unexpected key"),
    ({"op": "mul", "args": [{"int": "2"}, {"root": {}}]}, "top of an energy"),
    ([1, 2], "expected an object"),
    ({"root": {"poly": {"poly": {"gens": [{"sym": "E"}], "domain": "ZZ",
                                 "terms": [[[2], "1"], [[0], "-2"]]}}, "index": 5}},
     "index 5"),
])
def test_malformed_trees_give_input_errors(tree, words):
    with pytest.raises(InputError, match=words):
        from_tree(tree, root_factory=StandInRoot)


def test_deep_nesting_is_refused():
    node = {"sym": "t"}
    for _ in range(MAX_DEPTH + 5):
        node = {"op": "cos", "args": [node]}
    with pytest.raises(InputError, match="deeper than"):
        from_tree(node)


def test_document_has_schema_keys_and_exact_values():
    doc = spectrum_to_dict(two_site_spectrum(), point={"t": 1, "U": 4}, digits=20)
    assert doc["format"] == "symcluster-spectrum" and doc["version"] == 2
    for key in ("model", "levels", "point", "digits", "verification", "symmetries"):
        assert key in doc
    assert doc["model"]["cluster"]["bonds"] == [[0, 1, "t"]]
    assert doc["model"]["couplings"] == ["t", "U"]
    assert doc["point"] == {"t": "1", "U": "4"}
    lev = doc["levels"][0]
    for key in ("energy", "energy_text", "energy_latex", "degeneracy", "quantum_numbers",
                "polynomial", "values"):
        assert key in lev
    n1 = [l for l in doc["levels"] if l["quantum_numbers"]["N"] == 1]
    assert n1[0]["quantum_numbers"]["S"] == "1/2"
    assert n1[0]["values"] == {"20": "-1.0"}
    ground2 = [l for l in doc["levels"] if l["quantum_numbers"]["N"] == 2][0]
    # dimer ground state at t=1, U=4 is 2 - 2*sqrt(2) (formula from memory)
    assert ground2["values"]["20"].startswith("-0.828427124746190097")


def test_json_text_round_trip_reloads_equal_objects():
    spec = two_site_spectrum(with_root=True)
    text = dumps_spectrum(spec, point={"t": R(1, 3), "U": "2.5"}, digits=25)
    doc = loads_spectrum(text, root_factory=StandInRoot)
    assert json.loads(text) == json.loads(json.dumps(json.loads(text)))
    originals = {(l.quantum_numbers["N"], str(l.energy)) for l in spec.levels
                 if l.is_closed_form}
    reloaded = [l for l in doc["levels"] if isinstance(l["energy"], sympy.Basic)]
    assert {(l["quantum_numbers"]["N"], str(l["energy"])) for l in reloaded} == originals
    assert any(l["energy"] == U / 2 - DELTA / 2 for l in reloaded)
    root = [l for l in doc["levels"] if isinstance(l["energy"], StandInRoot)][0]
    assert root["energy"] == spec.levels[-1].energy
    assert root["quantum_numbers"]["Sz"] == R(1, 2)
    # every quantum number comes back as the object that was written
    by_energy = {(l.quantum_numbers["N"], l.energy): l.quantum_numbers for l in spec.levels}
    for entry in doc["levels"]:
        key = (entry["quantum_numbers"]["N"], entry["energy"])
        assert entry["quantum_numbers"] == by_energy[key]
    assert doc["point"] == {"t": R(1, 3), "U": R(5, 2)}
    polys = [l["polynomial"] for l in doc["levels"] if l["polynomial"] is not None]
    assert sympy.Poly(E**2 - U * E - 4 * t**2, E, t, U) in polys


def test_write_and_read_file(tmp_path):
    path = tmp_path / "s.json"
    write_json(two_site_spectrum(), path, point={"t": 1, "U": 4})
    doc = read_json(path)
    assert sum(l["degeneracy"] for l in doc["levels"]) == 16
    assert [p.name for p in tmp_path.iterdir()] == ["s.json"]


def test_failed_write_leaves_old_file_untouched(tmp_path):
    path = tmp_path / "s.json"
    path.write_text("old")
    spec = two_site_spectrum()
    spec.levels[0].energy = sympy.Float(0.5)
    with pytest.raises(ModelError):
        write_json(spec, path)
    assert path.read_text() == "old"
    assert os.listdir(tmp_path) == ["s.json"]


@pytest.mark.parametrize("content, words", [
    ("{not json", "not valid JSON"),
    ("[]", "top level must be a JSON object"),
    ('{"format": "other"}', "'format' is 'other'"),
    ('{"format": "symcluster-spectrum", "version": 9}', "version 9"),
    ('{"format": "symcluster-spectrum", "version": 1, "model": {}, "digits": 3, '
     '"verification": {}}', "'levels' is missing"),
    ('{"format": "symcluster-spectrum", "version": 1, "model": {}, "digits": 3, '
     '"verification": {}, "levels": [{"energy": {"op": "eval", "args": []}, '
     '"degeneracy": 1, "quantum_numbers": {}}]}', r"levels\[0\].*unknown operation"),
])
def test_malformed_files_give_input_errors(tmp_path, content, words):
    path = tmp_path / "bad.json"
    path.write_text(content)
    with pytest.raises(InputError, match=words):
        read_json(path)


def test_missing_file_is_an_input_error(tmp_path):
    with pytest.raises(InputError, match="cannot read"):
        read_json(tmp_path / "nope.json")


def test_version_2_stores_each_polynomial_once_and_reloads_roots():
    # chain(4) has implicit roots (degree > 4): their polynomial is shared by all its roots.
    import symcluster as sc
    from symcluster.numeric import ImplicitRoot
    spec = sc.solve(sc.hubbard(sc.chain(4)), electrons=[3])
    doc = json.loads(dumps_spectrum(spec, point={"t": 1, "U": 4}, digits=30))
    distinct = {l.polynomial for l in spec.levels if l.polynomial is not None}
    assert len(doc["polynomials"]) == len(distinct)
    refs = [l["polynomial"] for l in doc["levels"]]
    assert sorted(set(refs)) == list(range(len(distinct)))
    roots = [l for l in doc["levels"] if "root" in l["energy"]]
    assert roots and all(r["energy"]["root"]["ref"] == r["polynomial"] for r in roots)
    back = loads_spectrum(json.dumps(doc))
    pt = {sympy.Symbol("t", real=True): sympy.Integer(1), sympy.Symbol("U", real=True): 4}
    for entry in back["levels"]:
        if isinstance(entry["energy"], ImplicitRoot):
            assert entry["energy"].poly == entry["polynomial"]
            with mpmath.workdps(30):
                value = entry["energy"].numeric(pt, 30)
                assert abs(value - mpmath.mpf(entry["values"]["30"])) < mpmath.mpf(10) ** -25


@pytest.mark.parametrize("patch, words", [
    ({"polynomial": 7}, "position 0..0"),
    ({"energy": {"root": {"ref": 0, "var": "E", "index": 9}}}, "index 9"),
    ({"energy": {"root": {"ref": 0, "var": "x", "index": 0}}}, "var 'x'"),
    ({"energy": {"root": {"ref": 0, "index": 0}}}, "exactly the keys"),
])
def test_version_2_bad_references_give_input_errors(patch, words):
    poly = {"poly": {"gens": [{"sym": "E"}, {"sym": "t"}], "domain": "ZZ",
                     "terms": [[[2, 0], "1"], [[0, 2], "-1"]]}}
    level = {"energy": {"root": {"ref": 0, "var": "E", "index": 1}}, "degeneracy": 1,
             "quantum_numbers": {"N": 1}, "polynomial": 0}
    level.update(patch)
    doc = {"format": "symcluster-spectrum", "version": 2, "model": {}, "digits": 30,
           "verification": {}, "polynomials": [{"name": "P1", "poly": poly}],
           "levels": [level]}
    with pytest.raises(InputError, match=words):
        loads_spectrum(json.dumps(doc), root_factory=StandInRoot)


def test_version_1_files_are_still_read():
    # version 1 repeated the polynomial inside every level and root node
    poly = {"poly": {"gens": [{"sym": "E"}, {"sym": "t"}], "domain": "ZZ",
                     "terms": [[[2, 0], "1"], [[0, 2], "-1"]]}}
    doc = {"format": "symcluster-spectrum", "version": 1, "model": {}, "digits": 30,
           "verification": {}, "levels": [
               {"energy": {"root": {"poly": poly, "var": "E", "index": 1}}, "degeneracy": 1,
                "quantum_numbers": {"N": 1}, "polynomial": poly}]}
    back = loads_spectrum(json.dumps(doc), root_factory=StandInRoot)
    lev = back["levels"][0]
    assert lev["polynomial"] == sympy.Poly(E**2 - t**2, E, t)
    assert lev["energy"] == StandInRoot(lev["polynomial"], 1)


PI = sympy.pi


def test_momenta_reload_as_exact_multiples_of_pi():
    """k is written as text ("-pi/2") but must come back as the sympy object r*pi."""
    spec = two_site_spectrum()
    momenta = [sympy.Integer(0), PI, (-PI / 2, PI / 2), (R(-2, 3) * PI, R(2, 3) * PI), -PI,
               R(3, 4) * PI, sympy.Integer(0), PI, (-PI / 2, PI / 2), PI]
    for lev, k in zip(spec.levels, momenta):
        lev.quantum_numbers["k"] = k
    doc = loads_spectrum(dumps_spectrum(spec))
    # without a point the levels keep their order within each N (sorted by N, stable)
    order = sorted(range(len(spec.levels)), key=lambda i: (spec.levels[i].quantum_numbers["N"], i))
    for j, i in enumerate(order):
        assert doc["levels"][j]["quantum_numbers"] == spec.levels[i].quantum_numbers
    ks = [doc["levels"][j]["quantum_numbers"]["k"] for j in range(len(order))]
    assert ks[order.index(2)] == (-PI / 2, PI / 2) and isinstance(ks[order.index(2)], tuple)
    assert ks[order.index(3)] == (sympy.Rational(-2, 3) * PI, sympy.Rational(2, 3) * PI)
    assert ks[order.index(0)] == 0 and isinstance(ks[order.index(0)], sympy.Basic)


def test_real_ring_round_trip_keeps_all_quantum_numbers():
    import symcluster as sc
    spec = sc.solve(sc.hubbard(sc.ring(4)), electrons=[1, 2])
    assert any(isinstance(l.quantum_numbers.get("k"), tuple) for l in spec.levels)
    doc = loads_spectrum(dumps_spectrum(spec))
    order = sorted(range(len(spec.levels)), key=lambda i: (spec.levels[i].quantum_numbers["N"], i))
    assert len(doc["levels"]) == len(order)
    for j, i in enumerate(order):
        assert doc["levels"][j]["quantum_numbers"] == spec.levels[i].quantum_numbers


@pytest.mark.parametrize("k", ["pi/0", "sqrt(2)", "__import__('os')", "0*pi", ["pi", 3], []])
def test_bad_momenta_give_input_errors(k):
    doc = json.loads(dumps_spectrum(two_site_spectrum()))
    doc["levels"][0]["quantum_numbers"]["k"] = k
    with pytest.raises(InputError, match="not a momentum"):
        loads_spectrum(json.dumps(doc))


@pytest.mark.parametrize("bad", ["NaN", "Infinity", "-Infinity", "1e999"])
def test_non_finite_numbers_are_refused(tmp_path, bad):
    text = dumps_spectrum(two_site_spectrum())
    assert '"worst_deviation": 1e-40' in text
    path = tmp_path / "s.json"
    path.write_text(text.replace('"worst_deviation": 1e-40', f'"worst_deviation": {bad}'))
    with pytest.raises(InputError, match="not strict JSON"):
        read_json(path)


def test_integers_longer_than_4300_digits_are_written_and_read():
    # Python refuses str(int)/int(str) beyond 4300 digits by default; exact files may not
    big = sympy.Integer(10) ** 5000 + 7                 # "1", 4996 zeros, "7"
    digits = "1" + "0" * 4999 + "7"
    assert to_tree(big) == {"int": digits}
    assert from_tree({"int": digits}) == big
    assert from_tree({"rat": "-" + digits + "/3"}) == -big / 3
    expr = big * t + U / (big + 2)
    assert from_tree(json.loads(json.dumps(to_tree(expr)))) == expr
    # a whole document with such a coefficient in a level and in its polynomial
    spec = two_site_spectrum()
    p = sympy.Poly(E**2 - big * U * E - t**2, E, t, U)
    spec.levels[3].energy = big * U / 2 + sympy.sqrt(big**2 * U**2 + 4 * t**2) / 2
    spec.levels[3].polynomial = p
    doc = loads_spectrum(dumps_spectrum(spec))
    assert p in doc["polynomials"]
    assert any(l["energy"] == spec.levels[3].energy for l in doc["levels"])
    assert any(digits in l["energy_text"] for l in json.loads(dumps_spectrum(spec))["levels"])


def test_integers_beyond_the_reader_limit_name_the_true_reason():
    with pytest.raises(InputError, match="100001 digits, more than the 100000"):
        from_tree({"int": "1" * 100001})
    with pytest.raises(InputError, match="denominator has 100001 digits"):
        from_tree({"rat": "1/" + "3" * 100001})
    with pytest.raises(ModelError, match="at most 100000"):
        to_tree(sympy.Integer(10) ** 100000)


def test_failed_rename_restores_files_that_existed(tmp_path):
    # all files or none: an output renamed over an existing file before a later output
    # fails must be put back (a reviewer's case: the second target is a directory)
    from symcluster.export.jsonio import write_texts_atomic
    a = tmp_path / "a.txt"
    a.write_text("old\n")
    (tmp_path / "d").mkdir()
    with pytest.raises(InputError, match="directory"):
        write_texts_atomic([(a, "new\n"), (tmp_path / "d", "x")])
    assert a.read_text() == "old\n"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["a.txt", "d"]


def test_failed_rename_removes_new_files_and_keeps_old_ones(tmp_path, monkeypatch):
    from symcluster.export import jsonio
    old, new = tmp_path / "old.tex", tmp_path / "new.json"
    old.write_text("kept\n")
    real_replace = os.replace

    def flaky_replace(src, dst):
        if str(dst).endswith("third.txt"):
            raise PermissionError(13, "Permission denied")
        return real_replace(src, dst)

    monkeypatch.setattr(jsonio.os, "replace", flaky_replace)
    with pytest.raises(InputError, match="third.txt"):
        jsonio.write_texts_atomic([(old, "changed\n"), (new, "{}\n"), (tmp_path / "third.txt", "x")])
    monkeypatch.setattr(jsonio.os, "replace", real_replace)
    assert old.read_text() == "kept\n" and not new.exists()
    assert sorted(p.name for p in tmp_path.iterdir()) == ["old.tex"]


def test_restore_that_fails_keeps_the_old_content_and_names_it(tmp_path, monkeypatch):
    # if putting an existing file back fails too, its old content must survive (a
    # reviewer's case: every os.replace after the first fails)
    from symcluster.export import jsonio
    a, b = tmp_path / "a.txt", tmp_path / "b.txt"
    a.write_text("A-old")
    b.write_text("B-old")
    real_replace, calls = os.replace, []

    def failing_after_first(src, dst):
        calls.append(dst)
        if len(calls) > 1:
            raise PermissionError(13, "Permission denied")
        return real_replace(src, dst)

    monkeypatch.setattr(jsonio.os, "replace", failing_after_first)
    with pytest.raises(InputError, match="old content is in") as info:
        jsonio.write_texts_atomic([(a, "A-new"), (b, "B-new")])
    monkeypatch.setattr(jsonio.os, "replace", real_replace)
    kept = [p for p in tmp_path.iterdir() if p.name.startswith(".symcluster-old-")]
    assert len(kept) == 1 and kept[0].read_text() == "A-old" and str(kept[0]) in str(info.value)
    assert b.read_text() == "B-old"


def test_interruption_between_renames_is_undone(tmp_path, monkeypatch):
    from symcluster.export import jsonio
    a, b = tmp_path / "a.txt", tmp_path / "b.txt"
    a.write_text("A-old")
    real_replace = os.replace

    def interrupted(src, dst):
        if str(dst) == str(b):
            raise KeyboardInterrupt
        return real_replace(src, dst)

    monkeypatch.setattr(jsonio.os, "replace", interrupted)
    with pytest.raises(KeyboardInterrupt):
        jsonio.write_texts_atomic([(a, "A-new"), (b, "B-new")])
    monkeypatch.setattr(jsonio.os, "replace", real_replace)
    assert a.read_text() == "A-old" and not b.exists()
    assert sorted(p.name for p in tmp_path.iterdir()) == ["a.txt"]


@pytest.mark.parametrize("bad", [-3, 0, 2.0, "2", True, None])
def test_a_degeneracy_that_is_not_a_positive_integer_is_refused(bad):
    # issue "Reliability", finding 6: a negative degeneracy used to load silently
    doc = json.loads(dumps_spectrum(two_site_spectrum()))
    doc["levels"][0]["degeneracy"] = bad
    with pytest.raises(InputError, match="degeneracy"):
        loads_spectrum(json.dumps(doc))


def test_read_json_stops_at_its_size_limit(tmp_path):
    f = tmp_path / "big.json"
    f.write_text(" " * 2000 + dumps_spectrum(two_site_spectrum()))
    with pytest.raises(InputError, match="larger than 1,000 bytes"):
        read_json(f, max_bytes=1000)
    assert read_json(f)["n_states"] == 16
    with pytest.raises(InputError, match="larger than"):
        read_json("/dev/zero", max_bytes=10_000)
