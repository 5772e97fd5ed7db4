"""Models: a Hamiltonian on a cluster as labelled operator terms with sympy couplings.

Convention (docs/conventions.md)::

    H = - sum_{bonds (i,j)} sum_sigma t_b (c+_{i sigma} c_{j sigma} + h.c.)
        + U sum_i n_{i up} n_{i dn} + sum_i eps_i n_i

Every coupling is ``sympy.Symbol(label, real=True)``.
"""

from dataclasses import dataclass


from .clusters import Cluster, check_label
from .errors import ModelError
from .symbols import coupling_symbol

__all__ = ["Model", "hubbard", "coupling_symbol"]


@dataclass(frozen=True)
class Model:
    """A Hubbard-type Hamiltonian on a cluster.

    Attributes
    ----------
    cluster : Cluster
    hops : tuple of (i, j, label)
        Each bond contributes -label * sum_sigma (c+_i c_j + c+_j c_i).
    onsite : tuple of (i, label)
        Each entry contributes +label * n_i.
    u_label : str or None
        Label of the on-site repulsion (None: no interaction term).
    name : str
    """

    cluster: Cluster
    hops: tuple
    onsite: tuple
    u_label: object
    name: str = "hubbard"

    @property
    def n_sites(self):
        return self.cluster.n_sites

    @property
    def labels(self):
        """Coupling labels in a fixed order: hoppings, site energies, then U."""
        out = list(sorted({h[2] for h in self.hops}))
        out += [l for l in sorted({o[1] for o in self.onsite}) if l not in out]
        if self.u_label is not None:
            out.append(self.u_label)
        return tuple(out)

    @property
    def symbols(self):
        return tuple(coupling_symbol(l) for l in self.labels)

    def symbol(self, label):
        if label not in self.labels:
            raise ModelError(f"unknown coupling {label!r}; this model's couplings are "
                             + ", ".join(self.labels))
        return coupling_symbol(label)

    def hamiltonian_text(self):
        parts = []
        for lab in sorted({h[2] for h in self.hops}):
            parts.append(f"-{lab} sum_<ij in {lab}-bonds>,s (c+_is c_js + h.c.)")
        if self.u_label:
            parts.append(f"{self.u_label} sum_i n_i,up n_i,dn")
        for lab in sorted({o[1] for o in self.onsite}):
            sites = [o[0] for o in self.onsite if o[1] == lab]
            parts.append(f"{lab} sum_(i in {sites}) n_i")
        return " + ".join(parts)

    def describe(self):
        return f"{self.name} model on {self.cluster.describe()}; H = {self.hamiltonian_text()}"


def hubbard(cluster, U="U"):
    """Hubbard model on a cluster: bond labels become hopping symbols, plus U.

    Parameters
    ----------
    cluster : Cluster
    U : str or None
        Name of the interaction symbol (None: non-interacting model).

    Examples
    --------
    >>> from symcluster import chain
    >>> hubbard(chain(2)).symbols
    (t, U)
    """
    if not isinstance(cluster, Cluster):
        raise ModelError(f"hubbard() needs a Cluster (e.g. symcluster.ring(4)), got {type(cluster).__name__}")
    if U is not None:
        check_label(U, "interaction") if U != "U" else None
        if U in cluster.hopping_labels or U in cluster.onsite_labels:
            raise ModelError(f"interaction label {U!r} is also a bond or site label; rename one")
    onsite = tuple((i, lab) for i, lab in enumerate(cluster.site_labels) if lab is not None)
    return Model(cluster, cluster.bonds, onsite, U, "hubbard")
