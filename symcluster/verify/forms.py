"""Exact integer forms of level polynomials and their Vieta power sums, for the
exact tiers of the verification (block and sector characteristic polynomials, sum rules)."""

from fractions import Fraction
from math import lcm


from symcluster.algebra.polydict import dense_terms
from symcluster.errors import VerificationError


def _clean(p):
    return {k: v for k, v in p.items() if v != 0}


def _padd(acc, p, scale=1):
    for k, v in p.items():
        acc[k] = acc.get(k, 0) + scale * v
    return acc


def _pmul(p, q):
    out = {}
    for k1, v1 in p.items():
        for k2, v2 in q.items():
            key = tuple(sorted(k1 + k2))
            out[key] = out.get(key, 0) + v1 * v2
    return out


def _rational_terms(poly, rep=None, nvars=None):
    """[(exponents, Fraction or int)] of a Poly (or of a part of its dense ``rep``)."""
    dom = poly.domain
    if nvars is None:
        rep, nvars = poly.rep.to_list(), len(poly.gens)
    if dom.is_ZZ:
        return [(m, int(c)) for m, c in dense_terms(rep, nvars, (), [])]
    if dom.is_QQ:
        return [(m, Fraction(int(c.numerator), int(c.denominator)))
                for m, c in dense_terms(rep, nvars, (), [])]
    out = []
    for m, c in dense_terms(rep, nvars, (), []):
        c = dom.to_sympy(c)
        out.append((m, Fraction(int(c.p), int(c.q))))
    return out


class _Form:
    """Integer form of one Poly in (E, couplings) and its values at points.

    ``terms`` lists ``(k, exps, c, total)`` with ``k`` the power of E, ``exps`` the powers
    of the couplings, ``c`` an integer and ``total = sum(exps)``; the polynomial is
    ``sum c E^k u^exps / den``; ``top`` is the largest ``total``.
    """

    __slots__ = ("poly", "terms", "den", "top", "deg", "_at")

    def __init__(self, poly, dense=None):
        if dense is None:
            dense = poly.rep.to_list()
        if poly.domain.is_ZZ:
            # integer coefficients: the terms read off the dense list (E's power first)
            den, terms = 1, []
            top, nv = len(dense) - 1, len(poly.gens) - 1
            for i, sub in enumerate(dense):
                if not sub:
                    continue
                if nv == 0:
                    terms.append((top - i, (), int(sub), 0))
                    continue
                for m, c in dense_terms(sub, nv):
                    terms.append((top - i, m, int(c), sum(m)))
        else:
            raw = _rational_terms(poly, dense, len(poly.gens))
            den = lcm(*(c.denominator for _, c in raw if isinstance(c, Fraction))) if raw else 1
            terms = []
            for m, c in raw:
                if isinstance(c, Fraction):
                    c = c.numerator * (den // c.denominator)
                else:
                    c *= den
                terms.append((m[0], m[1:], c, sum(m[1:])))
        self.poly = poly
        self.terms = terms
        self.den = den
        self.top = max((tt[3] for tt in terms), default=0)
        self.deg = len(dense) - 1 if dense else poly.degree(poly.gens[0])
        self._at = {}

    def top_terms(self):
        """What :func:`_top_key` returns, read off the integer terms (all scaled by
        ``den``, which Vieta's ratios do not see)."""
        d = self.deg
        tops = tuple((k, tuple((exps, c) for kk, exps, c, _ in self.terms if kk == k))
                     for k in range(d, max(d - 3, -1), -1))
        return tuple(g.name for g in self.poly.gens[1:]), d, tops

    def ints_at(self, point):
        """``(acc, full)``: P(E; point) has the coefficients ``acc[i] / full``, highest first.

        Integer arithmetic throughout: with the coupling values ``x_i = n_i / q`` over a
        common denominator ``q``, each term contributes ``c prod n_i^e_i q^(top - total)``
        and every coefficient is ``full = den q^top`` times that sum.  Cached per point
        object (points are not changed once used).
        """
        hit = self._at.get(id(point))
        if hit is not None and hit[0] is point:
            return hit[1]
        vals = [point[g] for g in self.poly.gens[1:]]
        q = lcm(*(int(v.q) for v in vals)) if vals else 1
        nums = [int(v.p) * (q // int(v.q)) for v in vals]
        deg, top = self.deg, self.top
        powers = [{} for _ in nums]
        qpow = [1]
        for _ in range(top):
            qpow.append(qpow[-1] * q)
        acc = [0] * (deg + 1)
        for k, exps, c, total in self.terms:
            v = c
            for i, e in enumerate(exps):
                if e:
                    pw = powers[i].get(e)
                    if pw is None:
                        pw = powers[i][e] = nums[i] ** e
                    v *= pw
            acc[deg - k] += v * qpow[top - total]
        out = (tuple(acc), self.den * qpow[top])
        self._at[id(point)] = (point, out)
        return out


class FormCache:
    """The :class:`_Form` of every polynomial one verification call meets.

    Equal polynomials in separate objects (a factor in every block of its multiplet)
    share one form, and so its values at the points.  Lives for one call (it holds the
    polynomials and their values at the call's points alive), so nothing is reused across
    calls; sharing one between :func:`verify_blocks` and :func:`verify_spectrum` kept the
    values at the first call's points (about 300 MB more on the 2x4 ladder).
    """

    def __init__(self):
        self._by_id = {}            # id(poly) -> (poly, form)
        self._by_rep = {}           # id(poly.rep) -> (rep, generators, form)
        self._by_content = {}       # (generators, domain, degree) -> [(dense list, form)]

    def __call__(self, poly):
        hit = self._by_id.get(id(poly))
        if hit is not None and hit[0] is poly:
            return hit[1]
        # Polys made from one representation (the copies of a shifted factor share it;
        # it is immutable) have one form: no need to read their terms again
        rep = poly.rep
        hit = self._by_rep.get(id(rep))
        if hit is not None and hit[0] is rep and hit[1] == poly.gens:
            self._by_id[id(poly)] = (poly, hit[2])
            return hit[2]
        # equal polynomials have equal dense lists (sympy's canonical representation):
        # compared as lists among those of the same generators, domain and degree
        dense = rep.to_list()
        same = self._by_content.setdefault((poly.gens, poly.domain, len(dense)), [])
        for other, form in same:
            if other == dense:
                break
        else:
            form = _Form(poly, dense)
            same.append((dense, form))
        self._by_id[id(poly)] = (poly, form)
        self._by_rep[id(rep)] = (rep, poly.gens, form)
        return form

    def known(self, poly):
        """The form of `poly` if this call has read it, else None."""
        hit = self._by_id.get(id(poly))
        return hit[1] if hit is not None and hit[0] is poly else None


def coeffs_at(poly, point):
    """Coefficients (highest power of E first) of P(E; point) as Fractions.

    Exact integer arithmetic (:meth:`_Form.ints_at`), one division per coefficient.
    """
    acc, full = _Form(poly).ints_at(point)
    return [Fraction(a, full) for a in acc]


def _power_sums(poly, top=None):
    """Exact (sum of roots, sum of squared roots) of a Poly in E, as label polynomials.

    Vieta: with P = c_d E^d + c_{d-1} E^{d-1} + c_{d-2} E^{d-2} + ..., c_d a
    constant, e1 = -c_{d-1}/c_d and sum r^2 = e1^2 - 2 c_{d-2}/c_d.  ``top`` is
    :func:`_top_key` of the polynomial when the caller has it.  Coefficients of the
    result are ints for a monic integer polynomial (up to sign), Fractions otherwise.
    """
    names, d, tops = _top_key(poly) if top is None else top
    lead = None
    c1, c2 = {}, {}
    for k, coeffs in tops:
        for monom, coeff in coeffs:
            key = tuple(sorted(n for n, e in zip(names, monom) for _ in range(e)))
            if k == d:
                if key:
                    raise VerificationError("leading coefficient in E is not a constant")
                lead = Fraction(coeff)
            elif k == d - 1:
                c1[key] = c1.get(key, 0) + coeff
            else:
                c2[key] = c2.get(key, 0) + coeff
    if lead in (1, -1) and all(type(v) is int for v in (*c1.values(), *c2.values())):
        lead = int(lead)        # a monic integer polynomial (every level's, up to sign)
        e1 = {k: -v * lead for k, v in c1.items()}
        p2 = _padd(_pmul(e1, e1), {k: v * lead for k, v in c2.items()}, -2)
    else:
        e1 = {k: -v / lead for k, v in c1.items()}
        p2 = _padd(_pmul(e1, e1), {k: v / lead for k, v in c2.items()}, -2)
    return _clean(e1), _clean(p2)


def _top_key(poly):
    """``(coupling names, d, [(k, ((coupling exponents, coefficient), ...))])`` for the
    powers k = d, d-1, d-2 of E (k >= 0): all that :func:`_power_sums` reads, hashable.

    Read off the dense representation (highest power of E first), so that only the three
    top coefficients are converted: a level polynomial of degree 336 has ~10^5 terms.
    """
    gens = poly.gens
    rep = poly.rep.to_list()
    d = len(rep) - 1 if rep else poly.degree(gens[0])
    u = len(gens) - 1
    tops = []
    for j, k in enumerate(range(d, max(d - 3, -1), -1)):
        sub = rep[j]
        if u == 0:
            terms = tuple(((), c) for _, c in _rational_terms(poly, [sub], 1))
        else:
            terms = tuple(_rational_terms(poly, sub, u)) if sub else ()
        tops.append((k, terms))
    return tuple(g.name for g in gens[1:]), d, tuple(tops)


def _at_fixed(poly, fixed):
    """A label polynomial {sorted label tuple: coefficient} with the fixed labels set to
    their values ({label: Fraction})."""
    out = {}
    for key, c in poly.items():
        rest = []
        for lab in key:
            if lab in fixed:
                c = c * fixed[lab]
            else:
                rest.append(lab)
        k = tuple(rest)
        out[k] = out.get(k, 0) + c
    return _clean({k: (int(v) if Fraction(v).denominator == 1 else v) for k, v in out.items()})
