"""The states a response function averages over: T = 0, canonical or grand canonical.

An :class:`Ensemble` is a list of members (an eigenspace of one sector and the
probability of each of its states) together with the chemical potential its energies are
measured from.

* ``N`` given, ``temperature`` None: the ground states of N (degenerate ground states,
  over every sector (N_up, N_dn) of N, averaged with equal weights);
* ``N`` given, ``temperature`` T > 0: canonical, p = exp(-E/T) / Z_N over the states of N;
* ``mu`` given (``N`` None): grand canonical, p = exp(-(E - mu N)/T) / Z over every N;
  with ``temperature`` None its T -> 0 limit (the ground states of H - mu N).

For the fixed-N ensembles excitation energies are measured from ``mu`` when it is given,
otherwise from the midpoint of the addition and removal energies of the ground states,
mu_N = (E_0(N+1) - E_0(N-1)) / 2 (0 when N is 0 or full), so that, at T = 0, poles of
added particles lie above 0 and poles of removed particles below whenever E_0 is convex
in N.  Temperatures are exact rationals in the energy unit (k_B = 1).
"""

from dataclasses import dataclass
from fractions import Fraction

import mpmath
import sympy

from symcluster.errors import ModelError
from symcluster.spectrum import to_rational

__all__ = ["Ensemble", "Member", "make_ensemble", "exact_number"]

#: members whose probability per state is below 10**-(digits + DROP_GUARD) are left out;
#: their total probability is added to the certificate's error bound
DROP_GUARD = 25


@dataclass
class Member:
    """An eigenspace in the ensemble: ``prob`` per state (mpmath), its sector and N."""

    sector: tuple
    space: object
    prob: object
    n: int


@dataclass
class Ensemble:
    """The members, the chemical potential, beta (None at T = 0) and a description."""

    members: list
    mu: object               # mpmath.mpf
    mu_exact: object         # Fraction or None (an exact midpoint is not always rational)
    mu_expr: object          # sympy number or None: mu exactly (closed-form ground levels)
    beta: object             # Fraction or None
    kind: str                # "ground state", "canonical", "grand canonical"
    n: object                # N or None
    dropped: object          # total probability left out (mpmath)

    def describe(self):
        parts = [self.kind]
        if self.n is not None:
            parts.append(f"N={self.n}")
        if self.beta is not None:
            parts.append(f"T={1 / self.beta}")
        parts.append(f"mu={mpmath.nstr(self.mu, 12)}")
        return ", ".join(parts)


def exact_number(name, value):
    """A temperature, mu or beta as an exact Fraction (floats mean the decimal written)."""
    r = to_rational(name, value)
    if not r.is_Rational:
        raise ModelError(f"{name}={value!r} is not an exact rational; give e.g. 1/2 or 0.25")
    return Fraction(int(r.p), int(r.q))


def _sectors_of_n(system, n):
    return [(u, n - u) for u in range(n + 1) if system.has_sector(u, n - u)]


def _ground(system, n):
    """(value, level) of the lowest level of N = n."""
    vals = [(v, lev) for s in _sectors_of_n(system, n) for lev, v, _ in system.sector_levels(*s)]
    return min(vals, key=lambda x: x[0])


def make_ensemble(system, N=None, temperature=None, mu=None):
    """The :class:`Ensemble` of a :class:`~symcluster.response.eigen.PointSystem`.

    Parameters
    ----------
    system : PointSystem
    N : int, optional
        Electron number (fixed-N ensembles).
    temperature : number, optional
        Exact temperature > 0 (None: T = 0).
    mu : number, optional
        Chemical potential: grand canonical without ``N``; with ``N``, the energy the
        excitations are measured from.

    Returns
    -------
    Ensemble
    """
    space = system.space
    top = space.max_particles
    if N is not None and (isinstance(N, bool) or not isinstance(N, int) or not 0 <= N <= top):
        raise ModelError(f"N={N!r} is impossible for this model; choose an electron number "
                         f"0..{top}")
    if N is None and mu is None:
        raise ModelError("give an electron number N (T = 0 or canonical) or a chemical "
                         "potential mu (grand canonical)")
    beta = None
    if temperature is not None:
        t = exact_number("temperature", temperature)
        if t <= 0:
            raise ModelError(f"temperature={temperature!r} must be > 0 (leave it out for T = 0)")
        beta = 1 / t
    mu_exact = exact_number("mu", mu) if mu is not None else None
    digits = system.digits
    with mpmath.workdps(system.work):
        if N is not None:
            if mu_exact is None:
                lo = _ground(system, N - 1) if N > 0 else None
                hi = _ground(system, N + 1) if N < top else None
                if lo is not None and hi is not None:
                    mu_val = (hi[0] - lo[0]) / 2
                    mu_expr = None
                    if hi[1].is_closed_form and lo[1].is_closed_form:
                        mu_expr = sympy.radsimp((hi[1].energy - lo[1].energy).subs(system.point)
                                                / 2)
                else:
                    mu_val, mu_expr = mpmath.mpf(0), sympy.Integer(0)
            else:
                mu_val = mpmath.mpf(mu_exact.numerator) / mu_exact.denominator
            if mu_exact is not None:
                mu_expr = sympy.Rational(mu_exact.numerator, mu_exact.denominator)
            ns = [N]
            kind = "ground state" if beta is None else "canonical"
        else:
            mu_val = mpmath.mpf(mu_exact.numerator) / mu_exact.denominator
            mu_expr = sympy.Rational(mu_exact.numerator, mu_exact.denominator)
            ns = list(range(top + 1))
            kind = "grand canonical" + (" T=0" if beta is None else "")
        cands = []
        for n in ns:
            for sec in _sectors_of_n(system, n):
                for lev, val, mult in system.sector_levels(*sec):
                    k = val - (mu_val * n if N is None else 0)
                    cands.append((sec, n, k, lev, val, mult))
        kmin = min(c[2] for c in cands)
        tol = mpmath.mpf(10) ** (-(digits + 8)) * (float(system.scale) + abs(mu_val))
        if beta is None:
            chosen = [c for c in cands if c[2] - kmin <= tol]
            total = sum(c[5] for c in chosen)
            raw = {id(c): mpmath.mpf(1) / total for c in chosen}
            dropped = mpmath.mpf(0)
        else:
            b = mpmath.mpf(beta.numerator) / beta.denominator
            boltz = {id(c): mpmath.exp(-b * (c[2] - kmin)) for c in cands}
            z = sum(boltz[id(c)] * c[5] for c in cands)
            cut = mpmath.mpf(10) ** (-(digits + DROP_GUARD))
            raw = {}
            dropped = mpmath.mpf(0)
            for c in cands:
                p = boltz[id(c)] / z
                if p < cut:
                    dropped += p * c[5]
                else:
                    raw[id(c)] = p
            chosen = [c for c in cands if id(c) in raw]
        # the members are eigenspaces: look them up in the sector's solution
        members = []
        by_sector = {}
        for c in chosen:
            by_sector.setdefault(c[0], []).append(c)
        for sec, group in by_sector.items():
            for sp in system.spaces(*sec):
                probs = {raw[id(c)] for c in group if any(l is c[3] for l in sp.levels)}
                if not probs:
                    continue
                # levels merged into one eigenspace have equal energy, so equal probability
                members.append(Member(sec, sp, max(probs), sec[0] + sec[1]))
    return Ensemble(members, mu_val, mu_exact, mu_expr, beta, kind, N, dropped)
