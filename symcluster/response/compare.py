"""Compare a numerical code's results with a symcluster reference.

THEIRS is a CSV file whose header names one key column of a reference table (``T`` for
``thermo``, ``n`` for ``matsubara``, ``tau`` for ``tau``) and any of that table's value
columns, each optionally with an error bar column ``<name>_err``.  Every row's key must
be a key of the reference table.  Per quantity the comparer reports the largest
deviation |theirs - reference|, the largest deviation in units of the stated error bar,
and passes it when every row has |deviation| <= tolerance, or, where an error bar
sigma > 0 is given, |deviation| <= sigmas * sigma.

Numbers in THEIRS are read with ``float`` (finite decimals only); reference values are
decimal strings read by mpmath.  Nothing is evaluated.
"""

import csv
import io
import math
from fractions import Fraction
from dataclasses import dataclass

import mpmath

from symcluster.errors import InputError
from symcluster.response.reference import TABLES

__all__ = ["compare", "Comparison", "QuantityResult", "read_theirs", "comparison_figure"]

#: largest THEIRS file read (bytes)
MAX_BYTES = 50_000_000


@dataclass
class QuantityResult:
    """The comparison of one column."""

    name: str
    rows: int
    max_deviation: float
    max_sigmas: object        # float, or None without error bars
    worst_key: str
    passed: bool
    keys: list
    theirs: list
    reference: list
    errors: list


@dataclass
class Comparison:
    """Every column compared; ``passed`` if all passed."""

    table: str
    key: str
    quantities: list
    tolerance: float
    sigmas: float

    @property
    def passed(self):
        return all(q.passed for q in self.quantities)

    def report(self):
        """A plain-text table of the comparison."""
        lines = [f"table {self.table} (key {self.key}); pass when |dev| <= {self.tolerance:g}"
                 f" or |dev| <= {self.sigmas:g} x error bar",
                 f"{'quantity':<18}{'rows':>6}{'max |dev|':>12}{'max dev/err':>13}  "
                 f"{'worst ' + self.key:<16}result"]
        for q in self.quantities:
            sig = f"{q.max_sigmas:.3g}" if q.max_sigmas is not None else "-"
            lines.append(f"{q.name:<18}{q.rows:>6}{q.max_deviation:>12.3e}{sig:>13}  "
                         f"{q.worst_key:<16}{'pass' if q.passed else 'FAIL'}")
        lines.append("overall: " + ("pass" if self.passed else "FAIL"))
        return "\n".join(lines) + "\n"


def _finite(text, where):
    try:
        v = float(text)
    except (TypeError, ValueError):
        raise InputError(f"{where}: {text!r} is not a number; write decimals such as "
                         "-0.25 or 1e-3") from None
    if not math.isfinite(v):
        raise InputError(f"{where}: {text!r} is not finite; give a finite number")
    return v


def read_theirs(text, source="THEIRS"):
    """``(header, rows)`` of a CSV text; rows as lists of strings."""
    rows = [r for r in csv.reader(io.StringIO(text)) if r and any(c.strip() for c in r)]
    if not rows:
        raise InputError(f"{source} is empty; give a CSV with a header line such as 'n,re_G,im_G'")
    header = [c.strip() for c in rows[0]]
    for k, r in enumerate(rows[1:], start=2):
        if len(r) != len(header):
            raise InputError(f"{source} line {k} has {len(r)} fields but the header has "
                             f"{len(header)}; give one value per column")
    return header, rows[1:]


def compare(reference, theirs_text, tolerance=1e-8, sigmas=3.0, source="THEIRS"):
    """Compare THEIRS (CSV text) with a reference dict.

    Parameters
    ----------
    reference : dict
        From :func:`symcluster.response.reference.load_reference` or ``build_reference``.
    theirs_text : str
        The CSV (see the module docstring).
    tolerance : float
        Absolute tolerance (>= 0).
    sigmas : float
        Error bars allowed (> 0).

    Returns
    -------
    Comparison

    Raises
    ------
    InputError
        No key column, an unknown or missing column, a key not in the reference, a
        number that is not finite.

    Examples
    --------
    >>> ref = {"tables": {"tau": {"columns": ["tau", "G"], "rows": [["0", "-0.5"], ["1", "-0.25"]]}}}
    >>> c = compare(ref, "tau,G,G_err\\n0,-0.5000001,1e-6\\n1,-0.25,1e-6\\n")
    >>> c.passed, round(c.quantities[0].max_sigmas, 3)
    (True, 0.1)
    >>> compare(ref, "tau,G\\n0,-0.49\\n").passed
    False
    """
    if not (isinstance(tolerance, (int, float)) and tolerance >= 0 and math.isfinite(tolerance)):
        raise InputError(f"tolerance {tolerance!r} must be a finite number >= 0")
    if not (isinstance(sigmas, (int, float)) and sigmas > 0 and math.isfinite(sigmas)):
        raise InputError(f"sigmas {sigmas!r} must be a finite number > 0")
    header, rows = read_theirs(theirs_text, source)
    keys = [k for name, (k, _) in TABLES.items() if k in header]
    if len(keys) != 1:
        raise InputError(f"{source}: the header {','.join(header)} must name exactly one key "
                         "column: T (thermo), n (matsubara) or tau (tau)")
    key = keys[0]
    table_name = next(name for name, (k, _) in TABLES.items() if k == key)
    table = reference["tables"].get(table_name)
    if not table or not table["rows"]:
        raise InputError(f"{source}: the reference has no {table_name} table to compare with; "
                         f"write the reference with that table")
    cols = table["columns"]
    values = [c for c in cols if c != key]
    wanted = []
    for h in header:
        if h == key:
            continue
        base = h[:-4] if h.endswith("_err") else h
        if base not in values:
            raise InputError(f"{source}: column {h!r} is not a column of the reference's "
                             f"{table_name} table ({', '.join(values)}, each optionally with _err)")
        if not h.endswith("_err"):
            wanted.append(h)
    for h in header:
        if h.endswith("_err") and h[:-4] not in wanted:
            raise InputError(f"{source}: error column {h!r} has no value column {h[:-4]!r}")
    if not wanted:
        raise InputError(f"{source}: no value column; give at least one of {', '.join(values)}")
    if not rows:
        raise InputError(f"{source} has a header but no rows")
    kidx = cols.index(key)
    ref_rows = {}
    for r in table["rows"]:
        try:
            ref_rows[float(Fraction(r[kidx]))] = r
        except (ValueError, ZeroDivisionError):
            raise InputError(f"the reference's {table_name} table has a key {r[kidx]!r} that is "
                             "not a number; write the reference again") from None
    pos = {h: k for k, h in enumerate(header)}
    results = []
    with mpmath.workdps(40):
        for name in wanted:
            keys_out, th, rf, errs = [], [], [], []
            worst, worst_sig, worst_key, ok = 0.0, None, "", True
            for line, r in enumerate(rows, start=2):
                kv = _finite(r[pos[key]], f"{source} line {line}, column {key}")
                match = [v for kk, v in ref_rows.items()
                         if abs(kk - kv) <= 1e-9 * max(1.0, abs(kk))]
                if not match:
                    raise InputError(f"{source} line {line}: {key}={r[pos[key]]} is not in the "
                                     f"reference's {table_name} table")
                ref_val = mpmath.mpf(match[0][cols.index(name)])
                val = _finite(r[pos[name]], f"{source} line {line}, column {name}")
                err = None
                if name + "_err" in pos:
                    err = _finite(r[pos[name + "_err"]], f"{source} line {line}, column "
                                                         f"{name}_err")
                    if err < 0:
                        raise InputError(f"{source} line {line}: error bar {err} is negative")
                dev = float(abs(mpmath.mpf(val) - ref_val))
                passed = dev <= tolerance or (err is not None and err > 0 and dev <= sigmas * err)
                ok = ok and passed
                if dev >= worst:
                    worst, worst_key = dev, r[pos[key]]
                if err:
                    s = dev / err
                    worst_sig = s if worst_sig is None else max(worst_sig, s)
                keys_out.append(kv)
                th.append(val)
                rf.append(float(ref_val))
                errs.append(err)
            results.append(QuantityResult(name, len(rows), worst, worst_sig, worst_key, ok,
                                          keys_out, th, rf, errs))
    return Comparison(table_name, key, results, float(tolerance), float(sigmas))


def comparison_figure(comparison, ax=None):
    """Theirs against the reference (top) and the residuals (bottom), one column per
    quantity; returns the matplotlib Figure.  No global backend is set.

    Parameters
    ----------
    comparison : Comparison
    ax : array of matplotlib Axes, optional
        Shape (2, number of quantities); new axes in a new Figure by default.
    """
    from matplotlib.figure import Figure
    q = comparison.quantities
    if ax is None:
        fig = Figure(figsize=(4.2 * len(q), 5.6))
        axes = fig.subplots(2, len(q), squeeze=False, sharex="col")
    else:
        axes = ax
        fig = axes[0][0].figure
    for k, res in enumerate(q):
        top, bottom = axes[0][k], axes[1][k]
        order = sorted(range(len(res.keys)), key=lambda i: res.keys[i])
        xs = [res.keys[i] for i in order]
        top.plot(xs, [res.reference[i] for i in order], "-", color="black", lw=1,
                 label="reference")
        errs = [res.errors[i] or 0 for i in order]
        top.errorbar(xs, [res.theirs[i] for i in order], yerr=errs if any(errs) else None,
                     fmt="o", ms=3, label="theirs")
        top.set_ylabel(res.name)
        top.set_title(f"{res.name}: {'pass' if res.passed else 'FAIL'}")
        top.legend(fontsize=8)
        bottom.errorbar(xs, [res.theirs[i] - res.reference[i] for i in order],
                        yerr=errs if any(errs) else None, fmt="o", ms=3)
        bottom.axhline(0, color="black", lw=0.8)
        bottom.set_ylabel("theirs - reference")
        unit = {"T": "T (energy units, k_B = 1)", "n": "Matsubara index n",
                "tau": "tau (1/energy units)"}[comparison.key]
        bottom.set_xlabel(unit)
    fig.tight_layout()
    return fig
