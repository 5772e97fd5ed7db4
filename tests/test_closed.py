"""Closed forms written from python-flint coefficient algebra (symcluster/algebra/closed.py).

The values of the forms are checked against numerical roots in tests/test_roots.py; here:
the forms are the ones derived by hand, and they are in sympy's canonical form, so that
rebuilding them (as the JSON reader and any sympy manipulation do) changes nothing.
"""

import random

import mpmath
import pytest
import sympy

from symcluster.algebra.closed import closed_form_roots

E, t, U = sympy.symbols("E t U", real=True)
GENS = (E, t, U)


def _rep(expr):
    return {m: int(c) for m, c in sympy.Poly(expr, *GENS).as_dict().items()}


def _rebuild(expr):
    """The same tree rebuilt bottom-up with sympy's evaluating constructors."""
    if not expr.args:
        return expr
    return expr.func(*[_rebuild(a) for a in expr.args])


def test_cubic_of_the_four_ring_has_the_hand_derived_acos_argument():
    # E^3 - U E^2 - 16 t^2 E + 8 U t^2 (a block of the half-filled 4-ring): depressed,
    # p = -(U^2 + 48 t^2)/3 and q = -2U^3/27 + 8 U t^2/3 (derived by hand), so
    # rho = sqrt(U^2 + 48 t^2)/3 and cos(theta) = -q / (2 rho^3).
    roots = closed_form_roots(_rep(E**3 - U * E**2 - 16 * t**2 * E + 8 * U * t**2), GENS)
    args = {a.args[0] for r in roots for a in r.atoms(sympy.acos)}
    assert args == {(U**3 - 36 * U * t**2) / (U**2 + 48 * t**2) ** sympy.Rational(3, 2)}
    assert all(r.has(sympy.sqrt(U**2 + 48 * t**2)) for r in roots)


def test_quadratic_form_of_the_dimer_singlets():
    # E^2 - U E - 4 t^2: (U -+ sqrt(U^2 + 16 t^2)) / 2 (the dimer, references.md)
    roots = closed_form_roots(_rep(E**2 - U * E - 4 * t**2), GENS)
    Delta = sympy.sqrt(U**2 + 16 * t**2)
    assert roots == [U / 2 - Delta / 2, U / 2 + Delta / 2]


def _real_rooted(deg, rng):
    """Random integer polynomial in E with roots a_i t + b_i U (real-rooted, reducible),
    and its roots."""
    roots = [rng.randint(-4, 4) * t + rng.randint(-4, 4) * U for _ in range(deg)]
    return sympy.expand(sympy.Mul(*[E - r for r in roots])), roots


@pytest.mark.parametrize("deg", [1, 2, 3, 4])
def test_forms_are_canonical_and_give_the_roots(deg):
    rng = random.Random(deg)
    for _ in range(8):
        P, exact = _real_rooted(deg, rng)
        roots = closed_form_roots(_rep(P), GENS)
        assert len(roots) == deg
        for r in roots:
            assert _rebuild(r) == r                  # canonical: rebuilding is a no-op
        # the multiset of values is the multiset of roots at a generic point
        pt = {t: sympy.Rational(rng.randint(1, 9), 7), U: sympy.Rational(rng.randint(-9, 9), 5)}
        want = sorted(r.subs(pt) for r in exact)
        with mpmath.workdps(40):
            got = sorted(complex(sympy.N(r.subs(pt), 40)).real for r in roots)
        assert all(abs(float(w) - g) < 1e-9 * (1 + abs(float(w))) for w, g in zip(want, got))


def _symmetric_charpoly_factors(rng, n):
    """Irreducible factors (integer dicts) of det(E - A) for a random symmetric A whose
    entries are a t + b U: real-rooted at every real point, so every form applies."""
    A = sympy.zeros(n, n)
    for i in range(n):
        for j in range(i, n):
            A[i, j] = A[j, i] = rng.randint(-3, 3) * t + rng.randint(-2, 2) * U
    _, facs = sympy.factor_list((E * sympy.eye(n) - A).det(method="berkowitz"), E, t, U)
    return [_rep(f) for f, _ in facs if sympy.Poly(f, E).degree() >= 1]


@pytest.fixture
def evaluating():
    import symcluster.algebra.closed as closed
    closed.EVALUATE = True
    yield
    closed.EVALUATE = False


def _forms(reps, evaluate):
    import symcluster.algebra.closed as closed
    old = closed.EVALUATE
    closed.EVALUATE = evaluate
    try:
        return [closed_form_roots(r, GENS) for r in reps]
    finally:
        closed.EVALUATE = old


def _assert_same_trees(fast, slow):
    """The forms built directly and by sympy's constructors are identical trees, and the
    commutativity the builders state for products of coupling powers is what sympy finds
    on its own trees, node by node."""
    for a, b in zip(fast, slow):
        assert [sympy.srepr(x) for x in a] == [sympy.srepr(x) for x in b]
        for x, y in zip(a, b):
            assert [n.is_commutative for n in sympy.preorder_traversal(x)] == \
                [n.is_commutative for n in sympy.preorder_traversal(y)]


@pytest.mark.parametrize("n", [2, 3, 4])
def test_direct_construction_equals_sympys_evaluating_constructors(n):
    # The builders assemble sympy's canonical trees without evaluating; built again with
    # sympy's own Mul/Add/Pow (EVALUATE) every form must be the identical tree.
    rng = random.Random(100 + n)
    reps = []
    for _ in range(12):
        reps.extend(_symmetric_charpoly_factors(rng, n))
    rng2 = random.Random(7 * n)
    for deg in range(1, n + 1):
        reps.extend(_rep(_real_rooted(deg, rng2)[0]) for _ in range(4))
    reps = [r for r in reps if max(m[0] for m in r) <= 4
            and all(not any(m[1:]) for m in r if m[0] == max(k[0] for k in r))]
    fast = _forms(reps, False)
    slow = _forms(reps, True)
    _assert_same_trees(fast, slow)


def test_products_of_noncommuting_generators_are_left_to_sympy():
    # a ring over non-commutative symbols states nothing: sympy decides (here False)
    from symcluster.algebra.closed import _Ring
    a, b = sympy.symbols("a b", commutative=False)
    ring = _Ring((a, b))
    p = ring.ctx.from_dict({(1, 1): 3, (2, 0): 1})
    expr = ring.expr(p)
    assert expr == 3 * a * b + a**2
    assert any(n.is_Mul and n.is_commutative is False for n in sympy.preorder_traversal(expr))


def test_rings_shared_between_factors_change_no_form():
    # One rings dict for all factors (as a solve passes it): the forms are the trees of
    # each factor written alone, and the sympy evaluating constructors' trees
    rng = random.Random(31)
    reps = []
    for n in (2, 3, 4):
        for _ in range(6):
            reps.extend(_symmetric_charpoly_factors(rng, n))
    reps = [r for r in reps if max(m[0] for m in r) <= 4
            and all(not any(m[1:]) for m in r if m[0] == max(k[0] for k in r))]
    reps = reps + reps[::-1]            # every factor met twice, in both orders
    rings = {}
    shared = [closed_form_roots(r, GENS, rings) for r in reps]
    assert list(rings) == [tuple(GENS[1:])]
    for a, b, c in zip(shared, _forms(reps, False), _forms(reps, True)):
        assert [sympy.srepr(x) for x in a] == [sympy.srepr(x) for x in b] == \
            [sympy.srepr(x) for x in c]


def test_square_roots_of_rationals_are_sympys():
    # _sqrt_rational builds sqrt(p/q) = (s/q) sqrt(r) directly; sympy.sqrt is the reference
    # (compared as trees), including radicands around the size limit where it defers to sympy
    from symcluster.algebra.closed import _SQRT_DIRECT_MAX, _sqrt_rational
    rng = random.Random(5)
    cases = [sympy.Rational(p, q) for p in range(1, 40) for q in range(1, 40)]
    cases += [sympy.Rational(rng.randint(1, 10**6), rng.randint(1, 10**3)) for _ in range(300)]
    cases += [sympy.Rational(4 * 3**18, 7), sympy.Integer(_SQRT_DIRECT_MAX),
              sympy.Integer(_SQRT_DIRECT_MAX + 1), sympy.Rational(2**40 * 3, 5)]
    for c in cases:
        got = _sqrt_rational(c)
        assert sympy.srepr(got) == sympy.srepr(sympy.sqrt(c)), c


def test_structured_quartics_and_cluster_factors_are_built_as_sympy_builds_them():
    # The quartic branches with q = 0 (E^4 + p E^2 + r: r a square or not) and the factors
    # of real cluster spectra (degrees 1-4), fast builders against EVALUATE as above.
    import symcluster as sc
    reps = [_rep(E**4 - 2 * (U**2 + 3 * t**2) * E**2 + 2 * t**4),
            _rep(E**4 - 6 * t**2 * E**2 + U**2 * t**2),
            _rep(E**4 - (U**2 + 10 * t**2) * E**2 + 9 * t**4),
            _rep(E**4 - 2 * U * E**3 - 5 * t**2 * E**2 + U * t**2 * E + t**4)]
    for cluster in (sc.ring(4), sc.chain(4)):
        for lev in sc.solve(sc.hubbard(cluster), seed=3).levels:
            p = lev.polynomial
            if p is not None and p.degree(p.gens[0]) <= 4 and tuple(p.gens) == GENS:
                reps.append({tuple(m): int(c) for m, c in p.as_dict().items()})
    assert len(reps) > 20
    fast = _forms(reps, False)
    slow = _forms(reps, True)
    _assert_same_trees(fast, slow)


def test_eta_shifted_forms_are_the_sums_sympy_builds():
    # add_shift(r, k, s) stands for r + k*s (levels moved by k eta pairs): same tree as
    # sympy's evaluating Add, also where r already holds a multiple of the shift
    import symcluster as sc
    from symcluster.algebra.closed import add_shift
    forms = set()
    for cluster in (sc.ring(4), sc.chain(3)):
        forms.update(lev.energy for lev in sc.solve(sc.hubbard(cluster), seed=2).levels
                     if lev.is_closed_form)
    forms.update([U / 2 - t, -U / 2, U + t * U, 2 * U * t - U])
    assert any(f.coeff(U) != 0 for f in forms)
    for r in sorted(forms, key=sympy.default_sort_key):
        for k in (1, 2, 3):
            for shift in (U, -U, U - 2 * t, 2 * U * t):
                _assert_same_trees([[add_shift(r, k, shift)]], [[r + k * shift]])


def test_unevaluated_functions_are_the_constructors_objects():
    # _unevaluated builds func(arg, evaluate=False) without the constructor: the same tree,
    # hash and nargs, and an object that rebuilds and prints like the constructor's
    from symcluster.algebra.closed import _unevaluated
    t, U = GENS[1:]
    for func in (sympy.cos, sympy.sin, sympy.acos):
        for arg in (t / 3, sympy.acos(U / (2 * t), evaluate=False) / 3 + sympy.pi / 6, U):
            a, b = _unevaluated(func, arg), func(arg, evaluate=False)
            assert type(a) is type(b) and a == b and hash(a) == hash(b)
            assert sympy.srepr(a) == sympy.srepr(b) and a.nargs == b.nargs
            assert a.func(*a.args) == func(arg) and str(a) == str(b)
            assert a.is_real == b.is_real and a.is_commutative == b.is_commutative
