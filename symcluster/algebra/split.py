"""Characteristic polynomials of Galois-merged blocks from their conjugate parts, modulo p.

A block ``H`` (one matrix per coupling) comes with an operator ``C`` that commutes with
every coupling's matrix and a monic integer polynomial ``f`` of degree ``s`` with
``f(C) = 0`` (:mod:`symcluster.blocks.centre` makes them from a class sum of the lattice
group).  Modulo a prime ``p`` at which ``f`` has ``s`` distinct roots ``a_1..a_s``, the
space splits into the eigenspaces of ``C``, ``H`` preserves each, and

    det(x - H) = prod_k det(x - H_k)   (mod p),

where ``H_k`` is ``H`` on the ``a_k``-eigenspace, of dimension ``m = n / s`` when the
eigenspaces are equal in size (always so for a block of conjugate irreps).  The ``H_k``
come from one Krylov basis: for a random ``n x m`` matrix ``R``, the columns of
``K = [R, C R, ..., C^(s-1) R]`` are a basis exactly when ``K`` is invertible, and then
``H R = K X`` gives ``H_k = sum_d a_k^d X_d`` with ``X_d`` the ``d``-th ``m``-row band of
``X`` (because ``H C^d R = C^d H R`` and ``C`` acts as ``a_k`` on the ``k``-th eigenspace).
So one characteristic polynomial of size ``n`` becomes ``s`` of size ``n / s``.

Every hypothesis is checked, never assumed: ``C H_i = H_i C`` exactly for every coupling
matrix ``H_i`` (once, in integers), and modulo every prime used, that ``f`` splits with
distinct roots, that ``K`` is invertible and that ``f(C) R = 0`` (which, with ``K``
invertible and ``C`` commuting with ``f(C)``, gives ``f(C) = 0`` on the whole space).  A
prime that fails one of the modular checks is skipped.  (Linear algebra: the primary
decomposition of a module over ``F_p[x] / f``; e.g. S. Lang, Algebra, ch. XIV [mem].)
"""

from __future__ import annotations

import random

import flint

from symcluster.errors import VerificationError

__all__ = ["ConjugateSplit"]


class ConjugateSplit:
    """The data of one merged block for :func:`symcluster.algebra.charpoly` (see module).

    Parameters
    ----------
    n : int
        Block dimension.
    centre : (tuple of int, dict)
        ``(f, C)`` as in :class:`~symcluster.algebra.block.LinearBlock`.
    integer_mats : list of flint.fmpz_mat
        The integer matrices of the couplings (any common scale).

    Raises
    ------
    VerificationError
        ``C`` does not commute with one of the matrices, or ``deg f`` does not divide ``n``.

    Examples
    --------
    ``H = [[A, B], [B, A]]`` commutes with the swap ``C`` of its two halves
    (``C^2 = 1``); its parts are ``A + B`` and ``A - B`` (on ``C = +1`` and ``C = -1``):

    >>> import flint
    >>> H = flint.fmpz_mat([[0, 1, 2, 0], [1, 0, 0, 2], [2, 0, 0, 1], [0, 2, 1, 0]])
    >>> C = {(0, 2): 1, (2, 0): 1, (1, 3): 1, (3, 1): 1}
    >>> sp = ConjugateSplit(4, ((-1, 0, 1), C), [H])           # f = x^2 - 1
    >>> sp.degree, sp.size
    (2, 2)
    >>> p = 1000003
    >>> parts = sp.parts(p, [flint.nmod_mat(H, p)])[0]
    >>> sorted(str(m.charpoly()) for m in parts)             # A-B: x^2 + 4x + 3; A+B: x^2 - 4x + 3
    ['x^2 + 4*x + 3', 'x^2 + 999999*x + 3']
    """

    def __init__(self, n, centre, integer_mats):
        f, cmat = centre
        self.f = [int(c) for c in f]
        self.degree = s = len(self.f) - 1
        if s < 2 or self.f[-1] != 1 or n % s:
            raise VerificationError(f"split of a {n}-dimensional block by a polynomial of degree "
                                    f"{s}: the degree must divide the dimension; report this block")
        self.n, self.size = n, n // s
        den = 1
        for v in cmat.values():
            den = _lcm(den, getattr(v, "denominator", 1))
        rows = [[0] * n for _ in range(n)]
        for (i, j), v in cmat.items():
            rows[i][j] = int(v * den)
        self.c_int, self.c_den = flint.fmpz_mat(rows), den
        for k, M in enumerate(integer_mats):
            if self.c_int * M != M * self.c_int:
                raise VerificationError(f"the operator used to split a {n}-dimensional block does "
                                        f"not commute with coupling matrix {k}; report this block")
        self._rng = random.Random(0xC0FFEE ^ n)

    def roots(self, p):
        """The ``s`` distinct roots of ``f`` modulo ``p``, or None if ``f`` does not split so."""
        fac = flint.nmod_poly(self.f, p).factor()[1]
        if len(fac) != self.degree or any(g.degree() != 1 or e != 1 for g, e in fac):
            return None
        return [int(-g.coeffs()[0]) % p for g, _ in fac]

    def parts(self, p, mats):
        """The conjugate parts modulo ``p`` of each matrix in `mats` (nmod_mats mod p).

        Returns
        -------
        list of list of flint.nmod_mat or None
            ``out[i][k]`` is ``mats[i]`` on the ``k``-th eigenspace (``m x m``); None when
            ``p`` fails a check (then another prime is used).
        """
        roots = self.roots(p)
        if roots is None or self.c_den % p == 0:
            return None
        n, m, s = self.n, self.size, self.degree
        cp = flint.nmod_mat(self.c_int, p)
        if self.c_den != 1:
            cp = cp * pow(self.c_den, -1, p)
        for _attempt in range(3):
            R = flint.nmod_mat(n, m, [self._rng.randrange(p) for _ in range(n * m)], p)
            powers = [R]
            for _ in range(s):
                powers.append(cp * powers[-1])
            # f(C) R = 0, with f monic: C^s R = -sum_{d<s} f_d C^d R
            acc = powers[s]
            for d in range(s):
                if self.f[d]:
                    acc = acc + powers[d] * (self.f[d] % p)
            if any(int(x) for x in acc.entries()):
                return None
            cols = [pw.tolist() for pw in powers[:s]]
            K = flint.nmod_mat([[x for pw in cols for x in pw[i]] for i in range(n)], p)
            try:
                kinv = K.inv()
            except ZeroDivisionError:
                continue
            out = []
            for M in mats:
                X = (kinv * (M * R)).tolist()
                bands = [flint.nmod_mat(X[d * m:(d + 1) * m], p) for d in range(s)]
                per_root = []
                for a in roots:
                    acc_k = bands[0]
                    ak = 1
                    for d in range(1, s):
                        ak = ak * a % p
                        acc_k = acc_k + bands[d] * ak
                    per_root.append(acc_k)
                out.append(per_root)
            return out
        return None


def _lcm(a, b):
    from math import gcd
    return a // gcd(a, b) * b
