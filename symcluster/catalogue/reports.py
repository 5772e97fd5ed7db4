"""What a catalogue computes from each solved task: a registry of named reports.

A report is a function ``fn(spec, task) -> dict``: ``spec`` the verified
:class:`~symcluster.spectrum.Spectrum` of the task, ``task`` the plain task dict (its
``point``, ``digits``, ``electrons``, ...).  The dict must be JSON data (strings,
integers, booleans, None, lists, dicts; exact and numerical values as strings), so that
the same task gives the same text on every worker.  A report runs in the worker, right
after the solve, and its dict is stored in the task's row under the report's name.  A
report's own settings come from the spec's ``[report_options.NAME]`` table, in
``task.get("report_options", {}).get(NAME, {})`` (plain strings, integers, booleans and
lists; the report checks them and raises an ``InputError`` naming the key).

:data:`REPORTS` lists the built-in reports; a spec names reports from it.  Further
reports are plugged in by adding an entry here (``Report(fn, needs_point, doc)``) or,
from Python, by passing ``reports={name: Report(...)}`` to
:func:`symcluster.catalogue.run_catalogue` (the function must then be importable by the
workers: a module-level function).
"""

from dataclasses import dataclass

import mpmath

from symcluster.analysis.gaps import lowest_level
from symcluster.export.text import energy_text

__all__ = ["Report", "REPORTS", "levels_report", "ground_report", "gaps_report",
           "towers_report"]


@dataclass(frozen=True)
class Report:
    """A named report: ``fn(spec, task) -> dict``; ``needs_point``: it evaluates levels at
    the spec's point (a spec that names it must give one)."""

    fn: object
    needs_point: bool = False
    doc: str = ""


def _value(x, digits):
    with mpmath.workdps(digits):
        return mpmath.nstr(+x, digits, strip_zeros=False)


def _qn_text(level, key):
    v = level.quantum_numbers.get(key)
    return None if v is None else str(v)


def _exact_text(level):
    """A closed form as text; an implicit root by its index and its polynomial's degree
    (the polynomial itself, thousands of terms, is in the row's result document)."""
    if level.is_closed_form:
        return energy_text(level.energy)
    poly = level.energy.poly
    return (f"root {int(level.energy.index) + 1} of an irreducible polynomial of degree "
            f"{poly.degree(poly.gens[0])} in {poly.gens[0]} (in the result's polynomials)")


def levels_report(spec, task):
    """Counts of a solved task: levels, states, closed-form and implicit levels, and the
    largest degree in E of a level polynomial.

    Examples
    --------
    >>> import symcluster as sc
    >>> spec = sc.solve(sc.hubbard(sc.chain(2)), electrons=2, executor="serial", seed=1)
    >>> levels_report(spec, {})
    {'levels': 4, 'states': 6, 'closed_form': 4, 'implicit': 0, 'max_degree': 2}
    """
    closed = sum(1 for lev in spec.levels if lev.is_closed_form)
    degrees = [lev.polynomial.degree(lev.polynomial.gens[0]) for lev in spec.levels
               if lev.polynomial is not None]
    return {"levels": len(spec.levels), "states": int(spec.n_states), "closed_form": closed,
            "implicit": len(spec.levels) - closed, "max_degree": max(degrees, default=0)}


def _ground(spec, task):
    qn = {} if task.get("electrons") is None else {"N": task["electrons"]}
    digits = max(30, task["digits"])
    levels, e0 = lowest_level(spec, task["point"], digits, **qn)
    return levels, e0


def ground_report(spec, task):
    """The lowest level(s) of the task at its point: value, exact expression (a closed
    form; an implicit root by its index and degree), spins and degeneracy (levels within
    10**-30 of each other count as one ground set).

    Examples
    --------
    >>> import symcluster as sc
    >>> spec = sc.solve(sc.hubbard(sc.chain(2)), electrons=2, executor="serial", seed=1)
    >>> r = ground_report(spec, {"electrons": 2, "point": {"t": "1", "U": "4"}, "digits": 6})
    >>> r["energy"], r["exact"], r["S"], r["degeneracy"]
    ('-0.828427', 'U/2 - sqrt(U**2 + 16*t**2)/2', ['0'], 1)
    """
    levels, e0 = _ground(spec, task)
    exact = [_exact_text(lev) for lev in levels]
    return {"energy": _value(e0, task["digits"]),
            "exact": exact[0] if len(exact) == 1 else exact,
            "S": sorted({s for s in (_qn_text(lev, "S") for lev in levels) if s is not None}),
            "degeneracy": sum(int(lev.degeneracy) for lev in levels),
            "levels": len(levels)}


def gaps_report(spec, task):
    """Gaps inside the task's electron number at its point: the excitation gap (lowest
    level above the ground set minus the ground energy) and the spin gap
    (the lowest level with S = S0 + 1 minus the ground energy, the definition of
    :func:`symcluster.analysis.gaps.spin_gap` with ``mode="next"``); None where there is no
    such level.  Charge gaps combine several electron numbers: read them from the rows'
    ``ground`` reports (docs/catalogues.md).

    Examples
    --------
    >>> import symcluster as sc
    >>> spec = sc.solve(sc.hubbard(sc.chain(2)), electrons=2, executor="serial", seed=1)
    >>> r = gaps_report(spec, {"electrons": 2, "point": {"t": "1", "U": "4"}, "digits": 6})
    >>> r["excitation"], r["spin"]
    ('0.828427', '0.828427')
    """
    digits = max(30, task["digits"])
    ground, e0 = _ground(spec, task)
    qn = {} if task.get("electrons") is None else {"N": task["electrons"]}
    pt = spec.point(task["point"])
    above = None
    with mpmath.workdps(digits + 10):
        tol = mpmath.mpf(10) ** -30 * (1 + abs(e0))
        for lev in spec.select(**qn):
            if lev in ground:
                continue
            v = lev.numeric(pt, digits=digits + 5)
            if v - e0 > tol and (above is None or v < above):
                above = v
        excitation = None if above is None else _value(above - e0, task["digits"])
    spin = None
    spins = [lev.quantum_numbers.get("S") for lev in ground]
    if qn and None not in spins:
        # the definition of analysis.gaps.spin_gap (mode "next"), by value only: its
        # exact difference is simplified with sympy, seconds per task on a catalogue
        target = min(spins) + 1
        if spec.select(S=target, **qn):
            _, e1 = lowest_level(spec, pt, digits, S=target, **qn)
            with mpmath.workdps(digits + 10):
                spin = _value(e1 - e0, task["digits"])
    return {"excitation": excitation, "spin": spin}


def towers_report(spec, task):
    """Certified tower verdicts of the task's electron number along one coupling.

    Settings come from the spec's ``[report_options.towers]`` table (all optional):
    ``coupling`` (default ``"U"``), ``interval`` (two ends, exact numbers as strings or
    ``"oo"``/``"-oo"``; default ``["-20", "0"]``), ``closed`` (default ``[true, false]``),
    ``kinds`` (default ``["spin"]``) and ``fixed`` (a table; default ``{t = 1}``).  The rows
    are those of :func:`symcluster.theorems.tower_rows` (docs/towers.md).

    Examples
    --------
    >>> import symcluster as sc
    >>> spec = sc.solve(sc.hubbard(sc.chain(2)), fixed={"t": 1}, executor="serial", seed=1)
    >>> r = towers_report(spec, {"electrons": 2, "report_options": {"towers": {}}})
    >>> [(row["kind"], row["holds"]) for row in r["rows"]]
    [('spin', True)]
    """
    from symcluster.theorems import tower_rows
    opts = dict((task.get("report_options") or {}).get("towers") or {})
    fixed = opts.get("fixed")
    if fixed is None:
        fixed = {"t": 1} if "t" not in getattr(spec, "fixed", {}) else {}
    rows = tower_rows(spec, coupling=opts.get("coupling", "U"),
                      interval=tuple(opts.get("interval", ["-20", "0"])),
                      fixed=fixed, kinds=tuple(opts.get("kinds", ["spin"])),
                      n_electrons=None if task.get("electrons") is None else [task["electrons"]],
                      closed=tuple(opts.get("closed", [True, False])))
    return {"rows": rows}


#: The built-in reports, by the name a spec uses.
REPORTS = {
    "levels": Report(levels_report, False, "numbers of levels and states, largest degree"),
    "ground": Report(ground_report, True, "ground energy, its exact form, spin, degeneracy"),
    "gaps": Report(gaps_report, True, "excitation and spin gaps inside the filling"),
    "towers": Report(towers_report, False, "certified spin/eta tower verdicts along a coupling"),
}
