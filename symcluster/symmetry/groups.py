"""Automorphism groups of labelled clusters and their exact character tables.

Kernels work on plain data: a permutation of ``n`` sites is a tuple ``g``
with ``g[i]`` the image of site ``i``; products compose right to left,
``(g * h)[i] = g[h[i]]``.

The character table is found numerically (Burnside's method, as refined by
Dixon: common eigenvectors of the class-multiplication matrices) and then
made exact: characters that are Galois conjugates of each other
(``chi(g) -> chi(g**k)`` with ``k`` prime to the group exponent) are summed,
which gives integer-valued "orbit-sum" characters.  These are verified with
integer arithmetic before the table is returned.

References
----------
.. [1] W. Burnside, "Theory of Groups of Finite Order", 2nd ed. (1911), sect. 223 [mem].
.. [2] J. D. Dixon, "High speed computation of group characters",
   Numer. Math. 10, 446 (1967) [mem].
"""

from collections import Counter
from fractions import Fraction
from math import gcd

import numpy as np
# numpy loads its random module on first use (about 10 ms); loaded here, at import
from numpy.random import default_rng

from symcluster.errors import ClusterError, TooLargeError, VerificationError

__all__ = ["automorphisms", "PermutationGroup", "CharacterTable", "IrrepCharacter"]

_MAX_ORDER = 20000
#: groups up to this order build their multiplication table at once (it then serves
#: every product); larger ones only when asked, since it has order**2 entries
_EAGER_TABLE = 1024


# ----------------------------------------------------------------------------
# automorphism search
# ----------------------------------------------------------------------------

def _bond_table(n_sites, bonds):
    """adjacency ``adj[i][j] -> frozenset of (label, count)`` after validation."""
    if int(n_sites) != n_sites or n_sites < 1:
        raise ClusterError(f"n_sites={n_sites!r} is not a positive integer; give the number of sites")
    multi = [dict() for _ in range(n_sites)]
    for bond in bonds:
        try:
            i, j, label = bond
        except (TypeError, ValueError):
            raise ClusterError(f"bond {bond!r} is not a triple (i, j, label); "
                               "write each bond as (i, j, label)") from None
        for s in (i, j):
            if not (isinstance(s, (int, np.integer)) and 0 <= s < n_sites):
                raise ClusterError(f"bond {bond!r} names site {s!r}, outside 0..{n_sites - 1}; "
                                   "fix the site index or n_sites")
        if i == j:
            raise ClusterError(f"bond {bond!r} joins site {i} to itself; remove it or use an on-site term")
        i, j = int(i), int(j)
        multi[i].setdefault(j, Counter())[label] += 1
        multi[j].setdefault(i, Counter())[label] += 1
    return [{j: frozenset(c.items()) for j, c in row.items()} for row in multi]


def automorphisms(n_sites, bonds, site_labels=None, max_order=_MAX_ORDER):
    """All site permutations preserving labelled bonds and site labels.

    Parameters
    ----------
    n_sites : int
        Number of sites ``L``; sites are ``0 .. L-1``.
    bonds : iterable of (int, int, hashable)
        Unordered labelled bonds ``(i, j, label)``.  Repeated bonds count
        with multiplicity.
    site_labels : sequence of (str or None), optional
        One label per site; a permutation must map each site to a site with
        the same label.
    max_order : int, optional
        Give up (``TooLargeError``) when more automorphisms than this exist.

    Returns
    -------
    list of tuple of int
        Every automorphism ``g`` (``g[i]`` = image of site ``i``), sorted;
        the identity is first.

    Raises
    ------
    ClusterError
        A bond or a site label list is malformed.
    TooLargeError
        The group has more than ``max_order`` elements.

    Examples
    --------
    >>> len(automorphisms(4, [(i, (i + 1) % 4, "t") for i in range(4)]))
    8
    >>> automorphisms(3, [(0, 1, "t"), (1, 2, "t")])
    [(0, 1, 2), (2, 1, 0)]
    """
    adj = _bond_table(n_sites, bonds)
    if site_labels is None:
        site_labels = [None] * n_sites
    site_labels = list(site_labels)
    if len(site_labels) != n_sites:
        raise ClusterError(f"site_labels has {len(site_labels)} entries for {n_sites} sites; "
                           "give exactly one label (or None) per site")
    profile = [(repr(site_labels[i]), frozenset(Counter(adj[i].values()).items()))
               for i in range(n_sites)]
    same_profile = {}
    for i, p in enumerate(profile):
        same_profile.setdefault(p, []).append(i)

    # visiting order: breadth first from a site of the rarest profile, so that
    # most sites are placed next to an already placed neighbour
    order, parent, seen = [], {}, set()
    starts = sorted(range(n_sites), key=lambda i: (len(same_profile[profile[i]]), i))
    for s in starts:
        if s in seen:
            continue
        seen.add(s)
        queue = [s]
        parent[s] = None
        while queue:
            v = queue.pop(0)
            order.append(v)
            for w in sorted(adj[v]):
                if w not in seen:
                    seen.add(w)
                    parent[w] = v
                    queue.append(w)

    image = [-1] * n_sites
    used = [False] * n_sites
    placed = []
    found = []

    def consistent(v, gv):
        row, grow = adj[v], adj[gv]
        for w in placed:
            if row.get(w) != grow.get(image[w]):
                return False
        return True

    def extend(depth):
        if depth == n_sites:
            found.append(tuple(image))
            if len(found) > max_order:
                raise TooLargeError(f"the cluster has more than {max_order} automorphisms; "
                                    "label sites or bonds to break the symmetry, or solve "
                                    "without the lattice symmetry (solve(..., lattice=False); "
                                    "on the command line --no-lattice)")
            return
        v = order[depth]
        p = parent[v]
        if p is None:
            cands = same_profile[profile[v]]
        else:
            cands = [w for w in adj[image[p]] if profile[w] == profile[v]]
        for gv in cands:
            if used[gv] or not consistent(v, gv):
                continue
            image[v] = gv
            used[gv] = True
            placed.append(v)
            extend(depth + 1)
            placed.pop()
            used[gv] = False
            image[v] = -1

    extend(0)
    found.sort()
    return found


# ----------------------------------------------------------------------------
# permutation groups
# ----------------------------------------------------------------------------

def compose(g, h):
    """The product ``g * h`` (apply ``h`` first): ``(g * h)[i] = g[h[i]]``."""
    return tuple(g[x] for x in h)


def inverse(g):
    """The inverse permutation."""
    inv = [0] * len(g)
    for i, x in enumerate(g):
        inv[x] = i
    return tuple(inv)


class PermutationGroup:
    """A finite group of site permutations, given by all its elements.

    Parameters
    ----------
    elements : sequence of tuple of int
        All elements, identity first; the set must be closed under products.

    Attributes
    ----------
    elements : list of tuple
    index : dict
        Element -> position in ``elements``.
    classes : list of list of int
        Conjugacy classes as lists of element indices; class 0 is the identity.
    class_of : list of int
        Class index of each element.
    """

    def __init__(self, elements):
        elements = [tuple(int(x) for x in g) for g in elements]
        if not elements:
            raise VerificationError("a group needs at least the identity; got no elements")
        n = len(elements[0])
        ident = tuple(range(n))
        if elements[0] != ident:
            raise VerificationError(f"first element {elements[0]} is not the identity {ident}; "
                                    "put the identity first")
        self.elements = elements
        self.n_sites = n
        self.index = {g: i for i, g in enumerate(elements)}
        if len(self.index) != len(elements):
            raise VerificationError("repeated group elements; pass each permutation once")
        self._inv = [self.index.get(inverse(g)) for g in elements]
        if None in self._inv:
            raise VerificationError("the elements are not closed under inversion; pass a whole group")
        self._table = self._rows = self._cols = None
        if len(elements) <= _EAGER_TABLE:
            self.table()
        self._classes()

    # -- basic operations ---------------------------------------------------
    @property
    def order(self):
        """Number of elements."""
        return len(self.elements)

    def mul(self, a, b):
        """Index of ``elements[a] * elements[b]``."""
        if self._table is not None:
            return self._rows[a][b]
        return self.index[compose(self.elements[a], self.elements[b])]

    def inv(self, a):
        """Index of the inverse of ``elements[a]``."""
        return self._inv[a]

    def table(self):
        """The multiplication table as an ``order x order`` integer array (built once)."""
        if self._table is None:
            els, idx = self.elements, self.index
            self._rows = [[idx[tuple([g[x] for x in h])] for h in els] for g in els]
            self._table = np.array(self._rows, dtype=np.int32)
        return self._table

    def table_rows(self):
        """The multiplication table as lists: ``[a][b]`` = index of ``a * b`` (built once)."""
        self.table()
        return self._rows

    def table_columns(self):
        """The multiplication table by columns: ``[b][a]`` = index of ``a * b`` (built once)."""
        if self._cols is None:
            self._cols = [list(col) for col in zip(*self.table_rows())]
        return self._cols

    def power(self, a, k):
        """Index of ``elements[a] ** k`` for an integer ``k >= 0``."""
        steps = k % self.element_order(a) if k else 0
        if self._rows is not None:
            row, x = self._rows[a], 0
            for _ in range(steps):
                x = row[x]
            return x
        g = self.elements[a]
        r = tuple(range(self.n_sites))
        for _ in range(steps):
            r = compose(g, r)
        return self.index[r]

    def element_order(self, a):
        """Order of ``elements[a]``."""
        if self._rows is not None:
            row, x, k = self._rows[a], a, 1
            while x != 0:
                x, k = row[x], k + 1
            return k
        g = self.elements[a]
        ident = tuple(range(self.n_sites))
        r, k = g, 1
        while r != ident:
            r, k = compose(g, r), k + 1
        return k

    @property
    def exponent(self):
        """Least common multiple of the element orders."""
        e = 1
        for cls in self.classes:
            o = self.element_order(cls[0])
            e = e * o // gcd(e, o)
        return e

    @property
    def is_abelian(self):
        """True when all classes are single elements."""
        return len(self.classes) == self.order

    def _classes(self):
        els, idx, rows, inv = self.elements, self.index, self._rows, self._inv
        class_of = [-1] * len(els)
        classes = []
        for a, g in enumerate(els):
            if class_of[a] >= 0:
                continue
            c = len(classes)
            if rows is not None:
                members = {rows[rows[h][a]][inv[h]] for h in range(len(els))}
            else:
                members = set()
                for h in els:
                    hinv = inverse(h)
                    members.add(idx[compose(h, compose(g, hinv))])
            members = sorted(members)
            for m in members:
                class_of[m] = c
            classes.append(members)
        self.classes = classes
        self.class_of = class_of

    def generated_subgroup(self, gens):
        """Element indices of the subgroup generated by ``gens`` (indices), sorted."""
        sub = {0}
        frontier = [0]
        while frontier:
            new = []
            for x in frontier:
                for s in gens:
                    y = self.mul(x, s)
                    if y not in sub:
                        sub.add(y)
                        new.append(y)
            frontier = new
        return sorted(sub)

    def character_table(self):
        """The exact character table (computed once, then cached).

        Returns
        -------
        CharacterTable

        Raises
        ------
        VerificationError
            The numerical table could not be made exact and verified.
        """
        if getattr(self, "_char_table", None) is None:
            self._char_table = _character_table(self)
        return self._char_table


# ----------------------------------------------------------------------------
# character table
# ----------------------------------------------------------------------------

class IrrepCharacter:
    """One complex irreducible character of a :class:`PermutationGroup`.

    Attributes
    ----------
    name : str
        ``"Γ1"``, ``"Γ2"``, ... in the order of the table.
    dim : int
        Dimension (exact).
    numeric : numpy.ndarray
        Complex character value per conjugacy class (float accuracy).
    rational : tuple of int or None
        Exact values per class when all are rational (then integers), else None.
    orbit : int
        Index of its Galois orbit in ``CharacterTable.orbits``.
    orbit_sum : tuple of int
        Exact integer values per class of the sum over its Galois orbit.
    """

    def __init__(self, name, dim, numeric, rational, orbit, orbit_sum):
        self.name, self.dim, self.numeric = name, dim, numeric
        self.rational, self.orbit, self.orbit_sum = rational, orbit, orbit_sum

    def __repr__(self):
        return f"IrrepCharacter({self.name!r}, dim={self.dim})"


class CharacterTable:
    """Irreducible characters grouped into Galois orbits.

    Attributes
    ----------
    group : PermutationGroup
    irreps : list of IrrepCharacter
    orbits : list of list of int
        Indices into ``irreps``; each orbit's characters are Galois conjugates.
    """

    def __init__(self, group, irreps, orbits):
        self.group, self.irreps, self.orbits = group, irreps, orbits

    def orbit_sum(self, k):
        """Integer orbit-sum character of orbit ``k`` per class."""
        return self.irreps[self.orbits[k][0]].orbit_sum

    def __repr__(self):
        return f"CharacterTable(order={self.group.order}, irreps={len(self.irreps)})"


def _class_matrices(group):
    """``a[r, s, t]`` = #{(x, y) : x in C_r, y in C_s, x*y = z_t} for a fixed z_t in C_t."""
    k = len(group.classes)
    a = np.zeros((k, k, k))
    cof = group.class_of
    for t, cls in enumerate(group.classes):
        z = cls[0]
        for x in range(group.order):
            y = group.mul(group.inv(x), z)
            a[cof[x], cof[y], t] += 1
    return a


def _numeric_characters(group, rng):
    k = len(group.classes)
    sizes = np.array([len(c) for c in group.classes], dtype=float)
    a = _class_matrices(group)
    for _attempt in range(20):
        coeff = rng.standard_normal(k)
        m = np.einsum("r,rst->st", coeff, a)
        vals, vecs = np.linalg.eig(m)
        gaps = np.abs(vals[:, None] - vals[None, :]) + np.eye(k) * 1e9
        if gaps.min() < 1e-6 * max(1.0, np.abs(vals).max()):
            continue
        chars = []
        for col in range(k):
            w = vecs[:, col] / vecs[0, col]           # omega_r, with omega_identity = 1
            dim2 = group.order / np.sum(np.abs(w) ** 2 / sizes)
            chars.append(np.sqrt(dim2) * w / sizes)
        return chars
    raise VerificationError(f"could not separate the {k} class eigenvalues of a group of order "
                            f"{group.order}; report this cluster as a bug")


def _character_table(group, seed=20240601):
    rng = default_rng(seed)
    chars = _numeric_characters(group, rng)
    k = len(chars)
    e = group.exponent
    # power maps on classes for every k prime to the exponent
    units = [u for u in range(1, e + 1) if gcd(u, e) == 1]
    reps = [c[0] for c in group.classes]
    powmap = {u: [group.class_of[group.power(r, u)] for r in reps] for u in units}

    char_rows = np.array(chars)

    def match(vec):
        dist = np.abs(char_rows - vec).max(axis=1)
        best = int(np.argmin(dist))             # the first closest character
        if dist[best] > 1e-6:
            raise VerificationError(f"a Galois conjugate of a character of a group of order "
                                    f"{group.order} is not in the table; report this as a bug")
        return best

    orbit_of = [-1] * k
    orbits = []
    for i in range(k):
        if orbit_of[i] >= 0:
            continue
        members = sorted({match(chars[i][powmap[u]]) for u in units})
        for j in members:
            orbit_of[j] = len(orbits)
        orbits.append(members)

    sums = []
    for members in orbits:
        s = sum(chars[j] for j in members)
        r = np.rint(s.real)
        if np.abs(s - r).max() > 1e-6:
            raise VerificationError(f"orbit sum {s} is not integer-valued; report this as a bug")
        sums.append(tuple(int(x) for x in r))

    # canonical order: by dimension, orbit size, then integer values descending
    def okey(o):
        return (sums[o][0] // len(orbits[o]), len(orbits[o]), tuple(-x for x in sums[o]))
    oorder = sorted(range(len(orbits)), key=okey)
    irreps, new_orbits = [], []
    for on, o in enumerate(oorder):
        members = orbits[o]
        if len(members) > 1:
            members = sorted(members, key=lambda j: tuple(zip(
                np.round(-chars[j].real, 6).tolist(), np.round(-chars[j].imag, 6).tolist())))
        idxs = []
        for j in members:
            dim = sums[o][0] // len(orbits[o])
            rational = sums[o] if len(members) == 1 else None
            idxs.append(len(irreps))
            irreps.append(IrrepCharacter(f"Γ{len(irreps) + 1}", dim, chars[j], rational,
                                         on, sums[o]))
        new_orbits.append(idxs)
    table = CharacterTable(group, irreps, new_orbits)
    _verify_table(table, powmap)
    return table


def _verify_table(table, powmap):
    """Exact checks on the integer orbit sums; raise VerificationError on failure."""
    g = table.group
    order = g.order
    sizes = [len(c) for c in g.classes]
    k = len(sizes)
    if len(table.irreps) != k:
        raise VerificationError(f"{len(table.irreps)} irreducible characters for {k} classes")
    psi = [table.orbit_sum(o) for o in range(len(table.orbits))]
    total = 0
    for o, members in enumerate(table.orbits):
        s = len(members)
        if psi[o][0] % s or order % (psi[o][0] // s):
            raise VerificationError(f"orbit {o}: degree {psi[o][0]} is not {s} times a divisor of {order}")
        d = psi[o][0] // s
        total += s * d * d
        for u, pm in powmap.items():
            if any(psi[o][pm[r]] != psi[o][r] for r in range(k)):
                raise VerificationError(f"orbit sum {psi[o]} is not Galois-stable under power {u}")
        for p in range(len(psi)):
            ip = sum(sizes[r] * psi[o][r] * psi[p][r] for r in range(k))
            want = order * s if p == o else 0
            if ip != want:
                raise VerificationError(f"orbit sums {o}, {p}: inner product {Fraction(ip, order)} "
                                        f"should be {Fraction(want, order)}")
    if total != order:
        raise VerificationError(f"sum of squared dimensions {total} differs from the order {order}")
    for r in range(k):
        reg = sum((psi[o][0] // len(m)) * psi[o][r] for o, m in enumerate(table.orbits))
        if reg != (order if r == 0 else 0):
            raise VerificationError(f"regular character at class {r} is {reg}, expected "
                                    f"{order if r == 0 else 0}")
