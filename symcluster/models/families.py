"""Model families built from terms: Hubbard, Anderson, Kanamori, Heisenberg, t-J, fields.

Each family is a function returning a :class:`~symcluster.models.model.Model`; the
names and signatures are stable.  Sign conventions are those of the term builders
(:mod:`symcluster.models.terms`, docs/conventions.md).
"""

from fractions import Fraction
from collections.abc import Iterable

from symcluster.lattice.clusters import Cluster, cluster as make_cluster
from symcluster.errors import ModelError
from symcluster.hilbert.space import LocalSpace
from symcluster.models.model import Model, make_model
from symcluster.models.terms import (check_coupling_label, density_density, exchange, hopping, hubbard_u,
                    hybridization, number_product, onsite, pair_hopping, spin_flip, zeeman)

__all__ = ["hubbard", "anderson", "kanamori", "heisenberg", "t_j", "with_field"]


def _need_cluster(cl, family):
    if not isinstance(cl, Cluster):
        raise ModelError(f"{family}() needs a Cluster (e.g. symcluster.ring(4)), got "
                         f"{type(cl).__name__}")


def _hopping_terms(cl):
    """One hopping term per bond, grouped by label (labels sorted)."""
    out = []
    for lab in cl.hopping_labels:
        out += [hopping(i, j, lab) for i, j, l in cl.bonds if l == lab]
    return out


def _onsite_terms(cl):
    out = []
    for lab in cl.onsite_labels:
        out += [onsite(i, lab) for i, l in enumerate(cl.site_labels) if l == lab]
    return out


def hubbard(cluster: Cluster, U: str = "U", V: str | None = None) -> Model:
    """Hubbard model: hopping on every bond, U on every site (and V on every bond).

    ``H = -sum_b t_b sum_s (c+_is c_js + h.c.) + U sum_i n_i,up n_i,dn + sum_i eps_i n_i
    [+ V sum_b n_i n_j]``; bond labels become hopping couplings, site labels on-site
    energies.

    Parameters
    ----------
    cluster : Cluster
    U : str or None
        Label of the on-site repulsion (None: non-interacting).
    V : str or None
        Label of the density-density interaction on every bond (None: absent).

    Examples
    --------
    >>> import symcluster as sc
    >>> hubbard(sc.chain(2)).symbols
    (t, U)
    >>> hubbard(sc.ring(4), V="V").labels
    ('t', 'U', 'V')
    """
    _need_cluster(cluster, "hubbard")
    used = set(cluster.hopping_labels) | set(cluster.onsite_labels)
    for what, lab in (("interaction", U), ("density-density", V)):
        if lab is not None:
            check_coupling_label(lab, what)
            if lab in used:
                raise ModelError(f"{what} label {lab!r} is also a bond or site label; rename one")
            used.add(lab)
    terms = _hopping_terms(cluster) + _onsite_terms(cluster)
    if U is not None:
        terms += [hubbard_u(i, U) for i in range(cluster.n_sites)]
    if V is not None:
        terms += [density_density(i, j, V) for i, j, _ in cluster.bonds]
    if not terms:
        raise ModelError("the model has no terms: give a cluster with bonds or a U label")
    return make_model(cluster, terms, name="hubbard")


def anderson(n_bath: int, eps_d: str = "eps_d", U: str = "U") -> Model:
    """Single-impurity Anderson model with ``n_bath`` bath sites.

    ``H = eps_d n_0 + U n_0,up n_0,dn + sum_k eps_k n_k + sum_k V_k sum_s (c+_0s c_ks + h.c.)``
    with the impurity on site 0, bath sites k = 1..n_bath, couplings ``eps_d``, ``U``,
    ``eps_1..``, ``V_1..``.  The hybridization carries a plus sign (the impurity models'
    usual form); on this star geometry the spectrum does not depend on the signs of V_k.

    Parameters
    ----------
    n_bath : int
        Number of bath sites (>= 1).
    eps_d, U : str
        Labels of the impurity level and the impurity's repulsion.

    Examples
    --------
    >>> anderson(1).labels
    ('eps_d', 'U', 'eps_1', 'V_1')
    """
    if isinstance(n_bath, bool) or not isinstance(n_bath, int) or n_bath < 1:
        raise ModelError(f"n_bath={n_bath!r} must be an integer >= 1")
    check_coupling_label(eps_d)
    check_coupling_label(U)
    cl = make_cluster(n_bath + 1, [(0, k, f"V_{k}") for k in range(1, n_bath + 1)],
                      name=f"impurity+{n_bath} bath sites")
    terms = [onsite(0, eps_d), hubbard_u(0, U)]
    terms += [onsite(k, f"eps_{k}") for k in range(1, n_bath + 1)]
    terms += [hybridization(0, k, f"V_{k}") for k in range(1, n_bath + 1)]
    return make_model(cl, terms, name="anderson")


def kanamori(n_orbitals: int, U: str = "U", J: str = "J", U_prime: str | None = None) -> Model:
    """One atom with ``n_orbitals`` degenerate orbitals and the Kanamori interaction.

    ``H = U sum_a n_a,up n_a,dn + U' sum_(a!=b) n_a,up n_b,dn + (U' - J) sum_(a<b),s n_a,s n_b,s
    - J sum_(a!=b) c+_a,up c_a,dn c+_b,dn c_b,up + J sum_(a!=b) c+_a,up c+_a,dn c_b,dn c_b,up``

    With ``U_prime=None`` the rotationally invariant choice ``U' = U - 2J`` is written
    into the terms (couplings U and J only); otherwise U' is its own coupling.

    Parameters
    ----------
    n_orbitals : int
        Number of orbitals (>= 1) on the single site.
    U, J : str
        Labels of the intra-orbital repulsion and Hund's coupling.
    U_prime : str or None
        Label of the inter-orbital repulsion (None: U - 2J).

    References
    ----------
    A. Georges, L. de' Medici, J. Mravlje, Annu. Rev. Condens. Matter Phys. 4, 137 (2013).

    Examples
    --------
    >>> kanamori(2).labels
    ('U', 'J')
    >>> kanamori(3).space.dimension
    64
    """
    if isinstance(n_orbitals, bool) or not isinstance(n_orbitals, int) or n_orbitals < 1:
        raise ModelError(f"n_orbitals={n_orbitals!r} must be an integer >= 1")
    labels = [U, J] + ([U_prime] if U_prime is not None else [])
    for lab in labels:
        check_coupling_label(lab)
    if len(set(labels)) != len(labels):
        raise ModelError(f"kanamori labels {labels} must differ from each other")
    # U' as (label, scale) pairs
    up = [(U_prime, 1)] if U_prime is not None else [(U, 1), (J, -2)]
    terms = [hubbard_u(a, U) for a in range(n_orbitals)]
    pairs = [(a, b) for a in range(n_orbitals) for b in range(a + 1, n_orbitals)]
    for a, b in pairs:
        for lab, sc in up:
            terms += [number_product(a, 0, b, 1, lab, sc), number_product(a, 1, b, 0, lab, sc)]
    for a, b in pairs:
        for s in (0, 1):
            for lab, sc in up + [(J, -1)]:
                terms.append(number_product(a, s, b, s, lab, sc))
    for a, b in pairs:
        terms.append(spin_flip(a, b, J, -1))
        terms.append(pair_hopping(a, b, J))
    if not terms:
        raise ModelError("one orbital without U has no terms")
    cl = make_cluster(1, [], name=f"atom({n_orbitals} orbitals)")
    space = LocalSpace("electrons", 1, n_orbitals=n_orbitals)
    return make_model(cl, _merge_equal(terms), space, name="kanamori")


def _merge_equal(terms):
    """Terms with the same kind, label and modes merged into one (scales added)."""
    out = {}
    for t in terms:
        key = (t.kind, t.label, t.modes, t.spin)
        if key in out:
            prev = out[key]
            ops = dict(prev.operator)
            for p, c in t.operator:
                ops[p] = ops.get(p, 0) + c
            ops = {p: c for p, c in ops.items() if c}
            if not ops:
                del out[key]
                continue
            out[key] = type(t)(t.kind, t.label, t.modes, tuple(sorted(ops.items())), t.spin,
                               prev.scale + t.scale)
        else:
            out[key] = t
    return list(out.values())


def _exchange_label(label):
    return "J" if label == "t" else f"J_{label}"


def heisenberg(cluster: Cluster) -> Model:
    """Spin-1/2 Heisenberg model: ``H = sum_b J_b S_i . S_j`` on every bond.

    The shapes' default bond label ``t`` becomes ``J``; other labels are kept.  J > 0 is
    antiferromagnetic.

    Examples
    --------
    >>> import symcluster as sc
    >>> heisenberg(sc.ring(4)).labels
    ('J',)
    >>> heisenberg(sc.ring(4)).space.dimension
    16
    """
    _need_cluster(cluster, "heisenberg")
    if cluster.onsite_labels:
        raise ModelError("a spin model has no on-site energies; remove the cluster's site labels")
    if not cluster.bonds:
        raise ModelError("the cluster has no bonds, so the Heisenberg model has no terms")
    terms = []
    for lab in cluster.hopping_labels:
        new = "J" if lab == "t" else lab
        terms += [exchange(i, j, new) for i, j, l in cluster.bonds if l == lab]
    return make_model(cluster, terms, LocalSpace("spins", cluster.n_sites), name="heisenberg")


def t_j(cluster: Cluster) -> Model:
    """t-J model: ``-t sum_b P (c+_is c_js + h.c.) P + J sum_b (S_i . S_j - n_i n_j / 4)``.

    No double occupancy (the projector P); the exchange acts on the same bonds as the
    hopping.  A bond label ``t`` gives the exchange label ``J``; another label ``x`` gives
    ``J_x``.

    Examples
    --------
    >>> import symcluster as sc
    >>> t_j(sc.ring(4)).labels
    ('t', 'J')
    >>> t_j(sc.ring(4)).space.dimension
    81
    """
    _need_cluster(cluster, "t_j")
    if not cluster.bonds:
        raise ModelError("the cluster has no bonds, so the t-J model has no terms")
    terms = _hopping_terms(cluster) + _onsite_terms(cluster)
    for lab in cluster.hopping_labels:
        jl = _exchange_label(lab)
        check_coupling_label(jl)
        for i, j, l in cluster.bonds:
            if l == lab:
                terms += [exchange(i, j, jl), density_density(i, j, jl, Fraction(-1, 4))]
    space = LocalSpace("electrons", cluster.n_sites, projected=True)
    return make_model(cluster, terms, space, name="t-J")


def with_field(model: Model, h: str = "h", sites: Iterable[int] | None = None) -> Model:
    """The model plus a Zeeman field along z: ``-h sum_i 2 S^z_i`` (or on some sites only).

    Parameters
    ----------
    model : Model
    h : str
        Label of the field (in energy units; it lowers up spins).
    sites : iterable of int, optional
        Sites that feel the field (default: all; every orbital of a site).

    Examples
    --------
    >>> import symcluster as sc
    >>> with_field(sc.hubbard(sc.chain(2))).labels
    ('t', 'U', 'h')
    """
    if not isinstance(model, Model):
        raise ModelError(f"with_field() needs a Model, got {type(model).__name__}")
    check_coupling_label(h, "field")
    if h in model.labels:
        raise ModelError(f"field label {h!r} is already a coupling of the model; rename it")
    space = model.space
    chosen = range(space.n_sites) if sites is None else list(sites)
    for s in chosen:
        if isinstance(s, bool) or not isinstance(s, int) or not 0 <= s < space.n_sites:
            raise ModelError(f"field site {s!r} is outside 0..{space.n_sites - 1}")
    terms = list(model.terms)
    for s in chosen:
        terms += [zeeman(space.mode(s, o), h) for o in range(space.n_orbitals)]
    return make_model(model.cluster, terms, space, name=model.name + "+field")
