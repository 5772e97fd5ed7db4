"""Shared two-site fixtures of the analysis tests (test modules import from here, never
from each other): the two-site Hubbard levels written out by hand (D. J. Carrascal,
J. Ferrer, J. C. Smith, K. Burke, J. Phys.: Condens. Matter 27, 393001 (2015); journal details
from memory), a stand-in for an implicit root, and a dense Fock Hamiltonian."""

import types

import mpmath
import sympy

from symcluster.spectrum import Level, Spectrum

t, U = sympy.symbols("t U", real=True)
E = sympy.Symbol("E")
HALF = sympy.Rational(1, 2)


def _P(expr, *gens):
    return sympy.Poly(expr, E, *(gens or (t, U)))


def two_site_levels():
    """The 16 states of the two-site cluster, H = -t Σσ(c+_0σ c_1σ + h.c.) + U Σ n↑n↓."""
    D = sympy.sqrt(U ** 2 / 4 + 4 * t ** 2)
    S0, S1 = sympy.Integer(0), sympy.Integer(1)
    return [
        Level(sympy.Integer(0), 1, {"N": 0, "S": S0}, _P(E)),
        Level(-t, 2, {"N": 1, "S": HALF, "irrep": "A"}, _P(E + t)),
        Level(t, 2, {"N": 1, "S": HALF, "irrep": "B"}, _P(E - t)),
        Level(sympy.Integer(0), 3, {"N": 2, "S": S1, "irrep": "B"}, _P(E)),
        Level(U, 1, {"N": 2, "S": S0, "irrep": "B"}, _P(E - U)),
        Level(U / 2 - D, 1, {"N": 2, "S": S0, "irrep": "A"}, _P(E ** 2 - U * E - 4 * t ** 2)),
        Level(U / 2 + D, 1, {"N": 2, "S": S0, "irrep": "A"}, _P(E ** 2 - U * E - 4 * t ** 2)),
        Level(U - t, 2, {"N": 3, "S": HALF, "irrep": "B"}, _P(E - U + t)),
        Level(U + t, 2, {"N": 3, "S": HALF, "irrep": "A"}, _P(E - U - t)),
        Level(2 * U, 1, {"N": 4, "S": S0}, _P(E - 2 * U)),
    ]


def spectrum_of(levels, symbols=(t, U)):
    return Spectrum(types.SimpleNamespace(symbols=tuple(symbols)), list(levels))


def two_site_spectrum():
    return spectrum_of(two_site_levels())


class StandInRoot:
    """Minimal implicit root for tests: index-th real root (ascending) of poly(E, *symbols)."""

    def __init__(self, poly, index):
        self.poly, self.index = poly, index
        self.symbols = tuple(poly.gens[1:])
        self.free_symbols = set(self.symbols)

    def numeric(self, point, digits=30):
        uni = sympy.Poly(self.poly.as_expr().subs({s: point[s] for s in self.symbols}),
                         self.poly.gens[0])
        with mpmath.workdps(digits + 20):
            coeffs = [mpmath.mpf(sympy.Rational(c).p) / sympy.Rational(c).q
                      for c in uni.all_coeffs()]
            roots = mpmath.polyroots(coeffs, maxsteps=400, extraprec=4 * digits + 100)
            real = sorted(mpmath.re(r) for r in roots
                          if abs(mpmath.im(r)) < mpmath.mpf(10) ** (-digits))
            return real[self.index]


def fock_hamiltonian(n_sites, bonds, hop, u, n_up, n_dn):
    """Dense H of one (N↑, N↓) sector as lists, in the ordering ↑ orbitals then ↓ orbitals.

    Independent of symcluster: H = -hop Σ_bonds Σσ (c+_i c_j + h.c.) + u Σ n↑n↓.
    Returns (states, matrix) with entries of whatever type hop and u have.
    """
    def combos(n):
        return [b for b in range(1 << n_sites) if bin(b).count("1") == n]

    states = [(a, b) for a in combos(n_up) for b in combos(n_dn)]
    index = {s: k for k, s in enumerate(states)}
    H = [[0 * hop for _ in states] for _ in states]
    for k, (a, b) in enumerate(states):
        H[k][k] += u * bin(a & b).count("1")
        for spin in (0, 1):
            bits = (a, b)[spin]
            for i, j in bonds:
                for src, dst in ((j, i), (i, j)):
                    if bits >> src & 1 and not bits >> dst & 1:
                        lo, hi = min(src, dst), max(src, dst)
                        between = bin(bits & (((1 << hi) - 1) ^ ((1 << (lo + 1)) - 1))).count("1")
                        new = bits ^ (1 << src) ^ (1 << dst)
                        other = (new, b) if spin == 0 else (a, new)
                        H[index[other]][k] += -hop * (-1) ** between
    return states, H


# --- tests -------------------------------------------------------------------
