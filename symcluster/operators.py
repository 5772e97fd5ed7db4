"""Exact action of the model's operators on Fock states (fermion signs included).

All functions work on plain ``(up, dn)`` bit-mask pairs in the ordering of
symcluster.fock; coefficients are Python ints, grouped by coupling label
where they carry one.
"""

__all__ = ["apply_hamiltonian", "HamiltonianAction", "apply_s_plus", "apply_s_minus",
           "apply_eta_plus", "apply_eta_minus", "per_state_memo"]


def _bond_masks(hops):
    """Per hop ``(i, j, label)``: (bit i, bit j, mask of the sites strictly between, label)."""
    out = []
    for i, j, lab in hops:
        if i == j:                  # c+_i c_i is not a hop; apply_hop gives nothing for it
            continue
        lo, hi = (i, j) if i < j else (j, i)
        out.append((1 << i, 1 << j, ((1 << hi) - 1) & ~((1 << (lo + 1)) - 1), lab))
    return tuple(out)


def _add(out, state, label, c):
    """out[state][label] += c, dropping a label whose coefficient becomes 0."""
    row = out.get(state)
    if row is None:
        out[state] = {label: c}
        return
    v = row.get(label, 0) + c
    if v:
        row[label] = v
    else:
        row.pop(label, None)


def _terms_on(bonds, u_label, onsite, up, dn):
    """H|up, dn> from precomputed bond masks as a list of ``(state', label, int)``.

    The hops in the order of :func:`apply_hamiltonian`, then the diagonal: one entry
    per label (U, then the on-site labels).  Two hops on the same pair of sites give
    separate entries here; :func:`_hamiltonian_on` merges them.
    """
    out = []
    for bi, bj, between, lab in bonds:
        both = bi | bj
        xu, xd = up & both, dn & both
        # c+_b c_a moves one electron across the bond when exactly bit a is occupied;
        # the coefficient -t * sign is +1 for an odd number of electrons in between
        hd = xd == bi or xd == bj
        if xu == bi or xu == bj:
            cu = 1 if (up & between).bit_count() & 1 else -1
            if hd and xu == bj and xd == bi:        # apply_hamiltonian's order: (i->j) first
                out.append(((up, dn ^ both), lab, 1 if (dn & between).bit_count() & 1 else -1))
                hd = False
            out.append(((up ^ both, dn), lab, cu))
        if hd:
            out.append(((up, dn ^ both), lab, 1 if (dn & between).bit_count() & 1 else -1))
    d = (up & dn).bit_count() if u_label is not None else 0
    if onsite:
        diag = {u_label: d} if d else {}
        for bit, lab in onsite:
            n = (1 if up & bit else 0) + (1 if dn & bit else 0)
            if n:
                diag[lab] = diag.get(lab, 0) + n
        out.extend(((up, dn), lab, n) for lab, n in diag.items())
    elif d:
        out.append(((up, dn), u_label, d))
    return out


def _hamiltonian_on(bonds, u_label, onsite, up, dn):
    """H|up, dn> from precomputed bond masks (see apply_hamiltonian for the result)."""
    out = {}
    for state, lab, c in _terms_on(bonds, u_label, onsite, up, dn):
        _add(out, state, lab, c)
    if not all(out.values()):
        return {s: row for s, row in out.items() if row}
    return out


def apply_hamiltonian(model, up, dn):
    """H|up,dn> as {(up', dn'): {label: int coefficient}}.

    H = -sum_b t_b sum_s (c+_i c_j + c+_j c_i) + U sum n_up n_dn + sum eps_i n_i.
    """
    return _hamiltonian_on(_bond_masks(model.hops), model.u_label,
                           tuple((1 << i, lab) for i, lab in model.onsite), up, dn)


class HamiltonianAction(dict):
    """H on the basis states of one model, each state's image computed once.

    A dict from a state ``(up, dn)`` to H|state>, filled on first access
    (``h[state]``; ``h.get`` does not compute).  H|state> is a tuple of
    ``(state', label, int)``: the entries of :func:`apply_hamiltonian`,
    flattened in the same order.  Meant to live for one solve: the symmetry
    checks and the block builder ask for the same states many times.

    Parameters
    ----------
    model : Model

    Attributes
    ----------
    model : Model
    labels : tuple of str
        Every label that can occur.

    Examples
    --------
    >>> import symcluster as sc
    >>> h = HamiltonianAction(sc.hubbard(sc.chain(2)))
    >>> h[0b01, 0b01]
    (((2, 1), 't', -1), ((1, 2), 't', -1), ((1, 1), 'U', 1))
    """

    def __init__(self, model):
        super().__init__()
        self.model = model
        self._bonds = _bond_masks(model.hops)
        self._u = model.u_label
        self._onsite = tuple((1 << i, lab) for i, lab in model.onsite)
        # two hops on the same pair of sites reach the same states: merge them as
        # apply_hamiltonian does (slower path, only for hand-made models)
        pairs = {bi | bj for bi, bj, _, _ in self._bonds}
        self._merge = len(pairs) != len(self._bonds)
        labels = [lab for _, _, _, lab in self._bonds] + [lab for _, lab in self._onsite]
        if self._u is not None:
            labels.append(self._u)
        self.labels = tuple(dict.fromkeys(labels))

    def __missing__(self, state):
        out = self[state] = self._compute(*state)
        return out

    def image(self, up, dn):
        """H|up, dn> as ``self[up, dn]`` gives it, computed without being stored (for
        callers that visit each state once, such as the verification's sector matrices)."""
        hit = self.get((up, dn))
        return hit if hit is not None else self._compute(up, dn)

    def _compute(self, up, dn):
        if self._merge:
            return tuple((s2, lab, a)
                         for s2, row in _hamiltonian_on(self._bonds, self._u, self._onsite,
                                                        up, dn).items()
                         for lab, a in row.items())
        return tuple(_terms_on(self._bonds, self._u, self._onsite, up, dn))


def apply_s_plus(n_sites, up, dn):
    """S+ = sum_i c+_{i up} c_{i dn}; returns list of (int, (up', dn'))."""
    out = []
    odd = up.bit_count() & 1
    m = dn & ~up & ((1 << n_sites) - 1)
    while m:
        bit = m & -m                    # site i, increasing
        m ^= bit
        # (-1)**n_up * parity_below(dn, i) * parity_below(up, i)
        sign = -1 if (odd + ((up ^ dn) & (bit - 1)).bit_count()) & 1 else 1
        out.append((sign, (up | bit, dn ^ bit)))
    return out


def apply_s_minus(n_sites, up, dn):
    """S- = sum_i c+_{i dn} c_{i up}; returns list of (int, (up', dn'))."""
    out = []
    odd = (up.bit_count() - 1) & 1
    m = up & ~dn & ((1 << n_sites) - 1)
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
