"""The one-hole gap of the Hubbard 8-ring from two selected sectors.

Scenario (a demo of our own): a theorist wants the energy to remove one electron from the
half-filled 8-ring, E0(N=7) - E0(N=8), exactly in t and U, and needs neither the other
fillings nor the spin multiplets above the ground states.  Lieb's theorem (PRL 62, 1201
(1989)) puts the half-filled ground state at S = 0; with one hole the ground state of the
ring has S = 1/2 (checked here by solving S = 3/2 too).  Only those sectors are built:

    sectors=[{"N": 8, "S": 0}, {"N": 7, "S": "1/2"}, {"N": 7, "S": "3/2"}]

The spectrum records its selection (spec.sectors); analyses that need a whole electron
number, such as the charge gap, refuse it, so the difference is taken here by hand from
the two lowest levels.  Prints the two ground energies and the gap for a few U at t = 1.

Run:  python worked/ring_ground_sector.py       (2 minutes of CPU on 2 cores; 6 minutes on the
      loaded shared machine)
"""

import symcluster as sc

spec = sc.solve(sc.hubbard(sc.ring(8)),
                sectors=[{"N": 8, "S": 0}, {"N": 7, "S": "1/2"}, {"N": 7, "S": "3/2"}])
print("selected:", spec.sectors)
print(spec.verification.summary())
print(f"{len(spec.levels)} levels, {spec.n_states} states; "
      f"solve {spec.timings['total']:.0f} s (verification {spec.timings['verify']:.0f} s)")


def lowest(levels, point):
    return min(((lev.numeric(point, digits=20), lev) for lev in levels), key=lambda p: p[0])


for U in ("1", "4", "8"):
    point = {"t": 1, "U": U}
    e8, g8 = lowest(spec.select(N=8), point)
    e7, g7 = lowest(spec.select(N=7), point)
    print(f"U = {U}: E0(N=8) = {e8} (S = {g8.quantum_numbers['S']}), "
          f"E0(N=7) = {e7} (S = {g7.quantum_numbers['S']}, {g7.quantum_numbers['irrep']}), "
          f"removal energy E0(7) - E0(8) = {e7 - e8}")
