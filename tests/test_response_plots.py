"""Plots of response functions (symcluster.response.plots): what is drawn is the data."""

import matplotlib
import pytest

import symcluster as sc
from symcluster.errors import ModelError
from symcluster.response.correlations import correlations
from symcluster.response.plots import plot_correlations, plot_matsubara, plot_spectral


@pytest.fixture(scope="module")
def dimer():
    spec = sc.solve(sc.hubbard(sc.chain(2)))
    return sc.greens_function(spec, {"t": 1, "U": 4}, N=2, digits=20)


def test_spectral_plot_peaks_at_the_poles_and_leaves_the_backend_alone(dimer):
    before = matplotlib.get_backend()
    fig = plot_spectral(dimer, broadening="1/50", n_points=2001)
    assert matplotlib.get_backend() == before
    line = fig.axes[0].lines[0]
    xs, ys = line.get_xdata(), line.get_ydata()
    # Lorentzians of half width eta: the maxima sit at the poles (within the grid step)
    peak = xs[list(ys).index(max(ys))]
    assert min(abs(peak - float(om)) for om, _ in dimer.poles) < 0.02


def test_matsubara_plot_draws_the_values(dimer):
    import matplotlib.pyplot as plt
    fig, ax = plt.subplots()
    out = plot_matsubara(dimer, 10, n_max=5, ax=ax)
    assert out is fig
    vals = dimer.matsubara(10, 5)
    assert list(ax.lines[1].get_ydata()) == [float(v.imag) for v in vals]
    plt.close(fig)


def test_correlation_plot_by_distance():
    c = correlations(sc.solve(sc.hubbard(sc.ring(4))), {"t": 1, "U": 4}, N=4, digits=20)
    fig = plot_correlations(c, kinds=("spin",))
    ys = fig.axes[0].lines[0].get_ydata()
    # antiferromagnetic half-filled ring (Lieb-Mattis / Lieb 1989 ground state S = 0):
    # nearest neighbours anti-aligned, next-nearest aligned
    assert ys[1] < 0 < ys[2]
    with pytest.raises(ModelError, match="kind"):
        plot_correlations(c, kinds=("magnetic",))


def test_bad_broadening(dimer):
    with pytest.raises(ModelError, match="broadening"):
        plot_spectral(dimer, broadening=0)
