"""Clusters: sites, labelled bonds, optional site-energy labels.

A :class:`Cluster` is plain validated data.  Built-in shapes are functions
returning clusters; :func:`load_cluster_file` reads the TOML format described
in docs/cluster-files.md.
"""

import keyword
import operator
import os
from collections.abc import Iterable, Sequence
import re
import unicodedata
from dataclasses import dataclass

from symcluster.errors import ClusterError, InputError
from symcluster.parsing import parse_toml, read_input_file

__all__ = [
    "Cluster", "cluster", "two_colouring", "chain", "ring", "grid", "complete", "tetrahedron",
    "cube", "star", "ladder", "load_cluster_file", "parse_cluster_toml", "cluster_from_table",
    "BUILTIN_SHAPES",
]

_NAME = re.compile(r"^[A-Za-z][A-Za-z0-9_]*$")
# names that would clash with the model's own symbols or with sympy functions
_RESERVED = {"E", "U", "I", "N", "S", "O", "Q", "pi", "oo", "beta", "mu", "h", "T",
             "sqrt", "cos", "sin", "acos", "exp", "log", "lambda"}


#: Longest coupling label accepted.
MAX_LABEL_CHARS = 64


def check_label(label, what):
    """Raise ClusterError unless ``label`` is a valid coupling name.

    A name is letters, digits and underscores, starting with a letter, at most
    :data:`MAX_LABEL_CHARS` long, neither reserved nor a Python keyword.

    Examples
    --------
    >>> check_label("tp", "bond")
    'tp'
    >>> check_label("class", "bond")  # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    symcluster.errors.ClusterError: bond label 'class' is a Python keyword, ...
    """
    if isinstance(label, str) and len(label) > MAX_LABEL_CHARS:
        raise ClusterError(f"{what} label {label[:20]!r}... has {len(label)} characters; give "
                           f"a name of at most {MAX_LABEL_CHARS}")
    if not isinstance(label, str) or not _NAME.match(label):
        raise ClusterError(
            f"{what} label {label!r} is not a valid symbol name; use letters, digits and "
            f"underscores, starting with a letter (e.g. t, tp, t_2)")
    if label in _RESERVED:
        raise ClusterError(
            f"{what} label {label!r} is reserved (used for energies, U, or functions); "
            f"choose another name such as t2 or eps_a")
    if keyword.iskeyword(label):          # also None, True and False
        raise ClusterError(
            f"{what} label {label!r} is a Python keyword, which cannot name a coupling; "
            f"choose another name such as t2 or eps_a")
    return label


def _index(value):
    """A site index or count as a Python int: int, numpy integer, anything with __index__
    except bool; None if it is not one."""
    if isinstance(value, bool):
        return None
    try:
        return operator.index(value)
    except TypeError:
        return None


_UNPRINTABLE = {"Cc", "Cf", "Cs", "Co", "Cn", "Zl", "Zp"}


def _printable(text):
    """``text`` with every control or line-separator character replaced by '?'."""
    return "".join("?" if unicodedata.category(ch) in _UNPRINTABLE else ch for ch in text)


def check_name(name):
    """Raise ClusterError unless ``name`` is a one-line printable cluster name."""
    if not isinstance(name, str):
        raise ClusterError(f"cluster name {name!r} is not a string; give e.g. name='dimer'")
    for ch in name:
        if unicodedata.category(ch) in _UNPRINTABLE:
            raise ClusterError(
                f"cluster name {name!r} contains the control or separator character "
                f"U+{ord(ch):04X}; give a name on one line without control characters")
    return name


@dataclass(frozen=True)
class Cluster:
    """A finite cluster of sites joined by labelled bonds.

    Parameters
    ----------
    n_sites : int
    bonds : tuple of (i, j, label)
        Unordered pairs, stored with i < j, each at most once.
    site_labels : tuple of (str or None)
        On-site energy label per site (None: no on-site term).
    name : str
        A short description used in outputs, e.g. "ring(4)".
    """

    n_sites: int
    bonds: tuple
    site_labels: tuple
    name: str = "custom"

    @property
    def hopping_labels(self):
        return tuple(sorted({b[2] for b in self.bonds}))

    @property
    def onsite_labels(self):
        return tuple(sorted({s for s in self.site_labels if s is not None}))

    def neighbours(self, i):
        return sorted({b[1] if b[0] == i else b[0] for b in self.bonds if i in b[:2]})

    def is_connected(self):
        seen, todo = {0}, [0]
        while todo:
            i = todo.pop()
            for j in self.neighbours(i):
                if j not in seen:
                    seen.add(j)
                    todo.append(j)
        return len(seen) == self.n_sites

    def sublattices(self):
        """Return (A, B) site tuples if the bond graph is bipartite, else None."""
        signs = two_colouring(self.n_sites, self.neighbours)
        if signs is None:
            return None
        return (tuple(i for i in range(self.n_sites) if signs[i] > 0),
                tuple(i for i in range(self.n_sites) if signs[i] < 0))

    def describe(self):
        labels = ", ".join(self.hopping_labels) or "none"
        nb = len(self.bonds)
        plural = "bond" if nb == 1 else "bonds"
        sites = "site" if self.n_sites == 1 else "sites"
        return f"{self.name}: {self.n_sites} {sites}, {nb} {plural} (hopping {labels})"


#: Largest number of sites a cluster may have.  Whole spectra are exact up to about 8
#: sites; few electrons on larger clusters are possible, and the memory guard of
#: ``solve`` decides what actually runs.  The cap only keeps absurd sizes (a typo in
#: a cluster file) from allocating memory before any check.
MAX_SITES = 10_000


def two_colouring(n, neighbours):
    """Signs +-1 on nodes 0..n-1 that differ across every edge (+1 on the lowest node of
    each connected component), or None if the graph is not bipartite.

    ``neighbours(i)`` gives the nodes joined to node i.

    Examples
    --------
    >>> two_colouring(4, lambda i: [(i - 1) % 4, (i + 1) % 4])
    [1, -1, 1, -1]
    >>> two_colouring(3, lambda i: [(i - 1) % 3, (i + 1) % 3]) is None
    True
    """
    colour = {}
    for start in range(n):
        if start in colour:
            continue
        colour[start] = 1
        todo = [start]
        while todo:
            i = todo.pop()
            for j in neighbours(i):
                if j not in colour:
                    colour[j] = -colour[i]
                    todo.append(j)
                elif colour[j] == colour[i]:
                    return None
    return [colour[i] for i in range(n)]


def cluster(n_sites: int, bonds: Iterable[tuple], site_labels: Sequence[str | None] | None = None,
            name: str = "custom") -> Cluster:
    """Validated cluster from a bond list.

    Parameters
    ----------
    n_sites : int
        Number of sites (>= 1).
    bonds : iterable of (i, j) or (i, j, label)
        Label defaults to ``"t"``.
    site_labels : None, sequence, or dict {site: label}
        On-site energy labels (e.g. ``{0: "eps"}``).

    Examples
    --------
    >>> c = cluster(3, [(0, 1), (1, 2, "tp")])
    >>> c.bonds
    ((0, 1, 't'), (1, 2, 'tp'))
    """
    n_index = _index(n_sites)
    if n_index is None:
        raise ClusterError(f"number of sites {n_sites!r} is not an integer; give e.g. 4")
    n_sites = n_index
    if n_sites < 1:
        raise ClusterError(f"a cluster needs at least one site, got {n_sites}; give n_sites >= 1")
    if n_sites > MAX_SITES:
        raise ClusterError(
            f"{n_sites} sites is far beyond exact diagonalization (at most {MAX_SITES} sites are "
            f"accepted, and full spectra reach about 8); give fewer sites")
    check_name(name)
    if isinstance(bonds, (str, bytes, dict)) or not hasattr(bonds, "__iter__"):
        raise ClusterError(f"bonds={bonds!r} is not a list of bonds; give e.g. "
                           f"bonds=[(0, 1), (1, 2)] (an empty list for a single site)")
    seen = {}
    for raw in bonds:
        try:
            items = tuple(raw)
        except TypeError:
            raise ClusterError(f"bond {raw!r} is not a pair (i, j) or triple (i, j, label)") from None
        if len(items) == 2:
            i, j, label = items[0], items[1], "t"
        elif len(items) == 3:
            i, j, label = items
        else:
            raise ClusterError(f"bond {raw!r} is not a pair (i, j) or triple (i, j, label)")
        ii, jj = _index(i), _index(j)
        for k, kk in ((i, ii), (j, jj)):
            if kk is None:
                raise ClusterError(f"bond {raw!r}: site {k!r} is not an integer index; give "
                                   f"sites as whole numbers such as (0, 1)")
        i, j = ii, jj
        for k in (i, j):
            if not 0 <= k < n_sites:
                raise ClusterError(
                    f"bond ({i}, {j}) uses site {k}, outside 0..{n_sites - 1}; "
                    f"fix the index or raise n_sites")
        if i == j:
            raise ClusterError(
                f"bond ({i}, {j}) joins a site to itself; remove it or use an on-site energy label")
        check_label(label, "bond")
        key = (min(i, j), max(i, j))
        if key in seen:
            if seen[key] != label:
                raise ClusterError(
                    f"bond {key} is given twice with different labels {seen[key]!r} and {label!r}; "
                    f"keep one")
            continue
        seen[key] = label
    if n_sites > 1 and not seen:
        raise ClusterError(
            f"the cluster has {n_sites} sites but no bonds; add bonds or use n_sites=1")
    labels = [None] * n_sites
    if site_labels is not None:
        items = site_labels.items() if isinstance(site_labels, dict) else enumerate(site_labels)
        for k, lab in items:
            kk = _index(k)
            if kk is None or not 0 <= kk < n_sites:
                raise ClusterError(f"site label given for site {k!r}, outside 0..{n_sites - 1}; "
                                   f"give a site index from 0 to {n_sites - 1}")
            k = kk
            if lab is not None:
                labels[k] = check_label(lab, "site")
    clash = set(seen.values()) & {l for l in labels if l}
    if clash:
        raise ClusterError(
            f"label {sorted(clash)[0]!r} is used both for a bond and for a site energy; "
            f"give them different names")
    bond_t = tuple(sorted((i, j, lab) for (i, j), lab in seen.items()))
    return Cluster(n_sites, bond_t, tuple(labels), name)


def _need_int(value, what, minimum):
    if isinstance(value, bool) or not isinstance(value, int) or value < minimum:
        raise ClusterError(f"{what} must be an integer >= {minimum}, got {value!r}")


def chain(n: int, t: str = "t") -> Cluster:
    """Open chain of ``n`` sites, bonds (i, i+1)."""
    _need_int(n, "chain length", 1)
    return cluster(n, [(i, i + 1, t) for i in range(n - 1)], name=f"chain({n})")


def ring(n: int, t: str = "t") -> Cluster:
    """Periodic ring of ``n >= 3`` sites.

    A 2-site "ring" would count the same bond twice; it is refused (use
    ``chain(2)``, whose single bond is the two-site cluster).
    """
    _need_int(n, "ring length", 3)
    return cluster(n, [(i, (i + 1) % n, t) for i in range(n)], name=f"ring({n})")


def grid(nx: int, ny: int, periodic: bool = False, t: str = "t") -> Cluster:
    """Rectangular nx × ny grid; site index x + nx*y.

    With ``periodic=True`` both directions wrap; a direction of length <= 2
    is never wrapped (it would duplicate bonds).
    """
    _need_int(nx, "grid width", 1)
    _need_int(ny, "grid height", 1)
    bonds = []
    for y in range(ny):
        for x in range(nx):
            s = x + nx * y
            if x + 1 < nx or (periodic and nx > 2):
                bonds.append((s, (x + 1) % nx + nx * y, t))
            if y + 1 < ny or (periodic and ny > 2):
                bonds.append((s, x + nx * ((y + 1) % ny), t))
    kind = "periodic" if periodic else "open"
    return cluster(nx * ny, bonds, name=f"grid({nx},{ny},{kind})")


def ladder(n: int, t: str = "t") -> Cluster:
    """Open 2 × n ladder (the 2 × n grid)."""
    c = grid(n, 2, periodic=False, t=t)
    return Cluster(c.n_sites, c.bonds, c.site_labels, f"ladder(2x{n})")


def complete(n: int, t: str = "t") -> Cluster:
    """Complete graph on ``n`` sites (every pair bonded)."""
    _need_int(n, "number of sites", 2)
    return cluster(n, [(i, j, t) for i in range(n) for j in range(i + 1, n)],
                   name=f"complete({n})")


def tetrahedron(t: str = "t") -> Cluster:
    """Four sites, all six bonds (the complete graph K4)."""
    c = complete(4, t)
    return Cluster(c.n_sites, c.bonds, c.site_labels, "tetrahedron")


def cube(t: str = "t") -> Cluster:
    """Eight corners of a cube (sites = 3-bit numbers, bonds between numbers one bit apart)."""
    bonds = [(i, i ^ (1 << b), t) for i in range(8) for b in range(3) if i < i ^ (1 << b)]
    return cluster(8, bonds, name="cube")


def star(n_leaves: int, t: str = "t") -> Cluster:
    """A centre (site 0) bonded to ``n_leaves`` leaves (sites 1..n_leaves)."""
    _need_int(n_leaves, "number of leaves", 1)
    return cluster(n_leaves + 1, [(0, k, t) for k in range(1, n_leaves + 1)],
                   name=f"star({n_leaves})")


BUILTIN_SHAPES = {
    "chain": (chain, 1), "ring": (ring, 1), "grid": (grid, 2), "pgrid": (None, 2),
    "ladder": (ladder, 1), "complete": (complete, 1), "tetrahedron": (tetrahedron, 0),
    "cube": (cube, 0), "star": (star, 1),
}


def parse_cluster_toml(text: str, source: str = "<string>") -> Cluster:
    """Cluster from the TOML cluster format (docs/cluster-files.md)."""
    data = parse_toml(text, source, "docs/cluster-files.md")
    fmt = data.get("format")
    if fmt != "symcluster-cluster":
        raise InputError(
            f"{source}: missing or wrong 'format' key ({fmt!r}); the first line must be "
            f"format = \"symcluster-cluster\"")
    version = data.get("version", 1)
    if type(version) is not int or version != 1:      # true and 1.0 equal 1 in Python
        raise InputError(f"{source}: cluster file version {version!r} is not supported; use version = 1")
    return cluster_from_table(data, source, extra_keys=("format", "version"))


def cluster_from_table(data, source="<string>", extra_keys=()):
    """Cluster from the keys of a cluster file (``name``, ``sites``, ``bonds``,
    ``site_energy``) given as a dict, e.g. a model file's ``[cluster]`` table.

    Parameters
    ----------
    data : dict
    source : str
        Names the file (or table) in error messages.
    extra_keys : iterable of str
        Further keys the caller has already read (they are not unknown).

    Examples
    --------
    >>> cluster_from_table({"sites": 3, "bonds": [[0, 1], [1, 2, "tp"]]}).bonds
    ((0, 1, 't'), (1, 2, 'tp'))
    """
    allowed = {"name", "sites", "bonds", "site_energy"} | set(extra_keys)
    extra = sorted(set(data) - allowed)
    if extra:
        raise InputError(f"{source}: unknown key {extra[0]!r}; allowed keys are "
                         + ", ".join(sorted(allowed)))
    n = data.get("sites")
    if n is None:
        raise InputError(f"{source}: key 'sites' (number of sites) is missing; add e.g. sites = 4")
    raw_bonds = data.get("bonds", [])
    if not isinstance(raw_bonds, list):
        raise InputError(f"{source}: 'bonds' must be a list such as [[0, 1], [1, 2, \"tp\"]]")
    site_energy = data.get("site_energy", {})
    if not isinstance(site_energy, dict):
        raise InputError(f"{source}: 'site_energy' must be a table such as {{ 0 = \"eps\" }}")
    labels = {}
    for key, lab in site_energy.items():
        try:
            labels[int(key)] = lab
        except ValueError:
            raise InputError(f"{source}: site_energy key {key!r} is not a site index") from None
    name = data.get("name")
    if name is None:
        name = _printable(source)          # a file name may hold any character
    elif not isinstance(name, str):
        raise InputError(f"{source}: 'name' must be a string such as name = \"dimer\"")
    try:
        return cluster(n, raw_bonds, site_labels=labels, name=name)
    except ClusterError as exc:
        raise ClusterError(f"{source}: {exc}") from None


#: Largest cluster file read, in bytes.  Any cluster that can be solved is far smaller
#: (8 sites with all 28 bonds labelled take about 1 kB).
MAX_FILE_BYTES = 1_000_000


def load_cluster_file(path: str | os.PathLike) -> Cluster:
    """Read a TOML cluster file; errors name the file and the problem.

    At most :data:`MAX_FILE_BYTES` bytes are read; a larger file (or a device
    such as /dev/zero) is refused.

    Examples
    --------
    >>> import os, tempfile
    >>> f = os.path.join(tempfile.mkdtemp(), "dimer.toml")
    >>> _ = open(f, "w").write('format = "symcluster-cluster"\\nsites = 2\\nbonds = [[0, 1]]\\n')
    >>> load_cluster_file(f).bonds
    ((0, 1, 't'),)
    """
    text = read_input_file(path, "cluster file", MAX_FILE_BYTES)
    return parse_cluster_toml(text, source=str(path))
