"""Quantum-number labels of levels against the states they came from.

A level solved from a block of dimension <= 4 carries the block and its basis vectors
(``Level.source``): sums of occupation states ``(up, dn)``.  Their particle numbers fix
the level's N and S^z; with spin SU(2) the block holds the multiplet's highest weight,
S^z = S.  A label that contradicts them is wrong, even where the spectrum cannot tell:
with spin SU(2) present but not used (``solve(model, spin=False)``), the sectors S^z and
-S^z have equal spectra, so the energies alone never reveal a flipped sign of S^z.
"""

from fractions import Fraction

from symcluster.errors import VerificationError

__all__ = ["check_state_labels"]


def _ones(mask):
    """Number of occupied modes in a mask (written out: occupied bits one by one)."""
    count = 0
    while mask:
        count += mask & 1
        mask >>= 1
    return count


def check_state_labels(levels, n_fixed=None):
    """Fail unless every level with basis states has the N and S^z of those states.

    Parameters
    ----------
    levels : list of Level
        Levels whose ``source`` is ``(block, vectors)`` are checked; the others are
        skipped.
    n_fixed : int, optional
        The particle number of a model without an N label (spins: the number of sites).

    Returns
    -------
    int
        The number of levels checked.

    Raises
    ------
    VerificationError
        If a basis state has another particle number or S^z than the level's labels
        (``"Sz"``, or ``"S"`` for the highest weight).

    Examples
    --------
    >>> import symcluster as sc
    >>> spec = sc.solve(sc.hubbard(sc.chain(2)), spin=False, seed=1)
    >>> check_state_labels(spec.levels) > 0
    True
    """
    checked = 0
    for lev in levels:
        if lev.source is None:
            continue
        qn = lev.quantum_numbers
        n = qn.get("N", n_fixed)
        spin = qn.get("Sz", qn.get("S"))
        want_sz = None if spin is None else Fraction(int(spin.p), int(spin.q)) \
            if hasattr(spin, "p") else Fraction(spin)
        for vec in lev.source[1]:
            for up, dn in vec:
                n_up, n_dn = _ones(up), _ones(dn)
                if n is not None and n_up + n_dn != n:
                    raise VerificationError(
                        f"verification failed: level {lev.energy} is labelled N={n}, but its "
                        f"states hold {n_up + n_dn} particles; the result was discarded")
                if want_sz is not None and Fraction(n_up - n_dn, 2) != want_sz:
                    what = "Sz" if "Sz" in qn else "S (its states: the highest weight Sz = S)"
                    raise VerificationError(
                        f"verification failed: level {lev.energy} (N={n}) is labelled "
                        f"{what} = {spin}, but its states have Sz = {Fraction(n_up - n_dn, 2)}; "
                        "the result was discarded")
        checked += 1
    return checked
