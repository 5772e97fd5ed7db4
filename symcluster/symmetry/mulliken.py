"""Mulliken symbols for the lattice irreps of clusters whose group is a known point group.

The lattice group of a cluster is a group of site permutations.  Three families are
recognised from the permutations themselves (cycle types, fixed sites, class sizes and
products), and their rational irreps are then matched, character by character, with the
point group's character table:

``C{n}v`` — a ring of n >= 3 sites whose group is the dihedral group of order 2n (one
element is a single n-cycle, the rotation).  A reflection through sites is a σv, one
through bond midpoints (even n only) a σd; B1 is even under σv, B2 under σd.  Labels
A1, A2, B1, B2 (even n), E (n = 3, 4) or E1, E2, ... The site permutations of a planar
ring cannot tell the horizontal mirror from the identity, so the labels are those of
C_nv (isomorphic to D_n), without primes or g/u.

``Td`` — four sites permuted by all 24 permutations, any other site fixed (the
tetrahedron, the complete graph on four sites, a star of four around a centre): transpositions are the mirrors σd, 4-cycles the S4, 3-cycles the
C3, double transpositions the C2.  Labels A1, A2, E, T1, T2.

``Oh`` — eight sites with the cube's group of order 48: inversion is the central
fixed-point-free involution; σd fixes four sites; C4 and S4 (both two 4-cycles) are told
apart by the rotation subgroup (the product of a C2' and a C3 is a rotation), C2 and σh
(four 2-cycles, three elements each) by squares (every square is a rotation).  Labels
A1g, ..., T2u.

Any other group gets no symbol (the solver's own label stays).  A Galois orbit of
irreps (a rational irrep with irrational characters, e.g. E1 and E2 of C5v) is named by
its members joined with ``/``.

References
----------
.. [1] R. S. Mulliken, "Report on notation for the spectra of polyatomic molecules",
   J. Chem. Phys. 23, 1997 (1955) — the naming convention (from memory).
.. [2] Character tables of C_nv, Td and Oh as printed in any group-theory text, e.g.
   M. Tinkham, Group Theory and Quantum Mechanics (McGraw-Hill, 1964), appendix
   (from memory).
"""

import math

__all__ = ["point_group_names"]


def _cycle_type(perm):
    seen, lengths = set(), []
    for start in range(len(perm)):
        if start in seen:
            continue
        n, x = 0, start
        while x not in seen:
            seen.add(x)
            x = perm[x]
            n += 1
        lengths.append(n)
    return tuple(sorted(lengths))


# ----------------------------------------------------------------------------- C_nv

def _dihedral_classes(group):
    """Per class: ("C", j) for a rotation r^j (j <= n/2), "sv" or "sd" for a mirror."""
    n = group.n_sites
    if n < 3 or group.order != 2 * n:
        return None
    els = group.elements
    rot = next((a for a, g in enumerate(els) if _cycle_type(g) == (n,)), None)
    if rot is None:
        return None
    powers = {0: 0}
    x = 0
    for j in range(1, n):
        x = group.mul(rot, x)
        powers[x] = j
    keys = []
    for cls in group.classes:
        a = cls[0]
        if a in powers:
            j = powers[a]
            keys.append(("C", min(j, n - j)))
        elif group.element_order(a) == 2:
            fixed = sum(1 for s, t in enumerate(els[a]) if s == t)
            keys.append("sv" if fixed else "sd")
        else:
            return None
    return keys


def _dihedral_table(n, keys):
    """Mulliken names and characters (per class key) of C_nv."""
    def row(rot, sv, sd):
        return [rot(k[1]) if isinstance(k, tuple) else (sv if k == "sv" else sd) for k in keys]
    table = [("A1", row(lambda j: 1, 1, 1), 1), ("A2", row(lambda j: 1, -1, -1), 1)]
    if n % 2 == 0:
        table += [("B1", row(lambda j: (-1) ** j, 1, -1), 1),
                  ("B2", row(lambda j: (-1) ** j, -1, 1), 1)]
    n_e = (n - 1) // 2
    for m in range(1, n_e + 1):
        name = "E" if n_e == 1 else f"E{m}"
        table.append((name, row(lambda j, m=m: 2 * math.cos(2 * math.pi * m * j / n), 0, 0),
                      math.gcd(m, n)))
    return table


# ----------------------------------------------------------------------------- Td

_TD = {(1, 1, 1, 1): 0, (1, 3): 1, (2, 2): 2, (4,): 3, (1, 1, 2): 4}
#            E  8C3  3C2  6S4  6sd
_TD_TABLE = [("A1", [1, 1, 1, 1, 1]), ("A2", [1, 1, 1, -1, -1]), ("E", [2, -1, 2, 0, 0]),
             ("T1", [3, 0, -1, 1, -1]), ("T2", [3, 0, -1, -1, 1])]


def _td_classes(group):
    """Classes of S4 on four sites (sites that every element fixes, e.g. the centre of
    a star of four, are left out: CH4 has the same group)."""
    moved = [s for s in range(group.n_sites) if any(g[s] != s for g in group.elements)]
    if len(moved) != 4 or group.order != 24:
        return None
    pos = {s: i for i, s in enumerate(moved)}
    keys = [_TD.get(_cycle_type([pos[group.elements[c[0]][s]] for s in moved]))
            for c in group.classes]
    return keys if sorted(k for k in keys if k is not None) == [0, 1, 2, 3, 4] else None


# ----------------------------------------------------------------------------- Oh

#            E 8C3 6C2' 6C4 3C2 | i 6S4 8S6 3sh 6sd
_OH_G = [("A1", [1, 1, 1, 1, 1]), ("A2", [1, 1, -1, -1, 1]), ("E", [2, -1, 0, 0, 2]),
         ("T1", [3, 0, -1, 1, -1]), ("T2", [3, 0, 1, -1, -1])]
#: proper class r -> class of i*r: E->i, C3->S6, C2'->sd, C4->S4, C2->sh
_OH_IMPROPER = {0: 5, 1: 7, 2: 9, 3: 6, 4: 8}


def _oh_table():
    out = []
    for name, chi in _OH_G:
        for parity, sign in (("g", 1), ("u", -1)):
            row = [0] * 10
            for r, x in enumerate(chi):
                row[r] = x
                row[_OH_IMPROPER[r]] = sign * x
            out.append((name + parity, row))
    return out


def _oh_classes(group):
    if group.n_sites != 8 or group.order != 48 or len(group.classes) != 10:
        return None
    els = group.elements

    def fixed(a):
        return sum(1 for s, t in enumerate(els[a]) if s == t)

    info = [(len(c), group.element_order(c[0]), fixed(c[0])) for c in group.classes]
    find = {}
    for k, (size, order, fix) in enumerate(info):
        kind = {(1, 1): "E", (8, 3): "C3", (8, 6): "S6", (1, 2): "i"}.get((size, order))
        if (size, order) == (6, 2):
            kind = "sd" if fix == 4 else "C2p" if fix == 0 else None
        if (size, order) == (6, 4):
            kind = "four"
        if (size, order) == (3, 2):
            kind = "three"
        if kind is None or (kind == "i" and fix):
            return None
        find.setdefault(kind, []).append(k)
    want = {"E": 1, "C3": 1, "S6": 1, "i": 1, "sd": 1, "C2p": 1, "four": 2, "three": 2}
    if {k: len(v) for k, v in find.items()} != want:
        return None
    # C4: the 4-cycle class met by products C2' * C3 (both rotations)
    c2p = group.classes[find["C2p"][0]][0]
    met = {group.class_of[group.mul(c2p, x)] for x in group.classes[find["C3"][0]]}
    fours = [k for k in find["four"] if k in met]
    if len(fours) != 1:
        return None
    c4 = fours[0]
    s4 = next(k for k in find["four"] if k != c4)
    squares = {group.class_of[group.mul(a, a)] for a in range(group.order)}
    c2 = [k for k in find["three"] if k in squares]
    if len(c2) != 1:
        return None
    sh = next(k for k in find["three"] if k != c2[0])
    position = {find["E"][0]: 0, find["C3"][0]: 1, find["C2p"][0]: 2, c4: 3, c2[0]: 4,
                find["i"][0]: 5, s4: 6, find["S6"][0]: 7, sh: 8, find["sd"][0]: 9}
    keys = [position.get(k) for k in range(len(group.classes))]
    return keys if sorted(k for k in keys if k is not None) == list(range(10)) else None


# ----------------------------------------------------------------------------- matching

def _match(irreps, named, n_classes):
    """Name each rational irrep by the named characters that sum to its character."""
    out = []
    for irr in irreps:
        target = list(irr.class_character)
        hit = [name for name, chi in named if all(abs(chi[c] - target[c]) < 1e-9
                                                    for c in range(n_classes))]
        if len(hit) != 1:
            return None
        out.append(hit[0])
    return out


def point_group_names(group, irreps):
    """The point group and the Mulliken symbol of each rational irrep, if recognised.

    Parameters
    ----------
    group : PermutationGroup
        The lattice group (site permutations).
    irreps : list of RationalIrrep
        Its rational irreps (``class_character``: the orbit-sum character per class).

    Returns
    -------
    (str, list of str) or (None, None)
        E.g. ``("C4v", ["A1", "A2", "E", "B1", "B2"])`` in the order of ``irreps``.

    Examples
    --------
    >>> from symcluster.symmetry.lattice import lattice_symmetry
    >>> sym = lattice_symmetry(4, [(i, (i + 1) % 4, "t") for i in range(4)])
    >>> point_group_names(sym.group, sym.irreps)
    ('C4v', ['A1', 'A2', 'E', 'B1', 'B2'])
    """
    n_cls = len(group.classes)
    keys = _dihedral_classes(group)
    if keys is not None:
        n = group.n_sites
        table = _dihedral_table(n, keys)
        named = [(name, chi) for name, chi, _ in table]
        orbits = {}
        for name, chi, d in table:
            if name.startswith("E") and n_cls and any(abs(x - round(x)) > 1e-9 for x in chi):
                orbits.setdefault(d, []).append((name, chi))
        for members in orbits.values():
            if len(members) > 1:
                named.append(("/".join(m[0] for m in members),
                              [sum(m[1][c] for m in members) for c in range(n_cls)]))
        names = _match(irreps, named, n_cls)
        return (f"C{n}v", names) if names else (None, None)
    keys = _td_classes(group)
    if keys is not None:
        named = [(name, [chi[k] for k in keys]) for name, chi in _TD_TABLE]
        names = _match(irreps, named, n_cls)
        return ("Td", names) if names else (None, None)
    keys = _oh_classes(group)
    if keys is not None:
        named = [(name, [chi[k] for k in keys]) for name, chi in _oh_table()]
        names = _match(irreps, named, n_cls)
        return ("Oh", names) if names else (None, None)
    return None, None
