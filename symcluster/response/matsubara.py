"""Certified Lehmann sums on a Matsubara grid: sum_p w_p / (i omega_n - omega_p) for many
columns of weights and frequencies omega_n = (2n + 1) pi / beta, in ball arithmetic.

With a_q = omega_q^2 (poles of equal |omega| share it) and x_n = omega_n^2,
1 / (i omega_n - omega) = (-omega - i omega_n) / (omega^2 + x_n), so every column needs
sum_q V_q / (a_q + x_n) for two weight vectors V (sum_p w_p and sum_p -omega_p w_p per
|omega|).  Two ways, both in balls:

* low frequencies: the kernel K_nq = 1 / (a_q + x_n) built elementwise, then one ball
  matrix product per part;
* high frequencies, where rho_n = a_max / x_n <= 1/256: the finite expansion
  1 / (a + x) = sum_{k < K} (-a)^k / x^(k + 1) + (-a / x)^K / (a + x), so the sum is a
  polynomial of degree K in u = 1 / x with the moments sum_q V_q (-a_q)^k as
  coefficients, evaluated in balls, plus a remainder of modulus at most
  sum_q |V_q| rho^K u, added to each ball's radius.  K is chosen so that rho^K is below
  the working precision.

Every ball's radius is checked against the requested digits at the end: a larger one is
a :class:`~symcluster.errors.VerificationError`.
"""

import math

import flint
import mpmath
import numpy as np

from symcluster.errors import VerificationError
from symcluster.response.balls import arb_precision, to_arb, to_mpc_list, upper

__all__ = ["matsubara_sums"]

#: the expansion is used where a_max / x_n is at most this
TAIL_RATIO = 1.0 / 256


def matsubara_sums(omegas, columns, beta, n_max, digits):
    """sum_p columns[c][p] / (i w_n - omega_p) for every column c and n < n_max.

    Parameters
    ----------
    omegas : list of mpmath.mpf
        Poles.
    columns : list of list of mpmath.mpf
        Weights, one list (as long as ``omegas``) per column.
    beta : mpmath.mpf
        Inverse temperature > 0.
    n_max : int
    digits : int
        Requested digits: the balls' radii must stay below 10**-(digits + 4).

    Returns
    -------
    list of list of mpmath.mpc
        ``[c][n]``.

    Examples
    --------
    >>> v = matsubara_sums([mpmath.mpf(1), mpmath.mpf(-1)], [[mpmath.mpf(1) / 2] * 2],
    ...                    mpmath.mpf(10), 3000, 20)[0]
    >>> with mpmath.workdps(40):                      # G = -i w / (1 + w^2)
    ...     w = [(2 * n + 1) * mpmath.pi / 10 for n in (0, 2999)]
    ...     [abs(v[n] - mpmath.mpc(0, -x / (1 + x ** 2))) < 1e-30 for n, x in zip((0, 2999), w)]
    [True, True]
    """
    P = len(omegas)
    C = len(columns)
    with arb_precision(digits + 10):
        bits = flint.ctx.prec
        step = 2 * flint.arb.pi() / to_arb(beta)
        half = flint.arb(1) / 2
        wn = np.array([step * (n + half) for n in range(n_max)], dtype=object)
        mags = sorted({abs(x) for x in omegas}) or [mpmath.mpf(0)]
        slot = {m: q for q, m in enumerate(mags)}
        sq = [to_arb(m) ** 2 for m in mags]
        Q = len(mags)
        W = flint.arb_mat(Q, C)
        Wre = flint.arb_mat(Q, C)
        for c, col in enumerate(columns):
            for p in range(P):
                x = to_arb(col[p])
                q = slot[abs(omegas[p])]
                W[q, c] = W[q, c] + x
                Wre[q, c] = Wre[q, c] - to_arb(omegas[p]) * x
        # first n of the expansion: x_n >= a_max / TAIL_RATIO (decided in balls)
        amax = upper(sq[-1])
        w_min = math.sqrt(amax / TAIL_RATIO)
        n0 = min(n_max, max(0, int(w_min / float(step.mid())) - 1))
        while n0 < n_max and not (wn[n0] * wn[n0] * TAIL_RATIO >= sq[-1]):
            n0 += 1
        re, im = [[None] * n_max for _ in range(C)], [[None] * n_max for _ in range(C)]
        if n0 > 0:
            low = wn[:n0]
            K = flint.arb_mat((1 / (np.array(sq, dtype=object)[None, :]
                                    + (low * low)[:, None])).tolist())
            kre = (K * Wre).tolist()
            kim = np.array((K * W).tolist(), dtype=object) * (-low)[:, None]
            for c in range(C):
                for n in range(n0):
                    re[c][n] = kre[n][c]
                    im[c][n] = kim[n, c]
        if n0 < n_max:
            _tail(sq, W, Wre, wn, n0, n_max, bits, re, im)
        lim = flint.arb(10) ** (-(digits + 4))
        if not all(x.rad() < lim for part in (re, im) for col in part for x in col):
            rad = max(float(x.rad()) for part in (re, im) for col in part for x in col)
            raise VerificationError(f"Matsubara sums: rounding error {rad:.1e} exceeds "
                                    f"1e-{digits + 4}; report this model and point")
        return [to_mpc_list(re[c], im[c]) for c in range(C)]


def _tail(sq, W, Wre, wn, n0, n_max, bits, re, im):
    """The expansion in u = 1 / x_n for n0 <= n < n_max (module docstring)."""
    Q, C = W.nrows(), W.ncols()
    K = max(1, math.ceil(bits / -math.log2(TAIL_RATIO)) + 1)
    # moments m_k = sum_q V_q (-a_q)^k: V^T (Q x K powers) times the weights
    powers = flint.arb_mat(K, Q)
    for q, a in enumerate(sq):
        v = flint.arb(1)
        for k in range(K):
            powers[k, q] = v
            v = -v * a
    us = [1 / (x * x) for x in wn[n0:]]
    # remainder: at most sum_q |V_q| rho^K u <= sum_q |V_q| rho^K u_n0 for every n >= n0,
    # put into the radius of the constant coefficient
    rho = float(TAIL_RATIO) ** K * (1 + 1e-12)
    u0 = upper(us[0])
    tw = -wn[n0:]
    for V, target, imaginary in ((W, im, True), (Wre, re, False)):
        mom = powers * V
        for c in range(C):
            total = sum(upper(V[q, c]) for q in range(Q)) * rho * u0 * (1 + 1e-12)
            poly = flint.arb_poly([flint.arb(0, total)] + [mom[k, c] for k in range(K)])
            vals = poly.evaluate(us, algorithm="iter")
            if imaginary:
                vals = [v * w for v, w in zip(vals, tw)]
            target[c][n0:] = vals
