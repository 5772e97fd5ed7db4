"""Every check a result passes before it is returned (docs/verification.md).

``plain`` rebuilds each unreduced sector matrix from the model's terms by a plain
Jordan-Wigner route that shares no code with the block builder; ``large`` checks sectors
beyond dense float64 reach (exact power traces, Lanczos); ``labels`` checks the N and Sz
labels of small blocks against their states; ``core`` runs the tiers (block characteristic
polynomials, roots, sector eigenvalues and characteristic polynomials, sum rules, lattice
labels, state counts) and fills the verification report.
"""
