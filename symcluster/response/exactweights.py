"""Exact Lehmann weights at a rational point, where both levels of a pole are closed forms.

A weight of :mod:`symcluster.response.greens` at T = 0 is

    w_ij = p Tr(Y_i^T Pi_B Y_j Pi_A),

with Y_m the matrix of the ladder operator (c_m^+ for particle poles, c_m for hole poles)
from the sector of the ground level A to the sector of the final level B, p the
probability of each ground state (1 / the ground-state degeneracy), and Pi_A, Pi_B the
orthogonal projectors onto the eigenspaces of the values lambda_A, lambda_B of the two
levels at the point.  This module computes w_ij exactly, by a route that shares nothing
with the certified eigenvectors of :mod:`symcluster.response.eigen`:

1. H_a, H_b: the sector matrices at the point, exact rationals (python-flint ``fmpq_mat``);
   q_a, q_b the squarefree parts of their characteristic polynomials (every eigenvalue a
   simple root).
2. Spectral projectors as polynomials in H (Lagrange): Pi_A = r_A(H_a) with
   r_A(x) = q_a(x) / ((x - lambda_A) q_a'(lambda_A)) = sum_k alpha_k(lambda_A) x^k,
   alpha_k(y) = c_k(y) / q_a'(y), c_k(y) = sum_{m > k} q_m y^(m - k - 1) (synthetic
   division).  r_A is 1 at lambda_A and 0 at every other eigenvalue of the symmetric H_a.
3. w_ij = p sum_{k,l} alpha_k(lambda_A) beta_l(lambda_B) T_kl with the rational traces
   T_kl = Tr(Y_i^T H_b^l Y_j H_a^k), one exact matrix product for all i, j, k, l.
4. lambda_A generates the number field Q[x]/m_A, m_A its minimal polynomial: the one
   irreducible factor of q_a (python-flint's exact factorisation) with a root ball
   (``complex_roots``, certified) that overlaps the certified value of level A; powers of x and
   1/q_a'(x) are reduced in it, so that w_ij = p sum_{r,s} G_rs lambda_A^r lambda_B^s with
   rational G (r < deg m_A, s < deg m_B): a canonical exact form.

Each exact weight is compared with the certified numerical weight of the same pole (its
value at the closed-form energies against the ball-arithmetic weight, within the proven
bound); a disagreement is a VerificationError.  The two routes share only the sector
matrices of H and of the ladder operators, which the sum rules of
:mod:`symcluster.response.greens` test against the states.  Exact weights are made at T = 0 only (a
thermal weight carries Boltzmann factors of every level) and for sector pairs of at most
``MAX_PAIR_STATES`` = n_a n_b states and squarefree degrees of at most ``MAX_DEGREE``
(the sizes where eigenvectors in closed form are of use); elsewhere the entry is None.
"""

import flint
import mpmath
import sympy

from symcluster.errors import VerificationError
from symcluster.response.eigen import ladder_matrix

__all__ = ["ExactWeight", "exact_weights", "MAX_PAIR_STATES", "MAX_DEGREE"]

#: largest n_a * n_b of a sector pair whose weights are made exact
MAX_PAIR_STATES = 6000
#: largest degree of the squarefree characteristic polynomial of a sector
MAX_DEGREE = 60


class ExactWeight:
    """The exact weight matrix of one pole: a sum of parts ``(p, lambda_A, lambda_B, G)``
    with ``G[i][j]`` rational fmpq_mat (rows: powers of lambda_A, columns: of lambda_B).

    ``expr(i, j)`` is the sympy number w_ij (made on first use, checked against its value
    at the closed-form energies, and kept); ``value(i, j)`` that value (mpmath).

    Examples
    --------
    >>> import symcluster as sc
    >>> gm = sc.greens_matrix(sc.solve(sc.hubbard(sc.chain(2))), {"t": 1, "U": 0}, N=1,
    ...                       digits=20)
    >>> [str(ew.expr(0, 1)) for ew in gm.exact_weights]        # bonding, antibonding
    ['1/2', '-1/2']
    """

    def __init__(self, parts, n_modes, values):
        self.parts = parts
        self.n_modes = n_modes
        self.values = values            # (digits, [(lambda_A, lambda_B) mpmath per part])
        self._cache = {}

    def expr(self, i, j):
        key = (min(i, j), max(i, j))
        if key not in self._cache:
            total = sympy.Integer(0)
            for p, la, lb, G in self.parts:
                g = G[key[0]][key[1]]
                rows = [[sympy.Rational(int(x.p), int(x.q)) for x in row] for row in g.table()]
                term = sum((c * la ** r * lb ** s for r, row in enumerate(rows)
                            for s, c in enumerate(row) if c), sympy.Integer(0))
                total += sympy.Rational(int(p.p), int(p.q)) * term
            total = sympy.radsimp(sympy.expand(total))
            # the closed form against the same weight at the certified energies: catches a
            # closed form of another root, or a simplification that changed the number
            with mpmath.workdps(40):
                ref = self.value(*key)
                got = mpmath.mpf(str(sympy.N(total, 50)))
                if abs(got - ref) > mpmath.mpf(10) ** -30 * (1 + abs(ref)):
                    raise VerificationError(
                        f"exact weight of modes {key}: the closed form is "
                        f"{mpmath.nstr(got, 15)}, its value at the point {mpmath.nstr(ref, 15)}")
            self._cache[key] = total
        return self._cache[key]

    def value(self, i, j, values=None):
        """w_ij with lambda_A, lambda_B replaced by mpmath numbers ``values[k]`` (pairs;
        default: the closed-form energies, to enough digits)."""
        if values is None:
            dps, values = self.values
            with mpmath.workdps(dps):
                return +self.value(i, j, values)
        total = mpmath.mpf(0)
        for (p, _, _, G), (va, vb) in zip(self.parts, values):
            g = G[min(i, j)][max(i, j)].table()
            acc = mpmath.mpf(0)
            for r, row in enumerate(g):
                for s, c in enumerate(row):
                    if c:
                        acc += mpmath.mpf(int(c.p)) / int(c.q) * va ** r * vb ** s
            total += mpmath.mpf(int(p.p)) / int(p.q) * acc
        return total


class _Sector:
    """Exact H of one sector at the point, its squarefree characteristic polynomial and
    the synthetic-division matrix of its projectors."""

    def __init__(self, system, sector):
        space = system.space
        self.states = space.sector_states(*sector)
        self.index = {s: i for i, s in enumerate(self.states)}
        n = len(self.states)
        H = flint.fmpq_mat(n, n)
        for (r, c), v in system.exact_matrix(self.states, self.index).items():
            H[r, c] = flint.fmpq(v.numerator, v.denominator)
        self.H = H
        self.n = n
        p = H.charpoly()
        self.q = p / p.gcd(p.derivative()) if n > 1 else p
        self.degree = self.q.degree()
        self._fields = {}
        self._factors = None

    def field_matrix(self, value, digits, scale):
        """Rows k < degree: alpha_k(x) reduced modulo the irreducible factor m of q that has
        the eigenspace's value ``value`` (mpmath; its levels agree with it to
        10**-(digits+8) ``scale``) as a root (coefficients of 1, x, ...); None unless
        exactly one root ball of q (certified, python-flint ``complex_roots``) overlaps
        the ball of radius 10**-(digits+7) (1 + |value| + scale) around it (then the entry
        stays numerical)."""
        key = repr(value)                # the full certified value (distinct levels)
        if key in self._fields:
            return self._fields[key]
        if self._factors is None:
            self._factors = [f for f, _ in self.q.factor()[1]]
        old = flint.ctx.prec
        flint.ctx.prec = max(old, int((digits + 40) * 3.33))
        try:
            ball = flint.arb(flint.arb(mpmath.nstr(value, digits + 25)),
                             flint.arb(10) ** (-(digits + 7))
                             * (1 + abs(float(value)) + float(scale)))
            hits = [f for f in self._factors for r, _ in f.complex_roots()
                    if r.real.overlaps(ball) and r.imag.overlaps(flint.arb(0))]
        finally:
            flint.ctx.prec = old
        out = None
        if len(hits) == 1:
            mp = hits[0]
            d = mp.degree()
            qd = self.q.derivative() % mp
            g, u, _ = qd.xgcd(mp)
            if not g.is_one():
                raise VerificationError("exact weights: q'(lambda) vanishes at a simple "
                                        "eigenvalue (the squarefree part is wrong)")
            qc = self.q.coeffs()
            D = self.degree
            rows = []
            for k in range(D):
                ck = flint.fmpq_poly([qc[m] for m in range(k + 1, D + 1)])
                c = ((ck * u) % mp).coeffs()
                rows.append([c[r] if r < len(c) else flint.fmpq(0) for r in range(d)])
            out = flint.fmpq_mat(rows)
        self._fields[key] = out
        return out


def _flat(mat):
    return [x for row in mat.table() for x in row]


class _Pair:
    """T_kl(i, j) = Tr(Y_i^T H_b^l Y_j H_a^k) for one (source, target) sector pair."""

    def __init__(self, system, A, B, s, dagger, M):
        space = system.space
        Ys = []
        for m in range(M):
            Y = flint.fmpq_mat(B.n, A.n)
            for row, col, sign in ladder_matrix(space, A.states, B.index, m, s, dagger):
                Y[row, col] = sign
            Ys.append(Y)
        Da, Db = A.degree, B.degree
        vrows, zrows = [], []
        for Y in Ys:
            X = Y
            for _ in range(Db):
                vrows.append(_flat(X))
                X = B.H * X
            Z = Y
            for _ in range(Da):
                zrows.append(_flat(Z))
                Z = Z * A.H
        V = flint.fmpq_mat(vrows)
        Zt = flint.fmpq_mat(zrows).transpose()
        T = V * Zt                          # rows (i, l), columns (j, k)
        self.T = {}
        for i in range(M):
            for j in range(i, M):
                self.T[(i, j)] = flint.fmpq_mat(
                    [[T[i * Db + l, j * Da + k] for l in range(Db)] for k in range(Da)])


def exact_weights(system, ens, merged, s, M, weight_error):
    """Per merged pole, an :class:`ExactWeight` or None (module docstring).

    Parameters
    ----------
    system : PointSystem
    ens : Ensemble
    merged : list
        ``(omega, W, handles)`` per pole: W the certified weights (mpmath, M x M), handles
        ``(member, final eigenspace, d, target sector)`` of the poles merged into it.
    s : int
        Spin (0 up, 1 down).
    M : int
        Number of modes.
    weight_error : mpmath.mpf
        Proven bound of each certified weight.

    Returns
    -------
    list of ExactWeight or None

    Raises
    ------
    VerificationError
        An exact weight disagrees with the certified one.

    Examples
    --------
    Called by :func:`symcluster.greens_function`; its results are the second entries of
    ``exact_poles``:

    >>> import symcluster as sc
    >>> spec = sc.solve(sc.hubbard(sc.chain(2)))
    >>> g = sc.greens_function(spec, {"t": 1, "U": 4}, N=2, digits=20)
    >>> [str(w) for _, w in g.exact_poles]
    ['1/4 - sqrt(2)/8', 'sqrt(2)/8 + 1/4', 'sqrt(2)/8 + 1/4', '1/4 - sqrt(2)/8']
    """
    if ens.beta is not None:
        return [None] * len(merged)
    total_dim = sum(m.space.dim for m in ens.members)
    for m in ens.members:
        if abs(m.prob * total_dim - 1) > mpmath.mpf(10) ** (-system.digits):
            return [None] * len(merged)
    p = flint.fmpq(1, total_dim)
    sectors, pairs = {}, {}

    def sector(key):
        if key not in sectors:
            sectors[key] = _Sector(system, key) if system.space.sector_dim(*key) > 0 else None
        return sectors[key]

    out = []
    pt = system.point
    for omega, W, handles in merged:
        parts, values = [], []
        for mem, B, d, tgt in handles:
            la, lb = _closed_value(mem.space, pt), _closed_value(B, pt)
            if la is None or lb is None:
                break
            if system.space.sector_dim(*mem.sector) * system.space.sector_dim(*tgt) \
                    > MAX_PAIR_STATES:
                break
            SA, SB = sector(mem.sector), sector(tgt)
            if SA.degree > MAX_DEGREE or SB.degree > MAX_DEGREE:
                break
            Fa = SA.field_matrix(mem.space.value, system.digits, system.scale)
            Fb = SB.field_matrix(B.value, system.digits, system.scale)
            if Fa is None or Fb is None:
                break
            key = (mem.sector, tgt, d)
            if key not in pairs:
                pairs[key] = _Pair(system, SA, SB, s, d > 0, M)
            T = pairs[key].T
            G = [[None] * M for _ in range(M)]
            Fat = Fa.transpose()
            for (i, j), Tij in T.items():
                G[i][j] = Fat * Tij * Fb
            parts.append((p, la, lb, G))
            values.append((la, lb))
        else:
            ew = ExactWeight(parts, M, _high_precision(parts, values, system.digits))
            _check(ew, W, M, weight_error * (len(handles) + 1), system)
            out.append(ew)
            continue
        out.append(None)
    return out


def _high_precision(parts, closed, digits):
    """The closed forms (lambda_A, lambda_B) of every part as mpmath numbers, to enough
    digits that sum_rs G_rs lambda_A^r lambda_B^s keeps digits + 10 of them (near-equal
    levels make G large: 1/q'(lambda) grows as the gaps shrink)."""
    big = 0.0
    for (_, _, _, G), (la, lb) in zip(parts, closed):
        ra = max(1.0, abs(float(sympy.N(la, 15))))
        rb = max(1.0, abs(float(sympy.N(lb, 15))))
        for row in G:
            for g in row:
                if g is None:
                    continue
                for r, line in enumerate(g.table()):
                    for s_, c in enumerate(line):
                        if c:
                            big = max(big, abs(float(c)) * ra ** r * rb ** s_ * (r + s_ + 1))
    dps = digits + 20 + max(0, int(mpmath.log10(big + 1)) + 1)
    with mpmath.workdps(dps):
        out = [(mpmath.mpf(str(sympy.N(la, dps + 5))), mpmath.mpf(str(sympy.N(lb, dps + 5))))
               for la, lb in closed]
    return dps, out


def _closed_value(space, point):
    """The eigenspace's energy as a closed form at the point (the shortest of its levels'
    closed forms), or None when none of its levels is a closed form.  A space can hold
    several levels, merged because they agree at the point to 10**-(digits+8);
    ``_Sector.field_matrix`` admits it only when exactly one eigenvalue of the sector lies
    that close, so that all of them equal that eigenvalue exactly."""
    forms = [sympy.radsimp(lev.energy.subs(point)) for lev in space.levels
             if lev.is_closed_form]
    return min(forms, key=lambda e: len(str(e))) if forms else None


def _check(ew, W, M, bound, system):
    """The exact weight at the closed-form energies must match the certified weight."""
    tol = bound + mpmath.mpf(10) ** (-(system.digits + 1))
    for i in range(M):
        for j in range(i, M):
            v = ew.value(i, j)
            if abs(v - W[i][j]) > tol:
                raise VerificationError(
                    f"exact weight of modes ({i}, {j}) is {mpmath.nstr(v, 15)} at the point, "
                    f"the certified weight {mpmath.nstr(W[i][j], 15)}")
