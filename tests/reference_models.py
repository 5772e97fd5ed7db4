"""Independent dense references for the model families (shares no code with symcluster).

Written from scratch for the external model checks; nothing here imports symcluster, and
nothing is taken from ``tests/reference_fock.py`` either.  Each family is built from its
documented operator form (the docstrings of ``symcluster.models.families`` and
``symcluster.models.terms``, read as physics, not as code):

==================  =========================================================================
hubbard             -t_b sum_s (c+_is c_js + h.c.) per bond b, U n_i,up n_i,dn per site,
                    V n_i n_j per bond (optional), eps_i n_i per labelled site
anderson            eps_d n_0 + U n_0,up n_0,dn + sum_k eps_k n_k
                    + sum_k V_k sum_s (c+_0s c_ks + h.c.)      (plus sign of the hybridisation)
kanamori            U sum_a n_a,up n_a,dn + U' sum_(a!=b) n_a,up n_b,dn
                    + (U' - J) sum_(a<b),s n_a,s n_b,s - J sum_(a!=b) c+_a,up c_a,dn c+_b,dn c_b,up
                    + J sum_(a!=b) c+_a,up c+_a,dn c_b,dn c_b,up,   U' = U - 2J
heisenberg          sum_b J_b S_i . S_j  (spin-1/2)
t-J                 P [-t sum_b sum_s (c+_is c_js + h.c.)] P + J sum_b (S_i . S_j - n_i n_j / 4)
field               -h sum_i 2 S^z_i = -h sum_i (n_i,up - n_i,dn)
==================  =========================================================================

Fermions: P. Jordan, E. Wigner, Z. Phys. 47, 631 (1928) (from memory).  A system of M
spatial modes has 2M fermion modes, numbered f = s * M + m (all up modes, then all down
modes).  Fermion mode f is the f-th Kronecker factor from the left; on one mode the
basis is (empty, occupied), the annihilator is a = [[0, 1], [0, 0]] and the string
factor Z = diag(1, -1):

    c_f = Z (x) ... (x) Z (x) a (x) 1 (x) ... (x) 1        (f string factors)

so c_f c+_g = -c+_g c_f (f != g) holds as matrices and every product carries its
fermion signs.  Spins: one Kronecker factor per site, basis (up, down),
S^z = diag(1/2, -1/2), S+ = [[0, 1], [0, 0]]; spins on different sites commute, so no
string is needed.

Every Hamiltonian is held as one sparse float64 matrix per coupling label (the entries
are small dyadic rationals, exact in float64).  Eigenvalues come from ``numpy.linalg.eigvalsh``
block by block over the conserved charges the reference itself declares (particle numbers
per spin, or total S^z); each block split is checked first: no term may join two
different charge values.
"""

from fractions import Fraction

import numpy as np
import scipy.sparse as sp

__all__ = ["FermionModes", "SpinSites", "Reference", "hubbard_ref", "anderson_ref",
           "kanamori_ref", "heisenberg_ref", "t_j_ref", "fermion_ref", "to_float",
           "expand", "multiset_deviation"]

_ANN = sp.csr_matrix(np.array([[0.0, 1.0], [0.0, 0.0]]))
_STRING = sp.csr_matrix(np.diag([1.0, -1.0]))
_ONE = sp.identity(2, format="csr")


def _kron_chain(factors):
    out = sp.identity(1, format="csr")
    for f in factors:
        out = sp.kron(out, f, format="csr")
    return out


class FermionModes:
    """Jordan-Wigner matrices of spin-1/2 fermions on ``n_spatial`` spatial modes.

    ``c(m, s)``, ``cd(m, s)``, ``num(m, s)`` for spatial mode m and spin s (0 up, 1 down);
    ``density(m)``, ``sz(m)``, ``splus(m)``, ``sminus(m)`` built from them.
    """

    def __init__(self, n_spatial):
        self.n_spatial = n_spatial
        self.n_fermion = 2 * n_spatial
        self.dim = 2 ** self.n_fermion
        self._c = []
        for f in range(self.n_fermion):
            factors = [_STRING] * f + [_ANN] + [_ONE] * (self.n_fermion - f - 1)
            self._c.append(_kron_chain(factors))
        shifts = self.n_fermion - 1 - np.arange(self.n_fermion)
        occ = (np.arange(self.dim)[:, None] >> shifts[None, :]) & 1
        self.occupation = occ                         # occupation[basis index, fermion mode]
        self.n_up = occ[:, :n_spatial].sum(axis=1)
        self.n_dn = occ[:, n_spatial:].sum(axis=1)

    def index(self, m, s):
        if not (0 <= m < self.n_spatial and s in (0, 1)):
            raise ValueError(f"mode ({m}, {s}) out of range")
        return s * self.n_spatial + m

    def c(self, m, s):
        return self._c[self.index(m, s)]

    def cd(self, m, s):
        return self._c[self.index(m, s)].T.tocsr()

    def num(self, m, s):
        return (self.cd(m, s) @ self.c(m, s)).tocsr()

    def density(self, m):
        return self.num(m, 0) + self.num(m, 1)

    def sz(self, m):
        return 0.5 * (self.num(m, 0) - self.num(m, 1))

    def splus(self, m):
        return (self.cd(m, 0) @ self.c(m, 1)).tocsr()

    def sminus(self, m):
        return (self.cd(m, 1) @ self.c(m, 0)).tocsr()

    def spin_dot(self, a, b):
        """S_a . S_b = Sz_a Sz_b + (S+_a S-_b + S-_a S+_b) / 2."""
        return (self.sz(a) @ self.sz(b)
                + 0.5 * (self.splus(a) @ self.sminus(b) + self.sminus(a) @ self.splus(b)))

    def hop(self, a, b, s):
        """c+_{a s} c_{b s} + h.c."""
        x = self.cd(a, s) @ self.c(b, s)
        return (x + x.T).tocsr()


class SpinSites:
    """Spin-1/2 matrices on ``n_sites`` sites (2^n states, basis (up, down) per site)."""

    def __init__(self, n_sites):
        self.n_sites = n_sites
        self.dim = 2 ** n_sites
        shifts = n_sites - 1 - np.arange(n_sites)
        down = (np.arange(self.dim)[:, None] >> shifts[None, :]) & 1
        # a site's bit is 0 for up (first basis vector) and 1 for down
        self.two_sz = (n_sites - 2 * down.sum(axis=1)).astype(np.int64)

    def _site(self, i, op):
        return _kron_chain([_ONE] * i + [op] + [_ONE] * (self.n_sites - i - 1))

    def sz(self, i):
        return self._site(i, sp.csr_matrix(np.diag([0.5, -0.5])))

    def splus(self, i):
        return self._site(i, sp.csr_matrix(np.array([[0.0, 1.0], [0.0, 0.0]])))

    def sminus(self, i):
        return self.splus(i).T.tocsr()

    def spin_dot(self, a, b):
        return (self.sz(a) @ self.sz(b)
                + 0.5 * (self.splus(a) @ self.sminus(b) + self.sminus(a) @ self.splus(b)))


def to_float(x):
    """float of an int, Fraction, string like '7/3', or an exact sympy Rational."""
    if hasattr(x, "p") and hasattr(x, "q"):
        return int(x.p) / int(x.q)
    return float(Fraction(str(x)) if isinstance(x, str) else Fraction(x))


class Reference:
    """A Hamiltonian as {label: sparse matrix} on a basis, with declared conserved charges.

    Parameters
    ----------
    dim : int
    charges : ndarray of shape (dim, k)
        Values of the conserved charges of each basis state (e.g. N_up, N_dn).
    keep : ndarray of bool, optional
        Basis states kept (projected spaces, e.g. no double occupancy); every matrix is
        restricted to them, which is P H P.
    """

    def __init__(self, dim, charges, keep=None):
        self.full_dim = dim
        self.keep = np.ones(dim, dtype=bool) if keep is None else np.asarray(keep, dtype=bool)
        self.charges = np.asarray(charges)[self.keep]
        self.terms = {}

    @property
    def dim(self):
        return int(self.keep.sum())

    def add(self, label, matrix, scale=1.0):
        m = sp.csr_matrix(matrix, dtype=float)
        if label in self.terms:
            self.terms[label] = (self.terms[label] + scale * m).tocsr()
        else:
            self.terms[label] = (scale * m).tocsr()

    def _restricted(self):
        idx = np.nonzero(self.keep)[0]
        return {k: v[idx][:, idx].tocsr() for k, v in self.terms.items()}

    def check_charges(self):
        """Every term keeps every declared charge (no element joins different values)."""
        for label, m in self._restricted().items():
            coo = m.tocoo()
            nz = np.abs(coo.data) > 1e-14
            rows, cols = coo.row[nz], coo.col[nz]
            if np.any(self.charges[rows] != self.charges[cols]):
                raise AssertionError(f"reference term {label!r} does not conserve the charges")

    def matrix(self, point):
        mats = self._restricted()
        missing = set(mats) - set(point)
        if missing:
            raise KeyError(f"no value for {sorted(missing)}")
        out = sp.csr_matrix((self.dim, self.dim))
        for k, m in mats.items():
            out = out + to_float(point[k]) * m
        return out.tocsr()

    def eigenvalues(self, point, **fixed):
        """Sorted eigenvalues at ``point`` ({label: number}), block by block over the charges.

        ``fixed``: charge index -> value, to keep only some blocks, e.g. ``{0: 3}``.
        """
        self.check_charges()
        h = self.matrix(point)
        keys = [tuple(r) for r in self.charges]
        blocks = {}
        for i, key in enumerate(keys):
            blocks.setdefault(key, []).append(i)
        out = []
        for key, idx in blocks.items():
            if any(key[int(c)] != v for c, v in fixed.items()):
                continue
            sub = h[idx][:, idx].toarray()
            assert np.allclose(sub, sub.T), "reference block is not symmetric"
            out.extend(np.linalg.eigvalsh(sub))
        return np.sort(np.array(out))

    def block_eigenvalues(self, point):
        """{charge tuple: sorted eigenvalues}."""
        self.check_charges()
        h = self.matrix(point)
        blocks = {}
        for i, key in enumerate(tuple(int(x) for x in r) for r in self.charges):
            blocks.setdefault(key, []).append(i)
        return {key: np.linalg.eigvalsh(h[idx][:, idx].toarray())
                for key, idx in blocks.items()}


def fermion_ref(n_sites, hopping=(), hubbard=(), onsite=(), density=(), hybrid=(),
                field=None, keep=None, n_orbitals=1):
    """A reference on spin-1/2 fermions from plain lists.

    Parameters
    ----------
    hopping : iterable of (a, b, label)      -label sum_s (c+_as c_bs + h.c.)
    hubbard : iterable of (a, label)         label n_a,up n_a,dn
    onsite : iterable of (a, label)          label n_a
    density : iterable of (a, b, label[, scale])  scale * label n_a n_b
    hybrid : iterable of (a, b, label)       +label sum_s (c+_as c_bs + h.c.)
    field : (label, sites) or None           -label sum_(i in sites) (n_i,up - n_i,dn)
    keep : callable(FermionModes) -> bool array, optional (projected spaces)
    """
    modes = FermionModes(n_sites * n_orbitals)
    ref = Reference(modes.dim, np.stack([modes.n_up, modes.n_dn], axis=1),
                    None if keep is None else keep(modes))
    ref.modes = modes
    for a, b, lab in hopping:
        ref.add(lab, -(modes.hop(a, b, 0) + modes.hop(a, b, 1)))
    for a, b, lab in hybrid:
        ref.add(lab, modes.hop(a, b, 0) + modes.hop(a, b, 1))
    for a, lab in hubbard:
        ref.add(lab, modes.num(a, 0) @ modes.num(a, 1))
    for a, lab in onsite:
        ref.add(lab, modes.density(a))
    for item in density:
        a, b, lab = item[:3]
        scale = float(item[3]) if len(item) > 3 else 1.0
        ref.add(lab, modes.density(a) @ modes.density(b), scale)
    if field is not None:
        lab, sites = field
        for i in sites:
            for o in range(n_orbitals):
                m = i * n_orbitals + o
                ref.add(lab, -(modes.num(m, 0) - modes.num(m, 1)))
    return ref


def hubbard_ref(n_sites, bonds, U="U", V=None, site_labels=None, field=None):
    """Hubbard model (hubbard's docstring); ``bonds`` as (i, j, label)."""
    return fermion_ref(
        n_sites, hopping=bonds,
        hubbard=[(i, U) for i in range(n_sites)] if U else (),
        onsite=list((site_labels or {}).items()),
        density=[(i, j, V) for i, j, _ in bonds] if V else (),
        field=None if field is None else (field, range(n_sites)))


def anderson_ref(n_bath):
    """Single-impurity Anderson model, impurity site 0, bath sites 1..n_bath."""
    return fermion_ref(
        n_bath + 1,
        onsite=[(0, "eps_d")] + [(k, f"eps_{k}") for k in range(1, n_bath + 1)],
        hubbard=[(0, "U")],
        hybrid=[(0, k, f"V_{k}") for k in range(1, n_bath + 1)])


def kanamori_ref(n_orbitals):
    """Kanamori atom with U' = U - 2J written out (labels U and J only)."""
    f = FermionModes(n_orbitals)
    ref = Reference(f.dim, np.stack([f.n_up, f.n_dn], axis=1))
    ref.modes = f
    n = f.num
    for a in range(n_orbitals):
        ref.add("U", n(a, 0) @ n(a, 1))
    for a in range(n_orbitals):
        for b in range(n_orbitals):
            if a == b:
                continue
            inter = n(a, 0) @ n(b, 1)                       # U' n_a,up n_b,dn, U' = U - 2J
            ref.add("U", inter)
            ref.add("J", inter, -2.0)
            flip = f.cd(a, 0) @ f.c(a, 1) @ f.cd(b, 1) @ f.c(b, 0)
            ref.add("J", flip, -1.0)
            pair = f.cd(a, 0) @ f.cd(a, 1) @ f.c(b, 1) @ f.c(b, 0)
            ref.add("J", pair, 1.0)
            if a < b:
                for s in (0, 1):                            # (U' - J) = U - 3J
                    same = n(a, s) @ n(b, s)
                    ref.add("U", same)
                    ref.add("J", same, -3.0)
    return ref


def heisenberg_ref(n_sites, bonds, field=None):
    """sum_b J_b S_i . S_j; ``bonds`` as (i, j, label); optional -h sum 2 S^z."""
    s = SpinSites(n_sites)
    ref = Reference(s.dim, s.two_sz[:, None])
    ref.spins = s
    for i, j, lab in bonds:
        ref.add(lab, s.spin_dot(i, j))
    if field is not None:
        for i in range(n_sites):
            ref.add(field, s.sz(i), -2.0)
    return ref


def t_j_ref(n_sites, bonds, exchange_label=None):
    """t-J model on the no-double-occupancy space; exchange label J for bond label t."""
    name = exchange_label or (lambda lab: "J" if lab == "t" else f"J_{lab}")

    def no_double(modes):
        occ = modes.occupation
        return ~np.any(occ[:, :modes.n_spatial] & occ[:, modes.n_spatial:], axis=1)

    ref = fermion_ref(n_sites, hopping=bonds, keep=no_double)
    f = ref.modes
    for i, j, lab in bonds:
        ref.add(name(lab), f.spin_dot(i, j))
        ref.add(name(lab), f.density(i) @ f.density(j), -0.25)
    return ref


def expand(pairs):
    """[(value, degeneracy), ...] -> sorted float array with each value repeated."""
    out = []
    for v, d in pairs:
        out.extend([float(v)] * int(d))
    return np.sort(np.array(out))


def multiset_deviation(a, b):
    """Largest |a_k - b_k| of two sorted arrays of equal length (AssertionError otherwise)."""
    a, b = np.sort(np.asarray(a, dtype=float)), np.sort(np.asarray(b, dtype=float))
    if a.shape != b.shape:
        raise AssertionError(f"{a.size} eigenvalues against {b.size}")
    return float(np.max(np.abs(a - b))) if a.size else 0.0
