"""The multimodular interpolation behind the ``"flint"`` backend of
:mod:`symcluster.algebra.charpoly`.

``det(x - B0 - sum_i u_i B_i)`` is sampled at small integer couplings on a lower set of
exponents (:func:`lower_set`), each sample's characteristic polynomial computed modulo
word-size primes (python-flint ``nmod_mat.charpoly``), interpolated exactly modulo each
prime by Newton divided differences along each axis (:func:`_one_prime`), and lifted by
Chinese remaindering until a rigorous bound is passed or the lift is stable and agrees
exactly with ``fmpz_mat.charpoly`` at a random point off the grid (:func:`_multimodular`,
:func:`_spot_check`).  Three kinds of axis: plain (nodes ``0, 1, 2, ...``), even (the
polynomial is even in the coupling, interpolated in its square) and mirrored (the spectrum
at ``-u`` is the one at ``u`` moved by ``2cu``; nodes ``0, 1, -1, 2, -2, ...``, one
characteristic polynomial for two nodes).  The evenness and the mirror are found by exact
tests modulo a random prime (:func:`_parity_even`), and a wrong guess is caught by the spot
check, after which the caller recomputes without it.
"""

from __future__ import annotations

import math
from fractions import Fraction

import flint

from symcluster.errors import VerificationError

__all__ = ["lower_set"]

_PRIMES = []


def _prime(k):
    """Return the k-th prime below 2**62 (descending), generated lazily."""
    x = _PRIMES[-1] - 2 if _PRIMES else (1 << 62) - 1
    while len(_PRIMES) <= k:
        while not flint.fmpz(x).is_prime():
            x -= 2
        _PRIMES.append(x)
        x -= 2
    return _PRIMES[k]


def _parity_even(n, mats, idx, rng, shift=0):
    """True if ``det(x - sum c_i M_i)`` is (almost surely) even in coupling `idx`.

    Compares the characteristic polynomials at ``c_idx = r`` and ``c_idx = -r`` (other
    couplings random) modulo a random word-size prime.  A polynomial that is not even
    agrees at a random point with probability at most ``n / p < 2**-50``; the lifted
    result is moreover checked exactly at a random point before it is returned (and
    recomputed without the evenness assumption if that check fails), and again by the
    verification tiers.
    Sublattice gauge symmetry makes every block of a bipartite cluster that the gauge
    transformation maps to itself even in the hopping.

    With a ``shift`` (a Fraction) the test is that of the matrix ``M_idx - shift * 1`` in
    place of ``M_idx``: the polynomial is even in ``c_idx`` once the energy is measured from
    ``shift * c_idx`` (a *mirrored* coupling, see :func:`_mirror_shift`).
    """
    p = _prime(rng.randrange(8, 64))
    vals = [rng.randrange(1, p) for _ in mats]
    shift_p = shift.numerator * pow(shift.denominator, -1, p) % p if shift else 0
    polys = []
    for sign in (1, -1):
        M = None
        for i, (B, v) in enumerate(zip(mats, vals)):
            if i == idx:
                B = flint.nmod_mat(B, p)
                if shift_p:
                    for r in range(n):
                        B[r, r] = B[r, r] - shift_p
                term = B * ((sign * v) % p)
            else:
                term = flint.nmod_mat(B, p) * v
            M = term if M is None else M + term
        polys.append([int(c) for c in M.charpoly().coeffs()])
    return polys[0] == polys[1]


def _mirror_shift(n, mat):
    """``tr(B) / n`` for a coupling matrix ``B`` (sparse): the energy shift per unit of the
    coupling about which a mirrored block's spectrum is symmetric.

    A block is *mirrored* in a coupling ``u`` when ``det(x - M(u))`` with
    ``M(u) = B0 + u B`` satisfies ``P(x; -u) = P(x + 2 c u; u)`` for a constant ``c``:
    comparing the coefficients of ``x^(n-1)`` gives ``c = tr(B) / n``.  The Shiba
    transformation (down spins to holes with the sublattice sign) gives this for the
    Hubbard U on blocks that it maps to themselves; a mirrored coupling is sampled at
    ``u = 0, 1, -1, 2, -2, ...`` and the polynomial at ``-j`` is that at ``j`` moved by
    ``2 c j``, so one characteristic polynomial serves two nodes.
    """
    return Fraction(sum(v for (i, j), v in mat.items() if i == j), n)


def _node(m, kind):
    """The m-th interpolation node along an axis of `kind` (0: ``m``; 1: ``m**2``, an even
    coupling sampled in its square; 2: ``0, 1, -1, 2, -2, ...``, a mirrored coupling)."""
    if kind == 2:
        return (m + 1) // 2 if m % 2 else -(m // 2)
    return m * m if kind == 1 else m


def _samples(points, kinds):
    """Characteristic polynomials to compute for the lower set `points`: those at a
    negative node of a mirrored axis come from their positive partners."""
    return sum(1 for beta in points
               if not any(k == 2 and b and b % 2 == 0 for b, k in zip(beta, kinds)))


def lower_set(bounds, even, total):
    """Exponent vectors of the interpolation grid: a lower (downward-closed) set.

    ``beta`` (one entry per free coupling; an even coupling counts powers of its square)
    belongs to the set when ``beta_i <= bounds[i]`` (the rank of the coupling's matrix
    bounds its degree) and ``sum_i w_i beta_i <= total`` with ``w_i = 2`` for an even
    coupling, else 1: every coefficient of ``det(x - B0 - sum_i u_i B_i)`` has total
    degree at most ``n`` in the ``u_i``, because every entry is affine in them.  The
    set is much smaller than the tensor grid ``prod (bounds_i + 1)`` for two or more
    free couplings.
    """
    weights = [2 if e else 1 for e in even]
    out = []

    def rec(i, prefix, left):
        if i == len(bounds):
            out.append(tuple(prefix))
            return
        for b in range(min(bounds[i], left // weights[i]) + 1):
            prefix.append(b)
            rec(i + 1, prefix, left - weights[i] * b)
            prefix.pop()

    rec(0, [], total)
    return out


_AXIS_MATS = {}


def _axis_matrices(length, kind, p):
    """(Newton divided-difference matrix, Newton-to-monomial matrix) of the first nodes, mod p.

    Nodes are ``z_j = _node(j, kind)``, ``j < length``: ``j``, or ``j**2`` for an even
    coupling (kind 1, or True), or ``0, 1, -1, 2, ...`` for a mirrored one (kind 2).  The
    divided differences are ``N^-1`` with ``N[i][a] = prod_{j<a} (z_i - z_j)`` (lower
    triangular); column ``a`` of the conversion matrix holds the monomial coefficients of
    ``prod_{j<a} (s - z_j)``.  Both are triangular, so the matrices of a shorter line
    are the leading blocks of these.
    """
    key = (length, int(kind), p)
    hit = _AXIS_MATS.get(key)
    if hit is not None:
        return hit
    z = [_node(j, kind) % p for j in range(length)]
    N = [[0] * length for _ in range(length)]
    for i in range(length):
        acc = 1
        for a in range(i + 1):
            N[i][a] = acc
            acc = acc * (z[i] - z[a]) % p
    dd = flint.nmod_mat(N, p).inv().tolist()
    conv = [[0] * length for _ in range(length)]
    poly = [1]                                  # prod_{j<a} (s - z_j), ascending powers
    for a in range(length):
        for k, c in enumerate(poly):
            conv[k][a] = c
        poly = [((poly[k - 1] if k else 0) - z[a] * (poly[k] if k < len(poly) else 0)) % p
                for k in range(len(poly) + 1)]
    hit = ([[int(x) for x in row] for row in dd], conv)
    if len(_AXIS_MATS) > 1024:
        _AXIS_MATS.clear()
    _AXIS_MATS[key] = hit
    return hit


def _line_matrix(kind, length, even, p, full):
    """The ``length x length`` matrix applied along one line, as an nmod_mat (cached).

    ``kind`` is ``"dd"`` (leading block of the divided differences), ``"conv"`` (leading
    block of the Newton-to-monomial conversion) or ``"both"`` (conversion after divided
    differences, for the last axis, whose two passes may follow each other).
    """
    key = (kind, length, even, p, len(full[0]))
    hit = _AXIS_MATS.get(key)
    if hit is None:
        if kind == "both":
            hit = (_line_matrix("conv", length, even, p, full)
                   * _line_matrix("dd", length, even, p, full))
        else:
            mat = full[0] if kind == "dd" else full[1]
            hit = flint.nmod_mat([r[:length] for r in mat[:length]], p)
        if len(_AXIS_MATS) > 1024:
            _AXIS_MATS.clear()
        _AXIS_MATS[key] = hit
    return hit


def _apply_lines(vals, points, axis, kind, even, full, p, width):
    """Apply a triangular line matrix along `axis` to every line of the lower set.

    ``vals`` maps each point of the lower set to its list of ``width`` residues; the
    points of one line (other coordinates fixed) are ``0..m`` along `axis`, and a line of
    length ``m + 1`` uses the leading ``(m+1) x (m+1)`` blocks (:func:`_line_matrix`).
    """
    lines = {}
    for pt in points:
        lines.setdefault(pt[:axis] + pt[axis + 1:], []).append(pt)
    by_len = {}
    for pts in lines.values():
        pts.sort(key=lambda q: q[axis])
        by_len.setdefault(len(pts), []).append(pts)
    for m, group in by_len.items():
        cols = len(group) * width
        rows = [[0] * cols for _ in range(m)]
        for g, pts in enumerate(group):
            for i, q in enumerate(pts):
                rows[i][g * width:(g + 1) * width] = vals[q]
        res = (_line_matrix(kind, m, even, p, full) * flint.nmod_mat(rows, p)).tolist()
        for g, pts in enumerate(group):
            for i, q in enumerate(pts):
                vals[q] = [int(x) for x in res[i][g * width:(g + 1) * width]]


def _one_prime(n, D, B0, Bs, bounds, even, p, points, split=None, mirror=None):
    """Coefficients (over `points`, then x power) of the interpolant mod p.

    `points` is the lower set of exponent vectors (:func:`lower_set`); the polynomial
    is sampled at the couplings ``u_i = beta_i`` and interpolated on that set by
    Newton divided differences along each axis in turn, then converted to monomials
    axis by axis (valid on any lower set: a Newton basis polynomial vanishes at the
    nodes before its own, so each line sees only its own coefficients).
    The matrices are ``B/D`` modulo p, so the result is the characteristic polynomial of
    the block itself, whose coefficients are integers (Gauss's lemma: it is a monic factor
    of the integer characteristic polynomial of the Fock-space Hamiltonian).
    With a :class:`~symcluster.algebra.split.ConjugateSplit`, each sample is the product of
    the characteristic polynomials of the conjugate parts; None when ``p`` does not suit
    the split (the caller takes another prime).
    ``mirror`` (optional, one entry per free coupling: None or the Fraction ``c`` of
    :func:`_mirror_shift` for the integer matrices) samples those couplings at
    ``0, 1, -1, 2, -2, ...``; the polynomial at ``-j`` is the one at ``j`` with ``x``
    replaced by ``x + 2 c j / D``, so it costs no characteristic polynomial.
    """
    dinv = pow(D, -1, p)
    mirror = mirror or [None] * len(Bs)
    kinds = [1 if e else (2 if m else 0) for e, m in zip(even, mirror)]
    # c / D modulo p: the shift in the units of the sampled matrices B / D
    cps = [m.numerator * pow(m.denominator, -1, p) * dinv % p if m else 0 for m in mirror]
    B0p = flint.nmod_mat(B0, p) * dinv if D != 1 else flint.nmod_mat(B0, p)
    Bps = [flint.nmod_mat(B, p) * dinv if D != 1 else flint.nmod_mat(B, p) for B in Bs]
    parts = None
    if split is not None:
        parts = split.parts(p, [B0p] + Bps)
        if parts is None:
            return None
    vals = {}
    for beta in points:
        mirrored = next((i for i, (b, k) in enumerate(zip(beta, kinds))
                         if k == 2 and b and b % 2 == 0), None)
        if mirrored is not None:
            # node -j: from the partner at +j (computed before: lower sets are downward
            # closed and `points` is in lexicographic order)
            j = beta[mirrored] // 2
            partner = beta[:mirrored] + (2 * j - 1,) + beta[mirrored + 1:]
            moved = flint.nmod_poly(vals[partner], p)(
                flint.nmod_poly([2 * j * cps[mirrored] % p, 1], p))
            cs = [int(c) for c in moved.coeffs()]
            vals[beta] = cs + [0] * (n + 1 - len(cs))
            continue
        # the couplings of the sample: u = node (an even coupling: u = j, node s = u^2 = j^2)
        coords = [_node(b, k) if k == 2 else b for b, k in zip(beta, kinds)]
        if parts is None:
            M = B0p
            for u, Bp in zip(coords, Bps):
                if u:
                    M = M + Bp * u
            cp = M.charpoly()
        else:
            cp = flint.nmod_poly([1], p)
            for k in range(split.degree):
                M = parts[0][k]
                for u, Pk in zip(coords, parts[1:]):
                    if u:
                        M = M + Pk[k] * u
                cp = cp * M.charpoly()
        cs = [int(c) for c in cp.coeffs()]
        cs += [0] * (n + 1 - len(cs))
        vals[beta] = cs
    if not bounds:              # no free coupling: one sample, nothing to interpolate
        return vals[()]
    # all divided differences before any conversion; the last axis does both at once
    full = [_axis_matrices(d + 1, k, p) for d, k in zip(bounds, kinds)]
    last = len(full) - 1
    for axis in range(last):
        _apply_lines(vals, points, axis, "dd", kinds[axis], full[axis], p, n + 1)
    _apply_lines(vals, points, last, "both", kinds[last], full[last], p, n + 1)
    for axis in range(last):
        _apply_lines(vals, points, axis, "conv", kinds[axis], full[axis], p, n + 1)
    flat = []
    for beta in points:
        flat.extend(vals[beta])
    return flat


def _multimodular(n, D, B0, Bs, bounds, even, hbits, rng, split=None, mirror=None):
    """CRT-lift the interpolated coefficients; see the module docstring for the stop rule.

    With a `split` (:class:`~symcluster.algebra.split.ConjugateSplit`), primes that do not
    suit it are skipped.  ``mirror``: see :func:`_one_prime`.
    """
    points = lower_set(bounds, even, n)
    keys = [beta + (a,) for beta in points for a in range(n + 1)]
    acc = None
    modulus = 1
    k = 0
    skipped = used = 0
    while True:
        p = _prime(k)
        k += 1
        res = _one_prime(n, D, B0, Bs, bounds, even, p, points, split, mirror)
        if res is None:
            skipped += 1
            # f splits into linear factors modulo about one prime in s (Chebotarev: the
            # Galois group of the real cyclotomic subfield is abelian of order s), so a
            # long run of unsuitable primes is normal; far more than that is not
            if skipped > 200 + 8 * split.degree * used:
                raise VerificationError(f"only {used} of {k} primes suit the split of a "
                                        f"{n}-dimensional block; report this block")
            continue
        used += 1
        if acc is None:
            acc = [r if r <= p // 2 else r - p for r in res]
            modulus = p
            continue
        stable = all((a - r) % p == 0 for a, r in zip(acc, res))
        if not stable:
            inv = pow(modulus % p, -1, p)
            new_mod = modulus * p
            nhalf = new_mod // 2
            nacc = []
            for a, r in zip(acc, res):
                a %= modulus
                c = a + modulus * (((r - a) * inv) % p)
                nacc.append(c - new_mod if c > nhalf else c)
            acc, modulus = nacc, new_mod
        if math.log2(modulus) > hbits + 1:
            # rigorous only if the grid assumptions hold (evenness, integral block)
            if ((any(even) or any(mirror or ()) or D != 1)
                    and not _spot_check(n, D, B0, Bs, even, keys, acc, rng)):
                return None
            break
        if stable and _spot_check(n, D, B0, Bs, even, keys, acc, rng):
            break
    table = {}
    for key, c in zip(keys, acc):
        if c:
            beta = tuple(2 * b if e else b for b, e in zip(key[:-1], even))
            table[(key[-1],) + beta] = c
    return table


def _spot_check(n, D, B0, Bs, even, keys, acc, rng):
    """Exact comparison with ``fmpz_mat.charpoly`` at one random integer point off the grid.

    ``fmpz_mat`` sees the integer matrix ``D*H``, whose coefficient of ``x^a`` is
    ``D^(n-a)`` times that of ``H``.
    """
    u = [rng.randint(10**4, 2 * 10**4) * rng.choice((-1, 1)) for _ in Bs]
    M = B0
    for ui, B in zip(u, Bs):
        M = M + B * ui
    want = [int(c) for c in M.charpoly().coeffs()]
    want += [0] * (n + 1 - len(want))
    got = [0] * (n + 1)
    for key, c in zip(keys, acc):
        if c:
            got[key[-1]] += c * math.prod(
                ui ** (2 * b if e else b) for ui, b, e in zip(u, key[:-1], even)
            )
    return all(g * D ** (n - a) == w for a, (g, w) in enumerate(zip(got, want)))
