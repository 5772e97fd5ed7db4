"""Plots of response functions: A(omega), G(i omega_n), correlations against distance.

Each function draws into ``ax`` (a matplotlib Axes; a new Figure when None) and returns
the Figure.  matplotlib's global backend is never switched: new figures are
``matplotlib.figure.Figure`` objects, which need no display (save them with
``fig.savefig``).  Axes carry the conventions' units: energies in the units of the
couplings, k_B = 1.
"""

import mpmath

from symcluster.errors import ModelError
from symcluster.response.ensemble import exact_number

__all__ = ["plot_spectral", "plot_matsubara", "plot_correlations"]

#: most points of one curve
MAX_POINTS = 20_000


def _axes(ax, size=(5.0, 3.6)):
    if ax is not None:
        return ax.figure, ax
    try:
        from matplotlib.figure import Figure
    except ImportError:
        raise ModelError("plotting needs matplotlib; install the extra: pip install "
                         "'symcluster[plot]'") from None
    fig = Figure(figsize=size)
    return fig, fig.add_subplot(1, 1, 1)


def plot_spectral(g, broadening="1/20", window=None, n_points=801, ax=None):
    """A(omega) = -Im G(omega + i eta)/pi of a Green's function, with its poles marked.

    Parameters
    ----------
    g : GreensFunction
    broadening : number
        Lorentzian half width eta (exact, > 0), written on the plot.
    window : (number, number), optional
        Frequency range (default: the poles +- 1 + 10 eta).
    n_points : int
    ax : matplotlib Axes, optional

    Returns
    -------
    matplotlib.figure.Figure

    Examples
    --------
    >>> import symcluster as sc
    >>> spec = sc.solve(sc.hubbard(sc.chain(2)))
    >>> g = sc.greens_function(spec, {"t": 1, "U": 4}, N=2, digits=20)
    >>> fig = plot_spectral(g, n_points=41)
    >>> fig.axes[0].get_xlabel()
    'omega - mu (units of the couplings)'
    """
    if isinstance(n_points, bool) or not isinstance(n_points, int) or not 2 <= n_points <= MAX_POINTS:
        raise ModelError(f"n_points={n_points!r} must be an integer 2..{MAX_POINTS}")
    eta = exact_number("broadening", broadening)
    if eta <= 0:
        raise ModelError(f"broadening={broadening!r} must be > 0")
    poles = [float(om) for om, _ in g.poles]
    if window is None:
        pad = 1 + 10 * float(eta)
        lo, hi = (min(poles) - pad, max(poles) + pad) if poles else (-1, 1)
    else:
        lo, hi = (float(exact_number("window", w)) for w in window)
        if not lo < hi:
            raise ModelError(f"window={window!r}: give (low, high) with low < high")
    xs = [lo + (hi - lo) * k / (n_points - 1) for k in range(n_points)]
    from fractions import Fraction
    ys = [float(v) for v in g.spectral([Fraction(x) for x in xs], eta)]
    fig, ax = _axes(ax)
    ax.plot(xs, ys, lw=1.2, label=f"A(omega), eta = {eta}")
    for om, w in g.poles:
        ax.axvline(float(om), ymax=min(1.0, 0.15 + 0.8 * float(abs(w))), color="grey", lw=0.6)
    ax.set_xlabel("omega - mu (units of the couplings)")
    ax.set_ylabel("A(omega)")
    ax.set_title(f"G_{g.i}{g.j} spin {g.spin}: {g.description}", fontsize=8)
    ax.legend(fontsize=8)
    return fig


def plot_matsubara(g, beta, n_max=64, ax=None):
    """Re and Im G(i omega_n) against omega_n = (2n + 1) pi / beta.

    Examples
    --------
    >>> import symcluster as sc
    >>> spec = sc.solve(sc.hubbard(sc.chain(2)))
    >>> g = sc.greens_function(spec, {"t": 1, "U": 4}, N=2, digits=20)
    >>> fig = plot_matsubara(g, 10, n_max=8)
    >>> len(fig.axes[0].lines)
    2
    """
    vals = g.matsubara(beta, n_max)
    b = exact_number("beta", beta)
    with mpmath.workdps(20):
        wn = [float((2 * n + 1) * mpmath.pi * b.denominator / b.numerator) for n in range(n_max)]
    fig, ax = _axes(ax)
    ax.plot(wn, [float(v.real) for v in vals], "o-", ms=3, label="Re G")
    ax.plot(wn, [float(v.imag) for v in vals], "s-", ms=3, label="Im G")
    ax.set_xlabel("omega_n (units of the couplings)")
    ax.set_ylabel("G(i omega_n) (1/units of the couplings)")
    ax.set_title(f"G_{g.i}{g.j} spin {g.spin}, beta = {b}", fontsize=8)
    ax.legend(fontsize=8)
    return fig


def plot_correlations(corr, kinds=("spin", "density"), ax=None):
    """Correlations against ring distance, averaged over equivalent pairs.

    Examples
    --------
    >>> import symcluster as sc
    >>> from symcluster.response.correlations import correlations
    >>> c = correlations(sc.solve(sc.hubbard(sc.ring(4))), {"t": 1, "U": 4}, N=4, digits=20)
    >>> fig = plot_correlations(c)
    >>> fig.axes[0].get_xlabel()
    'distance (sites along the ring)'
    """
    fig, ax = _axes(ax)
    labels = {"spin": "<S_0 . S_d>", "density": "<n_0 n_d>", "sz": "<Sz_0 Sz_d>",
              "pair": "<Delta_0+ Delta_d>"}
    for kind in kinds:
        if kind not in labels:
            raise ModelError(f"kind {kind!r}: give spin, density, sz or pair")
        data = corr.by_distance(kind)
        ax.plot(list(data), [float(v) for v in data.values()], "o-", label=labels[kind])
    ax.axhline(0, color="black", lw=0.6)
    ax.set_xlabel("distance (sites along the ring)")
    ax.set_ylabel("correlation")
    ax.set_title(corr.certificate["ensemble"], fontsize=8)
    ax.legend(fontsize=8)
    return fig
