"""Cost estimates, the memory guard and terminal progress for long runs."""

import sys
import time
from math import comb, factorial

from symcluster.errors import TooLargeError
from symcluster.pipeline.memory import memory_reading
from symcluster.symmetry.groups import _MAX_ORDER as MAX_GROUP_ORDER
from symcluster.tiers import FLOAT_DIM, SELECTED_DENSE_DIM

__all__ = ["available_memory", "block_dimensions", "estimate_cost", "optimistic_cost",
           "check_early", "check_size", "Progress"]


def available_memory():
    """Bytes of memory available to this process, or None if unknown.

    Linux: ``MemAvailable`` of ``/proc/meminfo``; other systems: see
    :func:`symcluster.pipeline.memory.memory_reading`, which also names the source.
    When nothing can be read the guard refuses nothing (there is no figure to compare).

    Examples
    --------
    >>> have = available_memory()
    >>> have is None or have > 0
    True
    """
    return memory_reading()[0]


# Memory model, fitted to the peaks measured by tests/bench/run_bench.py on 6- and
# 8-site clusters with one and two free coupling ratios (docs/performance.md lists
# estimate and measurement side by side):
_FIXED = 30 * 2 ** 20       # caches and first-use imports of a solve
_PER_STATE = 600            # sparse integer vectors of the solved sectors' states
_DENSE_COPIES = 2.5         # float64 sector matrix plus the eigensolver's workspace
_PER_TERM_BIT = 8           # stored level polynomials: per term, per unit of degree
_PER_WORKER = 100 * 2 ** 20  # a pool process: interpreter and imports (77 MB) plus its block
# a sector selection's dense check keeps the matrix, its eigenvectors, their projection and
# the eigensolver's workspace (counted, not fitted: no selection was measured for the fit)
_SELECTED_DENSE_COPIES = 4.5


def _as_space(space):
    """A LocalSpace from a LocalSpace or a number of sites (spin-1/2 fermions)."""
    if isinstance(space, int):
        from symcluster.hilbert.space import LocalSpace
        return LocalSpace("electrons", space)
    return space


def _sector_dim(space, n_up, n_dn):
    return _as_space(space).sector_dim(n_up, n_dn)


def block_dimensions(n_sites, sectors, plan=None, keep=None):
    """Expected block dimensions of a solve, from state counting alone (no blocks built).

    In a sector (N_up, N_dn) of dimension D, spin SU(2) keeps the states with S = Sz
    (D(N_up, N_dn) - D(N_up + 1, N_dn - 1)), eta-pseudospin then keeps the lowest
    weights (minus the same count one pair lower), and a lattice irrep Gamma of
    dimension d in a group of order g takes about D d / g of what is left (exact for
    the regular representation); a Galois orbit of irreps shares one block.

    Parameters
    ----------
    n_sites : int
    sectors : list of (int, int)
    plan : SymmetryPlan or None
    keep : callable, optional
        ``keep((N_up, N_dn), irrep)`` (irrep None without a lattice group): the blocks a
        sector selection builds; the others are not counted.

    Returns
    -------
    list of float
        One entry per expected block (approximate dimensions).

    Examples
    --------
    >>> block_dimensions(4, [(2, 2)])                  # no symmetry: the whole sector
    [36.0]
    >>> block_dimensions(4, [(2, 2)], keep=lambda sector, irrep: False)
    []
    """
    n_sites = _as_space(n_sites)
    spin = bool(plan is not None and plan.spin)
    eta = bool(plan is not None and plan.eta)
    lattice = plan.lattice if plan is not None else None

    def reduced(u, d):
        return _spin_highest(n_sites, u, d) if spin else _sector_dim(n_sites, u, d)

    if lattice is not None:
        order = len(lattice.group.elements)
        shares = [(irr, irr.dim * (irr.orbit_size or 1) / order) for irr in lattice.irreps]
    else:
        shares = [(None, 1.0)]
    out = []
    for u, d in sectors:
        dim = reduced(u, d) - (reduced(u - 1, d - 1) if eta else 0)
        if dim > 0:
            out.extend(max(1.0, dim * share) for irr, share in shares
                       if keep is None or keep((u, d), irr))
    return out


def _spin_highest(n_sites, n_up, n_dn):
    """States with S = Sz in sector (n_up, n_dn): D(n_up, n_dn) - D(n_up + 1, n_dn - 1)."""
    return _sector_dim(n_sites, n_up, n_dn) - _sector_dim(n_sites, n_up + 1, n_dn - 1)


def estimate_cost(n_sites, sectors, plan=None, n_free=1, workers=0, keep=None, modular=()):
    """Rough peak memory (bytes) of a solve over ``sectors`` [(N_up, N_dn), ...].

    The terms, fitted to measured peaks (docs/performance.md): a fixed part; the
    states of the solved sectors held as sparse integer vectors (and the states with at
    most two electrons on which the symmetry detection works); the dense float64
    matrix of the largest sector that is verified in float64; and the exact level
    polynomials, which dominate from 8 sites on.  A block of dimension m with
    ``n_free`` free coupling ratios (couplings minus one, by homogeneity) gives
    polynomials with about m^(n_free+1)/(n_free+1)! terms whose integers grow
    linearly with m; two or more free ratios cost about three times more per term.
    Each process of a local process pool adds its own interpreter and block.

    Parameters
    ----------
    n_sites : int
    sectors : list of (int, int)
    plan : SymmetryPlan or None
    n_free : int
        Number of couplings minus one.
    workers : int
        Number of pool processes on this machine (each holds its own interpreter).
    keep : callable, optional
        The blocks a sector selection builds (see :func:`block_dimensions`); a sector
        none of whose blocks is kept is not counted at all.
    modular : collection of (int, int)
        Sectors of ``sectors`` reduced modulo primes (:mod:`symcluster.blocks.bloch`):
        their states count, their polynomials do not (a lifted polynomial of degree m
        takes about m^2 bits), and each worker holds one dense S+ matrix modulo a prime
        of about (D / L)^2 words for the largest such sector (D states, L sites).

    Returns
    -------
    int
    """
    n_sites = _as_space(n_sites)
    if keep is not None:
        sectors = [s for s in sectors if block_dimensions(n_sites, [s], plan, keep)]
    dims = [_sector_dim(n_sites, u, d) for u, d in sectors]
    k = max(1, n_free)
    per_term = _PER_TERM_BIT * (1 if k == 1 else 3)
    exact = [s for s in sectors if s not in modular]
    polys = sum(m ** (k + 2) for m in block_dimensions(n_sites, exact, plan, keep)) \
        / factorial(k + 1)
    if modular:
        top = max(_sector_dim(n_sites, u, d) for u, d in sectors if (u, d) in modular)
        polys += sum(m ** 2 for m in block_dimensions(n_sites, [s for s in sectors
                                                               if s in modular], plan, keep))
        polys += 64 * (top / n_sites.n_modes) ** 2 * max(1, workers) / per_term
    # larger: no dense float64 check
    checked = max((d for d in dims if d <= (FLOAT_DIM if keep is None else SELECTED_DENSE_DIM)),
                  default=0)
    dense = (_DENSE_COPIES if keep is None else _SELECTED_DENSE_COPIES) * 8 * checked ** 2
    return int(_FIXED + _PER_STATE * (sum(dims) + _detection_states(n_sites)) + dense
               + per_term * polys + _PER_WORKER * max(0, workers))


def _detection_states(space):
    """States on which the spin and eta commutators are checked exactly (<= 2 electrons)."""
    return sum(comb(2 * _as_space(space).n_modes, n) for n in range(3))


def optimistic_cost(n_sites, electrons=None, n_free=1, max_order=MAX_GROUP_ORDER, stop_above=None):
    """A lower bound of :func:`estimate_cost`, known before any symmetry is detected.

    It assumes every reduction succeeds: spin SU(2) and eta-pseudospin SU(2) both hold
    (highest weights of N_up >= N_dn sectors) and the lattice group has the largest
    order the detection accepts (`max_order`), so that each sector's largest block is
    at least its reduced dimension / `max_order` (the block of an irrep of dimension d
    takes about D d / |G| states).  Only the sectors of N* = min(N, 2L - N) for each
    wanted N are counted: a plan with eta solves N* (and lower ones), a plan without it
    solves N itself, whose sectors have the same sizes (C(L, a) C(L, b) is unchanged by
    a -> L - a, b -> L - b).  Every term of the real estimate is at least as large, so
    a run refused here would be refused after the detection too.  The exact detection
    itself (commutators on every state with at most two electrons) is counted like the
    states of a sector.  The sum stops early, still a lower bound, once it passes
    `stop_above` (huge clusters have millions of sectors).
    """
    space = _as_space(n_sites)
    L = space.n_modes
    top = space.max_particles
    wanted = set(space.particle_numbers()) if electrons is None else set(electrons)
    k = max(1, n_free)
    per_term = _PER_TERM_BIT * (1 if k == 1 else 3)

    need = _FIXED + _PER_STATE * _detection_states(space)
    mirror = space.kind == "electrons" and not space.projected
    for n in sorted({min(m, 2 * L - m) if mirror else m for m in wanted if 0 <= m <= top}):
        if stop_above is not None and need > stop_above:
            break
        for u in range((n + 1) // 2, min(n, L) + 1):
            d = n - u
            need += _PER_STATE * _sector_dim(space, u, d)
            lowest = _spin_highest(space, u, d) - (_spin_highest(space, u - 1, d - 1) if mirror
                                                   else 0)
            if lowest > 0:          # block_dimensions counts no block for an empty sector
                block = max(1, lowest // max_order)
                need += per_term * block ** (k + 2) // factorial(k + 1)
    return int(need)


def check_early(n_sites, electrons=None, n_free=1, force=False, max_order=MAX_GROUP_ORDER):
    """Refuse, before any symmetry is detected, a run that cannot fit even if every
    reduction succeeds (:func:`optimistic_cost`); the message is that of :func:`check_size`."""
    have = available_memory()
    need = optimistic_cost(n_sites, electrons, n_free, max_order,
                           stop_above=None if have is None else have)
    if have is not None and need > 0.8 * have and not force:
        raise TooLargeError(
            f"a cluster of {_as_space(n_sites).n_sites} sites needs at least an estimated {need / 2 ** 30:.3g} GiB "
            f"even if every symmetry reduction succeeds, but only {have / 2 ** 30:.1f} GiB is "
            f"available; solve fewer electron numbers (electrons=...; command line: "
            f"--electrons) or pass force=True (command line: --force) to try anyway")
    return need


def check_size(n_sites, sectors, plan=None, n_free=1, force=False, workers=0, keep=None,
               modular=()):
    """Raise TooLargeError if a run would clearly exceed the available memory (``keep``:
    the blocks of a sector selection, see :func:`block_dimensions`; ``modular``: see
    :func:`estimate_cost`)."""
    need = estimate_cost(n_sites, sectors, plan, n_free, workers, keep, modular)
    have = available_memory()
    if have is not None and need > 0.8 * have and not force:
        largest = max(block_dimensions(n_sites, sectors, plan, keep), default=0)
        raise TooLargeError(
            f"this run needs an estimated {need / 2 ** 30:.1f} GiB (blocks of up to about "
            f"{largest:.0f} states) but only {have / 2 ** 30:.1f} GiB is available; solve "
            f"fewer electron numbers (electrons=...; command line: --electrons) or pass "
            f"force=True (command line: --force) to try anyway")
    return need


class Progress:
    """Progress of a long run: one line on a terminal, rewritten in place.

    A run goes through phases (symmetry detection, blocks, exact algebra, the
    verification's steps, ...); the line names the current one with its count and the
    time since the run started::

        symcluster: exact algebra: 12/40 blocks (35 s)

    It only reports: the work is the same whether it shows or not.

    Parameters
    ----------
    enabled : bool or None
        None (default): show on a terminal (``stream.isatty()``), once the run has
        lasted ``after`` seconds (a short run stays quiet); True: show from the start,
        terminal or not; False: never.
    stream : file, optional
        Where to write (default: ``sys.stderr`` at the time of the call).
    after : float
        Seconds of quiet before the line first appears (``enabled=None`` only).

    Examples
    --------
    >>> import io
    >>> out = io.StringIO()
    >>> p = Progress(enabled=True, stream=out)
    >>> p.phase("exact algebra", 2, "blocks")
    >>> p.step(); p.step()
    >>> p.close()
    >>> "exact algebra: 2/2 blocks" in out.getvalue()
    True
    """

    #: at most this many rewrites of the line per second (a phase change always shows)
    RATE = 10

    def __init__(self, enabled=None, stream=None, after=3.0):
        self.stream = sys.stderr if stream is None else stream
        if enabled is None:
            isatty = getattr(self.stream, "isatty", None)
            try:
                enabled = bool(isatty()) if isatty is not None else False
            except (OSError, ValueError):
                enabled = False
            self.after = after
        else:
            self.after = 0.0
        self.enabled = bool(enabled)
        self.start = time.perf_counter()
        self.name, self.total, self.unit = "", 0, ""
        self.done = 0
        self.shown = False
        self._last = None           # time of the last write
        self._pending = False       # a step not shown yet (rate limit)
        self._width = 0             # length of the line on screen

    def phase(self, name, total=0, unit="", done=0):
        """Start the phase ``name`` of ``total`` steps (0: no count) counted in ``unit``,
        ``done`` of them done already."""
        self.name, self.total, self.unit = name, int(total), unit
        self.done = done
        self._show(force=True)

    def step(self, n=1):
        """``n`` more steps of the current phase are done."""
        self.done += n
        self._show(force=self.done >= self.total)

    def tick(self):
        """Nothing new to count: refresh the time shown (at most :attr:`RATE` times a second)."""
        self._show()

    def _show(self, force=False):
        if not self.enabled:
            return
        now = time.perf_counter()
        elapsed = now - self.start
        if elapsed < self.after:
            return
        if not force and self._last is not None and now - self._last < 1.0 / self.RATE:
            self._pending = True            # shown by the next write, or on close
            return
        self._pending = False
        self._last = now
        count = f": {self.done}/{self.total}" if self.total else ""
        unit = f" {self.unit}" if self.total and self.unit else ""
        text = f"symcluster: {self.name}{count}{unit} ({elapsed:.0f} s)"
        pad = " " * max(0, self._width - len(text))     # wipe a longer previous line
        self._width = len(text)
        try:
            self.stream.write("\r" + text + pad)
            self.stream.flush()
        except (OSError, ValueError):       # a closed or broken stream: stop reporting
            self.enabled = False
            return
        self.shown = True

    def close(self):
        """End the line (if anything was shown), showing the last count first."""
        if self._pending:
            self._show(force=True)
        if self.enabled and self.shown:
            try:
                self.stream.write("\n")
                self.stream.flush()
            except (OSError, ValueError):
                pass
        self.shown = False


# ----------------------------------------------------------------------------
# executors
# ----------------------------------------------------------------------------

