"""Tests for symcluster.symmetry.lattice: signed permutations, counts, adapted bases.

The fermion signs are checked against an independent implementation written
here: a state is an explicit list of creation operators, and reordering is
done by bubble sort, counting transpositions.
"""

import random

import pytest
import sympy

from symcluster.errors import InputError
from symcluster.hilbert.fock import sector_states
from symcluster.symmetry.groups import compose
from symcluster.symmetry.lattice import (
    adapted_basis, adapted_bases, lattice_symmetry, multiplicity, permute_state, state_orbits,
)



from bond_lists import chain, complete, cube, grid, ring, star  # noqa: E402
from helpers_lattice import bubble, masks_of, ops_of, ref_permute  # noqa: E402


def ref_hop(vec, bonds, n):
    """Apply sum_bonds sum_spin (c+_i c_j + c+_j c_i) to {(up, dn): coeff}."""
    out = {}
    for (up, dn), c in vec.items():
        ops = ops_of(up, dn, n)
        for i, j, _ in bonds:
            for a, b in ((i, j), (j, i)):
                for spin in (0, 1):
                    if (spin, b) not in ops:
                        continue
                    pos = ops.index((spin, b))                  # c_b passes pos operators
                    rest = ops[:pos] + ops[pos + 1:]
                    sign, new = bubble([(spin, a)] + rest)      # c+_a placed in front
                    if sign:
                        key = masks_of(new)
                        out[key] = out.get(key, 0) + c * (-1) ** pos * sign
    return {k: v for k, v in out.items() if v}


def ref_apply_group_element(perm, vec, n):
    out = {}
    for (up, dn), c in vec.items():
        s, u, d = ref_permute(perm, up, dn, n)
        out[(u, d)] = out.get((u, d), 0) + s * c
    return {k: v for k, v in out.items() if v}


def ref_projector(group, psi, vec, n):
    out = {}
    for g, x in zip(group.elements, psi):
        if x:
            for k, v in ref_apply_group_element(g, vec, n).items():
                out[k] = out.get(k, 0) + x * v
    return {k: v for k, v in out.items() if v}


# --- permute_state ------------------------------------------------------------------

def test_permute_state_against_bubble_sort():
    rng = random.Random(11)
    n = 6
    for _ in range(40):
        perm = list(range(n))
        rng.shuffle(perm)
        perm = tuple(perm)
        for _ in range(30):
            up, dn = rng.randrange(1 << n), rng.randrange(1 << n)
            assert permute_state(perm, up, dn) == ref_permute(perm, up, dn, n)


def test_permute_state_is_a_representation():
    # g(h x) = (gh) x including signs, since c+_i -> c+_g(i) is an algebra automorphism
    rng = random.Random(5)
    n = 7
    for _ in range(200):
        g, h = list(range(n)), list(range(n))
        rng.shuffle(g)
        rng.shuffle(h)
        up, dn = rng.randrange(1 << n), rng.randrange(1 << n)
        s1, u1, d1 = permute_state(h, up, dn)
        s2, u2, d2 = permute_state(g, u1, d1)
        assert (s1 * s2, u2, d2) == permute_state(compose(g, h), up, dn)


def test_ring_boundary_sign():
    # translation on a 4-ring moves c+_3 to c+_0 past the other three: sign (-1)^3
    t = (1, 2, 3, 0)
    assert permute_state(t, 0b1111, 0) == (-1, 0b1111, 0)
    assert permute_state(t, 0b1000, 0b0001) == (1, 0b0001, 0b0010)


# --- counting -----------------------------------------------------------------------

CLUSTERS = [ring(4), ring(5), ring(6), complete(4), cube(), grid(2, 3), chain(4), star(4),
            grid(3, 3), ring(8)]


@pytest.mark.parametrize("cluster", CLUSTERS)
def test_multiplicities_add_up(cluster):
    n, bonds = cluster
    sym = lattice_symmetry(n, bonds)
    rng = random.Random(n * 31 + len(bonds))
    for _ in range(3):
        nu, nd = rng.randint(0, n), rng.randint(0, n)
        states = sector_states(n, nu, nd)
        total = 0
        for r in sym.irreps:
            m = multiplicity(states, sym.group, r)
            assert m >= 0
            total += m * r.dim * r.orbit_size
        assert total == len(states)


def test_multiplicity_non_product_set_and_error():
    n, bonds = ring(4)
    sym = lattice_symmetry(n, bonds)
    states = sector_states(n, 1, 2) + sector_states(n, 2, 1)   # closed, not a product set
    assert sum(sym.multiplicity(states, r) * r.dim for r in sym.irreps) == len(states)
    with pytest.raises(InputError, match="closed"):
        state_orbits([(1, 0)], sym.group)


def test_one_electron_on_a_ring_gives_bloch_momenta():
    # one electron on a 6-ring: one Bloch state per k = 2 pi m / 6 (tight binding, e.g.
    # Ashcroft & Mermin ch. 10, from memory); the uniform state is fully symmetric and
    # sum_j (-1)^j c+_j is even under the mirror j -> -j, so k=0 and k=pi carry "+"
    n, bonds = ring(6)
    sym = lattice_symmetry(n, bonds)
    states = sector_states(n, 1, 0)
    got = {r.label: multiplicity(states, sym.group, r) for r in sym.irreps}
    assert got == {"k=0,+": 1, "k=0,−": 0, "k=±π/3": 1, "k=±2π/3": 1, "k=π,+": 1, "k=π,−": 0}
    byname = {r.label: r for r in sym.irreps}
    assert byname["k=±π/3"].momentum == (-sympy.pi / 3, sympy.pi / 3)
    assert byname["k=π,+"].momentum == sympy.pi


def test_labels_and_orbits():
    sym8 = lattice_symmetry(*ring(8))
    labels = [r.label for r in sym8.irreps]
    assert "k=±π/4,±3π/4" in labels and "k=±π/2" in labels
    assert [r.orbit_size for r in sym8.irreps].count(2) == 1
    tet = lattice_symmetry(*complete(4))
    assert all(r.momentum is None for r in tet.irreps)
    assert sorted(r.label for r in tet.irreps)[0] == "Γ1 (1)"
    assert lattice_symmetry(*chain(2)).irreps[1].label == "k=π"


@pytest.mark.parametrize("cluster", [ring(4), ring(5), ring(6), ring(8), complete(4), cube(),
                                     star(4), grid(3, 3)])
def test_reducer_gives_one_copy(cluster):
    sym = lattice_symmetry(*cluster)
    g = sym.group
    for r in sym.irreps:
        sub, lam = r.reducer
        assert r.copies == 1
        assert set(g.mul(a, b) for a in sub for b in sub) == set(sub)       # a subgroup
        assert all(lam[sub.index(g.mul(a, b))] == lam[i] * lam[j]
                   for i, a in enumerate(sub) for j, b in enumerate(sub))   # a homomorphism


# --- adapted bases ------------------------------------------------------------------

SECTORS = [(ring(4), 2, 2), (ring(4), 2, 1), (ring(6), 2, 2), (ring(6), 3, 2),
           (complete(4), 2, 1), (complete(4), 2, 2), (cube(), 1, 1), (cube(), 2, 1),
           (ring(5), 2, 2), (ring(8), 1, 1)]


@pytest.mark.parametrize("cluster,nu,nd", SECTORS)
def test_adapted_basis(cluster, nu, nd):
    n, bonds = cluster
    sym = lattice_symmetry(n, bonds)
    g = sym.group
    states = sector_states(n, nu, nd)
    orbits = state_orbits(states, g)
    for r in sym.irreps:
        basis = adapted_basis(states, g, r, orbits)
        m = multiplicity(states, g, r)
        assert len(basis) == m * r.copies * r.orbit_size
        # pivot property (implies linear independence)
        pivots = [next(iter(v)) for v in basis]
        assert len(set(pivots)) == len(basis)
        for i, v in enumerate(basis):
            assert all(isinstance(x, int) and x for x in v.values())
            for j, p in enumerate(pivots):
                assert (p in v) == (i == j)
        sub, lam = r.reducer
        scale = g.order // r.dim
        for v in basis:
            # eigenvector of every k in K with eigenvalue lam(k)
            for k, l in zip(sub, lam):
                assert ref_apply_group_element(g.elements[k], v, n) == {s: l * x for s, x in v.items()}
            # inside the orbit's isotypic part: P_psi v = (|G| / dim) v
            assert ref_projector(g, r.character, v, n) == {s: scale * x for s, x in v.items()}
            # hopping maps W into W: expand T v on the pivots, remainder must vanish
            tv = ref_hop(v, bonds, n)
            for w, p in zip(basis, pivots):
                if p in tv:
                    a = sympy.Rational(tv[p], w[p])
                    for s, x in w.items():
                        tv[s] = tv.get(s, 0) - a * x
            assert not any(tv.values())


def test_projector_commutes_with_hopping():
    # [P_psi, T] = 0 on random states, with the ring-boundary bond of a 6-ring at even N
    for cluster, nu, nd in [(ring(6), 2, 2), (ring(4), 2, 2), (cube(), 2, 2)]:
        n, bonds = cluster
        sym = lattice_symmetry(n, bonds)
        rng = random.Random(n)
        states = sector_states(n, nu, nd)
        for r in sym.irreps:
            x = {rng.choice(states): 1, rng.choice(states): -2}
            x = {k: v for k, v in x.items() if v}
            a = ref_projector(sym.group, r.character, ref_hop(x, bonds, n), n)
            b = ref_hop(ref_projector(sym.group, r.character, x, n), bonds, n)
            assert a == b


def test_block_dimensions_ring6_half_filling():
    # total of (block size x dim) over irreps reproduces the 400 states of sector (3, 3)
    n, bonds = ring(6)
    sym = lattice_symmetry(n, bonds)
    states = sector_states(n, 3, 3)
    orbits = state_orbits(states, sym.group)
    sizes = {r.label: len(adapted_basis(states, sym.group, r, orbits)) for r in sym.irreps}
    assert sum(sizes[r.label] * r.dim for r in sym.irreps) == 400


def test_trivial_reducer_fallback_counts_dim_copies():
    # with K = {e} every multiplet is kept dim times: dim W = multiplicity * dim * orbit_size
    from symcluster.symmetry.lattice import RationalIrrep
    n, bonds = cube()
    sym = lattice_symmetry(n, bonds)
    states = sector_states(n, 2, 1)
    for r in sym.irreps:
        plain = RationalIrrep(r.label, r.dim, r.orbit_size, r.members, r.character,
                              r.class_character, ([0], (1,)), r.dim, r.momentum)
        basis = adapted_basis(states, sym.group, plain)
        assert len(basis) == multiplicity(states, sym.group, r) * r.dim * r.orbit_size
        for v in basis[:5]:
            got = ref_projector(sym.group, r.character, v, n)
            assert got == {s: sym.group.order // r.dim * x for s, x in v.items()}


def test_periodic_3x3_grid():
    # the 3x3 torus is the rook's graph K3 x K3, automorphism group S3 wr Z2 of order 72
    # (from memory); its translations are not cyclic, so irreps get Γ names
    bonds = [(x + 3 * y, (x + 1) % 3 + 3 * y, "t") for x in range(3) for y in range(3)]
    bonds += [(x + 3 * y, x + 3 * ((y + 1) % 3), "t") for x in range(3) for y in range(3)]
    sym = lattice_symmetry(9, bonds)
    assert sym.group.order == 72
    assert all(r.momentum is None for r in sym.irreps)
    states = sector_states(9, 2, 1)
    assert sum(multiplicity(states, sym.group, r) * r.dim * r.orbit_size
               for r in sym.irreps) == len(states)


# --- exact normal form of the adapted bases ------------------------------------------

def ref_adapted_basis(states, group, irrep, n):
    """Brute force over the rationals, from the reference sign rules of this module.

    Per orbit of basis states (in order of first appearance): project its members one
    by one with P_lam P_psi, keep the independent ones in reduced echelon form (pivot:
    the lowest-ranked state left after reduction), then scale each row to coprime
    integers, positive at its pivot, pivot first, then the orbit's states in order.
    """
    from fractions import Fraction
    pos = {s: i for i, s in enumerate(states)}
    sub, lam = irrep.reducer
    seen, out = set(), []
    for s in states:
        if s in seen:
            continue
        orbit = sorted({(u, d) for g in group.elements
                        for _, u, d in [ref_permute(g, *s, n)]}, key=pos.__getitem__)
        seen |= set(orbit)
        rank = {st: i for i, st in enumerate(orbit)}
        rows = []                                   # [(pivot, {state: Fraction})]
        for x in orbit:
            v = ref_projector(group, irrep.character, {x: 1}, n)
            w = {}
            for k, l in zip(sub, lam):
                for st, c in ref_apply_group_element(group.elements[k], v, n).items():
                    w[st] = w.get(st, 0) + l * c
            w = {st: Fraction(c) for st, c in w.items() if c}
            for p, row in rows:
                a = w.get(p, 0)
                for st, c in row.items():
                    w[st] = w.get(st, 0) - a * c
                w = {st: c for st, c in w.items() if c}
            if not w:
                continue
            p = min(w, key=rank.__getitem__)
            w = {st: c / w[p] for st, c in w.items()}
            for i, (q, row) in enumerate(rows):
                b = row.get(p, 0)
                if b:
                    new = dict(row)
                    for st, c in w.items():
                        new[st] = new.get(st, 0) - b * c
                    rows[i] = (q, {st: c for st, c in new.items() if c})
            rows.append((p, w))
        for p, row in sorted(rows, key=lambda pr: rank[pr[0]]):
            den = 1
            for c in row.values():
                den = den * c.denominator // sympy.igcd(den, c.denominator)
            ints = {st: int(c * den) for st, c in row.items()}
            g = 0
            for c in ints.values():
                g = sympy.igcd(g, c)
            vec = {p: ints[p] // g}
            vec.update((st, ints[st] // g) for st in orbit if st in ints and st != p)
            out.append(vec)
    return out


@pytest.mark.parametrize("cluster,nu,nd", [(ring(4), 2, 2), (ring(4), 2, 1), (ring(6), 2, 1),
                                           (complete(4), 2, 1), (grid(2, 3), 2, 2),
                                           (star(4), 1, 1)])
def test_adapted_bases_equal_brute_force_normal_form(cluster, nu, nd):
    # the integer basis (values, signs, pivots, key order) is the one a reduction over
    # the rationals gives, orbit by orbit, for every irrep
    n, bonds = cluster
    sym = lattice_symmetry(n, bonds)
    states = sector_states(n, nu, nd)
    got = adapted_bases(states, sym.group, sym.irreps)
    assert got == sym.adapted_bases(states)
    for r, basis in zip(sym.irreps, got):
        exp = ref_adapted_basis(states, sym.group, r, n)
        assert [list(v.items()) for v in basis] == [list(v.items()) for v in exp], r.label
        assert basis == adapted_basis(states, sym.group, r)


def test_state_orbits_share_their_cache_between_sectors():
    # images of spin blocks kept between sectors give the same orbits as a fresh call,
    # and every image is the reference signed permutation
    n, bonds = ring(5)
    sym = lattice_symmetry(n, bonds)
    cache = {}
    for nu, nd in [(2, 1), (2, 2), (1, 2), (3, 2)]:
        states = sector_states(n, nu, nd)
        shared = state_orbits(states, sym.group, cache)
        assert shared == state_orbits(states, sym.group) == sym.state_orbits(states)
        for members, images in shared:
            r = members[0]
            for g, (sign, st) in zip(sym.group.elements, images):
                assert (sign, *st) == ref_permute(g, *r, n)
    assert cache and all(len(v) == sym.group.order for v in cache.values())


def test_momenta_are_rational_multiples_of_pi():
    # k = 2 pi m / L on an L-ring, written as sympy would write Rational(2m, L) * pi
    for L in (3, 4, 5, 6, 8):
        sym = lattice_symmetry(*ring(L))
        seen = set()
        for r in sym.irreps:
            ks = r.momentum if isinstance(r.momentum, tuple) else (r.momentum,)
            for k in ks:
                m = sympy.nsimplify(k / sympy.pi) * L / 2
                assert m.is_integer and -L < 2 * m <= L
                exp = sympy.Rational(2 * m, L) * sympy.pi
                assert k == exp and sympy.srepr(k) == sympy.srepr(exp) and hash(k) == hash(exp)
                seen.add(k)
        assert len(seen) == L
        # irreps come by smallest |k| first
        kmin = [min(abs(k) for k in (r.momentum if isinstance(r.momentum, tuple)
                                     else (r.momentum,))) for r in sym.irreps]
        assert kmin == sorted(kmin)
