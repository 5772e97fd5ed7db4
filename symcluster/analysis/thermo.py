"""Canonical and grand-canonical thermodynamics from a spectrum.

Conventions (docs/analysis.md, section "Thermodynamics"); k_B = 1, T = 1/β:

* Zeeman term H_Z = −h (N↑ − N↓) = −2h·Sz (h = g μ_B B / 2 with g = 2), so a
  level with spin S and degeneracy g contributes g/(2S+1) states at each
  Sz = −S..S; a level labelled only by "Sz" contributes all g states there.
* K = H − μN + H_Z; canonical (fixed N): Z = Σ e^{−βK} over the sector
  (μ drops out); grand canonical: Ξ = Σ e^{−βK} over all sectors.
* Table columns: ``energy`` ⟨H⟩ (without −μN and H_Z); ``entropy`` S = ln Z + β⟨K⟩;
  ``specific_heat`` C = β²(⟨K²⟩ − ⟨K⟩²) (at fixed μ and h); ``double_occupancy``
  ⟨Σ_i n_i↑ n_i↓⟩ (total, by Hellmann–Feynman ∂E/∂U); ``density`` ⟨N⟩ (total);
  ``magnetization`` ⟨N↑ − N↓⟩; ``susceptibility`` χ = ∂⟨N↑ − N↓⟩/∂h =
  β(⟨(N↑−N↓)²⟩ − ⟨N↑−N↓⟩²).
"""

from math import comb

import mpmath
import sympy

from symcluster.errors import ModelError
from symcluster.spectrum import exact_rational
from symcluster.analysis.observables import energy_derivative, level_polynomial, level_value
from symcluster.analysis.sectors import _particles, _space_of, held_electrons, require_electrons

__all__ = ["partition_function", "thermo_table", "high_temperature_series", "QUANTITIES",
           "MAX_ROWS"]

#: Most rows (temperatures x chemical potentials) one thermo_table computes.
MAX_ROWS = 10_000

QUANTITIES = ("energy", "entropy", "specific_heat", "double_occupancy", "density",
              "magnetization", "susceptibility")


def _sz_content(level, need):
    """[(Sz, weight)] for a level; weights sum to the degeneracy."""
    qn = level.quantum_numbers
    if "Sz" in qn:          # one S^z (with S too: a multiplet split by a field)
        return [(sympy.Rational(qn["Sz"]), sympy.Integer(level.degeneracy))]
    if "S" in qn:
        S = sympy.Rational(qn["S"])
        k = int(2 * S + 1)
        return [(-S + i, sympy.Rational(level.degeneracy, k)) for i in range(k)]
    if "Sz" in qn:
        return [(sympy.Rational(qn["Sz"]), sympy.Integer(level.degeneracy))]
    if need:
        raise ModelError(f"level {level.energy} has neither 'S' nor 'Sz'; a Zeeman field "
                         "needs spin labels (set h=0)")
    return [(sympy.Integer(0), sympy.Integer(level.degeneracy))]


def _levels(spec, n_electrons):
    """The levels of the ensemble; refused unless the spectrum holds all it needs."""
    if n_electrons is None:
        held = held_electrons(spec)
        one = f"n_electrons={held[0]}" if held else "n_electrons=N"
        require_electrons(spec, None, "the grand-canonical ensemble",
                          "solve all electron numbers (solve(model) without electrons=; on "
                          f"the command line leave out --electrons), or use the canonical "
                          f"ensemble of one electron number ({one}; on the command line "
                          f"--sector)")
        return list(spec.levels)
    if isinstance(n_electrons, bool) or not isinstance(n_electrons, int):
        raise ModelError(f"n_electrons={n_electrons!r} is not an electron number; give an "
                         f"integer such as 2, or None for the grand-canonical ensemble")
    require_electrons(spec, [n_electrons], f"the canonical ensemble of N={n_electrons}")
    space = _space_of(spec)
    return [lev for lev in spec.levels if _particles(lev, space) == n_electrons]


def partition_function(spec, n_electrons=None, beta=None, mu=None, h=None):
    """Z (canonical, n_electrons given) or Ξ (grand canonical) as a sympy sum.

    Parameters
    ----------
    spec : Spectrum
    n_electrons : int or None
    beta, mu, h : sympy.Symbol, optional
        Symbols to use (default β, μ, h as real symbols; h=0 gives no field:
        pass ``h=0``).

    Returns
    -------
    (sympy.Expr, dict)
        The sum, and {Symbol: Level} for implicit-root energies, which enter
        as symbols E_k.
    """
    beta = beta if beta is not None else sympy.Symbol("beta", positive=True)
    mu = mu if mu is not None else sympy.Symbol("mu", real=True)
    h = h if h is not None else sympy.Symbol("h", real=True)
    names, total = {}, sympy.Integer(0)
    for k, lev in enumerate(_levels(spec, n_electrons)):
        if lev.is_closed_form:
            e = lev.energy
        else:
            e = sympy.Symbol(f"E_{k}", real=True)
            names[e] = lev
        n = _particles(lev, _space_of(spec))
        chem = -mu * n if n_electrons is None else 0
        for sz, w in _sz_content(lev, h != 0):
            total += w * sympy.exp(-beta * (e + chem - 2 * h * sz))
    return total, names


def thermo_table(spec, at, temperatures, n_electrons=None, mus=(0,), h=0, digits=30,
                 interaction="U"):
    """Numeric thermodynamics on a grid of T (and μ for the grand ensemble).

    Parameters
    ----------
    spec : Spectrum
    at : dict
        Values of every coupling, e.g. {"t": 1, "U": 4}.
    temperatures : sequence of numbers (> 0); exact rationals are best.
    n_electrons : int or None
        Canonical in that sector, or grand canonical (None).
    mus : sequence of numbers
        Chemical potentials (ignored in the canonical ensemble).
    h : number
        Zeeman field, H_Z = −h(N↑ − N↓).
    digits : int
    interaction : str or None
        Name of the coupling for the double occupancy (None: skip the column).

    Returns
    -------
    list of dict
        One row per (T, μ) with keys "T", "mu", "lnZ" and QUANTITIES.
    """
    pt = spec.point(at)
    levels = _levels(spec, n_electrons)
    space = _space_of(spec)
    if n_electrons is not None:
        mus = (0,)
    temperatures, mus = list(temperatures), list(mus)
    if not temperatures or not mus:
        raise ModelError("no temperatures (or no chemical potentials) given; give at least one")
    if len(temperatures) * len(mus) > MAX_ROWS:
        raise ModelError(f"{len(temperatures)} temperatures x {len(mus)} chemical potentials "
                         f"make more than {MAX_ROWS} rows; give fewer values")
    for T in temperatures:
        if not _mp(T) > 0:
            raise ModelError(f"temperature {T} is not positive; give temperatures T > 0 (the "
                             f"limit T -> 0 is the ground state: see lowest_level)")
    wd = digits + 15
    rows = []
    with mpmath.workdps(wd):
        hh = _mp(h)
        data = []
        for lev in levels:
            e = level_value(lev, pt, wd)
            d = (energy_derivative(lev, interaction).numeric(pt, wd)
                 if interaction and interaction in {s.name for s in pt} else mpmath.mpf(0))
            for sz, w in _sz_content(lev, hh != 0):
                data.append((e, _particles(lev, space), 2 * _mp(sz), _mp(w), d))
        for T in temperatures:
            b = 1 / _mp(T)
            for mu in mus:
                rows.append(_row(data, b, _mp(mu), hh, n_electrons is None, T, mu, digits))
    return rows


def _mp(x):
    if isinstance(x, mpmath.mpf):
        return x
    r = exact_rational("value", x)
    return mpmath.mpf(r.p) / r.q


def _row(data, b, mu, h, grand, T, mu_in, digits):
    ks = [e - (mu * n if grand else 0) - h * m for e, n, m, _w, _d in data]
    k0 = min(ks)
    ws = [w * mpmath.exp(-b * (k - k0)) for k, (_e, _n, _m, w, _d) in zip(ks, data)]
    Z = mpmath.fsum(ws)

    def avg(f):
        return mpmath.fsum(w * f(i) for i, w in enumerate(ws)) / Z

    kav = avg(lambda i: ks[i])
    k2 = avg(lambda i: ks[i] ** 2)
    mag = avg(lambda i: data[i][2])
    mag2 = avg(lambda i: data[i][2] ** 2)
    lnZ = mpmath.log(Z) - b * k0
    row = {"T": T, "mu": mu_in, "lnZ": lnZ,
           "energy": avg(lambda i: data[i][0]),
           "entropy": lnZ + b * kav,
           "specific_heat": b ** 2 * (k2 - kav ** 2),
           "double_occupancy": avg(lambda i: data[i][4]),
           "density": avg(lambda i: data[i][1]),
           "magnetization": mag,
           "susceptibility": b * (mag2 - mag ** 2)}
    with mpmath.workdps(digits):
        return {k: (+v if isinstance(v, mpmath.mpf) else v) for k, v in row.items()}


def _power_sums(P, kmax):
    """Σ over all roots E of P(E) of E^k, k = 0..kmax (Newton's identities), exact."""
    Pu = sympy.Poly(P.as_expr(), P.gens[0])
    c = [sympy.cancel(x / Pu.LC()) for x in Pu.all_coeffs()]
    d = len(c) - 1
    p = [sympy.Integer(d)]
    for k in range(1, kmax + 1):
        s = -k * c[k] if k <= d else sympy.Integer(0)
        s -= sum(c[i] * p[k - i] for i in range(1, min(k - 1, d) + 1))
        p.append(sympy.expand(s))
    return p


def high_temperature_series(spec, order=3, n_electrons=None, mu=None, h=None):
    """Exact coefficients of ln Z = ln D + Σ_{k=1..order} c_k β^k.

    Uses Tr K^k with K = H − μN − 2h·Sz (μ only in the grand ensemble).
    Levels that are roots of one polynomial with equal labels and degeneracy
    and that together exhaust its roots enter through Newton's power sums, so
    the coefficients are polynomials in the couplings, μ and h.

    Returns
    -------
    (sympy.Expr, list of sympy.Expr)
        ln D (D = number of states) and [c_1, ..., c_order].
    """
    mu = mu if mu is not None else sympy.Symbol("mu", real=True)
    h = h if h is not None else sympy.Symbol("h", real=True)
    levels = _levels(spec, n_electrons)
    groups = {}
    for lev in levels:
        P = level_polynomial(lev)
        key = (P.as_expr(), lev.quantum_numbers.get("N"), lev.quantum_numbers.get("S"),
               lev.quantum_numbers.get("Sz"), lev.degeneracy)
        groups.setdefault(key, []).append(lev)
    moments = [sympy.Integer(0)] * (order + 1)
    for (Pe, n, _S, _Sz, _g), levs in groups.items():
        P = level_polynomial(levs[0])
        degE = P.degree(P.gens[0])
        if len(levs) % degE == 0:  # every root present, len/degE times
            psums = [len(levs) // degE * p for p in _power_sums(P, order)]
        elif all(l.is_closed_form for l in levs):
            psums = [sympy.expand(sum(l.energy ** k for l in levs)) for k in range(order + 1)]
        else:
            raise ModelError("some roots of a level's polynomial are missing from the spectrum; "
                             "the high-temperature series needs complete spectra")
        shift_terms = _sz_content(levs[0], h != 0)
        for k in range(order + 1):
            tot = sympy.Integer(0)
            for sz, w in shift_terms:
                a = -(mu * n if n_electrons is None else 0) - 2 * h * sz
                tot += w * sum(comb(k, j) * psums[j] * a ** (k - j) for j in range(k + 1))
            moments[k] += tot
    D = moments[0]
    m = [sympy.expand(x / D) for x in moments]
    kappa = [sympy.Integer(0)] * (order + 1)
    for nn in range(1, order + 1):
        kappa[nn] = sympy.expand(m[nn] - sum(comb(nn - 1, k - 1) * kappa[k] * m[nn - k]
                                             for k in range(1, nn)))
    coeffs = [sympy.expand(kappa[k] * (-1) ** k / sympy.factorial(k)) for k in range(1, order + 1)]
    return sympy.log(D), coeffs
