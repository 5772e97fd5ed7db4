"""Characteristic polynomials modulo random 62-bit primes: the exact identity tests of
blocks and sectors at a rational point (python-flint nmod_mat / nmod_poly)."""

from fractions import Fraction
from math import lcm

import flint

from symcluster.verify.failure import _fail


def _mod(fr, prime):
    return fr.numerator % prime * pow(fr.denominator % prime, -1, prime) % prime


def _nmod_matrix(entries, dim, prime):
    """A dim x dim nmod_mat from sparse integer entries {(i, j): int} (reduced by flint)."""
    m = flint.nmod_mat(dim, dim, prime)
    for (i, j), a in entries.items():
        m[i, j] = a
    return m


def _label_matrices(terms, dim):
    """Each label's matrix of a sector as ``{label: (fmpz_mat M, int D)}`` with A_l = M / D
    (D the entries' common denominator), made once for the sector's characteristic
    polynomials at every point."""
    out = {}
    for l, mat in terms.items():
        den = 1
        for a in mat.values():
            den = lcm(den, Fraction(a).denominator)
        m = flint.fmpz_mat(dim, dim)
        for (i, j), a in mat.items():
            m[i, j] = int(a * den)
        out[l] = (m, den)
    return out


def _charpoly_mod(mats, dim, point_by_label, prime):
    """Characteristic polynomial det(x - H) of a sector at a rational point, modulo ``prime``;
    ``mats`` are its :func:`_label_matrices` (H = sum_l u_l A_l, reduced and summed by
    python-flint)."""
    h = flint.nmod_mat(dim, dim, prime)
    for l, (m, den) in mats.items():
        v = point_by_label[l]
        h += flint.nmod_mat(m, prime) * _mod(Fraction(int(v.p), int(v.q) * den), prime)
    return h.charpoly()


def _poly_mod(form, point, prime, cache):
    """Monic P(x; point) modulo ``prime`` as an nmod_poly (``form``: the :class:`_Form` of P).

    ``cache`` holds the results for this point and prime by form, so equal polynomials
    in separate objects are reduced once.
    """
    hit = cache.get(id(form))
    if hit is not None:
        return hit
    acc, full = form.ints_at(point)
    if full % prime:
        # the monic polynomial does not depend on the common denominator ``full``
        cs = [a % prime for a in reversed(acc)]
    else:
        cs = [_mod(Fraction(a, full), prime) for a in reversed(acc)]
    lead = cs[-1]
    if lead == 0:
        _fail(f"leading coefficient of a level polynomial vanishes modulo {prime}")
    out = cache[id(form)] = flint.nmod_poly(cs, prime) * pow(lead, -1, prime)
    return out


def _next_prime(n):
    """The smallest prime above ``n`` (python-flint's rigorous primality test)."""
    n = flint.fmpz(n) + 1
    while not n.is_prime():
        n += 1
    return int(n)


def _ring_residues(block, seed):
    """``(p, residues)``: a ring block's characteristic polynomial (of ``scale * H`` at
    coupling 1) modulo a fresh random prime p = 1 (mod L) drawn from ``seed``, computed
    from scratch by the block's own modular route (a prime that does not suit is
    replaced).  A pure function of picklable data, so that it can run in a worker."""
    import random

    from symcluster.algebra.lift import ring_prime, root_of_unity
    rng = random.Random(seed)
    for _ in range(20):
        p = ring_prime(block.L, rng)
        res = block.residues(p, root_of_unity(block.L, p, rng))
        if res is not None:
            return p, res
    _fail(f"a ring block of dimension {block.dim}: no prime suits its modular route")


def _check_ring_block(spec, factors, point, prime, residues, forms, cache):
    """A block given by residues (:class:`~symcluster.blocks.bloch.BlochBlock`) against
    its factors at ``point``: its characteristic polynomial there, scaled from the
    ``residues`` of :func:`_ring_residues` modulo ``prime`` (det(E - v H_1) =
    sum_a r_a (v / scale)^(n - a) E^a), must equal the product of the factors (to their
    multiplicities).  ``cache``: reduced factors for this point and prime."""
    blk = spec.block
    value = [v for s, v in point.items() if s.name == blk.label][0]
    x = _mod(Fraction(int(value.p), int(value.q)), prime) * pow(blk.scale, -1, prime) % prime
    n = len(residues) - 1
    got = flint.nmod_poly([r * pow(x, n - a, prime) for a, r in enumerate(residues)], prime)
    _check_factor_product(spec, factors, point, prime, got, forms, cache)


def _check_factor_product(spec, factors, point, prime, charpoly, forms, cache):
    """The block's characteristic polynomial at ``point`` modulo ``prime`` (an nmod_poly)
    must equal the product of its factors to their multiplicities (``cache``: reduced
    factors for this point and prime); a VerificationError names the block otherwise."""
    prod = flint.nmod_poly([1], prime)
    for fac, mult, _ in factors:
        prod *= _poly_mod(forms(fac), point, prime, cache) ** mult
    if prod != charpoly:
        _fail(f"block {spec.labels} (dimension {charpoly.degree()}): its characteristic "
              f"polynomial at {point} differs from the product of its computed factors "
              f"(modulo {prime})")
