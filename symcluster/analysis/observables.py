"""Hellmann–Feynman observables of single levels, exactly.

For a level E(λ) of H(λ) = Σ_p λ_p A_p, the Hellmann–Feynman theorem gives
⟨∂H/∂λ⟩ = ∂E/∂λ in the level's eigenstate (average over the level's states
when it is degenerate).  With the conventions of docs/conventions.md:

* ∂E/∂U = ⟨Σ_i n_i↑ n_i↓⟩, the total double occupancy (not per site);
* Σ_b t_b ∂E/∂t_b = ⟨T⟩, the kinetic (hopping) energy, since H is linear in
  every coupling.

Closed-form energies are differentiated directly.  For an energy that is a
root of an irreducible polynomial P(E, λ) the derivative is obtained by
implicit differentiation, ∂E/∂λ = −(∂P/∂λ)/(∂P/∂E), an exact rational
expression in E and the couplings evaluated at the root.

This module also holds the small helpers that the other analysis modules use
to read a level: its polynomial and the coupling symbols by name.
"""

from dataclasses import dataclass

import mpmath
import sympy

from symcluster.errors import ModelError
from symcluster.spectrum import exact_rational

__all__ = ["LevelDerivative", "energy_derivative", "double_occupancy", "kinetic_energy",
           "level_polynomial", "level_symbols"]


def level_symbols(level):
    """Coupling symbols a level depends on (or may depend on), ordered by name."""
    syms = set()
    if level.polynomial is not None:
        syms.update(level.polynomial.gens[1:])
    e = level.energy
    syms.update(e.symbols if hasattr(e, "symbols") else e.free_symbols)
    return tuple(sorted(syms, key=lambda s: s.name))


def find_symbol(symbols, name):
    """The symbol called ``name`` among ``symbols`` (a name or a Symbol may be given)."""
    key = name.name if isinstance(name, sympy.Symbol) else str(name)
    for s in symbols:
        if s.name == key:
            return s
    known = ", ".join(s.name for s in symbols) or "(none)"
    raise ModelError(f"unknown coupling {key!r}; the couplings here are {known}")


_E = sympy.Symbol("E")


def level_polynomial(level):
    """The irreducible polynomial P(E, couplings) of a level, E first.

    Uses ``level.polynomial``; for a closed-form level without one, a rational
    energy p/q gives P = q·E − p.

    Raises
    ------
    ModelError
        If the level carries no polynomial and its energy is not rational in
        the couplings.
    """
    if level.polynomial is not None:
        return level.polynomial
    e = level.energy
    if not hasattr(e, "numeric"):
        syms = sorted(e.free_symbols, key=lambda s: s.name)
        num, den = sympy.fraction(sympy.cancel(sympy.together(e)))
        if all(x.is_polynomial(*syms) for x in (num, den)):
            return sympy.Poly(den * _E - num, _E, *syms)
    raise ModelError(f"level with energy {e} carries no polynomial; build it with "
                     "Level(..., polynomial=Poly(P, E, *couplings))")


def level_value(level, point, digits):
    """Numeric value of a level at an exact point {Symbol: Rational}, as mpmath.mpf."""
    with mpmath.workdps(digits + 5):
        return level.numeric(point, digits=digits + 5)


@dataclass(repr=False)
class LevelDerivative:
    """∂E/∂λ of one level, exact.

    Attributes
    ----------
    level : Level
    coupling : sympy.Symbol
    expr : sympy.Expr
        Closed form in the couplings (``implicit`` False), or a rational
        expression in ``energy_symbol`` and the couplings, to be evaluated at
        E = the level's energy (``implicit`` True).
    implicit : bool
    energy_symbol : sympy.Symbol
    """

    level: object
    coupling: object
    expr: object
    implicit: bool
    energy_symbol: object

    def numeric(self, point, digits=30):
        """Value at an exact point {Symbol: Rational} (all couplings), as mpmath.mpf.

        Raises
        ------
        ModelError
            If ∂P/∂E vanishes there (two branches of the polynomial meet and the
            derivative of this level is not defined); move the point.
        """
        point = _exact_point(point)
        subs = {s: point[s] for s in self.expr.free_symbols if s in point}
        with mpmath.workdps(digits + 10):
            if self.implicit:
                e = level_value(self.level, point, digits + 10)
                subs[self.energy_symbol] = sympy.Float(e, digits + 15)
                num, den = sympy.fraction(self.expr)
                d = sympy.N(den.subs(subs), digits + 15)
                if abs(d) < sympy.Float(10) ** (-(digits + 5)):
                    raise ModelError(f"dE/d{self.coupling} is not defined at {point}: "
                                     "two levels with the same polynomial meet there; "
                                     "evaluate at a nearby point")
                val = sympy.N(num.subs(subs), digits + 15) / d
            else:
                val = sympy.N(self.expr.subs(subs), digits + 15)
            return mpmath.mpf(sympy.Float(sympy.re(val), digits + 10)._mpf_)

    def latex(self):
        return sympy.latex(self.expr, inv_trig_style="full")

    def __repr__(self):
        from symcluster.display import qn_text, short
        return (f"LevelDerivative(dE/d{self.coupling} = {short(sympy.sstr(self.expr))}; "
                f"level {qn_text(self.level.quantum_numbers)})")

    def _repr_latex_(self):
        where = (rf"\ \text{{at }} {sympy.latex(self.energy_symbol)} = E"
                 if self.implicit else "")
        return rf"$\frac{{\partial E}}{{\partial {sympy.latex(self.coupling)}}} = {self.latex()}{where}$"


def energy_derivative(level, coupling):
    """Exact ∂E/∂λ of a level (Hellmann–Feynman: ⟨∂H/∂λ⟩ in that level).

    Parameters
    ----------
    level : Level
    coupling : str or sympy.Symbol
        Name of the coupling λ, e.g. ``"U"``.

    Returns
    -------
    LevelDerivative

    Examples
    --------
    >>> import sympy
    >>> from symcluster.spectrum import Level
    >>> t, U, E = sympy.symbols("t U E", real=True)
    >>> lev = Level(U - t, 2, {"N": 3}, sympy.Poly(E - U + t, E, t, U))
    >>> energy_derivative(lev, "U").expr
    1
    """
    syms = level_symbols(level)
    lam = find_symbol(syms, coupling)
    e = level.energy
    if not hasattr(e, "numeric"):
        return LevelDerivative(level, lam, sympy.diff(e, lam), False, None)
    P = level_polynomial(level)
    Es = P.gens[0]
    expr = sympy.cancel(-P.diff(lam).as_expr() / P.diff(Es).as_expr())
    return LevelDerivative(level, lam, expr, True, Es)


def double_occupancy(level, coupling="U"):
    """⟨Σ_i n_i↑ n_i↓⟩ of a level = ∂E/∂U (total over sites). See energy_derivative."""
    return energy_derivative(level, coupling)


def _exact_point(point):
    """{Symbol: value} with every value exact (spectrum.to_rational: 0.1 is 1/10)."""
    return {s: exact_rational(str(s), v) for s, v in point.items()}


def kinetic_energy(level, point, hoppings=("t",), digits=30):
    """⟨T⟩ = Σ_b t_b ∂E/∂t_b of a level at an exact point, as mpmath.mpf.

    Parameters
    ----------
    level : Level
    point : dict
        Exact point {Symbol: Rational} with every coupling.
    hoppings : sequence of str
        Names of the hopping couplings (bond labels).
    digits : int
    """
    syms = level_symbols(level)
    point = _exact_point(point)
    with mpmath.workdps(digits + 5):
        total = mpmath.mpf(0)
        for name in hoppings:
            s = find_symbol(syms, name)
            total += mpmath.mpf(sympy.Float(point[s], digits + 10)._mpf_) * \
                energy_derivative(level, s).numeric(point, digits)
        return +total
