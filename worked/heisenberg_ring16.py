"""The whole spectrum of the Heisenberg ring of 16 spins, exact and verified.

Scenario (a demo of our own): a theorist testing a DMRG or QMC code on the periodic
spin-1/2 Heisenberg chain wants reference values of the 16-site ring beyond the ground
state: the lowest level of every total spin S (the spin gap, the ferromagnetic end), each
with its momentum, to 30 digits.  All 65,536 states are
solved; the large sectors go through momentum blocks reduced modulo primes
(docs/performance.md, "Spin rings modulo primes"), and every level is checked against
the plain sector matrices before anything is printed.

Prints the lowest level of each S with its momentum label at J = 1, and the spin gap
E0(S = 1) - E0(S = 0).

Run:  python worked/heisenberg_ring16.py        (about a minute on 2 cores)
"""

import mpmath

import symcluster as sc

spec = sc.solve(sc.heisenberg(sc.ring(16)))
print(spec.verification.summary())
print(f"{len(spec.levels)} levels, {spec.n_states} states; solve {spec.timings['total']:.0f} s "
      f"(exact algebra {spec.timings['algebra']:.0f} s, verification "
      f"{spec.timings['verify']:.0f} s)")

point = spec.point({"J": 1})
lowest = {}
for lev in spec.levels:
    s = lev.quantum_numbers["S"]
    value = lev.numeric(point, digits=30)
    if s not in lowest or value < lowest[s][0]:
        lowest[s] = (value, lev)
for s in sorted(lowest):
    value, lev = lowest[s]
    print(f"S = {s}:  E = {mpmath.nstr(value, 30)}   ({lev.quantum_numbers['irrep']}, "
          f"degeneracy {lev.degeneracy})")
print("spin gap E0(S=1) - E0(S=0) =", mpmath.nstr(lowest[1][0] - lowest[0][0], 30))
# momentum labels: docs/conventions.md ("Spin models and plain spin codes"): on an even ring
# a code without fermion signs calls k = pi what is labelled k = 0 here, and vice versa
