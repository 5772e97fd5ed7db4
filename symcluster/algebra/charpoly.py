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
from symcluster.algebra.interpolate import (_mirror_shift, _multimodular,  # noqa: F401
                                            _parity_even, _samples, lower_set)
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


