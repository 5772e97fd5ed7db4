"""Galois splitting of merged momentum blocks (symcluster.blocks.centre, symcluster.algebra.split).

References used here:
* 2 cos(pi/4) = sqrt(2) and 2 cos(pi/8) = sqrt(2 + sqrt(2)), so the conjugates 2 cos(j pi/4),
  j = 1, 3 are the roots of x^2 - 2 and 2 cos(j pi/8), j = 1, 3, 5, 7 those of
  x^4 - 4 x^2 + 2 (half-angle formula; elementary trigonometry).
* The characteristic polynomial of the whole block by a general-purpose library:
  sympy's DomainMatrix.charpoly (the "sympy" backend is sympy's own algorithm) and
  python-flint's nmod_mat.charpoly modulo a prime.
"""

import flint
import pytest

import symcluster as sc
from symcluster.algebra.block import LinearBlock
from symcluster.algebra.charpoly import charpoly_dict
from symcluster.algebra.split import ConjugateSplit
from symcluster.blocks.build import build_blocks, plan_symmetries
from symcluster.blocks.centre import class_polynomial
from symcluster.errors import VerificationError
from symcluster.symmetry.termgraph import term_lattice_symmetry


def _merged(lattice, size):
    return [r for r in lattice.irreps if r.orbit_size == size]


def test_class_polynomial_of_ring8_is_x2_minus_2():
    lat = term_lattice_symmetry(sc.hubbard(sc.ring(8)))
    (irrep,) = _merged(lat, 2)
    assert class_polynomial(lat, irrep)[1] == (-2, 0, 1)


def test_class_polynomial_of_ring16_quartet():
    lat = term_lattice_symmetry(sc.heisenberg(sc.ring(16)))
    (quartet,) = _merged(lat, 4)
    (pair,) = _merged(lat, 2)
    assert class_polynomial(lat, quartet)[1] == (2, 0, -4, 0, 1)
    assert class_polynomial(lat, pair)[1] == (-2, 0, 1)


@pytest.fixture(scope="module")
def ring8_blocks():
    model = sc.hubbard(sc.ring(8))
    plan = plan_symmetries(model)
    return build_blocks(model, plan, electrons=[3, 4])


def test_merged_blocks_carry_a_centre(ring8_blocks):
    merged = [b for b in ring8_blocks if b.irrep.orbit_size > 1 and b.block.dim >= 24]
    assert merged
    assert all(b.block.centre is not None for b in merged)


def test_split_charpoly_equals_sympy_charpoly(ring8_blocks):
    """The split multimodular path against sympy's characteristic polynomial of the whole block."""
    blk = min((b.block for b in ring8_blocks if b.block.centre is not None), key=lambda b: b.dim)
    names = blk.names()
    split = charpoly_dict(blk, names, backend="flint")
    reference = charpoly_dict(LinearBlock(blk.dim, blk.terms, blk.integral), names,
                              backend="sympy")
    assert split == reference


def test_parts_multiply_to_the_whole_block_mod_p(ring8_blocks):
    """prod_k det(x - H_k) = det(x - H) modulo a split prime, at a random point."""
    blk = max((b.block for b in ring8_blocks if b.block.centre is not None), key=lambda b: b.dim)
    D = blk.denominator()
    mats = [flint.fmpz_mat([[0] * blk.dim for _ in range(blk.dim)]) for _ in blk.names()]
    terms = blk.integer_terms(D)
    for M, name in zip(mats, blk.names()):
        for (i, j), v in terms[name].items():
            M[i, j] = v
    sp = ConjugateSplit(blk.dim, blk.centre, mats)
    p = next(q for q in (1000003, 1000033, 1000037, 1000039, 1000081, 1000099)
             if sp.roots(q) is not None)
    nm = [flint.nmod_mat(M, p) for M in mats]
    parts = sp.parts(p, nm)
    u = [12345, 678]
    whole = nm[0] * u[0] + nm[1] * u[1]
    prod = flint.nmod_poly([1], p)
    for k in range(sp.degree):
        prod = prod * (parts[0][k] * u[0] + parts[1][k] * u[1]).charpoly()
    assert prod == whole.charpoly()
    assert all(part.nrows() == blk.dim // 2 for part in parts[0])


def test_an_operator_that_does_not_commute_is_refused():
    H = flint.fmpz_mat([[0, 1, 0, 0], [1, 0, 0, 0], [0, 0, 0, 2], [0, 0, 2, 0]])
    swap = {(0, 2): 1, (2, 0): 1, (1, 3): 1, (3, 1): 1}
    with pytest.raises(VerificationError, match="does not commute"):
        ConjugateSplit(4, ((-1, 0, 1), swap), [H])


def test_a_wrong_polynomial_is_never_used():
    """f(C) != 0 fails the modular check at every prime: an error, not a wrong polynomial."""
    n = 24
    terms = {"t": {(i, (i + 1) % n): -1 for i in range(n)}}
    for i in range(n):
        terms["t"][((i + 1) % n, i)] = -1
    shift = {((i + 12) % n, i): 1 for i in range(n)}          # C^2 = 1, but f = x^2 - 2
    blk = LinearBlock(n, terms, integral=True, centre=((-2, 0, 1), shift))
    with pytest.raises(VerificationError, match="suit the split"):
        charpoly_dict(blk, ("t",), backend="flint")
