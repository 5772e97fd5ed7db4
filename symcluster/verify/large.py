"""Checks of sectors too large for a dense float64 diagonalisation.

Both read the plain sector matrix (:mod:`symcluster.verify.plain`), never the blocks:

* :func:`power_traces`: Tr H^m (m = 1 .. 4) of the sector at a rational point, exactly
  (integers); the levels must carry them, ``sum share * E^m`` (docs/verification.md);
* :func:`lowest_ritz_pairs`: the lowest eigenvalues of the sector by the Lanczos iteration
  in float64 (with full reorthogonalisation), each with the norm of its residual
  ``|H y - theta y|``, which bounds the distance from ``theta`` to an eigenvalue of H.
"""

from fractions import Fraction
from math import lcm

import mpmath
import numpy as np

from symcluster.errors import VerificationError

__all__ = ["integer_matrix", "power_traces", "lowest_ritz_pairs", "check_ritz_pairs",
           "check_large_sector"]

#: Lanczos: a Ritz value counts as converged when its residual is below this times the
#: sector's energy scale; the lowest one must converge.
CONVERGED = 1e-8
#: Lanczos: float64 tolerance, relative to the energy scale, on top of the residual.
FLOAT_TOLERANCE = 1e-9


def integer_matrix(matrix, point_by_label):
    """``(rows, cols, values, scale)``: ``H = K / scale`` at a rational point, K an integer
    matrix (each position once, ascending row-major, no zeros; values int64 or Python ints).

    Parameters
    ----------
    matrix : SectorMatrix
    point_by_label : dict
        label -> exact rational (sympy Rational or Fraction).

    Examples
    --------
    >>> import sympy, symcluster as sc
    >>> from symcluster.verify.plain import sector_matrix
    >>> h = sector_matrix(sc.heisenberg(sc.chain(2)), 1, 1)
    >>> r, c, v, s = integer_matrix(h, {"J": sympy.Rational(2, 3)})     # entries -1/4, -1/2
    >>> [int(x) for x in v], s
    ([-2, -4, -4, -2], 12)
    """
    dim = matrix.dim
    factors = {}
    for label, (_, _, _, den) in matrix.parts.items():
        v = Fraction(point_by_label[label])
        factors[label] = (v, den)
    scale = lcm(*(v.denominator * den for v, den in factors.values())) if factors else 1
    keys, vals = [], []
    for label, (rows, cols, nums, den) in matrix.parts.items():
        v, _ = factors[label]
        mult = v.numerator * (scale // (v.denominator * den))          # an exact integer
        keys.append(rows * dim + cols)
        vals.append(nums.astype(object) * mult)
    if not keys:
        empty = np.zeros(0, dtype=np.int64)
        return empty, empty, np.zeros(0, dtype=object), scale
    keys, vals = np.concatenate(keys), np.concatenate(vals)
    order = np.argsort(keys, kind="stable")
    keys, vals = keys[order], vals[order]
    starts = np.flatnonzero(np.concatenate([[True], keys[1:] != keys[:-1]]))
    keys, vals = keys[starts], np.add.reduceat(vals, starts)
    nz = vals != 0
    keys, vals = keys[nz], vals[nz]
    rows = keys // dim
    return rows, keys % dim, _compact(vals, rows), scale


def _compact(vals, rows):
    """The integers (object dtype) as int64 where every entry of K^2 fits: each row's sum
    of |entries| is below max|entry| * (longest row) < 2^31, so |(K^2)_ij| < 2^62."""
    if not len(vals):
        return vals.astype(np.int64)
    longest = int(np.bincount(rows).max())
    if max(abs(int(x)) for x in vals) * longest >= 2 ** 31:
        return vals
    return vals.astype(np.int64)


def power_traces(matrix, point_by_label, top=4):
    """Exact Tr H^m, m = 1 .. ``top`` (``top`` <= 4), of a sector at a rational point.

    With ``H = K / s`` (:func:`integer_matrix`), Tr K^m is summed in integers: Tr K,
    Tr K^2 = sum_ij K_ij K_ji, Tr K^3 = sum_ij (K^2)_ij K_ji and Tr K^4 = sum_ij
    (K^2)_ij (K^2)_ji, with K^2 formed entry by entry from the sparse K.  The matrix must
    be symmetric (exactly); it is then Tr H^m = Tr K^m / s^m.

    Parameters
    ----------
    matrix : SectorMatrix
    point_by_label : dict
    top : int

    Returns
    -------
    list of Fraction
        ``[Tr H, Tr H^2, ...]``.

    Raises
    ------
    VerificationError
        If the sector matrix at the point is not symmetric.

    Examples
    --------
    >>> import sympy, symcluster as sc
    >>> from symcluster.verify.plain import sector_matrix
    >>> h = sector_matrix(sc.hubbard(sc.ring(4)), 1, 0)      # eigenvalues -2t, 0, 0, 2t
    >>> power_traces(h, {"t": sympy.Rational(1, 2), "U": sympy.Integer(3)})
    [Fraction(0, 1), Fraction(2, 1), Fraction(0, 1), Fraction(2, 1)]
    """
    if not 1 <= top <= 4:
        raise ValueError(f"top={top!r}: power traces are summed for m = 1 .. 4 only")
    dim = matrix.dim
    rows, cols, vals, s = integer_matrix(matrix, point_by_label)
    keys = rows * dim + cols
    # symmetric: the transposed positions, sorted, are the same positions with the same values
    tkeys = cols * dim + rows
    order = np.argsort(tkeys)
    if not (np.array_equal(tkeys[order], keys) and np.array_equal(vals[order], vals)):
        raise VerificationError(f"the sector matrix (dimension {dim}) is not symmetric at the "
                                "point: a term of the model is not Hermitian")
    big = vals.astype(object)
    out = [int(big[rows == cols].sum())]
    if top >= 2:
        out.append(int((big * big).sum()))
    if top >= 3:
        # K^2 row by row: entry (i, k) of K times row k of K (CSR: rows ascend)
        starts = np.searchsorted(rows, np.arange(dim + 1))
        length = starts[1:] - starts[:-1]
        reps = length[cols]                     # entries of the row each entry meets
        left = np.repeat(np.arange(len(keys)), reps)
        first = np.repeat(starts[cols], reps)
        shift = np.arange(len(left)) - np.repeat(np.cumsum(reps) - reps, reps)
        right = first + shift
        pair = rows[left] * dim + cols[right]
        prod = vals[left] * vals[right]
        order = np.argsort(pair, kind="stable")
        pair, prod = pair[order], prod[order]
        cut = np.flatnonzero(np.concatenate([[True], pair[1:] != pair[:-1]]))
        k2keys = pair[cut]
        k2 = np.add.reduceat(prod, cut).astype(object)     # exact: see _compact
        # Tr K^3 = sum over positions of K^2 that are also positions of K (symmetric K)
        at = np.searchsorted(keys, k2keys)
        hit = (at < len(keys)) & (keys[np.minimum(at, len(keys) - 1)] == k2keys)
        out.append(int((k2[hit] * big[at[hit]]).sum()))
        if top >= 4:
            out.append(int((k2 * k2).sum()))
    return [Fraction(t, s ** m) for m, t in enumerate(out, 1)]


def _matvec(rows, cols, vals, dim):
    def apply(x):
        return np.bincount(rows, weights=vals * x[cols], minlength=dim)
    return apply


def _norm(v):
    """Euclidean norm, in one thread (see the reorthogonalisation in lowest_ritz_pairs)."""
    return float(np.sqrt(np.einsum("i,i->", v, v)))


def _tridiagonal(alpha, beta):
    n = len(alpha)
    return np.diag(alpha) + np.diag(beta[:n - 1], 1) + np.diag(beta[:n - 1], -1)


def _settled(alpha, beta, count):
    """True when the ``count`` lowest Ritz values have the residual estimate
    ``beta_k |s_kj|`` (Paige's; the last component of each Ritz vector of the tridiagonal
    matrix) below 1e-12 of the largest |Ritz value|: the iteration can stop, and the
    residuals are then computed from the vectors themselves."""
    theta, s = np.linalg.eigh(_tridiagonal(alpha, beta))
    size = max(1.0, float(np.max(np.abs(theta))))
    return bool(np.all(beta[-1] * np.abs(s[-1, :count]) <= 1e-12 * size))


def lowest_ritz_pairs(matrix, point_by_label, count=4, steps=150, seed=0, project=None):
    """The lowest Ritz values of a sector by the Lanczos iteration in float64.

    Full reorthogonalisation against every Lanczos vector (no ghost copies), at most
    ``steps`` steps from a random start vector (``seed``).  Each Ritz vector ``y`` (unit
    norm) gets its residual ``|H y - theta y|`` computed directly, so that an eigenvalue of
    H lies within that distance of ``theta`` (for symmetric H; B. N. Parlett, The Symmetric
    Eigenvalue Problem, Prentice-Hall 1980, Thm 4.5.1, from memory), up to float64
    rounding.  One start vector finds each eigenvalue once, whatever its multiplicity.

    Parameters
    ----------
    matrix : SectorMatrix
    point_by_label : dict
    count : int
        Ritz pairs returned, lowest first.
    steps : int
    seed : int
    project : callable, optional
        A projector onto an H-invariant subspace (a function of a vector): the start
        vector and every new Lanczos vector are projected, so that the Ritz values
        approximate the eigenvalues of H on that subspace (sector selection).

    Returns
    -------
    list of (float, float)
        ``[(theta, residual)]``, ascending in theta.

    Examples
    --------
    >>> import sympy, symcluster as sc
    >>> from symcluster.verify.plain import sector_matrix
    >>> h = sector_matrix(sc.hubbard(sc.ring(4)), 1, 0)
    >>> [round(x, 12) for x, _ in lowest_ritz_pairs(h, {"t": 1, "U": 3}, count=3)]
    [-2.0, 0.0, 2.0]
    """
    dim = matrix.dim
    rows, cols, vals = matrix.numeric(point_by_label)
    apply = _matvec(rows, cols, vals, dim)
    rng = np.random.default_rng(seed)
    steps = min(steps, dim)
    basis = np.zeros((steps, dim))
    v = rng.standard_normal(dim)
    if project is not None:
        v = project(v)
    v /= _norm(v)
    alpha, beta = [], []
    for k in range(steps):
        basis[k] = v
        w = apply(v)
        alpha.append(float(np.einsum("i,i->", v, w)))
        # twice against all earlier vectors (classical Gram-Schmidt, repeated); einsum
        # runs in one thread, where a threaded BLAS on a busy 2-core machine was 20 times
        # slower (measured: 2.6 s against 0.13 s for 100 steps on 12,870 states)
        for _ in range(2):
            w -= np.einsum("ij,i->j", basis[:k + 1], np.einsum("ij,j->i", basis[:k + 1], w))
            if project is not None:
                w = project(w)
        b = _norm(w)
        if k == steps - 1 or b <= 1e-12 * max(1.0, abs(alpha[-1])):
            break
        beta.append(b)
        if (k + 1) % 20 == 0 and _settled(alpha, beta, count):
            break
        v = w / b
    n = len(alpha)
    theta, s = np.linalg.eigh(_tridiagonal(alpha, beta))
    out = []
    for j in range(min(count, n)):
        y = np.einsum("ij,i->j", basis[:n], s[:, j])
        y /= _norm(y)
        out.append((float(theta[j]), _norm(apply(y) - theta[j] * y)))
    return out


def _fail(msg):
    raise VerificationError("verification failed: " + msg + "; the result was discarded")


def check_large_sector(matrix, levels, points, sector, digits, seed=0, steps=200):
    """Compare the levels of one large sector with its plain matrix; raise if they differ.

    Parameters
    ----------
    matrix : SectorMatrix
        The sector's matrix from :mod:`symcluster.verify.plain`.
    levels : list of list of (value, share)
        Per point: each level of the sector with its value there (mpmath, at least
        ``digits`` + 5 digits) and its number of states in the sector.
    points : list of dict
        label -> exact rational, one per entry of ``levels``.
    sector : tuple
        (N_up, N_dn), for the messages.
    digits : int
    seed, steps : int
        The Lanczos start vector's seed and the most steps it takes.

    Returns
    -------
    (float, float)
        The worst relative deviation of the power traces and the lowest Ritz value's
        residual relative to the energy scale.

    Notes
    -----
    At every point, Tr H^m (exact, :func:`power_traces`) must equal ``sum share * E^m``
    to ``10**-digits`` of ``max(sum share |E|^m, dim * s^m)`` (s the largest |coupling|
    at the point), m = 1 .. 4.  At the first point, the lowest Lanczos Ritz value
    (:func:`lowest_ritz_pairs`) must have converged and equal the lowest level to its
    residual plus :data:`FLOAT_TOLERANCE`, and every further converged Ritz value must
    lie that close to some level.

    Examples
    --------
    >>> import mpmath, sympy, symcluster as sc
    >>> from symcluster.verify.plain import sector_matrix
    >>> h = sector_matrix(sc.hubbard(sc.ring(4)), 1, 0)      # eigenvalues -2t, 0, 0, 2t
    >>> pt = {"t": sympy.Rational(1, 2), "U": sympy.Integer(3)}
    >>> good = [(mpmath.mpf(-1), 1), (mpmath.mpf(0), 2), (mpmath.mpf(1), 1)]
    >>> dev, res = check_large_sector(h, [good], [pt], (1, 0), 30)
    >>> dev < 1e-30
    True
    """
    dim = matrix.dim
    worst = 0.0
    limit = mpmath.mpf(10) ** (-digits)
    with mpmath.workdps(digits + 10):
        for pt, lv in zip(points, levels):
            traces = power_traces(matrix, pt)
            scale = max((abs(Fraction(v)) for v in pt.values()), default=Fraction(1))
            for m, tr in enumerate(traces, 1):
                got = mpmath.fsum(share * x ** m for x, share in lv)
                norm = max(mpmath.fsum(share * abs(x) ** m for x, share in lv),
                           dim * mpmath.mpf(scale.numerator) ** m / scale.denominator ** m)
                dev = abs(got - mpmath.mpf(tr.numerator) / tr.denominator) / norm
                if dev > limit:
                    _fail(f"sector {sector} at {pt}: the levels' sum of share*E^{m} differs "
                          f"from the exact Tr H^{m} of the sector by {mpmath.nstr(dev, 3)} "
                          "(relative)")
                worst = max(worst, float(dev))
    xs = sorted(float(mpmath.re(x)) for x, _ in levels[0])
    escale = max(1.0, max(abs(x) for x in xs))
    ritz = lowest_ritz_pairs(matrix, points[0], count=4, steps=min(dim, steps), seed=seed)
    res = check_ritz_pairs(ritz, xs, sector, points[0], escale, steps_note=f" in {steps} steps")
    return worst, res / escale


def check_ritz_pairs(ritz, values, sector, point, escale, space="sector", level="level",
                     iteration="", steps_note=""):
    """Compare Lanczos Ritz pairs with the sorted level values of one space; the residual.

    The lowest Ritz value must have converged and equal the lowest level within its
    residual; every further converged Ritz value must lie within its residual of some
    level.  ``space``, ``level``, ``iteration`` and ``steps_note`` only word the messages
    (a whole sector, or a selected subspace of it).

    Returns
    -------
    float
        The lowest Ritz pair's residual.

    Raises
    ------
    VerificationError
        On any disagreement.

    Examples
    --------
    >>> check_ritz_pairs([(-1.0, 1e-14), (0.5, 1e-14)], [-1.0, 0.5, 2.0], (1, 1), {}, 2.0)
    1e-14
    """
    theta, res = ritz[0]
    if res > CONVERGED * escale:
        _fail(f"sector {sector}: the Lanczos iteration{iteration} did not converge to its "
              f"lowest eigenvalue{steps_note} (residual {res:.2e}); rerun with another seed")
    if abs(values[0] - theta) > res + FLOAT_TOLERANCE * escale:
        _fail(f"sector {sector} at {point}: the lowest {level} {values[0]!r} differs from "
              f"the lowest eigenvalue {theta!r} of the {space} (Lanczos, residual {res:.2e})")
    for theta, r in ritz[1:]:
        if r <= CONVERGED * escale:
            near = min(abs(x - theta) for x in values)
            if near > r + FLOAT_TOLERANCE * escale:
                _fail(f"sector {sector} at {point}: the {space} has the eigenvalue "
                      f"{theta!r} (Lanczos, residual {r:.2e}), and no {level} is within "
                      f"{near:.2e} of it")
    return res
