"""Level diagrams: energies versus one coupling (matplotlib, imported lazily).

``plot_levels`` draws every level of a sector (or all sectors) against the
swept coupling, coloured by a chosen quantum number, marks the exact
ground-state transitions with vertical lines, and writes PNG and PDF files.
Needs the optional extra ``plot`` (matplotlib); the Agg backend is used, so no
display is required.
"""

import sympy

from symcluster.errors import ModelError
from symcluster.spectrum import to_rational
from symcluster.analysis.observables import level_value
from symcluster.analysis.transitions import _select, transitions

__all__ = ["plot_levels", "MAX_POINTS"]

#: Most points per curve.
MAX_POINTS = 10_000


def _pyplot():
    try:
        import matplotlib
    except ImportError:
        raise ModelError("plotting needs matplotlib; install the extra: pip install "
                         "'symcluster[plot]'") from None
    matplotlib.use("Agg")
    import matplotlib.pyplot as plt
    return plt


def plot_levels(spec, path, coupling="U", interval=(0, 10), fixed=None, n_electrons=None,
                color_by="S", mark_transitions=True, n_points=121, title=None):
    """Plot levels against ``coupling`` and save ``path``.png and ``path``.pdf.

    Parameters
    ----------
    spec : Spectrum
    path : str or pathlib.Path
        Output stem (a suffix .png/.pdf is replaced).
    coupling : str
    interval : (lo, hi)
    fixed : dict
        Exact values of the other couplings; a single one equal to 1 becomes
        the energy unit in the axis labels (e.g. $U/t$, $E/t$).
    n_electrons : int or None
    color_by : str
        Quantum-number key for the colours ("S", "N", "irrep", ...).
    mark_transitions : bool
        Draw dashed lines at the exact ground-state transitions.
    n_points : int

    Returns
    -------
    list of str
        The files written (both or none: they are written as
        :func:`symcluster.export.files.write_files_atomic` writes, so a device, a
        FIFO or a directory at either path is refused).

    Raises
    ------
    ModelError
        ``color_by`` is not a quantum number of the levels, ``n_points`` is out
        of range, or the spectrum lacks the sectors asked for (all of them for
        ``n_electrons=None``).
    """
    import io
    import pathlib

    from symcluster.export.files import write_files_atomic

    if isinstance(n_points, bool) or not isinstance(n_points, int) \
            or not 2 <= n_points <= MAX_POINTS:
        raise ModelError(f"n_points={n_points!r}; give a whole number from 2 to {MAX_POINTS}")
    fixed = dict(fixed or {})
    levels = _select(spec, n_electrons)
    keys_present = sorted({k for l in levels for k in l.quantum_numbers})
    if color_by not in keys_present:
        raise ModelError(f"color_by={color_by!r} is not a quantum number of these levels; "
                         f"choose one of {', '.join(keys_present)}")
    lo, hi = (to_rational("interval", v) for v in interval)
    if not lo < hi:
        raise ModelError(f"interval ({lo}, {hi}) is empty; give (lower, upper) with "
                         f"lower < upper")
    plt = _pyplot()
    xs = [lo + (hi - lo) * sympy.Rational(i, n_points - 1) for i in range(n_points)]
    units = [k for k, v in fixed.items() if to_rational(str(k), v) == 1]
    unit = units[0] if len(units) == 1 else None
    keys = sorted({str(l.quantum_numbers.get(color_by, "?")) for l in levels})
    cmap = plt.get_cmap("tab10" if len(keys) <= 10 else "viridis")
    colour = {k: cmap(i % 10 if len(keys) <= 10 else i / max(len(keys) - 1, 1))
              for i, k in enumerate(keys)}
    fig, ax = plt.subplots(figsize=(6, 4.5))
    seen = set()
    for lev in levels:
        ys = []
        for x in xs:
            pt = spec.point({**fixed, coupling: x})
            ys.append(float(level_value(lev, pt, 15)))
        key = str(lev.quantum_numbers.get(color_by, "?"))
        ax.plot([float(x) for x in xs], ys, color=colour[key], lw=1,
                label=None if key in seen else f"${color_by} = {key}$")
        seen.add(key)
    if mark_transitions:
        for tr in transitions(spec, n_electrons, coupling, (lo, hi), fixed):
            ax.axvline(float(tr.numeric(15)), color="k", ls="--", lw=0.8)
    ax.set_xlabel(f"${coupling}/{unit}$" if unit else f"${coupling}$")
    ax.set_ylabel(f"$E/{unit}$" if unit else "$E$")
    if title:
        ax.set_title(title)
    ax.legend(fontsize=8, loc="best")
    fig.tight_layout()
    stem = pathlib.Path(path).with_suffix("")
    files = []
    try:
        for ext in (".png", ".pdf"):
            buf = io.BytesIO()
            fig.savefig(buf, format=ext[1:], dpi=150)
            files.append((str(stem) + ext, buf.getvalue()))
    finally:
        plt.close(fig)
    write_files_atomic(files)
    return [name for name, _ in files]
