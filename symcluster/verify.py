"""Every check a spectrum must pass before it is returned (docs/verification.md).

Tiers, per (N_up, N_dn) sector, at >= 2 random rational parameter points:

* dim <= MP_DIM: mpmath eigenvalues of the unreduced sector at ``digits`` + 10
  digits equal the level values with their multiplicities;
* dim <= EXACT_DIM: the characteristic polynomial of the unreduced sector at
  the point (python-flint, independent of the symbolic pipeline) equals the
  product of the levels' polynomials at the point -- an exact identity test
  carried out modulo a random 62-bit prime per point (a false pass at one
  point needs the prime to divide a fixed non-zero integer of at most a few
  thousand bits: probability < 1e-14; both points must pass);
  every level's value is a root of its polynomial at >= ``digits`` digits;
* beyond: float64 eigenvalues of the unreduced sector equal the level values
  (relative 1e-9), and each block's exact charpoly at the point equals the
  product of its factors.

Always: degeneracies add up to each sector's dimension and to 4^L; the
symbolic sum rules sum deg*E = Tr H and sum deg*E^2 = Tr H^2 per sector; each
closed form is checked against its own polynomial at >= ``digits`` digits.
"""

import random
from fractions import Fraction
from math import comb, lcm

import flint
import mpmath
import numpy as np
import sympy
from sympy.polys.densebasic import dmp_to_dict

from .algebra.roots import (LAGUERRE_MIN_DEGREE, ImplicitRoot, clear_prefetched, isolation_key,
                            prefetch_isolations)
from .errors import ModelError, VerificationError
from .fock import sector_states
from .models import coupling_symbol
from .operators import apply_hamiltonian
from .spectrum import energy_numeric

__all__ = ["verify_spectrum", "random_points", "sector_share", "MP_DIM", "EXACT_DIM"]

MP_DIM = 4
EXACT_DIM = 500
FLOAT_DIM = 6000


def root_deviation(coeffs, x, scale, digits):
    """Backward error of ``x`` as a root of the polynomial with (mpmath) ``coeffs``.

    ``|P(x)| / sum_k |c_k| r^k`` with ``r = max(|x|, scale * 10**-digits)``: relative to
    the size of ``x`` itself, except for a level that is exactly zero at the point.  Its
    computed value is then a rounding residue (about 1e-71 at 30 digits), and the purely
    relative measure would be 1 for ``P = E``; the floor ``scale * 10**-digits``, with
    ``scale`` the energy scale of the point (its largest |coupling|), accepts the residue
    while a value wrong by more than ``10**-digits`` of the scale still fails.
    """
    val = mpmath.polyval(coeffs, x)
    r = max(abs(x), scale * mpmath.mpf(10) ** (-digits))
    size = mpmath.polyval([abs(c) for c in coeffs], r)
    return abs(val) / size if size else abs(val)


def random_points(symbols, count, seed):
    """``count`` random rational points; all values share one denominator per point."""
    rng = random.Random(seed)
    pts = []
    for k in range(count):
        den = rng.choice([101, 103, 107, 109, 113, 127, 131, 137])
        pt = {}
        for s in symbols:
            num = 0
            while num == 0 or num % den == 0:
                num = rng.randint(-900, 900)
            if s.name != "U" and k == 0:
                num = abs(num)
            pt[s] = sympy.Rational(num, den)
        pts.append(pt)
    return pts


def sector_share(level, n_up, n_dn):
    """States of ``level`` that lie in sector (n_up, n_dn)."""
    qn = level.quantum_numbers
    if n_up + n_dn != qn["N"]:
        return 0
    sz = sympy.Rational(n_up - n_dn, 2)
    if "S" in qn:
        s = qn["S"]
        if abs(sz) > s:
            return 0
        return level.degeneracy // int(2 * s + 1)
    if "Sz" in qn:
        return level.degeneracy if qn["Sz"] == sz else 0
    raise VerificationError("level without spin information; cannot assign it to a sector")


def _sector_terms(model, states):
    """Sparse sector matrix as {label: {(i, j): int}} plus the state index."""
    idx = {s: k for k, s in enumerate(states)}
    terms = {}
    for j, s in enumerate(states):
        for s2, row in apply_hamiltonian(model, *s).items():
            i = idx[s2]
            for lab, a in row.items():
                terms.setdefault(lab, {})[(i, j)] = a
    return terms


def _traces(terms):
    """Exact Tr H and Tr H^2 of a sector as polynomials {sorted label tuple: int}."""
    tr1 = {}
    for l, m in terms.items():
        for (i, j), a in m.items():
            if i == j:
                tr1[(l,)] = tr1.get((l,), 0) + a
    entries = {}
    for l, m in terms.items():
        for key, a in m.items():
            entries.setdefault(key, []).append((l, a))
    tr2 = {}
    for row in entries.values():           # H symmetric: Tr H^2 = sum_ij H_ij^2
        for l1, a1 in row:
            for l2, a2 in row:
                key = tuple(sorted((l1, l2)))
                tr2[key] = tr2.get(key, 0) + a1 * a2
    return _clean(tr1), _clean(tr2)


def _clean(p):
    return {k: v for k, v in p.items() if v != 0}


def _padd(acc, p, scale=1):
    for k, v in p.items():
        acc[k] = acc.get(k, 0) + scale * v
    return acc


def _pmul(p, q):
    out = {}
    for k1, v1 in p.items():
        for k2, v2 in q.items():
            key = tuple(sorted(k1 + k2))
            out[key] = out.get(key, 0) + v1 * v2
    return out


_TERMS = {}


def _int_terms(poly):
    """Integer form of a Poly, cached by identity for one verification run.

    Returns ``(terms, den, top)``: ``terms`` lists ``(k, exps, c, total)`` with ``k`` the
    power of E, ``exps`` the powers of the couplings, ``c`` an integer and ``total =
    sum(exps)``; the polynomial is ``sum c E^k u^exps / den``; ``top`` is the largest
    ``total``.
    """
    key = id(poly)
    hit = _TERMS.get(key)
    if hit is None or hit[0] is not poly:
        raw = [(m, Fraction(int(c.p), int(c.q)) if hasattr(c, "q") else Fraction(int(c)))
               for m, c in poly.as_dict(native=False).items()]
        den = lcm(*(c.denominator for _, c in raw)) if raw else 1
        terms = [(m[0], m[1:], c.numerator * (den // c.denominator), sum(m[1:])) for m, c in raw]
        top = max((tt[3] for tt in terms), default=0)
        hit = _TERMS[key] = (poly, (terms, den, top))
    return hit[1]


def coeffs_at(poly, point):
    """Coefficients (highest power of E first) of P(E; point) as Fractions.

    Integer arithmetic throughout: with the coupling values ``x_i = n_i / q`` over a
    common denominator ``q``, each term contributes ``c prod n_i^e_i q^(top - total)``
    and every coefficient is divided by ``den q^top`` once at the end.
    """
    gens = poly.gens
    vals = [point[g] for g in gens[1:]]
    q = lcm(*(int(v.q) for v in vals)) if vals else 1
    nums = [int(v.p) * (q // int(v.q)) for v in vals]
    deg = poly.degree(gens[0])
    terms, den, top = _int_terms(poly)
    powers = [{} for _ in nums]
    qpow = [1]
    for _ in range(top):
        qpow.append(qpow[-1] * q)
    acc = [0] * (deg + 1)
    for k, exps, c, total in terms:
        v = c
        for i, e in enumerate(exps):
            if e:
                pw = powers[i].get(e)
                if pw is None:
                    pw = powers[i][e] = nums[i] ** e
                v *= pw
        acc[deg - k] += v * qpow[top - total]
    full = den * qpow[top]
    return [Fraction(a, full) for a in acc]


def _power_sums(poly):
    """Exact (sum of roots, sum of squared roots) of a Poly in E, as label polynomials.

    Vieta: with P = c_d E^d + c_{d-1} E^{d-1} + c_{d-2} E^{d-2} + ..., c_d a
    constant, e1 = -c_{d-1}/c_d and sum r^2 = e1^2 - 2 c_{d-2}/c_d.
    """
    gens = poly.gens
    names = [g.name for g in gens[1:]]
    d = poly.degree(gens[0])
    lead = None
    c1, c2 = {}, {}
    for k, coeffs in _top_coefficients(poly, d):
        for monom, c in coeffs.items():
            c = poly.domain.to_sympy(c)
            coeff = Fraction(int(c.p), int(c.q))
            key = tuple(sorted(n for n, e in zip(names, monom) for _ in range(e)))
            if k == d:
                if key:
                    raise VerificationError("leading coefficient in E is not a constant")
                lead = coeff
            elif k == d - 1:
                c1[key] = c1.get(key, 0) + coeff
            else:
                c2[key] = c2.get(key, 0) + coeff
    e1 = {k: -v / lead for k, v in c1.items()}
    p2 = _padd(_pmul(e1, e1), {k: v / lead for k, v in c2.items()}, -2)
    return _clean(e1), _clean(p2)


def _top_coefficients(poly, d):
    """[(k, {coupling exponents: coefficient})] for k = d, d-1, d-2 (powers of E, k >= 0).

    Read off the dense representation (highest power of E first), so that only the three
    top coefficients are converted: a level polynomial of degree 336 has ~10^5 terms.
    """
    rep = poly.rep.to_list()
    u = len(poly.gens) - 1
    out = []
    for j, k in enumerate(range(d, max(d - 3, -1), -1)):
        sub = rep[j]
        out.append((k, ({(): sub} if sub else {}) if u == 0 else dmp_to_dict(sub, u - 1)))
    return out


def _numeric_matrix(terms, dim, point_by_label):
    m = np.zeros((dim, dim))
    for l, mat in terms.items():
        v = float(point_by_label[l])
        for (i, j), a in mat.items():
            m[i, j] += a * v
    return m


def _scaled_int_matrix(terms, dim, point_by_label):
    """(D, integer matrix D*H) at a rational point with common denominator D."""
    den = 1
    for v in point_by_label.values():
        den = sympy.ilcm(den, sympy.Rational(v).q)
    entries = {}
    for l, mat in terms.items():
        v = sympy.Rational(point_by_label[l]) * den
        for key, a in mat.items():
            entries[key] = entries.get(key, 0) + int(v) * a
    flat = [0] * (dim * dim)
    for (i, j), a in entries.items():
        flat[i * dim + j] = a
    return int(den), flint.fmpz_mat(dim, dim, flat)


def _poly_at_point(poly, point, den):
    """P(x / D; point) as an fmpq_poly in x = D*E."""
    cs = coeffs_at(poly, point)
    d = len(cs) - 1
    low_first = [cs[d - k] / Fraction(den) ** k for k in range(d + 1)]
    return flint.fmpq_poly([flint.fmpq(c.numerator, c.denominator) for c in low_first])


def _mod(fr, prime):
    return fr.numerator % prime * pow(fr.denominator % prime, -1, prime) % prime


def _charpoly_mod(terms, dim, point_by_label, prime):
    """Characteristic polynomial det(x - H) of a sector at a rational point, modulo ``prime``."""
    vals = {l: _mod(Fraction(int(v.p), int(v.q)), prime) for l, v in point_by_label.items()}
    flat = [0] * (dim * dim)
    for l, mat in terms.items():
        v = vals[l]
        for (i, j), a in mat.items():
            flat[i * dim + j] = (flat[i * dim + j] + a * v) % prime
    return flint.nmod_mat(dim, dim, flat, prime).charpoly()


def _poly_mod(poly, point, prime, cache):
    """Monic P(x; point) modulo ``prime`` as an nmod_poly."""
    key = (id(poly), id(point))
    if key not in cache:
        cache[key] = coeffs_at(poly, point)
    cs = [_mod(c, prime) for c in reversed(cache[key])]
    out = flint.nmod_poly(cs, prime)
    lead = cs[-1]
    if lead == 0:
        _fail(f"leading coefficient of a level polynomial vanishes modulo {prime}")
    return out * pow(lead, -1, prime)


def verify_blocks(blocks, results, seed, n_points=2):
    """Exact check of the symbolic algebra, block by block.

    At random rational points and modulo a random 62-bit prime per point, the
    characteristic polynomial of each numeric block matrix (python-flint,
    computed directly, no interpolation) must equal the product of the block's
    irreducible factors (to their multiplicities) evaluated at the point.
    Returns the number of blocks checked; raises VerificationError otherwise.
    """
    if not blocks:
        return 0
    names = sorted({n for b in blocks for n in b.block.terms} |
                   {g.name for _, fac in zip(blocks, results) for f, _, _ in fac
                    for g in f.gens[1:]})
    symbols = [coupling_symbol(n) for n in names]
    points = random_points(symbols, n_points, seed + 7)
    rng = random.Random(seed + 8)
    primes = [int(sympy.nextprime(rng.randrange(2 ** 61, 2 ** 62))) for _ in points]
    for pt, prime in zip(points, primes):
        vals = {s.name: _mod(Fraction(int(v.p), int(v.q)), prime) for s, v in pt.items()}
        for spec, factors in zip(blocks, results):
            blk = spec.block
            n = blk.dim
            flat = [0] * (n * n)
            for lab, mat in blk.terms.items():
                v = vals[lab]
                for (i, j), a in mat.items():
                    flat[i * n + j] = (flat[i * n + j] + _mod(Fraction(a), prime) * v) % prime
            cp = flint.nmod_mat(n, n, flat, prime).charpoly() if n else flint.nmod_poly([1], prime)
            prod = flint.nmod_poly([1], prime)
            for fac, mult, _ in factors:
                prod *= _poly_mod(fac, pt, prime, {}) ** mult
            if prod != cp:
                _fail(f"block {spec.labels} (dimension {n}): its characteristic polynomial at "
                      f"{pt} differs from the product of its computed factors (modulo {prime})")
    return len(blocks)


def _values_at_usable_point(spectrum, symbols, points, pi, seed, digits, tries=5):
    """Values of all levels at ``points[pi]``; a point where a closed form is 0/0 is redrawn.

    A random rational point can, rarely, fall where roots of some level polynomial
    merge and its closed form is undefined (for instance a vanishing discriminant);
    such a point says nothing about correctness, so it is replaced in ``points`` by
    a fresh one (the same for every check that follows).
    """
    last = None
    for attempt in range(tries):
        pt = points[pi]
        try:
            # closed forms evaluated as they are (no polynomial): the checks that follow
            # compare these values with the polynomials and with the blocks
            # levels that share an energy (multiplets in several label sets, twins) share
            # its value: each distinct closed form or implicit root is evaluated once
            seen = {}
            out = []
            for lev in spectrum.levels:
                val = seen.get(lev.energy)
                if val is None:
                    val = seen[lev.energy] = energy_numeric(lev.energy, pt, digits + 5)
                out.append(val)
            return out
        except (ZeroDivisionError, ValueError, ModelError) as exc:
            last = exc
            # the replacement is drawn like the point it replaces (only the first point
            # has every hopping positive; later points take random signs)
            points[pi] = random_points(symbols, pi + 1, seed + 1000 * (attempt + 1))[pi]
        except ArithmeticError as exc:   # a closed form that is not real: wrong, not unlucky
            _fail(str(exc))
    _fail(f"no usable verification point after {tries} draws ({last})")


def _fail(msg):
    raise VerificationError("verification failed: " + msg + "; the result was discarded")


def verify_spectrum(spectrum, electrons=None, digits=30, seed=None, n_points=2, proven=(),
                    executor=None):
    """Run every check on ``spectrum``; fill its verification report; raise on failure.

    ``proven`` names symmetries that were proven exactly by operator identities
    ("spin": [H, S+] = 0; "eta": [H, eta+] = delta eta+).  Sectors that such a
    symmetry maps onto another checked sector (N_up < N_dn; N > L when the
    sector 2L - N is also checked) still get the counting and the symbolic
    sum rules, but not the numerical eigenvalue checks: their levels are the
    checked ones moved by an exactly proven symmetry.
    """
    try:
        return _verify_spectrum(spectrum, electrons, digits, seed, n_points, proven, executor)
    finally:
        _TERMS.clear()      # the integer forms hold the level polynomials alive


def _verify_spectrum(spectrum, electrons, digits, seed, n_points, proven, executor):
    model = spectrum.model
    report = spectrum.verification
    L = model.n_sites
    symbols = model.symbols
    seed = random.SystemRandom().randrange(2 ** 31) if seed is None else seed
    report.seed = seed
    points = random_points(symbols, n_points, seed)
    rng = random.Random(seed + 1)
    # one random 62-bit prime per point
    primes = [int(sympy.nextprime(rng.randrange(2 ** 61, 2 ** 62))) for _ in points]
    report.primes = primes
    coeff_cache = {}
    sums_cache = {}
    _TERMS.clear()
    wanted = set(range(2 * L + 1)) if electrons is None else set(electrons)

    # 1. state counting
    total = sum(l.degeneracy for l in spectrum.levels)
    expected = sum(comb(2 * L, n) for n in wanted)
    if total != expected:
        _fail(f"degeneracies add up to {total}, expected {expected} states")
    report.add("state count", f"N in {sorted(wanted)}", worst=0.0, states=total)

    # numeric values of every level at every point (closed forms and implicit roots);
    # with an executor, the certified isolations of high-degree factors run on it first
    values = []
    try:
        if executor is not None:
            # one representative root per polynomial: the isolation does not depend on the index
            reps = {id(l.energy.poly): l.energy for l in spectrum.levels
                    if isinstance(l.energy, ImplicitRoot)
                    and l.energy.degree >= LAGUERRE_MIN_DEGREE}
            keys = [isolation_key(r, pt, digits + 5) for pt in points for r in reps.values()]
            prefetch_isolations(keys, executor)
        with mpmath.workdps(digits + 10):
            for pi in range(len(points)):
                values.append(_values_at_usable_point(spectrum, symbols, points, pi, seed, digits))
    finally:
        clear_prefetched()

    # 2. each level is a root of its own polynomial (closed forms against polynomials)
    worst_root = 0.0
    with mpmath.workdps(digits + 10):
        # energies are homogeneous of degree one in the couplings: their scale at a point
        scales = [max(abs(mpmath.mpf(int(v.p)) / int(v.q)) for v in pt.values()) if pt else
                  mpmath.mpf(1) for pt in points]
        for pi, pt in enumerate(points):
            cache = {}
            for li, lev in enumerate(spectrum.levels):
                if lev.polynomial is None:
                    _fail(f"level {li} has no polynomial")
                if hasattr(lev.energy, "numeric"):
                    continue   # an implicit root's value is a certified root of this very polynomial
                key = id(lev.polynomial)
                if key not in cache:
                    cache[key] = [mpmath.mpf(c.numerator) / c.denominator
                                  for c in coeffs_at(lev.polynomial, pt)]
                dev = root_deviation(cache[key], values[pi][li], scales[pi], digits)
                if dev > mpmath.mpf(10) ** (-digits):
                    _fail(f"level {lev.energy} (N={lev.quantum_numbers['N']}) is not a root of its "
                          f"polynomial at {pt}: deviation {mpmath.nstr(dev, 3)}")
                worst_root = max(worst_root, float(dev))
    report.add("closed forms are roots of their polynomials", "all levels", points, worst_root)

    # 3. per sector: counting, sum rules, eigenvalues
    by_sector = {}
    for li, lev in enumerate(spectrum.levels):
        n = lev.quantum_numbers["N"]
        for n_up in range(max(0, n - L), min(n, L) + 1):
            share = sector_share(lev, n_up, n - n_up)
            if share:
                by_sector.setdefault((n_up, n - n_up), []).append((li, share))
    worst = {"mp": 0.0, "float": 0.0}
    skipped = 0
    for n in sorted(wanted):
        for n_up in range(max(0, n - L), min(n, L) + 1):
            n_dn = n - n_up
            members = by_sector.get((n_up, n_dn), [])
            dim = comb(L, n_up) * comb(L, n_dn)
            got = sum(s for _, s in members)
            if got != dim:
                _fail(f"sector (N_up={n_up}, N_dn={n_dn}) has {got} states in the levels, expected {dim}")
            if dim > FLOAT_DIM:
                continue
            states = sector_states(L, n_up, n_dn)
            terms = _sector_terms(model, states)
            _check_sum_rules(spectrum, members, terms, dim, (n_up, n_dn), sums_cache)
            mirrored = (("spin" in proven and n_up < n_dn)
                        or ("eta" in proven and n > L and (2 * L - n) in wanted))
            if mirrored:
                skipped += 1
                continue
            # large sectors: the float64 comparison at the first point only (the
            # exact per-level checks above already cover both points)
            use_points = points if dim <= EXACT_DIM else points[:1]
            for pi, pt in enumerate(use_points):
                by_label = {s.name: pt[s] for s in symbols}
                level_vals = []
                for li, share in members:
                    level_vals.extend([values[pi][li]] * share)
                level_vals.sort()
                if dim <= MP_DIM:
                    with mpmath.workdps(digits + 10):
                        a = mpmath.matrix(dim, dim)
                        for l, mat in terms.items():
                            v = mpmath.mpf(by_label[l].p) / by_label[l].q
                            for (i, j), c in mat.items():
                                a[i, j] += c * v
                        ev = sorted(mpmath.eigsy(a, eigvals_only=True)) if dim > 1 else [a[0, 0]]
                        dev = max((abs(x - y) / max(1, abs(y)) for x, y in zip(level_vals, ev)),
                                  default=mpmath.mpf(0))
                        if dev > mpmath.mpf(10) ** (-digits):
                            _fail(f"sector ({n_up},{n_dn}) at {pt}: levels differ from mpmath "
                                  f"eigenvalues by {mpmath.nstr(dev, 3)}")
                        worst["mp"] = max(worst["mp"], float(dev))
                elif dim <= EXACT_DIM:
                    for prime in primes[pi:pi + 1]:
                        cp = _charpoly_mod(terms, dim, by_label, prime)
                        prod = flint.nmod_poly([1], prime)
                        for p, share in _factor_groups(spectrum, members, (n_up, n_dn)):
                            prod *= _poly_mod(p, pt, prime, coeff_cache) ** share
                        if prod != cp:
                            _fail(f"sector ({n_up},{n_dn}): characteristic polynomial at {pt} "
                                  f"differs from the product of the level polynomials "
                                  f"(exact comparison modulo the prime {prime})")
                else:
                    ev = np.linalg.eigvalsh(_numeric_matrix(terms, dim, by_label))
                    lv = np.array([float(x) for x in level_vals])
                    dev = float(np.max(np.abs(ev - lv)) / max(1.0, float(np.max(np.abs(ev)))))
                    if dev > 1e-9:
                        _fail(f"sector ({n_up},{n_dn}) at {pt}: levels differ from float64 "
                              f"eigenvalues by {dev:.2e}")
                    worst["float"] = max(worst["float"], dev)
    report.add("mpmath eigenvalues of unreduced sectors", f"sectors with dim <= {MP_DIM}",
               points, worst["mp"])
    report.add("exact sector characteristic polynomial (modulo a random 62-bit prime per point)",
               f"sectors {MP_DIM} < dim <= {EXACT_DIM}", points, 0.0, primes=primes)
    report.add("float64 eigenvalues of unreduced sectors", f"sectors {EXACT_DIM} < dim <= {FLOAT_DIM}",
               points[:1], worst["float"])
    report.add("sum rules Tr H, Tr H^2", "every sector with dim <= %d" % FLOAT_DIM, worst=0.0)
    if skipped:
        report.add("sectors covered by exactly proven symmetries", ", ".join(sorted(proven)),
                   worst=0.0, sectors=skipped)
    return report


def _factor_groups(spectrum, members, sector):
    """[(polynomial, states per root)] of a sector; every root of each factor must be present."""
    groups = {}
    for li, share in members:
        p = spectrum.levels[li].polynomial
        groups.setdefault(id(p), [p, 0, share])[1] += 1
    out = []
    for p, count, share in groups.values():
        dp = p.degree(p.gens[0])
        if count != dp:
            _fail(f"sector {sector} holds {count} of the {dp} roots of one factor")
        out.append((p, share))
    return out


def _check_sum_rules(spectrum, members, terms, dim, sector, sums_cache):
    tr1, tr2 = _traces(terms)
    s1, s2 = {}, {}
    for p, share in _factor_groups(spectrum, members, sector):
        # one polynomial appears in every Sz sector of its multiplet: Vieta once per run
        hit = sums_cache.get(id(p))
        if hit is None or hit[0] is not p:
            hit = sums_cache[id(p)] = (p, _power_sums(p))
        e1, e2 = hit[1]
        _padd(s1, e1, share)
        _padd(s2, e2, share)
    if _clean(_padd(s1, tr1, -1)) or _clean(_padd(s2, tr2, -1)):
        _fail(f"sector {sector}: sum rule sum(deg*E^m) = Tr H^m (m = 1, 2) violated")
