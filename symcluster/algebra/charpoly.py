"""Exact characteristic polynomials ``det(E·1 − H)`` of blocks linear in the couplings.

Three interchangeable backends compute the same polynomial:

``"sympy"`` (simple path, the reference)
    ``DomainMatrix.charpoly`` over ``ZZ[couplings]`` or ``QQ[couplings]``.
``"mpoly"`` (small blocks)
    Berkowitz's division-free algorithm on python-flint ``fmpz_mpoly`` entries.
``"flint"`` (fast path)
    Homogeneity removes one coupling (it is set to 1 and restored at the end); the
    remaining couplings are sampled at small integers on a lower set of exponents
    (:func:`lower_set`: degree in each coupling at most the rank of its matrix, total
    degree at most the dimension, so about half the tensor grid for two free couplings),
    the characteristic polynomial of every sample is computed modulo word-size primes
    (python-flint ``nmod_mat.charpoly``), interpolated exactly modulo each prime
    (Newton divided differences along each axis, then conversion to monomials), and
    lifted by Chinese remaindering.  A coupling in
    which the polynomial is even (the hopping of a bipartite cluster, by the sublattice
    gauge symmetry) is interpolated in its square, which halves its grid; the coupling
    that is set to 1 is the one that leaves the smallest grid.  The block's rational
    denominator is inverted modulo each prime, so the lifted coefficients are those of
    the block itself (integers), not of its integer multiple.  Lifting stops
    when a rigorous coefficient bound is passed, or earlier when the lift is stable
    under one more prime *and* the result agrees exactly with an independent integer
    characteristic polynomial (``fmpz_mat.charpoly``) at a random point off the grid.

The choice between them is made in one place, :func:`_choose_backend`.
"""

from __future__ import annotations

import math
import random
from fractions import Fraction

import sympy
from sympy.polys.domains import QQ, ZZ
from sympy.polys.matrices import DomainMatrix

from symcluster.algebra.block import ENERGY, LinearBlock, coupling_symbol
from symcluster.algebra.polydict import poly_from_dict
from symcluster.algebra.split import ConjugateSplit
from symcluster.errors import ModelError, VerificationError

try:  # pragma: no cover - exercised implicitly
    import flint

    HAVE_FLINT = True
except ImportError:  # pragma: no cover
    flint = None
    HAVE_FLINT = False

__all__ = ["charpoly", "charpoly_dict", "BACKENDS"]

BACKENDS = ("flint", "mpoly", "sympy")

#: Blocks up to this dimension use Berkowitz's algorithm over python-flint's
#: multivariate integer polynomials ("mpoly") by default, larger ones the multimodular
#: path ("flint").  Measured in one run on 2 cores (random symmetric blocks, two
#: couplings, 30 % fill; ms per block, mpoly / flint / sympy): dim 2: 0.04 / 0.09 / 0.17,
#: dim 4: 0.12 / 0.15 / 0.39, dim 6: 0.31 / 0.29 / 0.91, dim 8: 0.79 / 0.50 / 2.8,
#: dim 12: 3.3 / 1.0 / -.  The sympy path is the reference in the shared test suite.
SMALL_DIM = 5

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


def _choose_backend(block):
    """Pick ``"flint"`` or ``"sympy"`` for `block` (the only place this is decided)."""
    if not HAVE_FLINT:
        return "sympy"
    if block.dim <= SMALL_DIM:
        return "mpoly"
    return "flint"


def charpoly(block, names, backend=None):
    """Exact characteristic polynomial ``det(E·1 − H)`` of a linear block.

    Parameters
    ----------
    block : LinearBlock
        ``H = sum(Symbol(name) * block.terms[name])``.
    names : tuple of str
        Coupling names, in the order of the generators after ``E``.  Names without
        terms in the block simply do not appear in the result; every coupling with a
        nonzero term must be listed.
    backend : {None, "flint", "mpoly", "sympy"}
        None chooses automatically (see :func:`_choose_backend`).

    Returns
    -------
    sympy.Poly
        Monic in ``E``, generators ``(E, *symbols)`` with ``E = Symbol("E", real=True)``
        and ``symbols = [Symbol(n, real=True) for n in names]``; domain ``ZZ`` when all
        coefficients are integers, ``QQ`` otherwise.

    Raises
    ------
    ModelError
        If `names` misses a coupling of the block, repeats a name, or `backend` is unknown.

    Examples
    --------
    >>> b = LinearBlock(2, {"t": {(0, 1): -2, (1, 0): -2}, "U": {(0, 0): 1}})
    >>> charpoly(b, ("t", "U")).as_expr()
    E**2 - E*U - 4*t**2
    """
    return _to_poly(charpoly_dict(block, names, backend), tuple(names))


def charpoly_dict(block, names, backend=None):
    """:func:`charpoly` as a plain ``{(a, e_1, ..., e_k): int or Fraction}`` dictionary.

    The exponent tuples list the power of ``E`` first, then those of the couplings in
    the order of `names`; zero coefficients are absent.  Same parameters and errors
    as :func:`charpoly`, for callers that go on in python-flint without a sympy Poly.
    """
    names = tuple(names)
    if not isinstance(block, LinearBlock):
        raise ModelError(f"charpoly needs a LinearBlock, got {type(block).__name__}; build one first")
    if len(set(names)) != len(names):
        raise ModelError(f"coupling names {names!r} contain a repeat; list each coupling once")
    missing = [n for n in block.names() if n not in names]
    if missing:
        raise ModelError(
            f"block has terms for coupling(s) {missing!r} not listed in names={names!r}; add them"
        )
    if backend is None:
        backend = _choose_backend(block)
    if backend == "flint":
        if not HAVE_FLINT:  # pragma: no cover
            raise ModelError("backend 'flint' requested but python-flint is not installed; use 'sympy'")
        coeffs = _charpoly_flint(block, names)
    elif backend == "sympy":
        coeffs = _charpoly_sympy(block, names)
    elif backend == "mpoly":
        if not HAVE_FLINT:  # pragma: no cover
            raise ModelError("backend 'mpoly' requested but python-flint is not installed; use 'sympy'")
        coeffs = _charpoly_mpoly(block, names)
    else:
        raise ModelError(f"unknown charpoly backend {backend!r}; use None, 'flint', 'mpoly' or 'sympy'")
    return {m: c for m, c in coeffs.items() if c != 0}


def _to_poly(coeffs, names):
    """Build the sympy Poly from ``{(a, e_1, ..., e_k): Fraction}``."""
    gens = (ENERGY,) + tuple(coupling_symbol(n) for n in names)
    if all(Fraction(c).denominator == 1 for c in coeffs.values()):
        rep = {m: ZZ(int(c)) for m, c in coeffs.items() if c != 0}
        return poly_from_dict(rep, gens, ZZ)
    rep = {}
    for m, c in coeffs.items():
        if c != 0:
            c = Fraction(c)
            rep[m] = QQ(c.numerator, c.denominator)
    return poly_from_dict(rep, gens, QQ)


# --------------------------------------------------------------------------- simple path


def _charpoly_sympy(block, names):
    """``DomainMatrix.charpoly`` over ``ZZ[...]``/``QQ[...]``; returns the coefficient dict."""
    n = block.dim
    present = [nm for nm in names if nm in block.names()]
    rational = block.denominator() != 1
    base = QQ if rational else ZZ
    if present:
        K = base[tuple(coupling_symbol(nm) for nm in present)]
        gens = K.ring.gens
    else:
        K = base
        gens = ()
    rows = {}
    for k, nm in enumerate(present):
        for (i, j), v in block.terms[nm].items():
            if v == 0:
                continue
            v = Fraction(v)
            c = base(v.numerator) if base is ZZ else QQ(v.numerator, v.denominator)
            row = rows.setdefault(i, {})
            row[j] = row.get(j, K.zero) + gens[k] * c
    rows = {i: {j: x for j, x in r.items() if x} for i, r in rows.items()}
    rows = {i: r for i, r in rows.items() if r}
    dM = DomainMatrix(rows, (n, n), K)
    cp = dM.charpoly()  # highest power first
    out = {}
    pos = [names.index(nm) for nm in present]
    for k, c in enumerate(cp):
        a = n - k
        if not present:
            if c:
                out[(a,) + (0,) * len(names)] = Fraction(int(c.numerator), int(c.denominator)) if rational else int(c)
            continue
        for mon, val in c.items():
            e = [0] * len(names)
            for p_, m_ in zip(pos, mon):
                e[p_] = m_
            if rational:
                out[(a, *e)] = Fraction(int(val.numerator), int(val.denominator))
            else:
                out[(a, *e)] = int(val)
    return out


# --------------------------------------------------------------------------- small blocks


def _berkowitz(rows, n, one):
    """Coefficients of ``det(x - A)``, highest power first (Berkowitz, division-free).

    ``rows[i]`` is a sparse ``{j: entry}`` row of ``A``; the entries are python-flint
    multivariate polynomials (any commutative ring whose elements support ``+``, ``-``,
    ``*``).  For the leading principal submatrices ``A_r`` the characteristic polynomial
    is ``p_r = T_r p_(r-1)`` with ``T_r`` the lower-triangular Toeplitz matrix of
    ``1, -a_rr, -R C, -R A_(r-1) C, ..., -R A_(r-1)^(r-2) C`` (``R``, ``C``: the new row
    and column without the diagonal entry).  S. J. Berkowitz, Inf. Process. Lett. 18,
    147 (1984) [from memory]; the result is compared with sympy's ``DomainMatrix`` in
    tests/test_charpoly.py.
    """
    zero = one - one
    p = [one, -rows[0].get(0, zero)]
    for r in range(1, n):
        row_r = rows[r]
        R = {j: v for j, v in row_r.items() if j < r}
        v = {i: rows[i][r] for i in range(r) if r in rows[i]}
        t = [one, -row_r.get(r, zero)]
        for k in range(r):
            t.append(-sum((R[j] * x for j, x in v.items() if j in R), zero))
            if k < r - 1 and v:
                w = {}
                for i in range(r):
                    acc = None
                    for j, a in rows[i].items():
                        if j < r and j in v:
                            term = a * v[j]
                            acc = term if acc is None else acc + term
                    if acc is not None and not acc.is_zero():
                        w[i] = acc
                v = w
        p = [sum((t[i - j] * p[j] for j in range(min(i, r) + 1)), zero) for i in range(r + 2)]
    return p


def _charpoly_written_out(block, names):
    """``det(E - H)`` of a 1x1 or 2x2 block written out on plain dictionaries:
    ``E - a`` and ``E^2 - (a + d) E + (a d - b c)``, with every entry linear in the
    couplings (cheaper than setting up polynomial rings for one or two products)."""
    n = block.dim
    k_all = len(names)
    units = []
    for i in range(k_all):
        e = [0] * k_all
        e[i] = 1
        units.append(tuple(e))
    # entry (i, j) -> [(index of the coupling, value)]
    entry = {}
    for nm, mat in block.terms.items():
        x = names.index(nm)
        for key, v in mat.items():
            if v:
                entry.setdefault(key, []).append((x, v))
    out = {(n,) + (0,) * k_all: 1}

    def add(key, v):
        out[key] = out.get(key, 0) + v

    for i in range(n):
        for x, v in entry.get((i, i), ()):
            add((n - 1,) + units[x], -v)
    if n == 2:
        for (a, b), sign in (((0, 0), (1, 1)), 1), (((0, 1), (1, 0)), -1):
            for x, v in entry.get(a, ()):
                for y, w in entry.get(b, ()):
                    add((0,) + tuple(p + q for p, q in zip(units[x], units[y])), sign * v * w)
    return {m: (c.numerator if type(c) is Fraction and c.denominator == 1 else c)
            for m, c in out.items()}


def _charpoly_mpoly(block, names):
    """Characteristic polynomial of a small block by :func:`_berkowitz` over ``Z[couplings]``.

    With the block's denominator ``D``, ``det(E - H) = D^-n det(D E - D H)`` and ``D H``
    is an integer matrix in the couplings.  Blocks of dimension 1 and 2 are written out
    (:func:`_charpoly_written_out`).
    """
    n = block.dim
    k_all = len(names)
    if n == 0:
        return {(0,) * (k_all + 1): 1}
    if n <= 2:
        return _charpoly_written_out(block, names)
    D = block.denominator()
    iterms = block.integer_terms(D)
    ctx = flint.fmpz_mpoly_ctx.get(tuple(f"x{i}" for i in range(max(1, k_all))), "lex")
    gens = ctx.gens()
    rows = [dict() for _ in range(n)]
    for nm, mat in iterms.items():
        g = gens[names.index(nm)]
        for (i, j), v in mat.items():
            if v:
                rows[i][j] = rows[i][j] + v * g if j in rows[i] else v * g
    rows = [{j: x for j, x in r.items() if not x.is_zero()} for r in rows]
    coeffs = _berkowitz(rows, n, ctx.constant(1))
    out = {}
    for k, c in enumerate(coeffs):
        a = n - k
        scale = D ** (n - a)
        for mon, val in zip(c.monoms(), c.coeffs()):
            e = tuple(int(x) for x in mon[:k_all])
            val = int(val)
            out[(a, *e)] = val // scale if val % scale == 0 else Fraction(val, scale)
    return out


# --------------------------------------------------------------------------- fast path


def _dense(n, mat):
    rows = [[0] * n for _ in range(n)]
    for (i, j), v in mat.items():
        rows[i][j] = v
    return rows


def _height_bits(n, mats):
    """log2 of a rigorous bound on every coefficient of ``det(E - sum c_i B_i)``.

    The sum of absolute coefficients is at most the permanent of ``1 + sum |B_i|``,
    which is at most the product of its row sums (and of its column sums).
    """
    rows = [1] * n
    cols = [1] * n
    for mat in mats:
        for (i, j), v in mat.items():
            rows[i] += abs(v)
            cols[j] += abs(v)
    lr = sum(math.log2(r) for r in rows)
    lc = sum(math.log2(c) for c in cols)
    return min(lr, lc)


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


def _charpoly_flint(block, names):
    """Homogeneity + modular evaluation/interpolation + CRT; see the module docstring."""
    n = block.dim
    D = block.denominator()
    iterms = block.integer_terms(D)
    present = [nm for nm in names if nm in iterms]
    k_all = len(names)
    if n == 0:
        return {(0,) * (k_all + 1): 1}
    if not present:
        return {(n,) + (0,) * k_all: 1}
    fm = {nm: flint.fmpz_mat(_dense(n, iterms[nm])) for nm in present}
    ranks = {nm: fm[nm].rank() for nm in present}
    rng = random.Random(0x5EED ^ n)
    if len(present) == 1:
        fixed, free, bounds, even, mirror = present[0], [], [], [], []
    else:
        mats = [fm[nm] for nm in present]
        parity = {nm: _parity_even(n, mats, i, rng) for i, nm in enumerate(present)}
        # couplings whose spectrum is mirrored about a moving centre (see _mirror_shift)
        shifts = {}
        for i, nm in enumerate(present):
            c = _mirror_shift(n, iterms[nm])
            if not parity[nm] and c and _parity_even(n, mats, i, rng, c):
                shifts[nm] = c

        def axis(nm):
            return 1 if parity[nm] else (2 if nm in shifts else 0)

        def grid_size(f):
            rest = [nm for nm in present if nm != f]
            pts = lower_set([ranks[nm] // 2 if parity[nm] else ranks[nm] for nm in rest],
                            [parity[nm] for nm in rest], n)
            return _samples(pts, [axis(nm) for nm in rest]), len(pts)

        # fix the coupling whose removal leaves the fewest characteristic polynomials, then
        # the fewest unknown coefficients (an even coupling halves both, a mirrored one only
        # the polynomials)
        fixed = min(present, key=lambda nm: (*grid_size(nm), -ranks[nm], present.index(nm)))
        free = [nm for nm in present if nm != fixed]
        even = [parity[nm] for nm in free]
        bounds = [ranks[nm] // 2 if e else ranks[nm] for nm, e in zip(free, even)]
        mirror = [shifts.get(nm) for nm in free]
    split = None
    if block.centre is not None:
        split = ConjugateSplit(n, block.centre, [fm[nm] for nm in present])
    if not free and split is None:
        # det(x - D c A) = D^n det(x/D - c A): scale back exactly
        cp = [int(c) for c in fm[fixed].charpoly().coeffs()]
        table = {(a,): Fraction(c, D ** (n - a)) for a, c in enumerate(cp) if c}
    else:
        hbits = _height_bits(n, [iterms[nm] for nm in present])
        lift_d = D if block.integral else 1   # else lift the integer multiple D*H
        table = _multimodular(n, lift_d, fm[fixed], [fm[nm] for nm in free], bounds, even, hbits,
                              rng, split, mirror)
        if table is None:
            # an assumption failed (a block flagged integral that is not, or a wrong
            # evenness or mirror guess): redo without them, where the coefficient bound is
            # rigorous
            even = [False] * len(free)
            bounds = [ranks[nm] for nm in free]
            lift_d = 1
            table = _multimodular(n, 1, fm[fixed], [fm[nm] for nm in free], bounds, even,
                                  hbits, rng, split)
        if lift_d != D:
            table = {key: Fraction(c, D ** (n - key[0])) for key, c in table.items()}
    # table: (a, beta_1..beta_m) -> coefficient of x^a prod u_i^beta_i in det(x - H(fixed=1, u))
    out = {}
    ifix = names.index(fixed)
    ifree = [names.index(nm) for nm in free]
    for key, c in table.items():
        a, beta = key[0], key[1:]
        efix = n - a - sum(beta)
        if efix < 0:
            raise VerificationError(
                f"charpoly term E^{a} * {dict(zip(free, beta))} exceeds total degree {n}; "
                "the interpolation is inconsistent, report this block"
            )
        e = [0] * k_all
        e[ifix] = efix
        for p_, b_ in zip(ifree, beta):
            e[p_] = b_
        out[(a, *e)] = c if (isinstance(c, Fraction) and c.denominator != 1) else int(c)
    return out


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
