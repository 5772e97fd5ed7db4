"""The one action of a model's terms on bit-mask states (the block builder's route).

Every term's operator (normal-ordered products of ladder operators, see
:mod:`symcluster.models.terms`) is compiled once into three kinds of moves:

* diagonal products (every annihilated spin-orbital is created again): a value when
  the product's modes are all occupied, summed per label through bit counts;
* one-body moves inside one spin word (hopping): one entry per pair of modes with the
  coefficients of both directions, the fermion sign the parity of the occupied modes
  strictly between them;
* every other product (spin flips, pair hopping, exchange): applied operator by operator
  to the combined word ``up | dn << M`` (all up modes first, then all down modes, the
  ordering of :mod:`symcluster.hilbert.fock`), each operator passing the occupied modes
  below it.

On a projected space (no double occupancy) images outside the space are dropped:
the action is that of ``P H P``.  The verification builds its matrices by a separate,
plain route (:mod:`symcluster.verify.plain`) that shares none of this code.
"""

from fractions import Fraction
from math import lcm

__all__ = ["HamiltonianAction", "apply_hamiltonian", "compile_terms"]


def _exact(v):
    """An int where the Fraction is integral."""
    return int(v) if v.denominator == 1 else v


def _apply_product(seq, w):
    """(sign, w') of a product (right to left) on the combined word ``w``; None if it vanishes."""
    sign = 1
    for k, dag in seq:
        bit = 1 << k
        if (w & bit) if dag else not (w & bit):
            return None
        if (w & (bit - 1)).bit_count() & 1:
            sign = -sign
        w ^= bit
    return sign, w


class _Compiled:
    """The moves of a list of terms on a space (see the module docstring)."""

    def __init__(self, terms, n_modes, factor=1):
        M = self.M = n_modes
        self.full = (1 << M) - 1
        diag = {}          # label -> {"pair": {value: mask}, "up": {...}, "dn": {...}, "other": []}
        hops = {}          # (word, a, b) a<b -> [label, coef(b->a i.e. c+_a c_b), coef(a->b)]
        general = []       # (label, coef, seq right-to-left on the combined word)
        self.integral = True
        self.labels = []
        for term in terms:
            lab = term.label
            if lab not in self.labels:
                self.labels.append(lab)
            for prod, coef in term.operator:
                coef = coef * factor
                if coef.denominator != 1:
                    self.integral = False
                cre = [(s * M + m) for m, s, d in prod if d]
                ann = [(s * M + m) for m, s, d in prod if not d]
                if sorted(cre) == sorted(ann):
                    # diagonal: value on a state holding all these spin-orbitals
                    mask = sum(1 << k for k in cre)
                    seq = [(k, d) for k, d in reversed([(s * M + m, d) for m, s, d in prod])]
                    sign, _ = _apply_product(seq, mask)
                    value = coef * sign
                    d = diag.setdefault(lab, {"pair": {}, "up": {}, "dn": {}, "other": []})
                    mu, md = mask & self.full, mask >> M
                    if len(cre) == 1:               # value per bit, summed over terms
                        key = "up" if mu else "dn"
                        d[key][mu | md] = d[key].get(mu | md, 0) + value
                    elif len(cre) == 2 and mu == md:
                        d["pair"][mu] = d["pair"].get(mu, 0) + value
                    else:
                        d["other"].append((mu, md, value))
                elif len(cre) == 1 and len(ann) == 1 and cre[0] // M == ann[0] // M:
                    word = cre[0] // M
                    x, y = cre[0] % M, ann[0] % M           # c+_x c_y
                    a, b = min(x, y), max(x, y)
                    entry = hops.setdefault((lab, word, a, b), [0, 0])
                    entry[0 if x == a else 1] += coef        # [c+_a c_b, c+_b c_a]
                else:
                    seq = [(s * M + m, d) for m, s, d in reversed(prod)]
                    general.append((lab, coef, tuple(seq)))
        self.hops = []
        for (lab, word, a, b), (to_a, to_b) in hops.items():
            between = ((1 << b) - 1) & ~((1 << (a + 1)) - 1)
            self.hops.append((word, 1 << a, 1 << b, between, lab, _exact(Fraction(to_a)),
                              _exact(Fraction(to_b))))
        self.diag = []
        for lab, d in diag.items():
            parts = []
            for kind in ("pair", "up", "dn"):
                by_value = {}               # the bits of equal value share one mask
                for bit, v in d[kind].items():
                    if v:
                        by_value[v] = by_value.get(v, 0) | bit
                parts += [(kind, _exact(Fraction(v)), m) for v, m in by_value.items()]
            other = [(mu, md, _exact(v)) for mu, md, v in d["other"] if v]
            self.diag.append((lab, parts, other))
        self.general = [(lab, _exact(Fraction(c)), seq) for lab, c, seq in general]
        self.denominator = 1               # of the compiled coefficients (factor included)
        for term in terms:
            for _, c in term.operator:
                self.denominator = lcm(self.denominator, (c * factor).denominator)

    def image(self, up, dn, allows=None):
        """H|up, dn> as a list of ``(state', label, coefficient)`` (repeats allowed)."""
        out = []
        for word, ba, bb, between, lab, to_a, to_b in self.hops:
            x = (dn if word else up)
            occ = x & (ba | bb)
            if occ == bb and to_a:          # c+_a c_b
                c = -to_a if (x & between).bit_count() & 1 else to_a
                st = (up, dn ^ (ba | bb)) if word else (up ^ (ba | bb), dn)
                out.append((st, lab, c))
            elif occ == ba and to_b:        # c+_b c_a
                c = -to_b if (x & between).bit_count() & 1 else to_b
                st = (up, dn ^ (ba | bb)) if word else (up ^ (ba | bb), dn)
                out.append((st, lab, c))
        if self.general:
            M = self.M
            w = up | (dn << M)
            for lab, coef, seq in self.general:
                r = _apply_product(seq, w)
                if r is not None:
                    sign, w2 = r
                    out.append(((w2 & self.full, w2 >> M), lab, coef if sign > 0 else -coef))
        if allows is not None:
            out = [e for e in out if allows(*e[0])]
        for lab, parts, other in self.diag:
            total = 0
            for kind, v, m in parts:
                if kind == "pair":
                    n = (up & dn & m).bit_count()
                elif kind == "up":
                    n = (up & m).bit_count()
                else:
                    n = (dn & m).bit_count()
                if n:
                    total += v * n
            for mu, md, v in other:
                if up & mu == mu and dn & md == md:
                    total += v
            if total:
                out.append(((up, dn), lab, total))
        return out


def compile_terms(terms, n_modes, factor=1):
    """The compiled moves of ``terms`` on ``n_modes`` spatial modes (see the module docstring).

    Examples
    --------
    >>> from symcluster.models.terms import hopping
    >>> compile_terms([hopping(0, 1)], 2).image(0b01, 0)
    [((2, 0), 't', -1)]
    """
    return _Compiled(terms, n_modes, factor)


def apply_hamiltonian(model, up, dn):
    """H|up,dn> as ``{(up', dn'): {label: coefficient}}`` (entries merged, zeros dropped).

    Examples
    --------
    >>> import symcluster as sc
    >>> apply_hamiltonian(sc.hubbard(sc.chain(2)), 0b11, 0b01)
    {(3, 2): {'t': -1}, (3, 1): {'U': 1}}
    """
    comp = compile_terms(model.terms, model.space.n_modes)
    allows = model.space.allows if model.space.projected else None
    out = {}
    for st, lab, c in comp.image(up, dn, allows):
        row = out.setdefault(st, {})
        v = row.get(lab, 0) + c
        if v:
            row[lab] = v
        else:
            row.pop(lab, None)
    return {s: row for s, row in out.items() if row}


class HamiltonianAction(dict):
    """H on the basis states of one model, each state's image computed once.

    A dict from a state ``(up, dn)`` to H|state>, filled on first access
    (``h[state]``; ``h.get`` does not compute).  H|state> is a tuple of
    ``(state', label, coefficient)`` (int or Fraction); the same target may repeat.
    Meant to live for one solve: the symmetry checks and the block builder ask for the
    same states many times.

    Parameters
    ----------
    model : Model
    project : bool
        On a projected space, drop images outside it (default True); False gives the
        terms' action on the whole Fock space (for the symmetry checks).
    integral : bool
        If True, the images are those of ``factor * H`` with ``factor`` the least common
        denominator of the terms' coefficients, so that every coefficient is an int (the
        block builder's exact arithmetic stays in integers); ``factor`` is 1 otherwise.

    Attributes
    ----------
    model : Model
    labels : tuple of str
        Every label that can occur.
    integral : bool
        True when every coefficient is an integer.
    denominator : int
        Least common denominator of the terms' coefficients.

    Examples
    --------
    >>> import symcluster as sc
    >>> h = HamiltonianAction(sc.hubbard(sc.chain(2)))
    >>> h[0b01, 0b01]
    (((2, 1), 't', -1), ((1, 2), 't', -1), ((1, 1), 'U', 1))
    """

    def __init__(self, model, project=True, integral=False):
        super().__init__()
        self.model = model
        den = 1
        for term in model.terms:
            for _, c in term.operator:
                den = lcm(den, c.denominator)
        self.factor = den if integral else 1
        self._comp = compile_terms(model.terms, model.space.n_modes, self.factor)
        self._allows = model.space.allows if project and model.space.projected else None
        self.labels = tuple(self._comp.labels)
        self.integral = self._comp.integral
        self.denominator = self._comp.denominator

    def __missing__(self, state):
        out = self[state] = tuple(self._comp.image(state[0], state[1], self._allows))
        return out

    def image(self, up, dn):
        """H|up, dn> as ``self[up, dn]`` gives it, computed without being stored."""
        hit = self.get((up, dn))
        return hit if hit is not None else tuple(self._comp.image(up, dn, self._allows))
