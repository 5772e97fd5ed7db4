"""Implicit roots as sympy objects: printing, substitution, evalf, lambdify.

Reference values come from polynomials with roots known by hand (x^5 - 5x^3 + 4x =
x(x^2 - 1)(x^2 - 4)) and from numpy.roots applied point by point in the test.
"""

import numpy as np
import pytest
import sympy

import symcluster as sc
from symcluster.numeric.implicit import ImplicitRoot
from symcluster.numeric.rootexpr import LevelRoot

E, t, U = sympy.symbols("E t U", real=True)
P = sympy.Poly(E**5 - 5 * E**3 + 4 * E - U * t**4, E, t, U)


def test_an_implicit_root_is_a_sympy_expression():
    r = ImplicitRoot(P, 3)
    expr = sympy.sympify(r)
    assert isinstance(expr, sympy.Expr) and isinstance(expr, LevelRoot)
    assert expr.free_symbols == {t, U}
    # roots -2, -1, 0, 1, 2 at U = 0 (by hand): root 3, counted from 0, is 1
    assert abs(expr.subs({U: 0, t: 1}).evalf(30) - 1) < 1e-28
    assert abs(r.subs({"U": 0, "t": 1}).evalf(20) - 1) < 1e-18


def test_latex_uses_words_of_our_own_and_not_e():
    tex = sympy.latex(ImplicitRoot(P, 0))
    assert tex.startswith(r"\text{root } 0 \text{ of }")
    assert r"\epsilon^{5}" in tex and "E^{" not in tex
    assert r"\mathtt" not in tex and r"\operatorname" not in tex


def test_evalf_at_an_irrational_point_matches_numpy():
    r = ImplicitRoot(P, 4).as_expr().subs({t: 1, U: sympy.sqrt(2)})
    want = max(np.roots([1, 0, -5, 0, 4, -np.sqrt(2)]).real)
    assert abs(float(r.evalf(30)) - want) < 1e-12


def test_lambdify_over_an_array_matches_numpy_roots_point_by_point():
    f = sympy.lambdify((t, U), ImplicitRoot(P, 2).as_expr(), "numpy")
    us = np.linspace(-1.0, 1.0, 101)
    got = f(1.0, us)
    assert got.shape == us.shape
    want = [np.sort(np.roots([1, 0, -5, 0, 4, -u]).real)[2] for u in us]
    assert np.max(np.abs(got - want)) < 1e-12


def test_a_level_substitutes_by_name_and_via_the_spectrum_symbol():
    spec = sc.solve(sc.hubbard(sc.chain(2)))
    lev = min(spec.select(N=2), key=lambda l: l.numeric({"t": 1, "U": 4}))
    # dimer singlet ground state, from memory: (U - sqrt(U^2 + 16 t^2))/2
    want = (4 - sympy.sqrt(32)) / 2
    assert sympy.simplify(lev.subs({"U": 4, "t": 1}) - want) == 0
    assert sympy.simplify(lev.expr.subs({spec.symbol("U"): 4, spec.symbol("t"): 1}) - want) == 0
    # a plain (non-real) Symbol is a different symbol: nothing is substituted
    assert lev.expr.subs(sympy.Symbol("U"), 4) == lev.expr
    with pytest.raises(sc.ModelError, match="unknown coupling"):
        spec.symbol("V")


def test_a_root_that_does_not_exist_at_a_point_is_an_error():
    # x^2 + U has no real root for U > 0
    r = LevelRoot(1, 1, 0, U)
    with pytest.raises(sc.ModelError, match="real roots"):
        r.subs(U, 1).evalf()
