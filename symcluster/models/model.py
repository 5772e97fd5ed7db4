"""Model: a local space on the sites of a cluster plus a list of terms.

A :class:`Model` is plain validated data; the families in
:mod:`symcluster.models.families` and model files (:mod:`symcluster.models.modelfile`)
build it.  Every coupling is ``sympy.Symbol(label, real=True)``; the Hamiltonian is
``sum(Symbol(term.label) * term.operator for term in terms)``.
"""

from dataclasses import dataclass
from fractions import Fraction

from ..clusters import Cluster
from ..errors import ModelError
from ..hilbert.space import LocalSpace
from ..symbols import coupling_symbol
from .terms import Term

__all__ = ["Model", "make_model", "coupling_symbol"]


@dataclass(frozen=True)
class Model:
    """A Hamiltonian on a cluster: local space + terms.

    Attributes
    ----------
    cluster : Cluster
        Sites and labelled bonds (the geometry the model was built on).
    space : LocalSpace
    terms : tuple of Term
    name : str
        The family's name (``"hubbard"``, ``"heisenberg"``, ...) or ``"custom"``.

    Examples
    --------
    >>> import symcluster as sc
    >>> sc.hubbard(sc.ring(4)).labels
    ('t', 'U')
    """

    cluster: Cluster
    space: LocalSpace
    terms: tuple
    name: str = "custom"

    @property
    def n_sites(self):
        return self.cluster.n_sites

    @property
    def n_modes(self):
        return self.space.n_modes

    @property
    def labels(self):
        """Coupling labels in order of first appearance among the terms."""
        return tuple(dict.fromkeys(t.label for t in self.terms))

    @property
    def symbols(self):
        return tuple(coupling_symbol(l) for l in self.labels)

    def symbol(self, label):
        """The sympy Symbol of one of this model's couplings."""
        if label not in self.labels:
            raise ModelError(f"unknown coupling {label!r}; this model's couplings are "
                             + ", ".join(self.labels))
        return coupling_symbol(label)

    def terms_with(self, kind):
        """The terms built by one builder, e.g. ``model.terms_with("hopping")``."""
        return tuple(t for t in self.terms if t.kind == kind)

    def groups(self):
        """Terms grouped for printing: ``[(kind, label, scale, spin, [modes, ...]), ...]``."""
        out = {}
        for t in self.terms:
            out.setdefault((t.kind, t.label, t.scale, t.spin), []).append(t.modes)
        return [(k, l, s, sp, modes) for (k, l, s, sp), modes in out.items()]

    def hamiltonian_text(self):
        """H written out term by term in plain text (the text header's form)."""
        return " + ".join(_group_text(*g, self.space) for g in self.groups()) or "0"

    def describe(self):
        return (f"{self.name} model on {self.cluster.describe()}; {self.space.describe()}; "
                f"H = {self.hamiltonian_text()}")


_TEXT = {
    "hopping": ("-{c} sum_<ab in {w}>,s (c+_as c_bs + h.c.)", "-{c} sum_<ab in {w}> (c+_a{s} c_b{s} + h.c.)"),
    "hybridization": ("{c} sum_<ab in {w}>,s (c+_as c_bs + h.c.)", None),
    "onsite": ("{c} sum_(a in {w}) n_a", None),
    "hubbard_u": ("{c} sum_(a in {w}) n_a,up n_a,dn", None),
    "number_product": ("{c} sum_(ab in {w}) n_a,{s0} n_b,{s1}", None),
    "density_density": ("{c} sum_<ab in {w}> n_a n_b", None),
    "zeeman": ("-{c} sum_(a in {w}) 2 Sz_a", None),
    "chemical_potential": ("-{c} sum_(a in {w}) n_a", None),
    "exchange": ("{c} sum_<ab in {w}> S_a.S_b", None),
    "exchange_z": ("{c} sum_<ab in {w}> Sz_a Sz_b", None),
    "exchange_xy": ("{c} sum_<ab in {w}> (S+_a S-_b + h.c.)/2", None),
    "pair_hopping": ("{c} sum_<ab in {w}> (c+_a,up c+_a,dn c_b,dn c_b,up + h.c.)", None),
    "spin_flip": ("{c} sum_<ab in {w}> (S+_a S-_b + h.c.)", None),
}


def _coefficient_text(label, scale):
    if scale == 1:
        return label
    if scale == -1:
        return f"(-{label})"
    return f"({scale}*{label})"


def _where_text(modes, space):
    if len(modes[0]) == 1:
        items = [str(m[0]) for m in modes]
    else:
        items = ["(" + ",".join(str(x) for x in m) + ")" for m in modes]
    text = "{" + ",".join(items) + "}"
    return text


def _group_text(kind, label, scale, spin, modes, space):
    both, one = _TEXT.get(kind, ("{c} * " + kind + " on {w}", None))
    fmt = one if (spin is not None and one is not None and kind == "hopping") else both
    spins = {0: "up", 1: "dn"}
    s0, s1 = (spins.get(spin[0]), spins.get(spin[1])) if isinstance(spin, tuple) else ("", "")
    return fmt.format(c=_coefficient_text(label, scale), w=_where_text(modes, space),
                      s=("," + spins[spin]) if isinstance(spin, int) else "", s0=s0, s1=s1)


def make_model(cluster, terms, space=None, name="custom"):
    """A validated :class:`Model` from a cluster, terms and a local space.

    Parameters
    ----------
    cluster : Cluster
    terms : iterable of Term
    space : LocalSpace, optional
        Default: spin-1/2 fermions, one orbital per site of the cluster.
    name : str

    Raises
    ------
    ModelError
        A term acts on a mode outside the space, the space does not fit the cluster,
        or there are no terms.

    Examples
    --------
    >>> import symcluster as sc
    >>> from symcluster.models.terms import hopping, hubbard_u
    >>> m = make_model(sc.chain(2), [hopping(0, 1), hubbard_u(0), hubbard_u(1)])
    >>> m.labels
    ('t', 'U')
    """
    if not isinstance(cluster, Cluster):
        raise ModelError(f"a model needs a Cluster (e.g. symcluster.ring(4)), got "
                         f"{type(cluster).__name__}")
    space = LocalSpace("electrons", cluster.n_sites) if space is None else space
    if not isinstance(space, LocalSpace):
        raise ModelError(f"space must be a LocalSpace, got {type(space).__name__}")
    if space.n_sites != cluster.n_sites:
        raise ModelError(f"the local space has {space.n_sites} sites but the cluster "
                         f"{cluster.n_sites}; make them equal")
    terms = tuple(terms)
    if not terms:
        raise ModelError("a model needs at least one term")
    for t in terms:
        if not isinstance(t, Term):
            raise ModelError(f"{t!r} is not a Term; build terms with symcluster.models.terms")
        for prod, c in t.operator:
            if not isinstance(c, Fraction):
                raise ModelError(f"a {t.kind} term has a coefficient {c!r} that is not exact")
            for s in (0, 1):
                if sum(1 if d else -1 for _, sp, d in prod if sp == s):
                    raise ModelError(
                        f"a {t.kind} term with coupling {t.label!r} changes N_{'up' if s == 0 else 'dn'}"
                        "; every term must conserve the numbers of up and down fermions "
                        "(the sectors are (N_up, N_dn))")
            for mode, spin, _ in prod:
                if not 0 <= mode < space.n_modes:
                    raise ModelError(
                        f"{t.kind} term with coupling {t.label!r} acts on mode {mode}, outside "
                        f"0..{space.n_modes - 1} ({space.n_sites} sites x {space.n_orbitals} "
                        "orbitals); fix the index")
    if not isinstance(name, str) or not name.isprintable():
        raise ModelError(f"model name {name!r} must be printable text")
    return Model(cluster, space, terms, name)
