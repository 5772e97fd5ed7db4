"""Terms: a coupling times an exact operator, normal-ordered in fermion ladder operators.

Every model is a list of :class:`Term` objects.  A term is ``coupling * operator``; the
operator is a sum of normal-ordered products of creation and annihilation operators
with exact rational coefficients.  Spin-1/2 operators are written through fermions on
singly occupied sites (S+_i = c+_{i up} c_{i dn}, S^z_i = (n_{i up} - n_{i dn}) / 2),
which represents them faithfully on the spin space of :mod:`symcluster.hilbert.space`.

A ladder operator is a triple ``(mode, spin, dagger)``: ``mode`` a spatial mode index
(site * n_orbitals + orbital), ``spin`` 0 for up and 1 for down, ``dagger`` True for
a creation operator.  A product is a tuple of ladder operators written left to right
(the rightmost acts first).  An operator is a dict ``{product: Fraction}``.

Normal order (the canonical form): creation operators left of annihilation operators;
among the creators ascending in ``(spin, mode)``, among the annihilators descending, so
that ``n_a = c+_a c_a`` and ``n_a n_b = c+_a c+_b c_b c_a`` (a < b) carry coefficient +1.
The fermion ordering of states (all up modes by index, then all down modes) is
docs/conventions.md's.

Sign conventions of the term builders (also in docs/conventions.md):

==================  ==================================================================
builder             operator multiplying the coupling
==================  ==================================================================
hopping             -(c+_{a s} c_{b s} + c+_{b s} c_{a s}), summed over s (or one s)
hybridization       +(c+_{a s} c_{b s} + c+_{b s} c_{a s}), summed over s
onsite              n_a = n_{a up} + n_{a dn}
hubbard_u           n_{a up} n_{a dn}
density_density     n_a n_b
zeeman              -2 S^z_a = -(n_{a up} - n_{a dn})
chemical_potential  -n_a (one term per mode: -mu N in all)
exchange            S_a . S_b
exchange_z          S^z_a S^z_b
exchange_xy         (S+_a S-_b + S-_a S+_b) / 2
pair_hopping        c+_{a up} c+_{a dn} c_{b dn} c_{b up} + h.c.
spin_flip           c+_{a up} c_{a dn} c+_{b dn} c_{b up} + h.c.  (= S+_a S-_b + h.c.)
==================  ==================================================================
"""

from dataclasses import dataclass
from fractions import Fraction
import keyword
import re

from symcluster.errors import ModelError

__all__ = [
    "Term", "check_coupling_label", "normal_order", "hopping", "hybridization", "onsite", "hubbard_u",
    "density_density", "zeeman", "chemical_potential", "exchange", "exchange_z",
    "exchange_xy", "pair_hopping", "spin_flip", "number_product", "operator_text",
]

_NAME = re.compile(r"^[A-Za-z][A-Za-z0-9_]*$")
#: Names that clash with the energy variable, quantum-number labels or sympy's names.
RESERVED = frozenset({"E", "I", "N", "S", "Sz", "O", "Q", "pi", "oo", "nan", "zoo", "beta",
                      "T", "sqrt", "cos", "sin", "acos", "atan", "exp", "log", "lambda",
                      "root", "k", "eta", "irrep"})


def check_coupling_label(label, what="coupling"):
    """``label`` if it is a valid coupling name, else a :class:`ModelError`.

    Parameters
    ----------
    label : str
    what : str
        Names the label's role in the message.

    Returns
    -------
    str

    Examples
    --------
    >>> check_coupling_label("J_H")
    'J_H'
    """
    if isinstance(label, str) and (keyword.iskeyword(label) or label in ("True", "False", "None")):
        raise ModelError(f"{what} label {label!r} is a Python keyword (reserved); choose "
                         "another name such as U2 or eps_a")
    if not isinstance(label, str) or not _NAME.match(label):
        raise ModelError(f"{what} label {label!r} is not a valid name; use letters, digits and "
                         "underscores, starting with a letter (e.g. t, U, J_H, eps_1)")
    if label in RESERVED or label in ("True", "False", "None"):
        raise ModelError(f"{what} label {label!r} is reserved (energy variable, quantum-number "
                         "or function name); choose another, e.g. U2 or eps_a")
    return label


def _key(op):
    mode, spin, _ = op
    return (spin, mode)


def normal_order(products):
    """The normal-ordered form of a sum of ladder-operator products.

    Parameters
    ----------
    products : iterable of (coefficient, product)
        ``product`` is a tuple of ``(mode, spin, dagger)`` triples, left to right.

    Returns
    -------
    dict
        ``{normal-ordered product: Fraction}`` without zero coefficients.

    Examples
    --------
    >>> normal_order([(1, ((0, 0, False), (0, 0, True)))])    # c c+ = 1 - c+ c
    {(): Fraction(1, 1), ((0, 0, True), (0, 0, False)): Fraction(-1, 1)}
    """
    out = {}
    todo = [(Fraction(c), tuple(p)) for c, p in products]
    while todo:
        c, p = todo.pop()
        if not c:
            continue
        # first annihilator standing directly left of a creator
        for i in range(len(p) - 1):
            if not p[i][2] and p[i + 1][2]:
                swapped = p[:i] + (p[i + 1], p[i]) + p[i + 2:]
                todo.append((-c, swapped))
                if _key(p[i]) == _key(p[i + 1]):
                    todo.append((c, p[:i] + p[i + 2:]))
                break
        else:
            n_cre = sum(1 for op in p if op[2])
            sign, cre = _sorted_with_sign(p[:n_cre], reverse=False)
            sign2, ann = _sorted_with_sign(p[n_cre:], reverse=True)
            if sign == 0 or sign2 == 0:
                continue
            q = cre + ann
            v = out.get(q, 0) + c * sign * sign2
            if v:
                out[q] = v
            else:
                out.pop(q, None)
    return out


def _sorted_with_sign(ops, reverse):
    """(sign of the permutation, sorted ops); sign 0 when an operator repeats (c c = 0)."""
    ops = list(ops)
    sign = 1
    for i in range(len(ops)):               # bubble sort: each swap of fermions is a sign
        for j in range(len(ops) - 1 - i):
            a, b = _key(ops[j]), _key(ops[j + 1])
            if a == b:
                return 0, ()
            if (a > b) != reverse:
                ops[j], ops[j + 1] = ops[j + 1], ops[j]
                sign = -sign
    if len(ops) > 1 and len({_key(o) for o in ops}) < len(ops):
        return 0, ()
    return sign, tuple(ops)


def _c(mode, spin):
    return (mode, spin, False)


def _cd(mode, spin):
    return (mode, spin, True)


def _n(mode, spin):
    return (_cd(mode, spin), _c(mode, spin))


def _mul(*factors):
    """Product of operators given as lists of (coefficient, product)."""
    out = [(Fraction(1), ())]
    for f in factors:
        out = [(a * b, p + q) for a, p in out for b, q in f]
    return out


def _sz(mode):
    return [(Fraction(1, 2), _n(mode, 0)), (Fraction(-1, 2), _n(mode, 1))]


def _splus(mode):
    return [(Fraction(1), (_cd(mode, 0), _c(mode, 1)))]


def _sminus(mode):
    return [(Fraction(1), (_cd(mode, 1), _c(mode, 0)))]


def _density(mode):
    return [(Fraction(1), _n(mode, 0)), (Fraction(1), _n(mode, 1))]


@dataclass(frozen=True)
class Term:
    """One term of a Hamiltonian: ``coefficient * coupling * operator``.

    Parameters
    ----------
    kind : str
        Name of the builder (``"hopping"``, ``"hubbard_u"``, ...), used by the text and
        LaTeX writers.
    label : str
        The coupling's name (a real sympy Symbol of that name multiplies the operator).
    modes : tuple of int
        The spatial modes the term acts on, in the builder's order (for printing).
    operator : tuple of (product, Fraction)
        Normal-ordered, sorted; see the module docstring.
    spin : int, tuple or None
        For spin-resolved builders (one-spin hopping): 0 up, 1 down.
    scale : Fraction
        The factor the builder's operator was multiplied by (printed with the term).

    Examples
    --------
    >>> t = hubbard_u(0, "U")
    >>> t.label, t.operator
    ('U', ((((0, 0, True), (0, 1, True), (0, 1, False), (0, 0, False)), Fraction(1, 1)),))
    """

    kind: str
    label: str
    modes: tuple
    operator: tuple
    spin: object = None
    scale: Fraction = Fraction(1)

    @property
    def products(self):
        """The operator as ``{product: Fraction}``."""
        return dict(self.operator)

    def max_annihilators(self):
        """Largest number of annihilation operators in one product of the operator."""
        return max((sum(1 for op in p if not op[2]) for p, _ in self.operator), default=0)


def _term(kind, label, modes, raw, spin=None, scale=1):
    check_coupling_label(label)
    if isinstance(scale, bool) or not isinstance(scale, (int, Fraction)) or scale == 0:
        raise ModelError(f"scale {scale!r} of a {kind} term is not a nonzero int or Fraction")
    scale = Fraction(scale)
    ops = normal_order([(scale * c, p) for c, p in raw])
    if not ops:
        raise ModelError(f"{kind} term on modes {modes} with coupling {label!r} is zero; remove it")
    return Term(kind, label, tuple(modes), tuple(sorted(ops.items())), spin, scale)


def _check_modes(*modes):
    for m in modes:
        if isinstance(m, bool) or not isinstance(m, int) or m < 0:
            raise ModelError(f"mode index {m!r} is not a non-negative integer; give e.g. 0")


def _pair(a, b, kind):
    _check_modes(a, b)
    if a == b:
        raise ModelError(f"{kind} term joins mode {a} to itself; use an on-site term instead")


def hopping(a, b, label="t", spin=None, scale=1):
    """``-label * sum_s (c+_{a s} c_{b s} + h.c.)`` (or one spin ``s`` only).

    Parameters
    ----------
    a, b : int
        Spatial modes (different).
    label : str
    spin : None, 0 or 1
        None: both spins; 0 (up) or 1 (down): that spin only.
    scale : int or Fraction
        Multiplies the operator (e.g. -1 for a bond of the opposite sign).

    Examples
    --------
    >>> len(hopping(0, 1).operator)
    4
    """
    _pair(a, b, "hopping")
    spins = (0, 1) if spin is None else (spin,)
    if spin not in (None, 0, 1):
        raise ModelError(f"spin {spin!r} is not None, 0 (up) or 1 (down)")
    raw = []
    for s in spins:
        raw += [(-1, (_cd(a, s), _c(b, s))), (-1, (_cd(b, s), _c(a, s)))]
    return _term("hopping", label, (a, b), raw, spin, scale)


def hybridization(a, b, label="V", scale=1):
    """``+label * sum_s (c+_{a s} c_{b s} + h.c.)`` (the impurity models' sign).

    Examples
    --------
    >>> hybridization(0, 1, "V_1").operator[0][1]
    Fraction(1, 1)
    """
    _pair(a, b, "hybridization")
    raw = []
    for s in (0, 1):
        raw += [(1, (_cd(a, s), _c(b, s))), (1, (_cd(b, s), _c(a, s)))]
    return _term("hybridization", label, (a, b), raw, None, scale)


def onsite(a, label="eps", scale=1):
    """``label * n_a`` with ``n_a = n_{a up} + n_{a dn}``.

    Examples
    --------
    >>> onsite(2, "eps").modes
    (2,)
    """
    _check_modes(a)
    return _term("onsite", label, (a,), _density(a), scale=scale)


def hubbard_u(a, label="U", scale=1):
    """``label * n_{a up} n_{a dn}``.

    Examples
    --------
    >>> hubbard_u(0).kind
    'hubbard_u'
    """
    _check_modes(a)
    return _term("hubbard_u", label, (a,), [(1, _n(a, 0) + _n(a, 1))], scale=scale)


def number_product(a, sa, b, sb, label, scale=1):
    """``label * n_{a sa} n_{b sb}`` for two different spin-orbitals.

    Examples
    --------
    >>> number_product(0, 0, 1, 0, "W").kind
    'number_product'
    """
    _check_modes(a, b)
    if (a, sa) == (b, sb):
        raise ModelError("number_product of a spin-orbital with itself is its density; "
                         "use onsite or zeeman instead")
    return _term("number_product", label, (a, b), [(1, _n(a, sa) + _n(b, sb))], (sa, sb), scale)


def density_density(a, b, label="V", scale=1):
    """``label * n_a n_b`` (total densities of two different modes).

    Examples
    --------
    >>> len(density_density(0, 1).operator)
    4
    """
    _pair(a, b, "density_density")
    return _term("density_density", label, (a, b), _mul(_density(a), _density(b)), scale=scale)


def zeeman(a, label="h", scale=1):
    """``-label * 2 S^z_a = -label * (n_{a up} - n_{a dn})``: a field along z lowers up spins.

    Examples
    --------
    >>> zeeman(0).operator[0][1]
    Fraction(-1, 1)
    """
    _check_modes(a)
    return _term("zeeman", label, (a,), [(-2 * c, p) for c, p in _sz(a)], scale=scale)


def chemical_potential(a, label="mu", scale=1):
    """``-label * n_a`` (one term per mode gives ``-mu N``).

    Examples
    --------
    >>> chemical_potential(0).kind
    'chemical_potential'
    """
    _check_modes(a)
    return _term("chemical_potential", label, (a,), [(-c, p) for c, p in _density(a)],
                 scale=scale)


def exchange_z(a, b, label="J_z", scale=1):
    """``label * S^z_a S^z_b``.

    Examples
    --------
    >>> exchange_z(0, 1).modes
    (0, 1)
    """
    _pair(a, b, "exchange")
    return _term("exchange_z", label, (a, b), _mul(_sz(a), _sz(b)), scale=scale)


def exchange_xy(a, b, label="J_xy", scale=1):
    """``label * (S+_a S-_b + S-_a S+_b) / 2``.

    Examples
    --------
    >>> len(exchange_xy(0, 1).operator)
    2
    """
    _pair(a, b, "exchange")
    raw = [(c / 2, p) for c, p in _mul(_splus(a), _sminus(b)) + _mul(_sminus(a), _splus(b))]
    return _term("exchange_xy", label, (a, b), raw, scale=scale)


def exchange(a, b, label="J", scale=1):
    """``label * S_a . S_b = label * (S^z_a S^z_b + (S+_a S-_b + S-_a S+_b) / 2)``.

    Examples
    --------
    >>> exchange(0, 1).kind
    'exchange'
    """
    _pair(a, b, "exchange")
    raw = _mul(_sz(a), _sz(b)) + [(c / 2, p) for c, p in
                                  _mul(_splus(a), _sminus(b)) + _mul(_sminus(a), _splus(b))]
    return _term("exchange", label, (a, b), raw, scale=scale)


def pair_hopping(a, b, label="J_P", scale=1):
    """``label * (c+_{a up} c+_{a dn} c_{b dn} c_{b up} + h.c.)``: a doublon moves from b to a.

    Examples
    --------
    >>> len(pair_hopping(0, 1).operator)
    2
    """
    _pair(a, b, "pair_hopping")
    raw = [(1, (_cd(a, 0), _cd(a, 1), _c(b, 1), _c(b, 0))),
           (1, (_cd(b, 0), _cd(b, 1), _c(a, 1), _c(a, 0)))]
    return _term("pair_hopping", label, (a, b), raw, scale=scale)


def spin_flip(a, b, label="J_H", scale=1):
    """``label * (c+_{a up} c_{a dn} c+_{b dn} c_{b up} + h.c.) = label * (S+_a S-_b + S-_a S+_b)``.

    Examples
    --------
    >>> spin_flip(0, 1).kind
    'spin_flip'
    """
    _pair(a, b, "spin_flip")
    raw = _mul(_splus(a), _sminus(b)) + _mul(_sminus(a), _splus(b))
    return _term("spin_flip", label, (a, b), raw, scale=scale)


def _op_text(op):
    mode, spin, dag = op
    return f"c{'+' if dag else ''}_{mode}{'up' if spin == 0 else 'dn'}"


def operator_text(term):
    """The term's operator written out as text, e.g. ``-1 c+_0up c_1up - ...``.

    Examples
    --------
    >>> operator_text(hubbard_u(1))
    '+1 c+_1up c+_1dn c_1dn c_1up'
    """
    parts = []
    for p, c in term.operator:
        sign = "-" if c < 0 else "+"
        parts.append(f"{sign}{abs(c)} " + " ".join(_op_text(o) for o in p))
    return " ".join(parts)
