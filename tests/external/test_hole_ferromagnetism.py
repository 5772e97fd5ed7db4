"""Ground-state spin of one hole in small Hubbard rings, against an independent reference.

Y. Nagaoka, Phys. Rev. 147, 392 (1966): at U = infinity one hole in a
suitable lattice makes the ground state fully polarized; on single rings this
holds for the 4-site ring and fails for longer rings (references.md; the
ring statement is from memory).  The finite-U transition point of the 4-site
ring with 3 electrons is located here by bisection on the Jordan-Wigner
reference (tests/reference_fock.py), which shares no code with symcluster,
and compared with the exact point returned by sc.transitions.
"""

import sympy

import symcluster as sc
from reference_fock import FockReference

RING4 = [(i, (i + 1) % 4, "t") for i in range(4)]


def _gap(ref, u):
    """E0(N_up=2, N_dn=1) - E0(N_up=3, N_dn=0): < 0 while the ground spin is 1/2."""
    low = ref.eigenvalues({"t": 1.0, "U": u}, n_up=2, n_dn=1)[0]
    pol = ref.eigenvalues({"t": 1.0, "U": u}, n_up=3, n_dn=0)[0]
    return low - pol


def test_four_site_ring_one_hole_turns_fully_polarized_at_the_exact_point():
    ref = FockReference(4, RING4)
    lo, hi = 1.0, 60.0
    assert _gap(ref, lo) < -1e-6 and abs(_gap(ref, hi)) < 1e-9
    for _ in range(60):                         # bisection on the reference
        mid = (lo + hi) / 2
        if _gap(ref, mid) < -1e-11:
            lo = mid
        else:
            hi = mid
    spec = sc.solve(sc.hubbard(sc.ring(4)), electrons=3)
    pts = sc.transitions(spec, n_electrons=3, coupling="U", interval=(0, 100), fixed={"t": 1})
    assert len(pts) == 1
    point = pts[0]
    assert abs(float(point.value) - hi) < 1e-6
    assert point.below.quantum_numbers["S"] == sympy.Rational(1, 2)
    assert point.above.quantum_numbers["S"] == sympy.Rational(3, 2)
    # the exact value is algebraic: check it is a root of a rational polynomial exactly
    x = sympy.Symbol("x")
    assert sympy.Poly(sympy.minimal_polynomial(point.value, x), x).degree() <= 4


def test_six_site_ring_one_hole_is_not_fully_polarized_at_large_u():
    """Nagaoka's ferromagnetism fails on rings longer than 4 sites (references.md, from memory)."""
    ref = FockReference(6, [(i, (i + 1) % 6, "t") for i in range(6)])
    u = 200.0
    low = ref.eigenvalues({"t": 1.0, "U": u}, n_up=3, n_dn=2)[0]
    pol = ref.eigenvalues({"t": 1.0, "U": u}, n_up=5, n_dn=0)[0]
    assert low < pol - 1e-6
    spec = sc.solve(sc.hubbard(sc.ring(6)), electrons=5)
    ground = min(spec.levels, key=lambda l: l.numeric({"t": 1, "U": 200}, 30))
    assert ground.quantum_numbers["S"] < sympy.Rational(5, 2)
    assert abs(float(ground.numeric({"t": 1, "U": 200}, 30)) - low) < 1e-9
