"""DataFrames: Spectrum.to_dataframe and the analysis tables.

Thermodynamic values are checked against a canonical average written in the test over
the eigenvalues of the independent reference (tests/reference_fock.py)."""

import numpy as np
import pytest

import symcluster as sc
from symcluster.analysis.frames import gaps_frame, thermo_frame, transitions_frame
from symcluster.analysis import charge_gap

from reference_fock import FockReference

pd = pytest.importorskip("pandas")


def test_to_dataframe_has_float_values_and_exact_strings():
    spec = sc.solve(sc.hubbard(sc.ring(4)))
    df = spec.to_dataframe({"t": 1, "U": 4}, digits=20)
    assert len(df) == len(spec.levels)
    assert df["value"].dtype == np.float64 and df["degeneracy"].sum() == 256
    assert list(df["value"]) == sorted(df["value"])
    ref = FockReference(4, [(i, (i + 1) % 4, "t") for i in range(4)])
    got = np.repeat(df["value"].to_numpy(), df["degeneracy"].to_numpy())
    assert np.max(np.abs(np.sort(got) - ref.eigenvalues({"t": 1.0, "U": 4.0}))) < 1e-10
    assert all(isinstance(x, str) for x in df["energy_exact"])
    # the exact string carries the digits asked for
    assert len(df["value_exact"][0].lstrip("-").replace(".", "")) >= 19
    plain = spec.to_dataframe()
    assert "value" not in plain.columns and len(plain) == len(spec.levels)


def test_thermodynamics_over_200_temperatures_is_a_float_frame():
    spec = sc.solve(sc.hubbard(sc.chain(2)))
    temps = [sc.spectrum.to_rational("T", x) for x in np.linspace(0.05, 10, 200)]
    df = thermo_frame(spec, {"t": 1, "U": 4}, temps, n_electrons=2)
    assert len(df) == 200
    for col in ("T", "energy", "entropy", "specific_heat"):
        assert df[col].dtype == np.float64
    assert "energy_exact" in df.columns
    ev = FockReference(2, [(0, 1, "t")]).eigenvalues({"t": 1.0, "U": 4.0}, n=2)
    for T, e in zip(df["T"][::37], df["energy"][::37]):
        w = np.exp(-(ev - ev.min()) / T)
        assert abs(e - (ev * w).sum() / w.sum()) < 1e-10


def test_transition_and_gap_frames():
    spec = sc.solve(sc.hubbard(sc.ring(4)))
    df = transitions_frame(spec, None, "U", (0, 10), {"t": 1})
    assert list(df.columns)[:2] == ["U", "U_exact"]
    g = gaps_frame([charge_gap(sc.solve(sc.hubbard(sc.chain(2))), 2, {"t": 1, "U": 3})])
    # dimer charge gap sqrt(U^2 + 16 t^2) - 2t = 3 at U = 3 (from memory)
    assert abs(g.loc[0, "value"] - 3) < 1e-12 and g.loc[0, "quantity"] == "charge gap"
