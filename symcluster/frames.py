"""pandas DataFrames of results (pandas is optional and imported only here, lazily).

Float columns hold numbers to compute with (float64); columns whose name ends in
``_exact`` hold the exact form as a string (sympy's one-line syntax, the energy variable
of an implicit root printed as epsilon), so nothing exact is lost in a table.
"""

from __future__ import annotations

import mpmath
import sympy

from symcluster.errors import ModelError

__all__ = ["pandas", "level_records", "rows_frame"]


def pandas():
    """The pandas module, or a ModelError saying how to install it."""
    try:
        import pandas as pd
    except ImportError:
        raise ModelError("DataFrames need pandas; install it: pip install 'symcluster[frames]'"
                         ) from None
    return pd


def _plain(v):
    if isinstance(v, tuple):
        return ", ".join(str(x) for x in v)
    return None if v is None else str(v)


def level_records(levels, values=None, digits=15):
    """One dict per level: quantum numbers (as text), degeneracy, exact energy, value."""
    keys = []
    for lev in levels:
        for k in lev.quantum_numbers:
            if k not in keys:
                keys.append(k)
    out = []
    for i, lev in enumerate(levels):
        e = lev.energy
        expr = e.as_expr() if hasattr(e, "as_expr") and not isinstance(e, sympy.Basic) else e
        rec = {k: _plain(lev.quantum_numbers.get(k)) for k in keys}
        if "N" in rec and rec["N"] is not None:
            rec["N"] = int(lev.quantum_numbers["N"])
        if "irrep_dim" in rec and rec["irrep_dim"] is not None:
            rec["irrep_dim"] = int(lev.quantum_numbers["irrep_dim"])
        rec["degeneracy"] = int(lev.degeneracy)
        rec["closed_form"] = bool(lev.is_closed_form)
        rec["energy_exact"] = sympy.sstr(expr)
        if values is not None:
            with mpmath.workdps(digits):
                rec["value"] = float(values[i])
                rec["value_exact"] = mpmath.nstr(values[i], digits)
        out.append(rec)
    return out


def rows_frame(rows, digits=15):
    """A DataFrame of analysis rows (dicts of numbers): float columns, and for every
    mpmath or exact number also a ``<name>_exact`` string column (``digits`` digits)."""
    pd = pandas()
    records = []
    for row in rows:
        rec = {}
        for key, v in row.items():
            if isinstance(v, mpmath.mpf):
                rec[key] = float(v)
                with mpmath.workdps(digits):
                    rec[key + "_exact"] = mpmath.nstr(v, digits)
            elif isinstance(v, (sympy.Basic, int)) and not isinstance(v, bool):
                rec[key] = float(sympy.sympify(v))
                rec[key + "_exact"] = sympy.sstr(v)
            elif isinstance(v, float):
                rec[key] = v
            else:
                rec[key] = v if isinstance(v, (str, bool, type(None))) else str(v)
        records.append(rec)
    return pd.DataFrame.from_records(records)
