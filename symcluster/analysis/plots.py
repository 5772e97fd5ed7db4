"""Level diagrams: energies versus one coupling (matplotlib, imported lazily).

``plot_levels`` draws every level of a sector (or all sectors) against the swept
coupling, coloured by a chosen quantum number, marks the exact ground-state transitions
with vertical lines, and returns the matplotlib Figure.  It draws into ``ax=`` when one
is given (a notebook's own axes), otherwise into a new Figure made without pyplot, so a
notebook's or a script's backend is never switched and no global figure is left open.
Files are written only when ``path`` is given (PNG and PDF, atomically).  Needs the
optional extra ``plot`` (matplotlib).
"""

from __future__ import annotations

import numpy as np
import sympy

from symcluster.errors import ModelError
from symcluster.spectrum import to_rational
from symcluster.numeric.grid import GridEvaluator
from symcluster.analysis.transitions import _select, transitions

__all__ = ["plot_levels", "MAX_POINTS", "legend_label", "plot_title"]

#: Most points per curve.
MAX_POINTS = 10_000

_QN_TEX = {"S": "S", "Sz": "S_z", "N": "N", "eta": r"\eta", "k": "k", "irrep": r"\Gamma"}


def _figure():
    try:
        from matplotlib.figure import Figure
    except ImportError:
        raise ModelError("plotting needs matplotlib; install the extra: pip install "
                         "'symcluster[plot]'") from None
    return Figure(figsize=(6, 4.5))


def _value_tex(value):
    if isinstance(value, tuple):
        return ", ".join(_value_tex(v) for v in value)
    if isinstance(value, sympy.Basic):
        return sympy.latex(value)
    text = str(value)
    for a, b in (("π", r"\pi "), ("±", r"\pm "), ("∓", r"\mp "), ("−", "-"), ("Γ", r"\Gamma ")):
        text = text.replace(a, b)
    return text.strip()


def legend_label(key, value):
    """A legend entry in physics notation, e.g. ``$S = 1/2$``, ``$k = \\pi/2$``.

    Examples
    --------
    >>> legend_label("S", sympy.Rational(1, 2))
    '$S = \\\\frac{1}{2}$'
    >>> legend_label("irrep", "k=π/2")
    '$k = \\\\pi /2$'
    """
    if key == "irrep" and isinstance(value, str) and "=" in value:
        name, _, rest = value.partition("=")
        return f"${_value_tex(name)} = {_value_tex(rest)}$"
    name = _QN_TEX.get(key, r"\mathrm{" + key.replace("_", r"\_") + "}")
    return f"${name} = {_value_tex(value)}$"


def plot_title(spec, n_electrons, fixed):
    """``hubbard model on ring(4), N = 4, t = 1``: cluster, electrons, fixed couplings."""
    model = spec.model
    name = getattr(model, "name", "model")
    cluster = getattr(getattr(model, "cluster", None), "name", "")
    parts = [f"{name} model on {cluster}" if cluster else f"{name} model"]
    if n_electrons is not None:
        parts.append(f"N = {n_electrons}")
    for k, v in list((spec.fixed or {}).items()) + list(fixed.items()):
        parts.append(f"{k} = {v}")
    return ", ".join(parts)


def plot_levels(spec, path=None, coupling="U", interval=(0, 10), fixed=None, n_electrons=None,
                color_by="S", mark_transitions=True, n_points=121, title=None, ax=None):
    """Plot levels against ``coupling``; return the Figure.

    Parameters
    ----------
    spec : Spectrum
    path : str or pathlib.Path, optional
        Write ``path``.png and ``path``.pdf (a suffix is replaced); nothing is written
        without it.
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
    title : str, optional
        Default: the model, cluster, electron number and fixed couplings.
    ax : matplotlib Axes, optional
        Draw into these axes (their Figure is returned); default a new Figure.

    Returns
    -------
    matplotlib.figure.Figure

    Raises
    ------
    ModelError
        ``color_by`` is not a quantum number of the levels, ``n_points`` is out
        of range, or the spectrum lacks the sectors asked for (all of them for
        ``n_electrons=None``).

    Examples
    --------
    >>> import symcluster as sc
    >>> spec = sc.solve(sc.hubbard(sc.chain(2)))
    >>> fig = plot_levels(spec, fixed={"t": 1}, n_electrons=2, n_points=11)
    >>> fig.axes[0].get_title()
    'hubbard model on chain(2), N = 2, t = 1'
    """
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
    spec.point({**fixed, coupling: lo})                     # names every missing coupling
    if ax is None:
        fig = _figure()
        ax = fig.subplots()
    else:
        fig = ax.figure
    xs = np.linspace(float(lo), float(hi), n_points)
    columns, exact = [], []
    for s in spec.symbols:
        if s.name == coupling:
            columns.append(xs)
            exact.append(None)
        else:
            v = to_rational(s.name, fixed[s.name])
            columns.append(np.full(n_points, float(v)))
            exact.append(v)
    grid = GridEvaluator([l.energy for l in levels], [l.polynomial for l in levels],
                         spec.symbols)
    values = grid.values(columns, exact)
    units = [k for k, v in fixed.items() if to_rational(str(k), v) == 1]
    unit = units[0] if len(units) == 1 else None
    keys = sorted({str(l.quantum_numbers.get(color_by, "?")) for l in levels})
    cmap = _colormap(len(keys))
    colour = {k: cmap(i) for i, k in enumerate(keys)}
    seen = set()
    for j, lev in enumerate(levels):
        value = lev.quantum_numbers.get(color_by, "?")
        key = str(value)
        ax.plot(xs, values[:, j], color=colour[key], lw=1,
                label=None if key in seen else legend_label(color_by, value))
        seen.add(key)
    if mark_transitions:
        for tr in transitions(spec, n_electrons, coupling, (lo, hi), fixed):
            ax.axvline(float(tr.numeric(15)), color="k", ls="--", lw=0.8)
    ax.set_xlabel(f"${coupling}/{unit}$" if unit else f"${coupling}$")
    ax.set_ylabel(f"$E/{unit}$" if unit else "$E$")
    ax.set_title(title if title is not None else plot_title(spec, n_electrons, fixed),
                 fontsize=10)
    ax.legend(fontsize=8, loc="best")
    if path is not None:
        _write(fig, path)
    return fig


def _colormap(n):
    from matplotlib import colormaps
    base = colormaps["tab10" if n <= 10 else "viridis"]
    return (lambda i: base(i % 10)) if n <= 10 else (lambda i: base(i / max(n - 1, 1)))


def _write(fig, path):
    """PNG and PDF of ``fig`` next to each other, both or neither (atomic)."""
    import io
    import pathlib

    from symcluster.export.files import write_files_atomic
    stem = pathlib.Path(path).with_suffix("")
    files = []
    for ext in (".png", ".pdf"):
        buf = io.BytesIO()
        fig.savefig(buf, format=ext[1:], dpi=150, bbox_inches="tight")
        files.append((str(stem) + ext, buf.getvalue()))
    write_files_atomic(files)
    return [name for name, _ in files]


def write_plot(fig, path):
    """Write a Figure as ``path``.png and ``path``.pdf atomically; returns the file names."""
    return _write(fig, path)
