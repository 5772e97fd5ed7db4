"""Independent, deliberately naive Hubbard-sector builders used as benchmark baselines.

Nothing here imports :mod:`symcluster`; the builders are written from the
definitions so that the benchmark compares against an independent
implementation.

Conventions (the same as the project's, re-derived here):

* A Fock state of ``L`` sites is a pair of bit masks ``(up, dn)``; bit ``i``
  set means site ``i`` holds an electron of that spin.
* Orbital order: all spin-up orbitals first, then all spin-down ones, each by
  increasing site index.  A hop ``c+_a c_b`` within one spin species picks up
  ``(-1)**(number of occupied orbitals strictly between a and b)``; orbitals
  of the other spin are never between two orbitals of the same spin.
* ``H = -sum_bonds t_b sum_sigma (c+_i c_j + h.c.) + U sum_i n_i,up n_i,dn``.

Two back ends share the same hopping table:

* :func:`sympy_sector_matrix` — a ``sympy.Matrix`` in the symbols of the bond
  labels and ``U`` (then :func:`naive_sympy_eigenvals` calls
  ``Matrix.eigenvals()`` sector by sector);
* :func:`numpy_sector_matrix` — a dense float64 ``numpy`` array at one
  numerical parameter point (then :func:`numpy_full_spectrum` calls
  ``numpy.linalg.eigvalsh`` on every sector);
* :func:`numpy_fock_spectrum` — the plain full diagonalization: one dense
  float64 matrix on the whole 4**L-state Fock space, one ``eigvalsh``.
"""

from itertools import combinations
import time

import numpy as np
import sympy

__all__ = [
    "masks", "sector_basis", "hop_entries", "sympy_sector_matrix", "numpy_sector_matrix",
    "all_sectors", "naive_sympy_eigenvals", "numpy_full_spectrum", "numpy_fock_spectrum",
]


def masks(n_sites, n_particles):
    """All ``n_sites``-bit masks with ``n_particles`` bits set, ascending.

    Parameters
    ----------
    n_sites : int
    n_particles : int

    Returns
    -------
    list of int
    """
    return sorted(sum(1 << i for i in occ) for occ in combinations(range(n_sites), n_particles))


def sector_basis(n_sites, n_up, n_dn):
    """Basis of the sector (N_up, N_dn): list of ``(up, dn)`` mask pairs.

    Parameters
    ----------
    n_sites, n_up, n_dn : int

    Returns
    -------
    list of tuple of int
    """
    return [(u, d) for u in masks(n_sites, n_up) for d in masks(n_sites, n_dn)]


def _hop(mask, a, b):
    """Apply ``c+_a c_b`` to one spin species' mask.

    Parameters
    ----------
    mask : int
        Occupation mask of one spin species.
    a, b : int
        Target and source sites, ``a != b``.

    Returns
    -------
    tuple of (int, int) or None
        ``(new_mask, sign)``, or ``None`` when the hop is Pauli-blocked.
    """
    if not (mask >> b) & 1 or (mask >> a) & 1:
        return None
    lo, hi = min(a, b), max(a, b)
    between = bin(mask & ((1 << hi) - 1) & ~((1 << (lo + 1)) - 1)).count("1")
    return mask ^ (1 << a) ^ (1 << b), (-1) ** between


def hop_entries(n_sites, bonds, basis):
    """Off-diagonal hopping entries of ``H`` in a sector basis.

    Parameters
    ----------
    n_sites : int
    bonds : sequence of (int, int, str)
        Bonds ``(i, j, label)``; each unordered pair once.
    basis : list of (int, int)
        Sector basis from :func:`sector_basis`.

    Returns
    -------
    tuple
        ``(entries, diag)`` where ``entries`` is a list of
        ``(row, col, label, sign)`` meaning ``H[row, col] += -sign * label``,
        and ``diag`` is the list of double-occupancy counts (coefficient of U).
    """
    index = {s: k for k, s in enumerate(basis)}
    entries = []
    for col, (up, dn) in enumerate(basis):
        for i, j, label in bonds:
            for a, b in ((i, j), (j, i)):
                for spin in (0, 1):
                    res = _hop(up if spin == 0 else dn, a, b)
                    if res is None:
                        continue
                    new, sign = res
                    target = (new, dn) if spin == 0 else (up, new)
                    entries.append((index[target], col, label, sign))
    diag = [bin(u & d).count("1") for u, d in basis]
    return entries, diag


def sympy_sector_matrix(n_sites, bonds, n_up, n_dn):
    """Sector Hamiltonian as a ``sympy.Matrix`` in the bond-label symbols and ``U``.

    Parameters
    ----------
    n_sites : int
    bonds : sequence of (int, int, str)
    n_up, n_dn : int

    Returns
    -------
    sympy.Matrix
    """
    basis = sector_basis(n_sites, n_up, n_dn)
    entries, diag = hop_entries(n_sites, bonds, basis)
    U = sympy.Symbol("U", real=True)
    syms = {lab: sympy.Symbol(lab, real=True) for _, _, lab in bonds}
    m = sympy.zeros(len(basis), len(basis))
    for k, nd in enumerate(diag):
        m[k, k] = nd * U
    for r, c, lab, sign in entries:
        m[r, c] += -sign * syms[lab]
    return m


def numpy_sector_matrix(n_sites, bonds, n_up, n_dn, values):
    """Dense float64 sector Hamiltonian at one parameter point.

    Parameters
    ----------
    n_sites : int
    bonds : sequence of (int, int, str)
    n_up, n_dn : int
    values : dict
        ``{label: float}`` for every bond label and ``"U"``.

    Returns
    -------
    numpy.ndarray
    """
    return _dense_float_matrix(n_sites, bonds, sector_basis(n_sites, n_up, n_dn), values)


def _dense_float_matrix(n_sites, bonds, basis, values):
    """Dense float64 Hamiltonian on any list of ``(up, dn)`` basis states."""
    entries, diag = hop_entries(n_sites, bonds, basis)
    m = np.zeros((len(basis), len(basis)))
    m[np.diag_indices(len(basis))] = values["U"] * np.asarray(diag, dtype=float)
    for r, c, lab, sign in entries:
        m[r, c] -= sign * values[lab]
    return m


def all_sectors(n_sites):
    """All ``(N_up, N_dn)`` with ``0 <= N_up, N_dn <= n_sites``, lexicographic."""
    return [(nu, nd) for nu in range(n_sites + 1) for nd in range(n_sites + 1)]


def naive_sympy_eigenvals(n_sites, bonds, sectors, progress=None):
    """Exact eigenvalues of every sector by ``sympy.Matrix.eigenvals()``.

    Parameters
    ----------
    n_sites : int
    bonds : sequence of (int, int, str)
    sectors : sequence of (int, int)
        Sectors in the order they are attempted.
    progress : callable, optional
        Called as ``progress(event, sector, dim, seconds)`` with
        ``event`` in ``{"start", "done"}``, so that a caller that kills this
        computation at a time cap knows how far it got.

    Returns
    -------
    dict
        ``{(N_up, N_dn): {eigenvalue: multiplicity}}``.
    """
    out = {}
    for sec in sectors:
        t0 = time.perf_counter()
        m = sympy_sector_matrix(n_sites, bonds, *sec)
        if progress:
            progress("start", sec, m.shape[0], 0.0)
        out[sec] = m.eigenvals()
        if progress:
            progress("done", sec, m.shape[0], time.perf_counter() - t0)
    return out


def numpy_full_spectrum(n_sites, bonds, values):
    """All eigenvalues (all sectors) by dense ``numpy.linalg.eigvalsh``.

    Parameters
    ----------
    n_sites : int
    bonds : sequence of (int, int, str)
    values : dict
        ``{label: float}`` for every bond label and ``"U"``.

    Returns
    -------
    tuple
        ``(eigenvalues, build_seconds, diag_seconds)``; ``eigenvalues`` is a
        sorted float64 array of length ``4**n_sites``.
    """
    build = diag = 0.0
    parts = []
    for sec in all_sectors(n_sites):
        t0 = time.perf_counter()
        m = numpy_sector_matrix(n_sites, bonds, *sec, values)
        t1 = time.perf_counter()
        parts.append(np.linalg.eigvalsh(m))
        t2 = time.perf_counter()
        build += t1 - t0
        diag += t2 - t1
    return np.sort(np.concatenate(parts)), build, diag


def numpy_fock_spectrum(n_sites, bonds, values):
    """All eigenvalues by one dense ``numpy.linalg.eigvalsh`` of the whole Fock space.

    The plain full diagonalization that uses no symmetry at all: the basis is
    every ``(up, dn)`` mask pair (``4**n_sites`` states), the matrix is dense.

    Parameters
    ----------
    n_sites : int
    bonds : sequence of (int, int, str)
    values : dict
        ``{label: float}`` for every bond label and ``"U"``.

    Returns
    -------
    tuple
        ``(eigenvalues, build_seconds, diag_seconds)``; ``eigenvalues`` is a
        sorted float64 array of length ``4**n_sites``.
    """
    t0 = time.perf_counter()
    basis = [(u, d) for u in range(2 ** n_sites) for d in range(2 ** n_sites)]
    m = _dense_float_matrix(n_sites, bonds, basis, values)
    t1 = time.perf_counter()
    eig = np.linalg.eigvalsh(m)
    t2 = time.perf_counter()
    return np.sort(eig), t1 - t0, t2 - t1
