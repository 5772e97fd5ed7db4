"""Model: a local space on the sites of a cluster plus a list of terms.

A :class:`Model` is plain validated data; the families in
:mod:`symcluster.models.families` and model files (:mod:`symcluster.models.modelfile`)
build it.  Every coupling is ``sympy.Symbol(label, real=True)``; the Hamiltonian is
``sum(Symbol(term.label) * term.operator for term in terms)``.
"""

from dataclasses import dataclass
from collections.abc import Iterable
from fractions import Fraction

from symcluster.lattice.clusters import Cluster
from symcluster.errors import ModelError
from symcluster.hilbert.space import LocalSpace
from symcluster.symbols import coupling_symbol
from symcluster.models.terms import Term

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

    def sums(self):
        """The Hamiltonian as printed: ``[(kind, spin, coefficient, modes), ...]``.

        Terms of one kind with the same spin on the same list of modes are merged into
        one sum whose ``coefficient`` is a linear combination ``((label, Fraction), ...)``
        of couplings (Kanamori's ``U' = U - 2J`` reads ``(U - 2J)``).  Two
        ``number_product`` sums that differ only by exchanging the spins are merged into
        one over both spins, with ``spin`` ``"opposite"`` (up-down and down-up) or
        ``"same"`` (up-up and down-down).

        Examples
        --------
        >>> import symcluster as sc
        >>> [(k, c) for k, _, c, _ in sc.kanamori(2).sums()][1]
        ('number_product', (('U', Fraction(1, 1)), ('J', Fraction(-2, 1))))
        """
        merged = {}
        for kind, label, scale, spin, modes in self.groups():
            coeff = merged.setdefault((kind, spin, tuple(modes)), {})
            coeff[label] = coeff.get(label, 0) + scale
            if not coeff[label]:
                del coeff[label]
        rows = [(k, sp, tuple(c.items()), list(m)) for (k, sp, m), c in merged.items() if c]
        out, used = [], set()
        for i, (kind, spin, coeff, modes) in enumerate(rows):
            if i in used:
                continue
            if kind == "number_product" and spin in ((0, 1), (0, 0)):
                partner = (1, 0) if spin == (0, 1) else (1, 1)
                for j in range(i + 1, len(rows)):
                    if j not in used and rows[j] == (kind, partner, coeff, modes):
                        used.add(j)
                        spin = "opposite" if spin == (0, 1) else "same"
                        break
            out.append((kind, spin, coeff, modes))
        return out

    def hamiltonian_text(self):
        """H written out sum by sum in plain text (the text header's form).

        Examples
        --------
        >>> import symcluster as sc
        >>> sc.anderson(1).hamiltonian_text()
        'eps_d n_0 + U n_0,up n_0,dn + eps_1 n_1 + V_1 sum_s (c+_0,s c_1,s + h.c.)'
        >>> sc.with_field(sc.heisenberg(sc.ring(3))).hamiltonian_text()
        'J sum_<ab in {(0,1),(0,2),(1,2)}> S_a.S_b - h sum_a 2 Sz_a'
        """
        parts = [_sum_text(*row, self.space) for row in self.sums()]
        text = parts[0] if parts else "0"
        for part in parts[1:]:
            text += f" - {part[1:]}" if part.startswith("-") else f" + {part}"
        return text

    def geometry_text(self):
        """The sites and bonds in words (the bonds' labels only for the Hubbard family).

        Examples
        --------
        >>> import symcluster as sc
        >>> sc.heisenberg(sc.ring(4)).geometry_text()
        'ring(4): 4 sites, 4 bonds'
        """
        c = self.cluster
        if self.name.startswith("hubbard"):
            return c.describe()
        nb = len(c.bonds)
        text = f"{c.name}: {c.n_sites} site{'' if c.n_sites == 1 else 's'}"
        return text if c.n_sites == 1 and not nb else f"{text}, {nb} bond{'' if nb == 1 else 's'}"

    def describe(self):
        """One line: name, geometry, local space and H (the text and LaTeX headers).

        Examples
        --------
        >>> import symcluster as sc
        >>> sc.heisenberg(sc.chain(2)).describe()
        'heisenberg model on chain(2): 2 sites, 1 bond; spin-1/2 on each site; H = J S_0.S_1'
        """
        modes = ""
        if self.space.n_orbitals > 1 and self.space.n_sites > 1:
            modes = f" (mode a = {self.space.n_orbitals}*site + orbital)"
        return (f"{self.name} model on {self.geometry_text()}; {self.space.describe()}{modes}; "
                f"H = {self.hamiltonian_text()}")


#: kind -> (sign, operator with %a, %b for the modes, %s, %t for spins; spin-summed?)
_TEXT = {
    "hopping": (-1, "(c+_%a,%s c_%b,%s + h.c.)", True),
    "hybridization": (1, "(c+_%a,%s c_%b,%s + h.c.)", True),
    "onsite": (1, "n_%a", False),
    "hubbard_u": (1, "n_%a,up n_%a,dn", False),
    "number_product": (1, "n_%a,%s n_%b,%t", False),
    "density_density": (1, "n_%a n_%b", False),
    "zeeman": (-1, "2 Sz_%a", False),
    "chemical_potential": (-1, "n_%a", False),
    "exchange": (1, "S_%a.S_%b", False),
    "exchange_z": (1, "Sz_%a Sz_%b", False),
    "exchange_xy": (1, "(S+_%a S-_%b + h.c.)/2", False),
    "pair_hopping": (1, "(c+_%a,up c+_%a,dn c_%b,dn c_%b,up + h.c.)", False),
    "spin_flip": (1, "(S+_%a S-_%b + h.c.)", False),
}
_SPIN_WORD = {0: "up", 1: "dn"}


def coefficient_terms(coeff, sign=1):
    """``[(sign, text), ...]`` of a coefficient of :meth:`Model.sums`, in its order.

    ``text`` is one coupling times the magnitude of its factor, in sympy's one-line
    syntax (``J``, ``2*J``, ``J/4``, ``3*J/2``).

    Examples
    --------
    >>> coefficient_terms((("U", Fraction(1)), ("J", Fraction(-2))))
    [('+', 'U'), ('-', '2*J')]
    """
    out = []
    for label, scale in coeff:
        f = sign * Fraction(scale)
        p, q = abs(f.numerator), f.denominator
        text = label if p == 1 else f"{p}*{label}"
        out.append(("-" if f < 0 else "+", text if q == 1 else f"{text}/{q}"))
    return out


def coefficient_text(coeff, sign=1):
    """The coefficient as text, in parentheses when it has several couplings.

    Examples
    --------
    >>> coefficient_text((("U", Fraction(1)), ("J", Fraction(-2))))
    '(U - 2*J)'
    >>> coefficient_text((("t", Fraction(1)),), sign=-1)
    '-t'
    """
    terms = coefficient_terms(coeff, sign)
    text = ("-" if terms[0][0] == "-" else "") + terms[0][1]
    for sg, body in terms[1:]:
        text += f" {sg} {body}"
    return f"({text})" if len(terms) > 1 else text


def spin_fill(kind, spin, summed):
    """(first spin, second spin, sum over s?) for the operator templates of a sum."""
    if spin == "opposite":
        return "s", "-s", True
    if spin == "same":
        return "s", "s", True
    if isinstance(spin, tuple):
        return _SPIN_WORD[spin[0]], _SPIN_WORD[spin[1]], False
    if spin is not None:
        return _SPIN_WORD[spin], _SPIN_WORD[spin], False
    return "s", "s", summed


def _sum_text(kind, spin, coeff, modes, space):
    sign, op, summed = _TEXT.get(kind, (1, kind + "(%a)", False))
    ctext = coefficient_text(coeff, sign)
    s, t, spin_sum = spin_fill(kind, spin, summed)
    op = op.replace("%s", s).replace("%t", t)
    if len(modes) == 1:
        one = modes[0]
        op = op.replace("%a", str(one[0])).replace("%b", str(one[-1]))
        where = "sum_s " if spin_sum else ""
        return f"{ctext} {where}{op}"
    op = op.replace("%a", "a").replace("%b", "b")
    if len(modes[0]) == 1:
        if sorted(m[0] for m in modes) == list(range(space.n_modes)):
            where = "sum_a"
        else:
            where = "sum_(a in {" + ",".join(str(m[0]) for m in modes) + "})"
    else:
        where = "sum_<ab in {" + ",".join(f"({m[0]},{m[1]})" for m in modes) + "}>"
    return f"{ctext} {where}{',s' if spin_sum else ''} {op}"


def _check_fits_space(term, prod, space):
    """Refuse a product that a spin space or a projected space cannot hold."""
    if space.kind == "spins":
        modes = {m for m, _, _ in prod}
        if any(sum(1 if d else -1 for m2, _, d in prod if m2 == m) for m in modes):
            raise ModelError(
                f"a {term.kind} term with coupling {term.label!r} moves fermions between sites; "
                "a spin space has exactly one spin per site: use exchange, exchange_z, "
                "exchange_xy, spin_flip or zeeman terms")
    if space.projected:
        ann = [(m, s) for m, s, d in prod if not d]
        if any((m, 1 - s) in ann for m, s in ann):
            raise ModelError(
                f"a {term.kind} term with coupling {term.label!r} acts only on doubly occupied "
                "modes, which a space without double occupancy does not have; remove it")


def make_model(cluster: Cluster, terms: Iterable[Term], space: LocalSpace | None = None,
               name: str = "custom") -> "Model":
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
            _check_fits_space(t, prod, space)
            for mode, spin, _ in prod:
                if not 0 <= mode < space.n_modes:
                    raise ModelError(
                        f"{t.kind} term with coupling {t.label!r} acts on mode {mode}, outside "
                        f"0..{space.n_modes - 1} ({space.n_sites} sites x {space.n_orbitals} "
                        "orbitals); fix the index")
    if not isinstance(name, str) or not name.isprintable():
        raise ModelError(f"model name {name!r} must be printable text")
    return Model(cluster, space, terms, name)
