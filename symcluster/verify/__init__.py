"""Every check a result passes before it is returned (docs/verification.md), a module per tier.

``plain`` rebuilds each unreduced sector matrix from the model's terms by a plain
Jordan-Wigner route that shares no code with the block builder; ``forms`` holds the exact
integer forms of level polynomials and their Vieta power sums; ``modular`` the exact
characteristic-polynomial identities modulo random primes (blocks and sectors); ``sectors``
the sector traces, certified small-sector eigenvalues and float64 matrices; ``lattice_labels``
the irrep traces of each sector; ``large`` the power traces and Lanczos of sectors beyond dense
float64 reach; ``labels`` the N and Sz labels of small blocks against their states;
``failure`` the one way a check fails; ``core`` draws the points and runs the tiers
(``verify_blocks``, ``verify_spectrum``) into the verification report.
"""
