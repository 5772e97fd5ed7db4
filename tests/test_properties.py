"""Property tests (hypothesis): random small clusters against the independent reference."""

from fractions import Fraction
from math import comb

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import symcluster as sc
from reference_fock import FockReference, expand, max_deviation

SETTINGS = settings(max_examples=10, deadline=None,
                    suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large])

rationals = st.builds(Fraction, st.integers(-9, 9), st.integers(1, 5))


@st.composite
def connected_clusters(draw):
    """2-4 sites: a random spanning tree plus a random subset of the other pairs, labels t/tp."""
    n = draw(st.integers(2, 4))
    bonds = set()
    for k in range(1, n):                          # random spanning tree (connected)
        bonds.add((draw(st.integers(0, k - 1)), k))
    others = [(i, j) for i in range(n) for j in range(i + 1, n) if (i, j) not in bonds]
    bonds |= set(draw(st.lists(st.sampled_from(others), unique=True))) if others else set()
    labelled = [(i, j, draw(st.sampled_from(["t", "tp"]))) for i, j in sorted(bonds)]
    return sc.cluster(n, labelled)


def _point(cluster, draw_values):
    return {lab: draw_values[lab] for lab in cluster.hopping_labels} | {"U": draw_values["U"]}


@SETTINGS
@given(c=connected_clusters(), t=rationals, tp=rationals, u=rationals, data=st.data())
def test_random_cluster_matches_reference(c, t, tp, u, data):
    # one random electron number per example keeps the module fast; over N the state counts
    # C(2L, N) add up to 4^L
    L = c.n_sites
    n = data.draw(st.integers(1, 2 * L - 1), label="N")
    spec = sc.solve(sc.hubbard(c), electrons=n)
    assert spec.n_states == comb(2 * L, n)
    pt = _point(c, {"t": t, "tp": tp, "U": u})
    ref = FockReference(L, list(c.bonds))
    dev = max_deviation(expand(spec.numeric(pt, digits=30)), ref.eigenvalues(pt, n=n))
    assert dev < 1e-9, f"{c.bonds} N={n} at {pt}: deviation {dev:.2e}"


@pytest.mark.slow
@settings(max_examples=4, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(c=connected_clusters())
def test_random_cluster_all_states(c):
    spec = sc.solve(sc.hubbard(c))
    assert spec.n_states == 4 ** c.n_sites
    pt = _point(c, {"t": Fraction(1), "tp": Fraction(-3, 2), "U": Fraction(7, 3)})
    ref = FockReference(c.n_sites, list(c.bonds))
    assert max_deviation(expand(spec.numeric(pt)), ref.eigenvalues(pt)) < 1e-9


@settings(max_examples=6, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(c=connected_clusters(), t=rationals, tp=rationals, u=rationals,
       lam=st.builds(Fraction, st.integers(-6, 6).filter(bool), st.integers(1, 4)))
def test_random_cluster_homogeneity(c, t, tp, u, lam):
    # E(lam * couplings) = lam * E(couplings) (H is linear in the couplings; exact)
    spec = sc.solve(sc.hubbard(c), electrons=2)
    pt = _point(c, {"t": t, "tp": tp, "U": u})
    a = sorted(float(lam) * float(e) for e in expand(spec.numeric(pt)))
    b = expand(spec.numeric({k: lam * v for k, v in pt.items()}))
    assert max_deviation(a, b) < 1e-9


DISCONNECTED_PT = {"t": 1, "tp": Fraction(2, 3), "U": Fraction(5, 2)}


def _disconnected_expected():
    # two disconnected parts: Fock space is a tensor product, so levels are sums of the
    # parts' levels (common practice, no source); the parts from the reference
    u = DISCONNECTED_PT["U"]
    a = FockReference(2, [(0, 1, "t")]).eigenvalues({"t": 1, "U": u})
    b = FockReference(2, [(0, 1, "tp")]).eigenvalues({"tp": DISCONNECTED_PT["tp"], "U": u})
    return sorted(x + y for x in a for y in b)


def test_disconnected_clusters_add_without_lattice():
    c = sc.cluster(4, [(0, 1), (2, 3, "tp")])
    assert not c.is_connected()
    spec = sc.solve(sc.hubbard(c), lattice=False)
    assert spec.n_states == 256
    assert max_deviation(expand(spec.numeric(DISCONNECTED_PT)), _disconnected_expected()) < 1e-9


def _solve_or_clear_refusal(cluster, **kwargs):
    """The spectrum, or None after a refusal that names connectivity; never a failed check."""
    try:
        return sc.solve(sc.hubbard(cluster), **kwargs)
    except sc.VerificationError as exc:
        pytest.fail(f"disconnected cluster accepted, then failed verification: {exc}")
    except sc.SymclusterError as exc:
        assert "connected" in str(exc), f"unclear refusal of a disconnected cluster: {exc}"
        return None


def test_disconnected_clusters_add():
    # either the solver handles a disconnected cluster (default: lattice symmetry on)
    # or it refuses with a clear error naming connectivity
    c = sc.cluster(4, [(0, 1), (2, 3, "tp")])
    spec = _solve_or_clear_refusal(c)
    if spec is None:
        return
    assert spec.n_states == 256
    assert max_deviation(expand(spec.numeric(DISCONNECTED_PT)), _disconnected_expected()) < 1e-9


def test_two_identical_dimers_two_electrons():
    # minimal case of the same problem: sector N = 2 has C(8, 2) = 28 states
    c = sc.cluster(4, [(0, 1), (2, 3)])
    spec = _solve_or_clear_refusal(c, electrons=2)
    if spec is None:
        return
    assert spec.n_states == 28
