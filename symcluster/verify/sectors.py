"""Unreduced sector matrices at a point: traces for the sum rules, certified
eigenvalues of small sectors, float64 matrices, and how levels share sectors."""

from fractions import Fraction
from itertools import chain

import flint
import mpmath
import numpy as np
import sympy

from symcluster.errors import VerificationError
from symcluster.verify.failure import _fail
from symcluster.verify.forms import _clean, _padd, _power_sums, _top_key


def sector_share(level, n_up, n_dn, n_fixed=None):
    """States of ``level`` that lie in sector (n_up, n_dn).

    ``n_fixed`` is the particle number of a model without an N label (a spin model: L).
    """
    qn = level.quantum_numbers
    if n_up + n_dn != qn.get("N", n_fixed):
        return 0
    sz = sympy.Rational(n_up - n_dn, 2)
    if "S" in qn and "Sz" in qn:            # a multiplet split by a field: one member
        return level.degeneracy if qn["Sz"] == sz else 0
    if "S" in qn:
        s = qn["S"]
        if abs(sz) > s:
            return 0
        return level.degeneracy // int(2 * s + 1)
    if "Sz" in qn:
        return level.degeneracy if qn["Sz"] == sz else 0
    raise VerificationError("level without spin information; cannot assign it to a sector")


def _sector_traces(terms, dim):
    """(Tr H, Tr H^2) of one sector, exact polynomials {sorted label tuple: int or Fraction}.

    ``terms`` is the sparse sector matrix {label: {(i, j): int or Fraction}} (the plain
    route's, :mod:`symcluster.verify.plain`).  Tr H sums the diagonal, Tr H^2 = sum_ij
    H_ij^2 (H is symmetric) sums the squares of the entries, sum_l1,l2 u_l1 u_l2
    <A_l1, A_l2> over the label matrices A_l.
    """
    tr1, tr2 = {}, {}
    labels = list(terms)
    for x, l1 in enumerate(labels):
        m1 = terms[l1]
        tr1[(l1,)] = sum(m1.get((i, i), 0) for i in range(dim))
        tr2[(l1, l1)] = sum(a * a for a in m1.values())
        for l2 in labels[x + 1:]:
            m2 = terms[l2]
            common = m1.keys() & m2.keys()
            if common:
                key = (l1, l2) if l1 <= l2 else (l2, l1)
                tr2[key] = 2 * sum(m1[k] * m2[k] for k in common)
    return _clean(tr1), _clean(tr2)


def _numeric_matrix(terms, dim, point_by_label, out=None):
    """The float64 sector matrix at a point: ``sum_l float(u_l) A_l``, label after label.

    Each label's entries are distinct positions, so one fancy-indexed ``+=`` per label
    adds ``a * float(u_l)`` to every entry in the same order as an entry-by-entry loop.
    ``out`` (optional) is a zero ``dim x dim`` array to fill instead of a new one.
    """
    m = np.zeros((dim, dim)) if out is None else out
    for l, mat in terms.items():
        if not mat:
            continue
        v = point_by_label[l]
        v = int(v.p) / int(v.q)         # correctly rounded, as float(v), without sympy
        ij = np.fromiter(chain.from_iterable(mat), dtype=np.int64, count=2 * len(mat))
        a = np.fromiter(mat.values(), dtype=np.float64, count=len(mat))
        m[ij[0::2], ij[1::2]] += a * v
    return m


def _sector_shares(level, L, n_fixed=None):
    """[((n_up, n_dn), states)] of ``level`` in each sector of its N (:func:`sector_share`).

    The spin label is read once per level; each sector's share is then integer arithmetic.
    ``n_fixed``: the particle number of a model without an N label.
    """
    qn = level.quantum_numbers
    n = qn.get("N", n_fixed)
    sectors = [(n_up, n - n_up) for n_up in range(max(0, n - L), min(n, L) + 1)]
    spin = qn.get("Sz") if "Sz" in qn else qn.get("S")
    if isinstance(spin, sympy.Rational) and spin.q in (1, 2):
        twice = spin.p * (2 // spin.q)
    elif isinstance(spin, int):
        twice = 2 * spin
    else:
        twice = None
    if twice is None:
        out = [(sec, sector_share(level, *sec, n_fixed)) for sec in sectors]
        return [(sec, share) for sec, share in out if share]
    if "S" in qn and "Sz" not in qn:
        per = level.degeneracy // (twice + 1)
        return [((u, d), per) for u, d in sectors if abs(u - d) <= twice and per]
    return [((u, d), level.degeneracy) for u, d in sectors
            if u - d == twice and level.degeneracy]


def _sector_eigenvalues(terms, dim, by_label, spectra):
    """Ascending eigenvalues of a small sector at a rational point, each with an error bound.

    Returns ``[(value, bound)]`` (mpmath numbers at the working precision): an
    eigenvalue lies within ``bound`` of each ``value``, counted with multiplicity.
    The matrix is summed exactly in rationals; its eigenvalues are enclosed by
    :func:`_enclosed_eigenvalues`.  ``spectra`` holds the results for the matrices met
    before in this call (equal matrices, entry for entry, have the same eigenvalues).
    """
    entries = {}
    for l, mat in terms.items():
        v = Fraction(int(by_label[l].p), int(by_label[l].q))
        for key, c in mat.items():
            entries[key] = entries.get(key, 0) + c * v
    prec = mpmath.mp.prec
    key = (dim, prec, tuple(sorted(entries.items())))
    ev = spectra.get(key)
    if ev is None:
        ev = spectra[key] = _enclosed_eigenvalues(entries, dim, prec)
    return ev


def _enclosed_eigenvalues(entries, dim, prec):
    """[(value, bound)] of the symmetric rational matrix ``entries``, ascending.

    A 1 x 1 matrix is its own eigenvalue: rounded to nearest, within its ulp.  Otherwise
    the characteristic polynomial det(x - M) is computed exactly (python-flint
    ``fmpq_mat.charpoly``) and python-flint's ``complex_roots`` encloses its roots in
    certified balls at the working precision, each with its multiplicity (exact
    squarefree factorisation, then isolation of the roots of each squarefree part), so
    multiple eigenvalues need no separate treatment.  A real symmetric matrix has real
    eigenvalues only; python-flint returns a real root with an imaginary part of exactly
    zero, and anything else is refused.
    """
    if dim == 1:
        x = Fraction(entries.get((0, 0), 0))
        with mpmath.workprec(prec):
            value = mpmath.fdiv(x.numerator, x.denominator)     # rounded to nearest
            return [(value, mpmath.ldexp(abs(value), 1 - prec))]
    m = flint.fmpq_mat(dim, dim)
    for (i, j), x in entries.items():
        x = Fraction(x)
        m[i, j] = flint.fmpq(x.numerator, x.denominator)
    with flint.ctx.workprec(prec):
        roots = m.charpoly().complex_roots()
    out = []
    for z, mult in roots:
        if not z.imag.is_zero():
            _fail(f"a symmetric sector matrix of dimension {dim} has the non-real eigenvalue "
                  f"{z} (internal error: please report this cluster)")
        x = z.real
        man, exp = x.mid().man_exp()
        rman, rexp = x.rad().man_exp()
        # exact: mpmath converts integers without rounding and ldexp does not round
        vb = (mpmath.ldexp(int(man), int(exp)), mpmath.ldexp(int(rman), int(rexp)))
        out.extend([vb] * mult)
    out.sort(key=lambda vb: vb[0])
    return out


def _factor_groups(spectrum, members, sector):
    """[(polynomial, states per root)] of a sector; every root of each factor must be present."""
    groups = {}
    for li, share in members:
        p = spectrum.levels[li].polynomial
        groups.setdefault(id(p), [p, 0, share])[1] += 1
    out = []
    for p, count, share in groups.values():
        dp = p.rep.degree(0)            # the degree in E, the first generator
        if count != dp:
            _fail(f"sector {sector} holds {count} of the {dp} roots of one factor")
        out.append((p, share))
    return out


def _check_sum_rules(groups, tr1, tr2, sector, sums, forms):
    """sum(deg E) = Tr H and sum(deg E^2) = Tr H^2 of one sector, exactly in the couplings.

    ``groups`` from :func:`_factor_groups`; ``sums`` caches Vieta's power sums by the
    polynomial object, and by its :class:`_Form` where this call has one (else by its
    top three coefficients in E, all that they depend on), so the factor of a
    multiplet in each of its Sz sectors, and equal factors in separate objects, are
    summed once per call.
    """
    s1, s2 = {}, {}
    for p, share in groups:
        hit = sums.get(id(p))
        if hit is None or hit[0] is not p:
            form = forms.known(p)
            key = ("form", id(form)) if form is not None else _top_key(p)
            by_key = sums.get(key)
            if by_key is None:
                by_key = sums[key] = _power_sums(p, form.top_terms() if form is not None
                                                 else key)
            hit = sums[id(p)] = (p, by_key)
        e1, e2 = hit[1]
        _padd(s1, e1, share)
        _padd(s2, e2, share)
    if _clean(_padd(s1, tr1, -1)) or _clean(_padd(s2, tr2, -1)):
        _fail(f"sector {sector}: sum rule sum(deg*E^m) = Tr H^m (m = 1, 2) violated")
