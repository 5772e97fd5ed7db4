"""Static and thermal equal-time correlations, certified at an exact point.

For an ensemble (one level's states, the T = 0 ground states of N, canonical or grand
canonical; :mod:`symcluster.response.ensemble`) and the certified eigenvectors of
:mod:`symcluster.response.eigen`:

* ``density[i][j]`` = <n_i n_j>, n_i = n_{i up} + n_{i dn} (i = j included);
* ``spin[i][j]`` = <S_i . S_j>, ``sz[i][j]`` = <S^z_i S^z_j>;
* ``double_occupancy[i]`` = <n_{i up} n_{i dn}>;
* ``pair[i][j]`` = <Delta_i^+ Delta_j>, Delta_i = c_{i dn} c_{i up} (on-site singlet pair);
* on rings, structure factors S(q) = (1/L) sum_ij cos(q (i - j)) <S_i . S_j> and
  N(q) likewise from <n_i n_j>, q = 2 pi m / L;
* uniform static susceptibilities: at T > 0 chi_s = beta (<(S^z_tot)^2> - <S^z_tot>^2)
  (the response of <S^z_tot> to a field h in -h S^z_tot) and, grand canonical, the
  compressibility beta (<N^2> - <N>^2); at T = 0 their T -> 0 limits, exactly 0 where the
  conserved S^z_tot (N) does not vary among the ground states, refused (ModelError) where
  it does and the limit diverges (Curie law).

Indices are spatial modes (site * n_orbitals + orbital).  Values are given at a point
(mpmath numbers, ``digits`` certified); exact expressions in the couplings are not
produced here.  Error bound: an operator of norm at most 4 measured with a basis whose
projector is within eps of the true one errs by at most 2 d eps 4 per eigenspace of
dimension d, summed with the probabilities (``certificate["error"]``).
"""

from dataclasses import dataclass
from fractions import Fraction

import flint
import mpmath

from symcluster.errors import ModelError, VerificationError
from symcluster.response.eigen import PointSystem, arb_precision, sector_sign, to_arb, to_mpf
from symcluster.response.ensemble import Ensemble, Member, make_ensemble

__all__ = ["correlations", "Correlations", "level_ensemble"]


@dataclass
class Correlations:
    """Equal-time correlations of one ensemble (see the module docstring)."""

    density: list
    spin: list
    sz: list
    double_occupancy: list
    pair: list
    occupation: list
    n_total: object
    sz_total: object
    chi_data: object             # (value, None) or (None, why there is no value)
    compressibility_data: object
    digits: int
    certificate: dict
    positions: object = None

    @property
    def chi_spin(self):
        """Static uniform spin susceptibility ``d<S^z_tot>/dh`` for ``H - h S^z_tot``.

        T > 0: ``beta (<(S^z_tot)^2> - <S^z_tot>^2)``.  T = 0 ensembles give its T -> 0
        limit: exactly 0 when S^z_tot does not fluctuate among the ground states (all
        singlets, or one S^z only); when it does (a multiplet with S > 0) the limit
        diverges as Var/T (Curie law) and a :class:`ModelError` says so.

        Examples
        --------
        >>> import symcluster as sc
        >>> c = correlations(sc.solve(sc.hubbard(sc.ring(4))), {"t": 1, "U": 2}, N=4, digits=20)
        >>> c.chi_spin                       # singlet ground state: exactly 0 as T -> 0
        mpf('0.0')
        """
        value, why = self.chi_data
        if why is not None:
            raise ModelError(why)
        return value

    @property
    def compressibility(self):
        """``d<N>/d mu`` in a grand canonical ensemble: ``beta (<N^2> - <N>^2)`` at T > 0,
        its T -> 0 limit (0, or a :class:`ModelError` where it diverges) at T = 0;
        a fixed-N ensemble has none (:class:`ModelError`)."""
        value, why = self.compressibility_data
        if why is not None:
            raise ModelError(why)
        return value

    def structure_factor(self, m, kind="spin"):
        """S(q) (``kind="spin"``) or N(q) (``"density"``) at q = 2 pi m / L on a ring.

        Examples
        --------
        >>> import symcluster as sc
        >>> c = correlations(sc.solve(sc.hubbard(sc.ring(4))), {"t": 1, "U": 2}, N=4, digits=20)
        >>> mpmath.nstr(c.structure_factor(0), 10)     # singlet ground state: S(0) = S_tot^2 / L
        '0.0'
        """
        if self.positions is None:
            raise ModelError("structure factors need a ring (site i -> i+1 mod L a symmetry)")
        mat = {"spin": self.spin, "density": self.density}.get(kind)
        if mat is None:
            raise ModelError(f"kind={kind!r}: give 'spin' or 'density'")
        L = len(self.positions)
        with mpmath.workdps(self.digits + 10):
            q = 2 * mpmath.pi * m / L
            val = sum((mpmath.cos(q * (i - j)) * mat[i][j] for i in range(L) for j in range(L)),
                      mpmath.mpf(0)) / L
            return mpmath.chop(+val, tol=mpmath.mpf(10) ** (-(self.digits + 2)))

    def by_distance(self, kind="spin"):
        """``{d: average over pairs at ring distance d}`` of a correlation matrix."""
        if self.positions is None:
            raise ModelError("distances need a ring (site i -> i+1 mod L a symmetry)")
        mat = {"spin": self.spin, "density": self.density, "sz": self.sz,
               "pair": self.pair}.get(kind)
        if mat is None:
            raise ModelError(f"kind={kind!r}: give spin, density, sz or pair")
        L = len(self.positions)
        out = {}
        for i in range(L):
            for j in range(L):
                d = min((i - j) % L, (j - i) % L)
                out.setdefault(d, []).append(mat[i][j])
        return {d: sum(v) / len(v) for d, v in sorted(out.items())}


def level_ensemble(system, level):
    """The states of one level of the spectrum, equally weighted (an :class:`Ensemble`)."""
    members = []
    n = level.quantum_numbers.get("N")
    total = 0
    for sec in system.space.sectors([n] if n is not None else None):
        try:
            levels = system.sector_levels(*sec)
        except ModelError:
            continue
        if not any(lev is level for lev, _, _ in levels):
            continue
        for sp in system.spaces(*sec):
            if any(lev is level for lev in sp.levels):
                if len(sp.levels) > 1:
                    raise ModelError("this level is degenerate with another level at the point; "
                                     "its states cannot be told apart there (use a nearby point)")
                members.append(Member(sec, sp, None, sec[0] + sec[1]))
                total += sp.dim
    if not members:
        raise ModelError("the level is not one of this spectrum's levels")
    for m in members:
        m.prob = mpmath.mpf(1) / total
    return Ensemble(members, mpmath.mpf(0), None, None, None, "eigenstate", n, mpmath.mpf(0))


def correlations(spectrum, point, N=None, temperature=None, mu=None, level=None, digits=30,
                 system=None):
    """Equal-time correlations of a solved model at a point, certified.

    Parameters
    ----------
    spectrum : Spectrum
    point : dict
        ``{coupling: exact value}``.
    N, temperature, mu : optional
        The ensemble, as for :func:`symcluster.greens_function`.
    level : Level, optional
        Instead of an ensemble: the states of this level (averaged over its multiplet).
    digits : int

    Returns
    -------
    Correlations

    Examples
    --------
    >>> import symcluster as sc
    >>> spec = sc.solve(sc.hubbard(sc.chain(2)))
    >>> c = correlations(spec, {"t": 1, "U": 0}, N=2, digits=20)
    >>> mpmath.nstr(c.double_occupancy[0], 10)        # free dimer: 1/4 per site
    '0.25'
    >>> mpmath.nstr(c.spin[0][1], 10)                 # singlet-triplet mix of U = 0
    '-0.375'
    """
    if system is None:
        system = PointSystem(spectrum, point, digits)
    if level is not None:
        if N is not None or temperature is not None or mu is not None:
            raise ModelError("give either level= or an ensemble (N, temperature, mu), not both")
        ens = level_ensemble(system, level)
    else:
        ens = make_ensemble(system, N, temperature, mu)
    return _measure(system, ens)


def _apply(product, state):
    """(sign, state') of a product of ladder operators (written left to right, applied
    right to left) on a basis state, or None."""
    up, dn = state
    sign = 1
    for mode, spin, dag in reversed(product):
        bit = 1 << mode
        word = up if spin == 0 else dn
        if bool(word & bit) == dag:
            return None
        sign *= sector_sign(up, dn, mode, spin)
        if spin == 0:
            up ^= bit
        else:
            dn ^= bit
    return sign, (up, dn)


def _static_responses(ens, s2, n1, n2, szt, nt):
    """(chi_data, compressibility_data) of :class:`Correlations`."""
    if ens.beta is not None:
        b = mpmath.mpf(ens.beta.numerator) / ens.beta.denominator
        chi = (b * (to_mpf(s2) / 4 - szt ** 2), None)
        comp = (b * (to_mpf(n2) - nt ** 2), None) if ens.n is None else \
            (None, "a fixed-N ensemble has no compressibility; give mu (grand canonical)")
        return chi, comp
    if ens.kind == "eigenstate":
        why = ("one level's states are not a thermal ensemble; give N or mu (with or without "
               "a temperature) for a susceptibility")
        return (None, why), (None, why)
    # T = 0: every ground state has the same probability, so the variances of the
    # conserved S^z_tot and N over the ground states are exact rationals; the T -> 0
    # limit of beta Var is 0 where Var = 0 and diverges (Curie law) otherwise
    total = sum(m.space.dim for m in ens.members)
    var = {}
    for name, q in (("Sz", lambda sec: Fraction(sec[0] - sec[1], 2)),
                    ("N", lambda sec: Fraction(sec[0] + sec[1]))):
        m1 = sum((m.space.dim * q(m.sector) for m in ens.members), Fraction(0)) / total
        m2 = sum((m.space.dim * q(m.sector) ** 2 for m in ens.members), Fraction(0)) / total
        var[name] = m2 - m1 ** 2
    if var["Sz"]:
        chi = (None, f"the static uniform spin susceptibility diverges as T -> 0 here: S^z_tot "
                     f"varies among the ground states (variance {var['Sz']}, chi ~ "
                     f"{var['Sz']}/T, Curie law); give a temperature")
    else:
        chi = (mpmath.mpf(0), None)
    if ens.n is not None:
        comp = (None, "a fixed-N ensemble has no compressibility; give mu (grand canonical)")
    elif var["N"]:
        comp = (None, f"the compressibility diverges as T -> 0 here: N varies among the "
                      f"ground states at this mu (variance {var['N']}); give a temperature")
    else:
        comp = (mpmath.mpf(0), None)
    return chi, comp


def _measure(system, ens):
    space = system.space
    M = space.n_modes
    digits = system.digits
    zero = flint.arb(0)
    dens = [[zero] * M for _ in range(M)]
    szz = [[zero] * M for _ in range(M)]
    flip = [[zero] * M for _ in range(M)]       # <S+_i S-_j>
    pair = [[zero] * M for _ in range(M)]
    docc = [zero] * M
    occ = [zero] * M
    n1 = n2 = s1 = s2 = zero
    err = mpmath.mpf(ens.dropped) * 16
    with arb_precision(system.work + 10), mpmath.workdps(system.work + 10):
        by_sector = {}
        for mem in ens.members:
            by_sector.setdefault(mem.sector, []).append(mem.space)
        for mem in ens.members:
            eig = system.vectors(*mem.sector, by_sector[mem.sector])
            p = to_arb(mpmath.mpf(mem.prob))
            rows = eig.rows
            states = eig.states
            index = eig.index
            nu, nd = mem.sector
            err += mpmath.mpf(mem.prob) * 2 * mem.space.dim * mem.space.eps * 16
            for c in mem.space.columns:
                col = [r[c] for r in rows]
                prob = [x * x for x in col]
                for k, (up, dn) in enumerate(states):
                    w = p * prob[k]
                    nvals = [((up >> m) & 1) + ((dn >> m) & 1) for m in range(M)]
                    svals = [((up >> m) & 1) - ((dn >> m) & 1) for m in range(M)]
                    for i in range(M):
                        if nvals[i]:
                            occ[i] += w * nvals[i]
                            if (up >> i) & 1 and (dn >> i) & 1:
                                docc[i] += w
                        for j in range(M):
                            if nvals[i] and nvals[j]:
                                dens[i][j] += w * (nvals[i] * nvals[j])
                            if svals[i] and svals[j]:
                                szz[i][j] += w * (svals[i] * svals[j])
                    # off-diagonal: S+_i S-_j (i != j) and Delta_i^+ Delta_j (i != j)
                    for j in range(M):
                        for i in range(M):
                            if i == j:
                                continue
                            for prod, target in (
                                    (((i, 0, True), (i, 1, False), (j, 1, True), (j, 0, False)),
                                     flip),
                                    (((i, 0, True), (i, 1, True), (j, 1, False), (j, 0, False)),
                                     pair)):
                                hit = _apply(prod, (up, dn))
                                if hit is None:
                                    continue
                                sign, new = hit
                                kk = index.get(new)
                                if kk is None:
                                    continue
                                target[i][j] += p * col[kk] * col[k] * sign
                nsec = nu + nd
                sz2 = nu - nd
                tot = p * sum(prob, zero)
                n1 += tot * nsec
                n2 += tot * nsec * nsec
                s1 += tot * sz2
                s2 += tot * sz2 * sz2
        for i in range(M):
            pair[i][i] = docc[i]
            # S+_i S-_i = n_i up (1 - n_i dn)
        quarter = flint.arb(1) / 4
        spin = [[None] * M for _ in range(M)]
        for i in range(M):
            for j in range(M):
                if i == j:
                    # S_i . S_i = 3/4 (n_i - 2 n_i up n_i dn)
                    spin[i][j] = 3 * quarter * (occ[i] - 2 * docc[i])
                else:
                    spin[i][j] = quarter * szz[i][j] + (flip[i][j] + flip[j][i]) / 2
        conv = lambda mat: [[to_mpf(x) for x in row] for row in mat]  # noqa: E731
        out_dens, out_sz = conv(dens), conv([[quarter * x for x in row] for row in szz])
        out_spin, out_pair = conv(spin), conv(pair)
        out_docc = [to_mpf(x) for x in docc]
        out_occ = [to_mpf(x) for x in occ]
        nt, szt = to_mpf(n1), to_mpf(s1) / 2
        chi, comp = _static_responses(ens, s2, n1, n2, szt, nt)
    if err > mpmath.mpf(10) ** (-(digits + 2)):
        raise VerificationError(f"correlations are certified only to {float(err):.1e}")
    from symcluster.response.greens import translation_shift
    return Correlations(out_dens, out_spin, out_sz, out_docc, out_pair, out_occ, nt, szt, chi,
                        comp, digits, {"error": err, "ensemble": ens.describe()},
                        translation_shift(system.model))
