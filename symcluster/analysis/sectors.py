"""Which electron numbers a spectrum holds, and refusing what needs the others.

A spectrum solved with ``electrons=[...]`` holds only those sectors.  Every
quantity that sums or compares over electron numbers (the grand-canonical
ensemble, a ground state over all N, the charge gap's N ± 1, the pair binding's
N − 1 and N − 2) calls :func:`require_electrons` first, so that it is refused
with the missing electron numbers named instead of being computed from the
sectors that happen to be there.

A sector with N electrons on L sites holds C(2L, N) states (docs/conventions.md);
it counts as held when the degeneracies of its levels add up to that.  The number
of sites is read from the spectrum's model (``model.cluster.n_sites``).  A
hand-built spectrum whose model gives no number of sites cannot be checked and is
taken as complete.
"""


from symcluster.errors import ModelError

__all__ = ["n_sites_of", "electron_range", "held_electrons", "require_electrons",
           "format_numbers"]


def n_sites_of(spec):
    """Number of sites of the spectrum's model, or None if the model does not say."""
    model = getattr(spec, "model", None)
    cl = getattr(model, "cluster", None)
    n = getattr(cl, "n_sites", None)
    if n is None:
        n = getattr(model, "n_sites", None)
    return n if isinstance(n, int) and not isinstance(n, bool) else None


def _space_of(spec):
    """The model's LocalSpace (spin-1/2 fermions on L sites for a model without one), or None."""
    space = getattr(getattr(spec, "model", None), "space", None)
    if space is not None:
        return space
    n = n_sites_of(spec)
    if n is None:
        return None
    from symcluster.hilbert.space import LocalSpace
    return LocalSpace("electrons", n)


def _particles(level, space):
    """A level's particle number: its N label, or the fixed N of a spin model."""
    n = level.quantum_numbers.get("N")
    if n is None and space is not None and not space.has_charge:
        return space.n_modes
    return n


def electron_range(spec):
    """Every possible electron number (``range(0, 2L + 1)`` for spin-1/2 fermions), or None
    if the model does not say."""
    space = _space_of(spec)
    return None if space is None else space.particle_numbers()


def held_electrons(spec):
    """Sorted electron numbers whose sector the spectrum holds completely.

    Examples
    --------
    >>> import symcluster as sc
    >>> held_electrons(sc.solve(sc.hubbard(sc.chain(2)), electrons=[1, 2]))
    [1, 2]
    """
    space = _space_of(spec)
    counts = {}
    for lev in spec.levels:
        n = _particles(lev, space)
        counts[n] = counts.get(n, 0) + lev.degeneracy
    if space is None:
        return sorted(n for n in counts if n is not None)
    return [n for n in space.particle_numbers() if counts.get(n, 0) == space.states_with_n(n)]


def format_numbers(ns):
    """``[0, 1, 2, 5]`` -> ``"0-2, 5"`` (runs of consecutive numbers joined)."""
    ns = sorted(set(ns))
    parts, i = [], 0
    while i < len(ns):
        j = i
        while j + 1 < len(ns) and ns[j + 1] == ns[j] + 1:
            j += 1
        parts.append(str(ns[i]) if j == i else
                     f"{ns[i]}, {ns[j]}" if j == i + 1 else f"{ns[i]}-{ns[j]}")
        i = j + 1
    return ", ".join(parts)


def require_electrons(spec, needed, what, fix=None):
    """Raise unless the spectrum holds every sector in ``needed`` (None: all N).

    Parameters
    ----------
    spec : Spectrum
    needed : iterable of int, or None
        Electron numbers the quantity needs; None means every N from 0 to 2L.
    what : str
        The quantity, for the message (``"the grand-canonical ensemble"``).
    fix : str, optional
        How to get the missing sectors (default: the Python API's
        ``solve(model, electrons=...)``).

    Raises
    ------
    ModelError
        Naming the missing electron numbers and the fix.  A number outside
        0..2L is reported as impossible on the cluster.

    Examples
    --------
    >>> import symcluster as sc
    >>> spec = sc.solve(sc.hubbard(sc.chain(2)), electrons=[2])
    >>> require_electrons(spec, [1, 2, 3], "the charge gap at N=2")  # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    symcluster.errors.ModelError: the charge gap at N=2 needs ... (missing N=1, 3); solve them ...
    """
    L = n_sites_of(spec)
    space = _space_of(spec)
    held = held_electrons(spec)
    if needed is None:
        if space is None:
            return
        needed = space.particle_numbers()
        span = f"every electron number N={format_numbers(needed)}"
    else:
        needed = sorted(set(needed))
        if space is not None:
            possible = set(space.particle_numbers())
            bad = [n for n in needed if n not in possible]
            if bad:
                raise ModelError(f"{what} needs N={format_numbers(bad)}, which is impossible "
                                 f"on {L} site{'s' if L != 1 else ''} (N takes "
                                 f"{format_numbers(possible)})"
                                 f"; choose another electron number")
        span = f"the electron numbers N={format_numbers(needed)}"
    missing = [n for n in needed if n not in held]
    if not missing:
        return
    have = f"only N={format_numbers(held)}" if held else "no complete sector"
    if fix is None and getattr(spec, "sectors", None) is not None:
        from symcluster.blocks.selection import describe_selection
        fix = (f"the spectrum holds only the selected sectors {describe_selection(spec.sectors)}; "
               f"solve without sectors= (or with electrons={sorted(set(held) | set(needed))})")
    if fix is None:
        fix = (f"solve them too: solve(model, electrons={sorted(set(held) | set(needed))}), or "
               f"leave out electrons= to solve all")
    raise ModelError(f"{what} needs {span}, but the spectrum holds {have} "
                     f"(missing N={format_numbers(missing)}); {fix}")
