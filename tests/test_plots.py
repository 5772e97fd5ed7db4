"""Level diagrams: ax=, the returned Figure, files only on request, titles and legends.

Curve values are checked against the dimer's N = 2 levels written here from the
two-site formulas (from memory): 0 (triplet), U, (U -/+ sqrt(U^2 + 16 t^2))/2."""

import os

import numpy as np
import pytest

import symcluster as sc
from symcluster.analysis.plots import legend_label, plot_levels

mpl = pytest.importorskip("matplotlib")


def _dimer():
    return sc.solve(sc.hubbard(sc.chain(2)))


def test_draws_into_given_axes_and_returns_their_figure(tmp_path, monkeypatch):
    from matplotlib.figure import Figure
    monkeypatch.chdir(tmp_path)
    backend = mpl.get_backend()
    fig = Figure()
    ax = fig.subplots()
    out = plot_levels(_dimer(), fixed={"t": 1}, n_electrons=2, n_points=21, ax=ax)
    assert out is fig
    assert mpl.get_backend() == backend           # no matplotlib.use(...) switch
    assert list(tmp_path.iterdir()) == []         # nothing written without path=
    xs = ax.lines[0].get_xdata()
    got = sorted(np.concatenate([l.get_ydata()[[5]] for l in ax.lines[:4]]))
    u = xs[5]
    r = np.sqrt(u**2 + 16)
    assert np.allclose(got, sorted([0.0, u, (u - r) / 2, (u + r) / 2]), atol=1e-12)


def test_title_names_model_cluster_electrons_and_fixed_couplings():
    fig = plot_levels(_dimer(), fixed={"t": 1}, n_electrons=2, n_points=5)
    title = fig.axes[0].get_title()
    assert "chain(2)" in title and "N = 2" in title and "t = 1" in title


def test_legends_are_in_physics_notation():
    fig = plot_levels(sc.solve(sc.hubbard(sc.ring(4))), fixed={"t": 1}, n_electrons=4,
                      color_by="irrep", n_points=5)
    labels = [t.get_text() for t in fig.axes[0].get_legend().get_texts()]
    assert labels and all(l.startswith("$") and l.endswith("$") for l in labels)
    assert not any("irrep =" in l for l in labels)
    assert legend_label("S", sc.spectrum.to_rational("S", "1/2")) == r"$S = \frac{1}{2}$"


def test_files_are_written_only_when_asked(tmp_path):
    plot_levels(_dimer(), tmp_path / "levels", fixed={"t": 1}, n_electrons=2, n_points=5)
    assert sorted(os.listdir(tmp_path)) == ["levels.pdf", "levels.png"]
