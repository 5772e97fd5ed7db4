"""The rigorous theorems of the Hubbard model, checked on a solved spectrum.

For each theorem :func:`theorem_report` checks the hypotheses exactly on the model (graph,
sublattices, couplings, single-particle flat band) and then the conclusion on the solved
spectrum, for every value of the swept coupling in an interval where the theorem speaks
of all of them (with the certified envelope comparison of
:mod:`symcluster.theorems.envelope`), or exactly on the level polynomials (Yang's η
shift, particle-hole relations).  Statements and sources: docs/towers.md.
"""

from dataclasses import dataclass, field
from fractions import Fraction

import sympy

from symcluster.errors import ModelError, SymclusterError
from symcluster.spectrum import Spectrum
from symcluster.lattice.flatband import flat_band, is_biconnected, is_path
from symcluster.theorems.towers import _Context, _end, _prepare
from symcluster.theorems.envelope import INF

__all__ = ["TheoremResult", "theorem_report", "THEOREMS"]

VERIFIED, VIOLATED, NOT_APPLICABLE, NOT_CHECKED = ("verified", "violated", "not applicable",
                                                   "not checked")


@dataclass
class TheoremResult:
    """One theorem: its hypotheses (text, met, evidence) and the verdict on its conclusion."""

    name: str
    source: str
    hypotheses: list
    conclusion: str
    evidence: list = field(default_factory=list)

    @property
    def hypotheses_met(self):
        return all(met for _t, met, _e in self.hypotheses)

    @property
    def failed_hypotheses(self):
        return [t for t, met, _e in self.hypotheses if not met]

    def as_dict(self):
        return {"name": self.name, "source": self.source,
                "hypotheses": [{"hypothesis": t, "met": bool(m), "evidence": e}
                               for t, m, e in self.hypotheses],
                "hypotheses_met": self.hypotheses_met, "conclusion": self.conclusion,
                "evidence": list(self.evidence)}


def _hubbard_form(model):
    """(met, evidence, t_label, u_label): one hopping coupling on every bond, one U on every
    site, nothing else."""
    kinds = {t.kind for t in model.terms}
    hop = {t.label for t in model.terms if t.kind == "hopping"}
    uu = {t.label for t in model.terms if t.kind == "hubbard_u"}
    usites = {t.modes[0] for t in model.terms if t.kind == "hubbard_u"}
    ok = (kinds == {"hopping", "hubbard_u"} and len(hop) == 1 and len(uu) == 1
          and len(usites) == model.n_sites and model.n_modes == model.n_sites)
    ev = (f"terms {sorted(kinds)}, hopping couplings {sorted(hop)}, interaction couplings "
          f"{sorted(uu)} on {len(usites)} of {model.n_sites} sites")
    return ok, ev, (next(iter(hop)) if hop else None), (next(iter(uu)) if uu else None)


class _Setup:
    def __init__(self, spec, coupling, interval, fixed):
        self.spec, self.coupling, self.fixed = spec, coupling, dict(fixed or {})
        self.model = spec.model
        self.cluster = spec.model.cluster
        self.L = self.model.n_sites
        self.lo, _ = _end("interval", interval[0])
        self.hi, _ = _end("interval", interval[1])
        self.ns = sorted({l.quantum_numbers["N"] for l in spec.levels})
        self.form = _hubbard_form(self.model)

    def part(self, sign):
        """The part of the interval with coupling of this sign (None if empty): (lo, hi)."""
        lo, hi = self.lo, self.hi
        if sign > 0:
            lo = Fraction(0) if lo is None or lo < 0 else lo
            if hi is not None and hi <= lo:
                return None
        else:
            hi = Fraction(0) if hi is None or hi > 0 else hi
            if lo is not None and lo >= hi:
                return None
        return lo, hi

    def ground_spin(self, n, S0, part, closed=(True, True)):
        """(status, evidence): E_min(S0) < E_min(S) for every S != S0 on the part, and the
        lowest S0 level unique up to its multiplet, certified."""
        qn, levels, x, values = _prepare(self.spec, n, self.coupling, self.fixed, "spin", None)
        ctx = _Context(levels, x, values, part[0], part[1])
        by = {}
        for k, l in enumerate(levels):
            by.setdefault(sympy.Rational(l.quantum_numbers["S"]), []).append(k)
        S0 = sympy.Rational(S0)
        where = f"N = {n}, {self.coupling} in {_iv(part, closed)}"
        if S0 not in by:
            return VIOLATED, [f"{where}: no level with S = {S0}"]
        env0 = ctx.curves.envelope(ctx.factors_of(by[S0]))
        bad = []
        for S, idx in sorted(by.items()):
            if S == S0:
                continue
            env = ctx.curves.envelope(ctx.factors_of(idx))
            for e in ctx.curves.compare(env0, env, closed):
                if e["sign"] != "<":
                    at = e["at"].exact() if "at" in e else f"({_x(e['lo'])}, {_x(e['hi'])})"
                    bad.append(f"E_min({S0}) {'=' if e['sign'] == '=' else '>'} E_min({S}) at "
                               f"{self.coupling} = {at}")
        unique = []
        if len(env0) > 1:
            unique.append(f"the lowest S = {S0} level changes at {self.coupling} = "
                          + ", ".join(str(_x(p[1])) for p in env0[:-1])
                          + " (degenerate there)")
        fid = env0[0][2] if len(env0) == 1 else None
        if fid is not None:
            # each block that holds the polynomial contributes all its roots as levels, one
            # per irrep row: the lowest root belongs to sum(irrep_dim) / degree blocks
            occ = {}
            for k in by[S0]:
                if fid in ctx.curves.of_poly[ctx.poly_of_level[k]]:
                    P = levels[k].polynomial
                    occ[P] = occ.get(P, 0) + Fraction(
                        levels[k].quantum_numbers.get("irrep_dim", 1), P.degree(P.gens[0]))
            dims = sum(occ.values())
            f = ctx.curves.factors[fid]
            if dims != 1:
                unique.append(f"the lowest S = {S0} level occurs {dims} times (irrep rows "
                              "included): degenerate beyond its multiplet")
            from symcluster.theorems.realalg import roots_in
            disc = ctx.curves.discriminant(fid)
            if f.degrees()[0] > 1 and roots_in(disc, part[0], part[1]):
                unique.append("two roots of the lowest polynomial meet inside the interval "
                              "(not checked to be the lowest)")
        if bad or unique:
            return VIOLATED, [f"{where}: " + "; ".join(bad + unique)]
        return VERIFIED, [f"{where}: E_min({S0}) < E_min(S) for every S != {S0} at every "
                          f"point (certified), and the lowest S = {S0} level is one "
                          "multiplet"]


def _x(p):
    return p if p is INF else p.exact()


def _iv(part, closed=(True, True)):
    lo, hi = part
    return (("[" if closed[0] and lo is not None else "(")
            + ("-oo" if lo is None else str(lo)) + ", " + ("oo" if hi is None else str(hi))
            + ("]" if closed[1] and hi is not None else ")"))


def _conn(setup):
    c = setup.cluster.is_connected()
    return ("connected graph", c, f"{setup.cluster.name} is {'' if c else 'not '}connected")


def _bip(setup):
    sub = setup.cluster.sublattices()
    ev = f"sublattices of {len(sub[0])} and {len(sub[1])} sites" if sub else "not bipartite"
    return ("bipartite graph, hopping only between the sublattices", sub is not None, ev), sub


def _form(setup):
    ok, ev, _t, u = setup.form
    swept = u == str(setup.coupling)
    return [("Hubbard form: one hopping coupling on every bond, one U on every site", ok, ev),
            (f"the swept coupling is the interaction U", swept,
             f"swept {setup.coupling}, interaction label {u}")]


def _lieb_repulsive(s):
    hyp = _form(s) + [_conn(s)]
    h, sub = _bip(s)
    hyp.append(h)
    part = s.part(+1)
    hyp.append(("U > 0 somewhere in the interval", part is not None, f"{_iv(part) if part else 'none'}"))
    hyp.append(("half filling N = L in the spectrum", s.L in s.ns, f"L = {s.L}"))
    res = TheoremResult("Lieb: ground-state spin at half filling",
                        "E. H. Lieb, Phys. Rev. Lett. 62, 1201 (1989)", hyp, NOT_APPLICABLE)
    if all(m for _t, m, _e in hyp):
        S0 = sympy.Rational(abs(len(sub[0]) - len(sub[1])), 2)
        closed = (part[0] is not None and part[0] > 0, True)
        res.conclusion, res.evidence = s.ground_spin(s.L, S0, part, closed)
        res.evidence.insert(0, f"predicted S = ||A| - |B||/2 = {S0}")
    return res


def _lieb_attractive(s):
    hyp = _form(s) + [_conn(s)]
    part = s.part(-1)
    hyp.append(("U < 0 somewhere in the interval", part is not None, f"{_iv(part) if part else 'none'}"))
    evens = [n for n in s.ns if n % 2 == 0 and 0 < n < 2 * s.L]
    hyp.append(("an even electron number 0 < N < 2L in the spectrum", bool(evens),
                f"N = {evens}"))
    res = TheoremResult("Lieb: unique S = 0 ground state for attractive U",
                        "E. H. Lieb, Phys. Rev. Lett. 62, 1201 (1989)", hyp, NOT_APPLICABLE)
    if all(m for _t, m, _e in hyp):
        closed = (True, part[1] is not None and part[1] < 0)
        out = [s.ground_spin(n, 0, part, closed) for n in evens]
        res.conclusion = VERIFIED if all(o[0] == VERIFIED for o in out) else VIOLATED
        res.evidence = [e for o in out for e in o[1]]
    return res


def _lieb_mattis(s):
    from symcluster.theorems.towers import towers
    path = is_path(s.cluster)
    hyp = _form(s) + [("open chain (a path graph)", path, f"{s.cluster.name}")]
    res = TheoremResult("Lieb–Mattis: E_min(S) < E_min(S + 1) on open chains",
                        "E. Lieb, D. Mattis, Phys. Rev. 125, 164 (1962) (details from memory)",
                        hyp, NOT_APPLICABLE)
    if all(m for _t, m, _e in hyp):
        bad = []
        for n in s.ns:
            rep = towers(s.spec, n, s.coupling, (_ival(s.lo, -1), _ival(s.hi, 1)), s.fixed)
            bad += [f"N = {n}: {v.verdict} for S = {v.value}, {v.next_value} on {v.interval}"
                    for v in rep.violations]
        res.conclusion = VIOLATED if bad else VERIFIED
        res.evidence = bad or [f"the spin tower holds for N = {s.ns} on the whole interval "
                               "(certified)"]
    return res


def _ival(v, sign):
    if v is None:
        return "oo" if sign > 0 else "-oo"
    return v


def _nagaoka(s):
    c = s.cluster
    sub = c.sublattices()
    ring_like = all(len(c.neighbours(i)) == 2 for i in range(c.n_sites))
    t_value = s.fixed.get(s.form[2], s.spec.fixed.get(s.form[2]) if hasattr(s.spec, "fixed") else None)
    t_ok = sub is not None or (t_value is not None and sympy.Rational(t_value) < 0)
    hyp = _form(s) + [
        ("one hole: N = L - 1 in the spectrum", s.L - 1 in s.ns, f"L = {s.L}"),
        ("2-connected graph (the hole can go around every site)", is_biconnected(c), c.name),
        ("not a single ring with more than four sites", not (ring_like and c.n_sites > 4),
         c.name),
        ("hole hopping non-negative: bipartite, or t < 0 in this sign convention", t_ok,
         f"{'bipartite' if sub else 'not bipartite'}, t = {t_value}")]
    res = TheoremResult("Nagaoka: one hole at U -> oo is fully polarised",
                        "Y. Nagaoka, Phys. Rev. 147, 392 (1966); general graphs: Bobrow, "
                        "Stubis, Li, arXiv:1804.02347", hyp, NOT_APPLICABLE)
    if all(m for _t, m, _e in hyp):
        n = s.L - 1
        lo = s.lo if s.lo is not None and s.lo > 0 else Fraction(0)
        qn, levels, x, values = _prepare(s.spec, n, s.coupling, s.fixed, "spin", None)
        ctx = _Context(levels, x, values, lo, None)
        by = {}
        for k, l in enumerate(levels):
            by.setdefault(sympy.Rational(l.quantum_numbers["S"]), []).append(k)
        Smax = max(by)
        env0 = ctx.curves.envelope(ctx.factors_of(by[Smax]))
        last, ok = [], True
        for S, idx in by.items():
            if S == Smax:
                continue
            el = ctx.curves.compare(env0, ctx.curves.envelope(ctx.factors_of(idx)))
            tail = el[-1]
            ok &= tail["sign"] == "<"
            last.append(_x(tail["lo"]))
        res.conclusion = VERIFIED if ok else VIOLATED
        if ok:
            onset = max(last, key=lambda v: sympy.N(v)) if last else 0
            res.evidence = [f"N = {n}: S = {Smax} is the ground state for every "
                            f"{s.coupling} > {onset} (certified to infinity)"]
        else:
            res.evidence = [f"N = {n}: S = {Smax} is not the ground state as "
                            f"{s.coupling} -> oo"]
    return res


def _flat_band_ferro(s):
    _ok, _ev, tl, _ul = s.form
    t_value = s.fixed.get(tl, getattr(s.spec, "fixed", {}).get(tl)) if tl else None
    fb = flat_band(s.cluster, t_value) if t_value is not None else None
    part = s.part(+1)
    hyp = _form(s) + [
        ("hopping fixed to a number (the single-particle levels are exact numbers)",
         fb is not None, f"t = {t_value}"),
        ("the lowest single-particle level is degenerate (a flat band), N_d >= 2",
         fb is not None and fb["degeneracy"] >= 2,
         f"lowest level {fb['energy']} x {fb['degeneracy']}" if fb else "-"),
        ("the projector onto it is irreducible (its nonzero entries connect every site)",
         bool(fb and fb["irreducible"]), f"irreducible: {fb['irreducible']}" if fb else "-"),
        ("N = N_d electrons in the spectrum", bool(fb) and fb["degeneracy"] in s.ns, "-"),
        ("U > 0 somewhere in the interval", part is not None, _iv(part) if part else "none")]
    res = TheoremResult("Mielke–Tasaki: flat-band ferromagnetism",
                        "A. Mielke, J. Phys. A 24, 3311 (1991); H. Tasaki, cond-mat/9712219 "
                        "(details from memory)", hyp, NOT_APPLICABLE)
    if all(m for _t, m, _e in hyp):
        n = fb["degeneracy"]
        closed = (part[0] is not None and part[0] > 0, True)
        res.conclusion, res.evidence = s.ground_spin(n, sympy.Rational(n, 2), part, closed)
    return res


def _shift_check(s, pairs, what):
    """Exact: the level polynomials of sector N, shifted in E, are those of sector N'."""
    bad = []
    for n, n2, shift, keys in pairs:
        def table(lv, sh):
            out = {}
            for l in lv:
                P = l.polynomial
                g = P.gens
                expr = P.as_expr().subs(g[0], g[0] - sh) if sh != 0 else P.as_expr()
                key = (sympy.Poly(sympy.expand(expr), *g), ) + tuple(l.quantum_numbers.get(k)
                                                                     for k in keys)
                out[key] = out.get(key, 0) + l.degeneracy
            return out
        a = table(s.spec.select(N=n), shift(n))
        b = table(s.spec.select(N=n2), 0)
        if a != b:
            bad.append(f"N = {n} -> {n2}: the shifted levels differ")
    return bad


def _yang(s):
    h, sub = _bip(s)
    hyp = _form(s)[:1] + [h]
    res = TheoremResult("Yang: eta pairing, [H, eta+] = U eta+",
                        "C. N. Yang, Phys. Rev. Lett. 63, 2144 (1989) (from memory)", hyp,
                        NOT_APPLICABLE)
    if all(m for _t, m, _e in hyp):
        u = sympy.Symbol(s.form[3], real=True)
        pairs = []
        for n in s.ns:
            if n + 2 in s.ns:
                pairs.append((n, n + 2, None, ("S", "eta")))
        bad = []
        for n, n2, _sh, keys in pairs:
            # the levels with eta >= |N + 2 - L|/2 have a partner at N + 2, energy + U
            lv = [l for l in s.spec.select(N=n)
                  if 2 * l.quantum_numbers.get("eta", -1) >= abs(n + 2 - s.L)]
            up = {}
            for l in lv:
                P = l.polynomial
                g = P.gens
                key = (sympy.Poly(sympy.expand(P.as_expr().subs(g[0], g[0] - u)), *g),
                       l.quantum_numbers["S"], l.quantum_numbers.get("eta"))
                up[key] = up.get(key, 0) + l.degeneracy
            have = {}
            for l in s.spec.select(N=n2):
                key = (l.polynomial, l.quantum_numbers["S"], l.quantum_numbers.get("eta"))
                have[key] = have.get(key, 0) + l.degeneracy
            for key, d in up.items():
                if have.get(key, 0) < d:
                    bad.append(f"N = {n}: a level with S = {key[1]}, eta = {key[2]} has no "
                               f"partner at N = {n2} shifted by {u}")
        res.conclusion = VIOLATED if bad else VERIFIED
        res.evidence = bad or [f"every eta multiplet member at N has its partner at N + 2 with "
                               f"energy + {u}, exactly (level polynomials), N in {s.ns}"]
    return res


def _particle_hole(s):
    h, sub = _bip(s)
    hyp = _form(s)[:1] + [h]
    res = TheoremResult("particle-hole: E(2L - N) = E(N) + U (L - N)",
                        "H. Shiba, Prog. Theor. Phys. 48, 2171 (1972) (from memory)", hyp,
                        NOT_APPLICABLE)
    if all(m for _t, m, _e in hyp):
        u = sympy.Symbol(s.form[3], real=True)
        L = s.L
        pairs = [(n, 2 * L - n, (lambda n: u * (L - n)), ("S", "eta"))
                 for n in s.ns if n < L and 2 * L - n in s.ns]
        bad = _shift_check(s, pairs, "particle-hole")
        res.conclusion = VIOLATED if bad else VERIFIED
        res.evidence = bad or [f"the level polynomials of N and 2L - N agree after the shift "
                               f"U (L - N), with S and eta, exactly, for N in "
                               f"{[p[0] for p in pairs]}"]
    return res


#: name -> check
THEOREMS = {"lieb-spin": _lieb_repulsive, "lieb-attractive": _lieb_attractive,
            "lieb-mattis": _lieb_mattis, "nagaoka": _nagaoka, "flat-band": _flat_band_ferro,
            "yang-eta": _yang, "particle-hole": _particle_hole}


def theorem_report(spec: Spectrum, coupling: str = "U", interval: tuple = (0, 50),
                   fixed: dict | None = None, theorems: list | None = None) -> list:
    """Check the hypotheses and the conclusion of each rigorous theorem on a spectrum.

    Parameters
    ----------
    spec : Spectrum
        A solved Hubbard model (every electron number the theorems need).
    coupling : str
        The swept interaction coupling.
    interval : (lower, upper)
        Exact ends ("oo" allowed); each theorem uses the part where its sign of U holds.
    fixed : dict
        Exact values of the other couplings.
    theorems : list of str, optional
        A subset of :data:`THEOREMS` (default: all).

    Returns
    -------
    list of TheoremResult

    Examples
    --------
    >>> import symcluster as sc
    >>> spec = sc.solve(sc.hubbard(sc.star(3)), fixed={"t": 1})
    >>> rep = sc.theorem_report(spec, interval=(0, 10), fixed={"t": 1},
    ...                         theorems=["lieb-spin"])
    >>> rep[0].conclusion, rep[0].evidence[0]
    ('verified', 'predicted S = ||A| - |B||/2 = 1')
    """
    names = list(THEOREMS) if theorems is None else list(theorems)
    for n in names:
        if n not in THEOREMS:
            raise ModelError(f"unknown theorem {n!r}; choose from {', '.join(THEOREMS)}")
    if not (isinstance(interval, (tuple, list)) and len(interval) == 2):
        raise ModelError(f"interval={interval!r}; give (lower, upper), e.g. (0, 50)")
    s = _Setup(spec, coupling, interval, fixed)
    out = []
    for n in names:
        try:
            out.append(THEOREMS[n](s))
        except SymclusterError as exc:
            out.append(TheoremResult(n, "", [], NOT_CHECKED, [str(exc)]))
    return out
