"""Total spin and pseudospin ladder operators on bit-mask states (fermion signs included).

All functions work on plain ``(up, dn)`` bit-mask pairs over spatial modes in the
ordering of :mod:`symcluster.hilbert.fock`; ``n_modes`` is the number of spatial modes
(sites times orbitals).  Coefficients are Python ints.
"""

__all__ = ["apply_s_plus", "apply_s_minus", "apply_eta_plus", "apply_eta_minus", "per_state_memo"]


def apply_s_plus(n_modes, up, dn):
    """S+ = sum_i c+_{i up} c_{i dn}; returns list of (int, (up', dn'))."""
    out = []
    odd = up.bit_count() & 1
    m = dn & ~up & ((1 << n_modes) - 1)
    while m:
        bit = m & -m                    # site i, increasing
        m ^= bit
        # (-1)**n_up * parity_below(dn, i) * parity_below(up, i)
        sign = -1 if (odd + ((up ^ dn) & (bit - 1)).bit_count()) & 1 else 1
        out.append((sign, (up | bit, dn ^ bit)))
    return out


def apply_s_minus(n_modes, up, dn):
    """S- = sum_i c+_{i dn} c_{i up}; returns list of (int, (up', dn'))."""
    out = []
    odd = (up.bit_count() - 1) & 1
    m = up & ~dn & ((1 << n_modes) - 1)
    while m:
        bit = m & -m
        m ^= bit
        # c_{i up} first (passes up orbitals below i), then c+_{i dn}
        # (passes the remaining n_up - 1 up orbitals and dn orbitals below i)
        sign = -1 if (odd + ((up ^ dn) & (bit - 1)).bit_count()) & 1 else 1
        out.append((sign, (up ^ bit, dn | bit)))
    return out


def apply_eta_plus(signs, up, dn):
    """eta+ = sum_i eps_i c+_{i up} c+_{i dn}; ``signs`` holds eps_i = +-1 per site."""
    out = []
    odd = up.bit_count() & 1
    m = ~(up | dn) & ((1 << len(signs)) - 1)
    while m:
        bit = m & -m
        m ^= bit
        sign = -1 if (odd + ((up ^ dn) & (bit - 1)).bit_count()) & 1 else 1
        out.append((signs[bit.bit_length() - 1] * sign, (up | bit, dn | bit)))
    return out


def apply_eta_minus(signs, up, dn):
    """eta- = (eta+)^dagger = sum_i eps_i c_{i dn} c_{i up}."""
    out = []
    odd = (up.bit_count() - 1) & 1
    m = up & dn & ((1 << len(signs)) - 1)
    while m:
        bit = m & -m
        m ^= bit
        sign = -1 if (odd + ((up ^ dn) & (bit - 1)).bit_count()) & 1 else 1
        out.append((signs[bit.bit_length() - 1] * sign, (up ^ bit, dn ^ bit)))
    return out


class _StateMemo(dict):
    """state -> op(state), computed on first access."""

    def __init__(self, op):
        super().__init__()
        self._op = op

    def __missing__(self, state):
        out = self[state] = self._op(state)
        return out


def per_state_memo(op):
    """``op`` (a function of one state) evaluated at most once per state.

    For use within one solve; the results are shared between calls.
    """
    return _StateMemo(op).__getitem__
