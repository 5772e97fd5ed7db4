"""Shared fixtures of the output tests (test modules import from here, never from each
other): a two-site spectrum written out by hand.  Two-site levels for
H = -t sum_s (c+_1s c_2s + h.c.) + U sum_i n_i,up n_i,dn, from memory: N=1: -t, +t
(doublets); N=2: 0 (triplet), U, (U -/+ sqrt(U^2 + 16 t^2))/2; N=3: U - t, U + t; N=4: 2U."""

import mpmath
import sympy

from symcluster.lattice.clusters import chain
from symcluster.models import hubbard
from symcluster.spectrum import Level, Spectrum, VerificationReport

t, U = sympy.symbols("t U", real=True)
E = sympy.Symbol("E", real=True)
DELTA = sympy.sqrt(U**2 + 16 * t**2)
R = sympy.Rational


class StandInRoot:
    """Minimal object following the ImplicitRoot protocol (for tests only)."""

    def __init__(self, poly, index):
        self.poly, self.index = poly, index
        self.symbols = tuple(poly.gens[1:])
        self.free_symbols = set(self.symbols)

    def __eq__(self, other):
        return isinstance(other, StandInRoot) and (self.poly, self.index) == (other.poly, other.index)

    def __hash__(self):
        return hash((self.poly, self.index))

    def numeric(self, point, digits=30):
        p = sympy.Poly(self.poly.as_expr().subs(point), self.poly.gens[0])
        with mpmath.workdps(digits + 10):
            roots = sorted(mpmath.re(r) for r in mpmath.polyroots(
                [mpmath.mpf(sympy.Rational(c).p) / sympy.Rational(c).q for c in p.all_coeffs()],
                maxsteps=200, extraprec=200))
            return roots[self.index]

    def latex(self, var="E"):
        return sympy.latex(self.poly.as_expr())


def _lev(energy, deg, n, s, irrep=None, eta=None, poly=None):
    qn = {"N": n, "S": R(s)}
    if irrep is not None:
        qn["irrep"] = irrep
    if eta is not None:
        qn["eta"] = R(eta)
    return Level(energy, deg, qn, poly)


def two_site_spectrum(with_root=False, with_eta=True):
    """The dimer spectrum (16 states), optionally plus one implicit-root level."""
    p2 = sympy.Poly(E**2 - U * E - 4 * t**2, E, t, U)
    eta = (lambda x: x) if with_eta else (lambda x: None)
    levels = [
        _lev(sympy.Integer(0), 1, 0, 0, "A", eta(1)),
        _lev(t, 2, 1, R(1, 2), "B", eta(R(1, 2))),
        _lev(-t, 2, 1, R(1, 2), "A", eta(R(1, 2))),
        _lev(U / 2 + DELTA / 2, 1, 2, 0, "A", eta(0), p2),
        _lev(sympy.Integer(0), 3, 2, 1, "B", eta(0)),
        _lev(U / 2 - DELTA / 2, 1, 2, 0, "A", eta(0), p2),
        _lev(U, 1, 2, 0, "B", eta(1)),
        _lev(U - t, 2, 3, R(1, 2), "B", eta(R(1, 2))),
        _lev(U + t, 2, 3, R(1, 2), "A", eta(R(1, 2))),
        _lev(2 * U, 1, 4, 0, "A", eta(1)),
    ]
    if with_root:
        p5 = sympy.Poly(E**5 - t**4 * E - U**5, E, t, U)
        levels.append(Level(StandInRoot(p5, 0), 1, {"N": 5, "Sz": R(1, 2)}, p5))
    rep = VerificationReport(digits=30)
    rep.add("eigenvalues", "all blocks", points=[{"t": R(3, 7), "U": R(5, 2)}], worst=1e-40)
    syms = [{"symmetries": ["spin", "lattice"]},
            {"sector": (1, 1), "sector_dim": 4, "steps": [("lattice", 2), ("spin", 2)],
             "largest_block": 2}]
    return Spectrum(hubbard(chain(2)), levels, syms, rep, {})
