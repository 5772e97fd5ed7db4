"""The block-polynomial tier: every block's characteristic polynomial against its factors.

At random rational points, modulo a random 62-bit prime per point, the characteristic
polynomial of each block (computed directly from its numeric matrix, or for a block given
by residues from scratch by its modular route at a fresh prime) must equal the product of
the block's irreducible factors.  It checks the evaluation/interpolation, lifting and
factorisation engine; the spectrum's other tiers are in :mod:`symcluster.verify.core`.
"""

import random
from fractions import Fraction

import flint
import sympy

from symcluster.symbols import CONSTANT, coupling_symbol
from symcluster.verify.forms import FormCache
from symcluster.verify.modular import (_mod, _next_prime, _nmod_matrix, _check_factor_product,
                                       _check_ring_block, _ring_residues)
from symcluster.verify.points import random_points
from symcluster.workers import submit

__all__ = ["verify_blocks"]


def verify_blocks(blocks, results, seed, n_points=2, progress=None, executor=None):
    """Exact check of the symbolic algebra, block by block.

    At random rational points and modulo a random 62-bit prime per point, the
    characteristic polynomial of each numeric block matrix (python-flint,
    computed directly, no interpolation) must equal the product of the block's
    irreducible factors (to their multiplicities) evaluated at the point.
    Returns the number of blocks checked; raises VerificationError otherwise.  Blocks
    equal entry for entry, with equal factors, are one computation, done once (the count
    includes every block).  ``progress`` (optional, a
    :class:`~symcluster.pipeline.resources.Progress`) counts the computations done.
    A block given by residues (a large spin-ring block, :mod:`symcluster.blocks.bloch`)
    is recomputed once, modulo a fresh prime of its own, through ``executor`` if given,
    and compared with its factors at every point.
    """
    if not blocks:
        return 0
    names = sorted({n for b in blocks for n in b.block.terms} |
                   {g.name for _, fac in zip(blocks, results) for f, _, _ in fac
                    for g in f.gens[1:]})
    # the constant part of blocks with fixed couplings (label CONSTANT) has the value 1
    symbols = [coupling_symbol(n) for n in names if n != CONSTANT]
    points = random_points(symbols, n_points, seed + 7,
                           {coupling_symbol(CONSTANT): sympy.Integer(1)} if CONSTANT in names
                           else None)
    rng = random.Random(seed + 8)
    primes = [_next_prime(rng.randrange(2 ** 61, 2 ** 62)) for _ in points]
    forms = FormCache()
    # a block whose matrix and factors equal those of a block before it (a copy of an
    # equal block, entry for entry) would repeat the same computation: checked once
    # (compared as dicts within groups of equal size and factors: no copies of the entries)
    distinct, seen, ring = [], {}, []
    for spec, factors in zip(blocks, results):
        if hasattr(spec.block, "residues"):     # given by residues: no matrix to compare
            ring.append((spec, factors))
            continue
        terms = spec.block.terms
        key = (spec.block.dim, sum(len(m) for m in terms.values()),
               tuple((id(forms(fac)), mult) for fac, mult, _ in factors))
        same = seen.setdefault(key, [])
        if not any(t == terms for t in same):
            same.append(terms)
            distinct.append((spec, factors))
    if progress is not None:
        progress.phase("verification, block polynomials",
                       (len(distinct) + len(ring)) * len(points), "checks")
    if ring:
        seeds = [rng.randrange(2 ** 62) for _ in ring]
        if executor is None:
            residues = [_ring_residues(spec.block, sd) for (spec, _), sd in zip(ring, seeds)]
        else:
            futures = [submit(executor, _ring_residues, spec.block, sd)
                       for (spec, _), sd in zip(ring, seeds)]
            residues = [f.result() for f in futures]
        for pt in points:
            caches = {}
            for (spec, factors), (prime, res) in zip(ring, residues):
                _check_ring_block(spec, factors, pt, prime, res, forms,
                                 caches.setdefault(prime, {}))
                if progress is not None:
                    progress.step()
    for pt, prime in zip(points, primes):
        vals = {s.name: _mod(Fraction(int(v.p), int(v.q)), prime) for s, v in pt.items()}
        inverses = {}           # denominator of a block entry -> its inverse modulo the prime
        reduced = {}            # polynomial coefficients at the point -> monic nmod_poly
        for spec, factors in distinct:
            blk = spec.block
            n = blk.dim
            entries = {}
            for lab, mat in blk.terms.items():
                v = vals[lab]
                for key, a in mat.items():
                    if type(a) is not int:
                        if type(a) is not Fraction:
                            a = Fraction(a)
                        d = a.denominator
                        if d == 1:
                            a = a.numerator
                        else:
                            inv = inverses.get(d)
                            if inv is None:
                                inv = inverses[d] = pow(d % prime, -1, prime)
                            a = a.numerator * inv
                    entries[key] = entries.get(key, 0) + a * v
            cp = _nmod_matrix(entries, n, prime).charpoly() if n else flint.nmod_poly([1], prime)
            _check_factor_product(spec, factors, pt, prime, cp, forms, reduced)
            if progress is not None:
                progress.step()
    return len(blocks)
