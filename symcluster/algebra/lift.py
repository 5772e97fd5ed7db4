"""Integer characteristic polynomials of Galois-merged blocks, lifted from residues.

A block of a rational (Galois-merged) irrep of a ring's translation group has the
characteristic polynomial ``P = prod_k P_k`` over the conjugate momenta k of its orbit.
Each ``P_k`` has coefficients in the ring of integers ``Z[c]`` of the real cyclotomic
field (``c = zeta^g + zeta^-g``, zeta = exp(2 pi i / L), g = gcd(k, L)); its conjugates
are the other ``P_k``.  Working modulo primes p = 1 (mod L), where a primitive L-th root
of unity omega exists:

1. **coordinates.**  Each ``P_k`` modulo p is the image of ``sum_i a_i c^i`` under
   ``c -> omega^k + omega^-k``; solving that Vandermonde system gives the integer
   coordinates ``a_i`` (one vector per coefficient) modulo p.  They are lifted by
   Chinese remaindering until the lift is stable under one more prime: s times fewer
   primes than the merged polynomial needs (s conjugates), and each prime costs the
   full block computation;
2. **norm.**  ``P`` itself is then evaluated from the coordinates modulo further primes
   (cheap: no matrix) and lifted up to a rigorous bound on its coefficients,
   ``|c_j| <= C(n, j) R^(n - j)`` for eigenvalues of modulus at most R.

The stop rule of step 1 is probabilistic: a wrong lift survives one more random prime
between 2^61 and 2^62 only if that prime divides the non-zero difference, of b bits say,
which at most b/61 of the about 5·10^16 primes there do.  The result is checked again by
:func:`symcluster.verify.core.verify_blocks` against the block's residues at a fresh
prime, and the spectrum against the plain sector matrices.
"""

from __future__ import annotations

import math
import random

from symcluster.errors import VerificationError

try:  # pragma: no cover - exercised implicitly
    import flint
except ImportError:  # pragma: no cover
    flint = None

__all__ = ["ring_prime", "root_of_unity", "coefficient_bits", "lift_merged"]


def ring_prime(L, rng):
    """A random prime p = 1 (mod L) between 2^61 and 2^62 (python-flint's primality test).

    Examples
    --------
    >>> import random
    >>> p = ring_prime(16, random.Random(0))
    >>> p % 16, 2 ** 61 < p < 2 ** 62
    (1, True)
    """
    while True:
        p = rng.randrange(2 ** 61, 2 ** 62) // L * L + 1
        if p > 2 ** 61 and flint.fmpz(p).is_prime():
            return p


def root_of_unity(L, p, rng):
    """A primitive L-th root of unity modulo the prime ``p`` (p = 1 mod L).

    Examples
    --------
    >>> import random
    >>> w = root_of_unity(8, 17, random.Random(1))
    >>> pow(w, 8, 17), pow(w, 4, 17)
    (1, 16)
    """
    if (p - 1) % L:
        raise VerificationError(f"internal error: {p} is not 1 modulo {L}")
    factors = [q for q in range(2, L + 1) if L % q == 0 and all(q % d for d in range(2, q))]
    while True:
        w = pow(rng.randrange(2, p - 1), (p - 1) // L, p)
        if all(pow(w, L // q, p) != 1 for q in factors):
            return w


def coefficient_bits(n, radius):
    """log2 of a bound on every coefficient of a monic degree-n polynomial whose roots
    have modulus at most ``radius``: max_j C(n, j) radius^(n - j) (Vieta).

    Examples
    --------
    >>> round(coefficient_bits(2, 3), 3)        # (x - 3)^2 = x^2 - 6x + 9
    3.17
    """
    best = 0.0
    for j in range(n + 1):
        v = math.log2(math.comb(n, j)) + (n - j) * math.log2(max(radius, 1))
        best = max(best, v)
    return best


def _crt(acc, modulus, res, p):
    """Lift ``acc`` (symmetric residues modulo ``modulus``) by ``res`` modulo p; returns
    (new acc, new modulus, stable)."""
    if acc is None:
        return [r if r <= p // 2 else r - p for r in res], p, False
    if all((a - r) % p == 0 for a, r in zip(acc, res)):
        return acc, modulus * p, True
    inv = pow(modulus % p, -1, p)
    new = modulus * p
    half = new // 2
    out = []
    for a, r in zip(acc, res):
        c = a % modulus
        c += modulus * (((r - c) * inv) % p)
        out.append(c - new if c > half else c)
    return out, new, False


def _nodes(members, omega, p, L):
    """The conjugates omega^k + omega^-k of c modulo p, one per member k."""
    return [(pow(omega, k, p) + pow(omega, (L - k) % L, p)) % p for k in members]


def lift_merged(member_residues, members, L, degree, radius, seed=0):
    """The integer coefficients (ascending, monic) of ``prod_k P_k`` over ``members``.

    Parameters
    ----------
    member_residues : callable
        ``(p, omega) -> {k: [ascending residues of P_k]}`` for every k of ``members``,
        or None when the prime does not suit (it is then skipped).
    members : list of int
        The Galois-conjugate momenta (one orbit, folded to 0 <= k <= L/2).
    L : int
        Order of the translation group.
    degree : int
        Degree of the product.
    radius : int or float
        A bound on the modulus of every root of the product.
    seed : int
        Seed of the random primes.

    Returns
    -------
    list of int

    Examples
    --------
    >>> # P_1 = x - (w + 1/w), P_3 = x - (w^3 + 1/w^3) for L = 8: product x^2 - 2
    >>> def res(p, w):
    ...     return {k: [(-(pow(w, k, p) + pow(w, -k % 8, p))) % p, 1] for k in (1, 3)}
    >>> lift_merged(res, [1, 3], 8, 2, 2)
    [-2, 0, 1]
    """
    rng = random.Random(seed)
    s = len(members)
    bits = coefficient_bits(degree, radius)
    acc, modulus, tries = None, 1, 0
    width = None
    while True:
        p = ring_prime(L, rng)
        w = root_of_unity(L, p, rng)
        got = member_residues(p, w)
        tries += 1
        if got is None:
            if tries > 50 + 4 * (modulus.bit_length() // 61 + 1):
                raise VerificationError(f"no suitable prime for a {degree}-dimensional ring "
                                        f"block after {tries} tries; report this block")
            continue
        cols = [got[k] for k in members]
        width = len(cols[0])
        if any(len(c) != width for c in cols):
            raise VerificationError("internal error: conjugate blocks of unequal dimension")
        if s == 1:
            flat = cols[0]
        else:
            nodes = _nodes(members, w, p, L)
            vander = flint.nmod_mat([[pow(c, i, p) for i in range(s)] for c in nodes], p)
            if vander.det() == 0:
                continue
            rhs = flint.nmod_mat([[int(x) for x in col] for col in cols], p)
            sol = vander.solve(rhs)            # s x width: coordinate i of coefficient j
            flat = [int(sol[i, j]) for i in range(s) for j in range(width)]
        acc, modulus, stable = _crt(acc, modulus, flat, p)
        if stable:
            break
        if math.log2(modulus) > bits + 64 * s + 64:
            raise VerificationError(f"the coordinates of a {degree}-dimensional ring block "
                                    "do not settle; report this block")
    coords = [acc[i * width:(i + 1) * width] for i in range(s)]
    if s == 1:
        return coords[0]
    # the norm: evaluate the conjugates from the coordinates, lift to the rigorous bound
    out, modulus = None, 1
    while math.log2(modulus) <= bits + 1:
        p = ring_prime(L, rng)
        w = root_of_unity(L, p, rng)
        prod = flint.nmod_poly([1], p)
        for c in _nodes(members, w, p, L):
            powers = [pow(c, i, p) for i in range(s)]
            prod *= flint.nmod_poly([sum(coords[i][j] * powers[i] for i in range(s)) % p
                                     for j in range(width)], p)
        res = [int(x) for x in prod.coeffs()]
        if len(res) != degree + 1 or res[-1] != 1:
            raise VerificationError("internal error: the norm of a ring block is not monic "
                                    f"of degree {degree}")
        out, modulus, _ = _crt(out, modulus, res, p)
    return out
