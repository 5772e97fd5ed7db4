"""DataFrames of the table-like analysis results (pandas imported lazily).

Float columns to compute with and ``<name>_exact`` string columns that keep every digit
computed (see :mod:`symcluster.frames`).
"""

from __future__ import annotations

import mpmath

from symcluster.frames import pandas, rows_frame
from symcluster.analysis.thermo import thermo_table
from symcluster.analysis.transitions import transitions

__all__ = ["thermo_frame", "transitions_frame", "gaps_frame"]


def thermo_frame(spec, at, temperatures, n_electrons=None, mus=(0,), h=0, digits=30,
                 interaction="U"):
    """:func:`~symcluster.analysis.thermo.thermo_table` as a pandas DataFrame.

    Examples
    --------
    >>> import symcluster as sc
    >>> spec = sc.solve(sc.hubbard(sc.chain(2)))
    >>> df = thermo_frame(spec, {"t": 1, "U": 4}, [1, 2], n_electrons=2)
    >>> list(df["T"]), str(df["energy"].dtype)
    ([1.0, 2.0], 'float64')
    """
    rows = thermo_table(spec, at, temperatures, n_electrons, mus, h, digits, interaction)
    return rows_frame(rows, digits)


def transitions_frame(spec, n_electrons=None, coupling="U", interval=(0, 10), fixed=None,
                      digits=15):
    """Ground-state transitions as a DataFrame: location (float and exact), the ground
    states' quantum numbers on either side."""
    pd = pandas()
    recs = []
    for tr in transitions(spec, n_electrons, coupling, interval, fixed):
        with mpmath.workdps(digits):
            val = tr.numeric(digits)
            recs.append({str(tr.coupling): float(val), f"{tr.coupling}_exact": str(tr.value),
                         f"{tr.coupling}_digits": mpmath.nstr(val, digits),
                         "below": ", ".join(f"{k}={v}" for k, v in
                                            tr.below.quantum_numbers.items()),
                         "above": ", ".join(f"{k}={v}" for k, v in
                                            tr.above.quantum_numbers.items())})
    return pd.DataFrame.from_records(recs, columns=[str(coupling), f"{coupling}_exact",
                                                    f"{coupling}_digits", "below", "above"])


def gaps_frame(results, digits=15):
    """GapResults (charge_gap, spin_gap, pair_binding) as one DataFrame."""
    pd = pandas()
    recs = []
    for g in results:
        with mpmath.workdps(digits):
            recs.append({"quantity": g.name, "value": float(g.value),
                         "value_digits": mpmath.nstr(g.value, digits),
                         "exact": str(g.expr), "valid": g.valid})
    return pd.DataFrame.from_records(recs)
