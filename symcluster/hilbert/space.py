"""Local spaces: which bit-mask states ``(up, dn)`` a model lives on.

Every model's states are pairs of bit masks over its spatial modes (site * n_orbitals
+ orbital): bit ``m`` of ``up`` set when mode ``m`` holds a spin-up fermion, likewise
``dn``.  Three local spaces share this representation:

* ``"electrons"``: spin-1/2 fermions, every occupation of every mode (4 states per mode);
* ``"electrons"`` with ``projected=True``: no mode doubly occupied (3 states per mode,
  the t-J model's space);
* ``"spins"``: spin-1/2 on each site, written as exactly one fermion per site
  (``dn`` is the complement of ``up``; 2 states per site).  Spin operators are fermion
  bilinears on one site, so they act on this space exactly as on spins.

Sectors are labelled by ``(N_up, N_dn)``; a spin space has ``N_up + N_dn = L``.
"""

from dataclasses import dataclass
from math import comb

from symcluster.errors import ModelError
from symcluster.hilbert.fock import states_with

__all__ = ["LocalSpace"]

KINDS = ("electrons", "spins")


@dataclass(frozen=True)
class LocalSpace:
    """The states of a model: spin-1/2 fermions (optionally projected) or spin-1/2 spins.

    Parameters
    ----------
    kind : {"electrons", "spins"}
    n_sites : int
    n_orbitals : int
        Orbitals per site (electrons only).
    projected : bool
        Electrons only: exclude doubly occupied modes (t-J space).

    Examples
    --------
    >>> LocalSpace("spins", 4).dimension
    16
    >>> LocalSpace("electrons", 2, n_orbitals=2).dimension
    256
    """

    kind: str
    n_sites: int
    n_orbitals: int = 1
    projected: bool = False

    def __post_init__(self):
        if self.kind not in KINDS:
            raise ModelError(f"local space {self.kind!r} is unknown; use 'electrons' or 'spins'")
        for what, v in (("n_sites", self.n_sites), ("n_orbitals", self.n_orbitals)):
            if isinstance(v, bool) or not isinstance(v, int) or v < 1:
                raise ModelError(f"{what}={v!r} must be a positive integer")
        if self.kind == "spins" and (self.n_orbitals != 1 or self.projected):
            raise ModelError("a spin space has one spin-1/2 per site: no orbitals, no projection")

    @property
    def n_modes(self):
        """Number of spatial modes (bits per spin word)."""
        return self.n_sites * self.n_orbitals

    @property
    def has_charge(self):
        """True when the electron number N is a quantum number (False for spins)."""
        return self.kind == "electrons"

    @property
    def max_particles(self):
        """Largest N_up + N_dn of any state."""
        if self.kind == "spins" or self.projected:
            return self.n_modes
        return 2 * self.n_modes

    def mode(self, site, orbital=0):
        """The spatial mode index of (site, orbital).

        Examples
        --------
        >>> LocalSpace("electrons", 3, n_orbitals=2).mode(1, 1)
        3
        """
        if not 0 <= site < self.n_sites or not 0 <= orbital < self.n_orbitals:
            raise ModelError(f"(site {site}, orbital {orbital}) is outside {self.n_sites} sites "
                             f"x {self.n_orbitals} orbitals; fix the index")
        return site * self.n_orbitals + orbital

    def allows(self, up, dn):
        """True if ``(up, dn)`` is a state of this space."""
        if self.kind == "spins":
            return up & dn == 0 and (up | dn) == (1 << self.n_modes) - 1
        if self.projected:
            return up & dn == 0
        return True

    def sector_dim(self, n_up, n_dn):
        """Number of states with ``n_up`` up and ``n_dn`` down fermions.

        Examples
        --------
        >>> LocalSpace("electrons", 4, projected=True).sector_dim(2, 1)
        12
        """
        m = self.n_modes
        if not (0 <= n_up <= m and 0 <= n_dn <= m):
            return 0
        if self.kind == "spins":
            return comb(m, n_up) if n_up + n_dn == m else 0
        if self.projected:
            return comb(m, n_up) * comb(m - n_up, n_dn) if n_up + n_dn <= m else 0
        return comb(m, n_up) * comb(m, n_dn)

    def sector_states(self, n_up, n_dn):
        """The states of sector (n_up, n_dn) as ``(up, dn)`` pairs, in a fixed order.

        Examples
        --------
        >>> LocalSpace("spins", 2).sector_states(1, 1)
        [(1, 2), (2, 1)]
        """
        m = self.n_modes
        if self.sector_dim(n_up, n_dn) == 0:
            return []
        ups = states_with(m, n_up)
        if self.kind == "spins":
            full = (1 << m) - 1
            return [(u, full ^ u) for u in ups]
        dns = states_with(m, n_dn)
        if self.projected:
            return [(u, d) for u in ups for d in dns if u & d == 0]
        return [(u, d) for u in ups for d in dns]

    def sectors(self, electrons=None):
        """All (n_up, n_dn) with states, for the wanted particle numbers (None: all).

        Examples
        --------
        >>> LocalSpace("spins", 2).sectors()
        [(0, 2), (1, 1), (2, 0)]
        """
        out = []
        for n in range(self.max_particles + 1):
            if electrons is not None and n not in electrons:
                continue
            for n_up in range(0, n + 1):
                if self.sector_dim(n_up, n - n_up):
                    out.append((n_up, n - n_up))
        return out

    def particle_numbers(self):
        """The particle numbers N that occur (a spin space: only N = L).

        Examples
        --------
        >>> LocalSpace("spins", 3).particle_numbers()
        [3]
        """
        if self.kind == "spins":
            return [self.n_modes]
        return list(range(self.max_particles + 1))

    def states_with_n(self, n):
        """Number of states with n_up + n_dn = n."""
        return sum(self.sector_dim(u, n - u) for u in range(n + 1))

    @property
    def dimension(self):
        """Number of states of the whole space."""
        return sum(self.states_with_n(n) for n in self.particle_numbers())

    def describe(self):
        """A short text, e.g. ``spin-1/2 fermions, 2 orbitals per site``."""
        if self.kind == "spins":
            return "spin-1/2 on each site"
        text = "spin-1/2 fermions"
        if self.n_orbitals > 1:
            text += f", {self.n_orbitals} orbitals per site"
        if self.projected:
            text += ", no double occupancy"
        return text
