"""Single-particle Green's functions in Lehmann form, certified at an exact point.

Conventions (docs/greens.md): G_ij(tau) = -<T c_i(tau) c_j^+(0)> for one spin, spectral
weights from the anticommutator, so that

    G_ij(z) = sum_p w_p(i, j) / (z - omega_p),
    particle poles: omega = E_b - E_a - mu, w = sum p_a <a|c_i|b><b|c_j^+|a>,
    hole poles:     omega = E_a - E_b - mu, w = sum p_a <a|c_j^+|b><b|c_i|a>,

with p_a the probability of state a in the ensemble (:mod:`symcluster.response.ensemble`)
and b running over all eigenstates with one electron more (fewer).  Imaginary time:
G(tau) = -sum_p w_p exp(-tau omega_p) / (1 + exp(-beta omega_p)), 0 < tau < beta, the
Fourier series of G(i omega_n) at omega_n = (2n + 1) pi / beta.  i, j index spatial
modes, mode = site * n_orbitals + orbital (a pair (site, orbital) is accepted).

Every result is checked before it is returned (a failure is a VerificationError):

* sum of weights = <{c_i, c_j^+}> and sum of hole weights = <c_j^+ c_i>, both computed
  from the ensemble's states directly (not through the eigenvectors of the sectors the
  poles come from, so the sums test their completeness);
* first moment sum_p w_p omega_p = <{[c_i, H - mu N], c_j^+}>, again from the states and
  the Hamiltonian's matrices;
* grand canonical ensembles: G(beta^-) = -<c_j^+ c_i> (at T = 0 of a fixed N the same
  statement is the hole sum above);
* every evaluation: the 1/(i omega_n) tail at the last frequency, and G(0^+) + G(beta^-)
  = -<{c_i, c_j^+}> for imaginary times.

References
----------
G. D. Mahan, Many-Particle Physics, ch. 3 (Lehmann representation) [from memory].
"""

from collections.abc import Mapping
from dataclasses import dataclass, field

import mpmath
import sympy

from symcluster.errors import ModelError, VerificationError
from symcluster.response.balls import paused_gc
from symcluster.response.eigen import PointSystem
from symcluster.response.ensemble import exact_number, make_ensemble
from symcluster.response.lehmann import lehmann_sums
from symcluster.response.matsubara import matsubara_sums
from symcluster.response.momenta import translation_group
from symcluster.spectrum import Spectrum

__all__ = ["greens_function", "greens_matrix", "GreensFunction", "GreensMatrix", "spin_index",
           "mode_index", "translation_shift"]


def spin_index(spin):
    """0 for up, 1 for down ("up"/"down"/"dn", 0/1, +1/2 and -1/2 accepted)."""
    table = {"up": 0, "down": 1, "dn": 1, 0: 0, 1: 1, "u": 0, "d": 1}
    if isinstance(spin, str):
        key = spin.strip().lower()
    elif isinstance(spin, bool):
        key = None
    else:
        key = spin
    if isinstance(spin, (int, float)) and not isinstance(spin, bool) and spin in (0.5, -0.5):
        return 0 if spin > 0 else 1
    if key not in table:
        raise ModelError(f"spin={spin!r} is not a spin; give 'up' or 'down'")
    return table[key]


def mode_index(space, i):
    """A mode index from an int or a (site, orbital) pair, checked against the space."""
    if isinstance(i, tuple) and len(i) == 2:
        return space.mode(*i)
    if isinstance(i, bool) or not isinstance(i, int) or not 0 <= i < space.n_modes:
        raise ModelError(f"mode {i!r} is outside 0..{space.n_modes - 1} (mode = site x "
                         f"{space.n_orbitals} + orbital); give an index or (site, orbital)")
    return i


@dataclass
class GreensFunction:
    """G_ij of one spin: poles, weights and evaluations (see the module docstring).

    Attributes
    ----------
    poles : list of (mpmath.mpf, mpmath.mpf)
        ``(omega, weight)`` ascending in omega; weights below 10**-(digits + 2) dropped.
    exact_poles : list of (sympy.Expr or None, sympy.Expr or None)
        omega exact where both levels are closed forms and mu is exact; the weight exact
        where, in addition, the ensemble is T = 0 and the sectors are small enough
        (:mod:`symcluster.response.exactweights`); None elsewhere.
    beta : Fraction or None
        Inverse temperature of the ensemble (None at T = 0).
    mu : mpmath.mpf
    moments : dict
        ``"m0"`` (<{c_i, c_j^+}>), ``"m1"``, ``"n"`` (<c_j^+ c_i>), as checked.
    certificate : dict
        What was checked and the proven bounds (``"weight_error"``, ``"pole_error"``).
    """

    poles: list
    exact_poles: list
    beta: object
    mu: object
    digits: int
    moments: dict
    certificate: dict
    i: object = None
    j: object = None
    spin: str = "up"
    description: str = ""

    def _check_beta(self, beta):
        b = exact_number("beta", beta)
        if b <= 0:
            raise ModelError(f"beta={beta!r} must be > 0")
        if self.beta is not None and b != self.beta:
            raise ModelError(f"beta={beta} differs from the ensemble's 1/T = {self.beta}; "
                             "use beta = 1/temperature (or a T = 0 Green's function)")
        return mpmath.mpf(b.numerator) / b.denominator

    def matsubara(self, beta, n_max):
        """G(i omega_n), omega_n = (2n + 1) pi / beta, n = 0 .. n_max - 1 (list of mpc).

        Examples
        --------
        >>> import symcluster as sc
        >>> spec = sc.solve(sc.hubbard(sc.chain(2)))
        >>> g = greens_function(spec, {"t": 1, "U": 4}, N=2, digits=20)
        >>> v = g.matsubara(10, 2)[0]
        >>> abs(v.real) < 1e-20          # particle-hole symmetric: G(i w) is imaginary
        True
        """
        if isinstance(n_max, bool) or not isinstance(n_max, int) or not 1 <= n_max <= 10 ** 6:
            raise ModelError(f"n_max={n_max!r} must be an integer 1..1000000")
        with mpmath.workdps(self.digits + 10):
            b = self._check_beta(beta)
            out = matsubara_sums([om for om, _ in self.poles], [[w for _, w in self.poles]],
                                  b, n_max, self.digits)[0]
            self._check_tail(out[-1], (2 * n_max - 1) * mpmath.pi / b)
            return out

    def _check_tail(self, value, wn):
        m0, m1 = self.moments["m0"], self.moments["m1"]
        m2 = sum((abs(w) * om ** 2 for om, w in self.poles), mpmath.mpf(0))
        z = mpmath.mpc(0, wn)
        dev = abs(z * value - m0 - m1 / z)
        bound = m2 / wn ** 2 + self.certificate["weight_error"] * len(self.poles) * 4 \
            + mpmath.mpf(10) ** (-self.digits)
        if dev > bound:
            raise VerificationError(f"Green's function tail at omega_n = {mpmath.nstr(wn, 8)}: "
                                    f"|i w G - m0 - m1/(i w)| = {mpmath.nstr(dev, 5)} exceeds "
                                    f"{mpmath.nstr(bound, 5)}")

    def imaginary_time(self, beta, taus):
        """G(tau) for 0 < tau < beta (tau = 0 means 0^+, tau = beta means beta^-); mpf list.

        Examples
        --------
        >>> import symcluster as sc
        >>> spec = sc.solve(sc.hubbard(sc.chain(2)))
        >>> g = greens_function(spec, {"t": 1, "U": 4}, N=2, temperature=1, digits=20)
        >>> a, b = g.imaginary_time(1, [0, 1])
        >>> abs(a + b + 1) < 1e-20       # G(0+) + G(beta-) = -1
        True
        """
        with mpmath.workdps(self.digits + 10):
            b = self._check_beta(beta)
            ts = []
            for t in taus:
                tv = exact_number("tau", t)
                tv = mpmath.mpf(tv.numerator) / tv.denominator
                if not 0 <= tv <= b:
                    raise ModelError(f"tau={t} is outside [0, beta={beta}]")
                ts.append(tv)
            vals = [self._tau(tv, b) for tv in ts]
            ends = self._tau(mpmath.mpf(0), b) + self._tau(b, b)
            m0 = self.moments["m0"]
            if abs(ends + m0) > self.certificate["weight_error"] * 2 * len(self.poles) \
                    + mpmath.mpf(10) ** (-self.digits):
                raise VerificationError(f"G(0+) + G(beta-) = {mpmath.nstr(ends, 12)} but "
                                        f"-<{{c, c+}}> = {mpmath.nstr(-m0, 12)}")
            return [+v for v in vals]

    def _tau(self, tau, beta):
        total = mpmath.mpf(0)
        for om, w in self.poles:
            # exp(-tau w)/(1 + exp(-beta w)), written without overflow for either sign
            if om >= 0:
                total -= w * mpmath.exp(-tau * om) / (1 + mpmath.exp(-beta * om))
            else:
                total -= w * mpmath.exp((beta - tau) * om) / (1 + mpmath.exp(beta * om))
        return total

    def spectral(self, omegas, broadening):
        """A(omega) = -Im G(omega + i eta) / pi with Lorentzian broadening eta > 0 (mpf list).

        Examples
        --------
        >>> import symcluster as sc
        >>> spec = sc.solve(sc.hubbard(sc.chain(2)))
        >>> g = greens_function(spec, {"t": 1, "U": 0}, N=2, digits=20)
        >>> [(mpmath.nstr(w, 5), mpmath.nstr(x, 5)) for w, x in g.poles]   # free dimer: -+t
        [('-1.0', '0.5'), ('1.0', '0.5')]
        >>> mpmath.nstr(g.spectral([1], "1/100")[0], 8)   # (1/2)(1/(pi eta) + eta/(pi (4 + eta^2)))
        '15.915892'
        """
        eta = exact_number("broadening", broadening)
        if eta <= 0:
            raise ModelError(f"broadening={broadening!r} must be > 0")
        with mpmath.workdps(self.digits + 10):
            e = mpmath.mpf(eta.numerator) / eta.denominator
            out = []
            for x in omegas:
                xv = exact_number("omega", x)
                xm = mpmath.mpf(xv.numerator) / xv.denominator
                out.append(+sum((w * e / ((xm - om) ** 2 + e ** 2) for om, w in self.poles),
                                mpmath.mpf(0)) / mpmath.pi)
            return out

    def retarded(self, omegas, broadening):
        """G(omega + i eta) on real frequencies (mpc list)."""
        eta = exact_number("broadening", broadening)
        if eta <= 0:
            raise ModelError(f"broadening={broadening!r} must be > 0")
        with mpmath.workdps(self.digits + 10):
            e = mpmath.mpf(eta.numerator) / eta.denominator
            out = []
            for x in omegas:
                xv = exact_number("omega", x)
                z = mpmath.mpc(mpmath.mpf(xv.numerator) / xv.denominator, e)
                out.append(+sum((w / (z - om) for om, w in self.poles), mpmath.mpc(0)))
            return out


@dataclass
class GreensMatrix:
    """G_ij of one spin for every pair of modes: shared poles, a weight matrix per pole.

    Attributes
    ----------
    omegas : list of mpmath.mpf
        Poles ascending (merged where equal at the point).
    weights : list of list of list of mpmath.mpf
        ``weights[p][i][j]``.
    """

    omegas: list
    exact_omegas: list
    weights: list
    beta: object
    mu: object
    digits: int
    m0: list
    m1: list
    n: list
    certificate: dict
    spin: str
    description: str
    n_modes: int
    positions: object = None            # site positions along a ring, for momenta
    hole_sum: list = field(default=None, repr=False)
    # (i, j) -> representative pair of its orbit under the lattice group (G_ij = G_g(i)g(j))
    pair_orbits: dict = field(default=None, repr=False)
    # the cluster's translation group (response.momenta.Translations) or None
    translations: object = None
    # per pole an ExactWeight (response.exactweights) or None
    exact_weights: list = field(default=None, repr=False)

    def _exact_weight(self, p, i, j):
        ew = self.exact_weights[p] if self.exact_weights else None
        return None if ew is None else ew.expr(i, j)

    def element(self, i, j):
        """The :class:`GreensFunction` G_ij."""
        cut = mpmath.mpf(10) ** (-(self.digits + 2))
        poles, exact = [], []
        for p, (om, ex, W) in enumerate(zip(self.omegas, self.exact_omegas, self.weights)):
            w = W[i][j]
            if abs(w) > cut:
                poles.append((om, w))
                exact.append((ex, self._exact_weight(p, i, j)))
        return GreensFunction(poles, exact, self.beta, self.mu, self.digits,
                              {"m0": self.m0[i][j], "m1": self.m1[i][j], "n": self.n[i][j]},
                              dict(self.certificate), i, j, self.spin, self.description)

    def momentum(self, m):
        """G(k) = (1/L) sum_ij exp(-i k (x_i - x_j)) G_ij on a cluster with translations.

        On a ring (sites i -> i+1 mod L a symmetry) ``m`` is an integer, k = 2 pi m / L.
        On other clusters with a translation group (:mod:`symcluster.response.momenta`,
        e.g. periodic grids) ``m`` is a tuple, one integer per generator of
        ``self.translations`` (an integer when there is one generator):
        k = 2 pi (m_1/n_1, ..., m_r/n_r) in the generators' coordinates.  The weight
        bound of the result is L times that of the G_ij.

        Raises
        ------
        ModelError
            The cluster has no translation group, or ``m`` does not fit it.

        Examples
        --------
        >>> import symcluster as sc
        >>> spec = sc.solve(sc.hubbard(sc.grid(3, 3, periodic=True)), electrons=[0, 1])
        >>> gm = greens_matrix(spec, {"t": 1, "U": 4}, N=0, mu=0, digits=20)
        >>> gm.translations.orders                          # x -> x+1, y -> y+1
        [3, 3]
        >>> [(mpmath.nstr(w, 8), mpmath.nstr(x, 8)) for w, x in gm.momentum((1, 0)).poles]
        [('-1.0', '1.0')]
        """
        if self.positions is not None and isinstance(m, int) and not isinstance(m, bool):
            L = len(self.positions)
            coords, orders, ms = [(x,) for x in self.positions], [L], (m,)
        elif self.translations is not None:
            tr = self.translations
            coords, orders, L = tr.coords, tr.orders, len(tr.coords)
            ms = (m,) if isinstance(m, int) and not isinstance(m, bool) else m
            if not isinstance(ms, tuple) or len(ms) != len(orders) or any(
                    isinstance(x, bool) or not isinstance(x, int) for x in ms):
                raise ModelError(f"momentum {m!r}: give {len(orders)} integer(s), one per "
                                 f"translation generator (orders {orders})")
        else:
            raise ModelError("momenta need a cluster with a translation group (an abelian group "
                             "of symmetries moving site 0 to every site once, e.g. a ring or a "
                             "periodic grid); this one has none")
        cut = mpmath.mpf(10) ** (-(self.digits + 2))
        with mpmath.workdps(self.digits + 10):
            def phase(i, j):
                return 2 * mpmath.pi * sum(mpmath.mpf(x * (a - b)) / n for x, a, b, n in
                                           zip(ms, coords[i], coords[j], orders))
            cosines = [[mpmath.cos(phase(i, j)) for j in range(L)] for i in range(L)]

            def fold(mat):
                return sum((cosines[i][j] * mat[i][j] for i in range(L) for j in range(L)),
                           mpmath.mpf(0)) / L
            poles, exact = [], []
            for p, (om, ex, W) in enumerate(zip(self.omegas, self.exact_omegas, self.weights)):
                w = fold(W)
                if abs(w) > cut:
                    poles.append((om, +w))
                    exact.append((ex, self._exact_fold(p, ms, coords, orders)))
            moments = {"m0": fold(self.m0), "m1": fold(self.m1), "n": fold(self.n)}
        cert = dict(self.certificate)
        cert["weight_error"] = cert["weight_error"] * L
        label = "k=2pi(" + ", ".join(f"{x}/{n}" for x, n in zip(ms, orders)) + ")"
        return GreensFunction(poles, exact, self.beta, self.mu, self.digits, moments, cert,
                              label, None, self.spin, self.description)

    def _exact_fold(self, p, ms, coords, orders):
        """The exact weight of G(k) for pole p: (1/L) sum_ij cos(phase_ij) w_ij, or None."""
        if not self.exact_weights or self.exact_weights[p] is None:
            return None
        L = len(coords)
        total = sympy.Integer(0)
        for i in range(L):
            for j in range(L):
                phase = sum(sympy.Rational(2 * x * (a - b), n) for x, a, b, n in
                            zip(ms, coords[i], coords[j], orders))
                total += sympy.cos(sympy.pi * phase) * self._exact_weight(p, i, j)
        return sympy.radsimp(sympy.expand(total / L))

    def matsubara(self, beta, n_max):
        """All G_ij(i omega_n) at once: list over n of M x M nested lists of mpc (each
        element's tail checked as in :meth:`GreensFunction.matsubara`)."""
        M = self.n_modes
        pairs = [(i, j) for i in range(M) for j in range(i, M)]
        rep = self.pair_orbits or {key: key for key in pairs}
        reps = sorted(set(rep.values()))
        elements = {key: self.element(*key) for key in reps}
        with mpmath.workdps(self.digits + 10), paused_gc():
            b = elements[reps[0]]._check_beta(beta)
            cols = [[W[i][j] for W in self.weights] for i, j in reps]
            sums = matsubara_sums(self.omegas, cols, b, n_max, self.digits)
            last = (2 * n_max - 1) * mpmath.pi / b
            for key, vals in zip(reps, sums):
                elements[key]._check_tail(vals[-1], last)
        vals = dict(zip(reps, sums))
        series = [[vals[rep[(min(i, j), max(i, j))]] for j in range(M)] for i in range(M)]
        with paused_gc():
            return [[[col[n] for col in row] for row in series] for n in range(n_max)]


def translation_shift(model):
    """Positions 0..L-1 if i -> i+1 mod L preserves every bond label and site label (one
    orbital per site), else None."""
    cl = model.cluster
    L = cl.n_sites
    if model.space.n_orbitals != 1 or L < 2:
        return None
    bonds = {(min(i, j), max(i, j), lab) for i, j, lab in cl.bonds}
    moved = {(min((i + 1) % L, (j + 1) % L), max((i + 1) % L, (j + 1) % L), lab)
             for i, j, lab in cl.bonds}
    if bonds != moved:
        return None
    labels = list(cl.site_labels)
    if any(labels[i] != labels[(i + 1) % L] for i in range(L)):
        return None
    return list(range(L))


def greens_matrix(spectrum: Spectrum, point: Mapping[str, object], spin: str = "up",
                  N: int | None = None, temperature: object = None, mu: object = None,
                  digits: int = 30, system: object = None) -> GreensMatrix:
    """G_ij of one spin for every pair of modes (see :func:`greens_function`).

    Returns
    -------
    GreensMatrix

    Examples
    --------
    >>> import symcluster as sc
    >>> spec = sc.solve(sc.hubbard(sc.chain(2)))
    >>> gm = greens_matrix(spec, {"t": 1, "U": 4}, N=2, digits=20)
    >>> [mpmath.nstr(x, 10) for x in gm.omegas]     # -+(t + D), -+(D - t), D = sqrt(U^2/4 + 4t^2)
    ['-3.828427125', '-1.828427125', '1.828427125', '3.828427125']
    """
    s = spin_index(spin)
    if system is None:
        system = PointSystem(spectrum, point, digits)
    elif system.spectrum is not spectrum:
        raise ModelError("system= belongs to another spectrum")
    with paused_gc():
        ens = make_ensemble(system, N, temperature, mu)
        d = lehmann_sums(system, ens, s)
    gm = GreensMatrix(d["omegas"], d["exact"], d["weights"], ens.beta, ens.mu, system.digits,
                      d["m0"], d["m1"], d["n"], d["certificate"], "up" if s == 0 else "down",
                      ens.describe(), d["n_modes"], translation_shift(system.model),
                      d["hole_sum"], _pair_orbits(system, d["n_modes"]),
                      translation_group(system.model, system.lattice()),
                      exact_weights=d["exact_weights"])
    _check_sum_rules(gm, ens, system)
    return gm


def greens_function(spectrum: Spectrum, point: Mapping[str, object], i: int = 0, j: int = 0,
                    spin: str = "up", N: int | None = None, temperature: object = None,
                    mu: object = None, digits: int = 30) -> GreensFunction:
    """The certified Lehmann Green's function G_ij of a solved model at a point.

    Parameters
    ----------
    spectrum : Spectrum
        ``symcluster.solve(model)`` of a model of electrons (all N for mu; N, N +- 1 else).
    point : dict
        ``{coupling: exact value}`` for every free coupling.
    i, j : int or (site, orbital)
        Modes (mode = site * n_orbitals + orbital).
    spin : "up" or "down"
    N : int, optional
        Electron number of a T = 0 or canonical ensemble.
    temperature : number, optional
        Exact T > 0 (k_B = 1); None for T = 0.
    mu : number, optional
        Chemical potential: grand canonical without N; with N the energy poles are
        measured from (default: the midpoint of addition and removal energies).
    digits : int
        Certified digits of the weights and values.

    Returns
    -------
    GreensFunction

    Raises
    ------
    VerificationError
        A sum rule or the eigenvector certificate fails.

    Examples
    --------
    >>> import symcluster as sc
    >>> spec = sc.solve(sc.hubbard(sc.chain(2)))
    >>> g = greens_function(spec, {"t": 1, "U": 4}, i=0, j=0, spin="up", N=2, digits=20)
    >>> [(mpmath.nstr(w, 10), mpmath.nstr(x, 10)) for w, x in g.poles][:2]
    [('-3.828427125', '0.0732233047'), ('-1.828427125', '0.4267766953')]
    >>> g.moments["m0"]
    mpf('1.0')
    """
    gm = greens_matrix(spectrum, point, spin, N, temperature, mu, digits)
    space = spectrum.model.space
    return gm.element(mode_index(space, i), mode_index(space, j))


def _pair_orbits(system, M):
    """(i, j) with i <= j -> the smallest pair of its orbit under the lattice group (the
    ensemble is a function of H, which every group element leaves invariant, so
    G_ij = G_g(i)g(j); and G_ij = G_ji for real eigenvectors); None without a group."""
    lat = system.lattice()
    if lat is None:
        return None
    out = {}
    for i in range(M):
        for j in range(i, M):
            images = [tuple(sorted((g[i], g[j]))) for g in lat.group.elements]
            out[(i, j)] = min(images)
    return out


def _check_sum_rules(gm, ens, system):
    """The checks of the module docstring; a failure raises VerificationError."""
    digits = system.digits
    M = gm.n_modes
    with mpmath.workdps(digits + 10):
        tol = gm.certificate["weight_error"] * (len(gm.omegas) + 1) * 4 \
            + mpmath.mpf(10) ** (-(digits + 1))
        scale = float(system.scale) + abs(gm.mu) + 1
        worst = mpmath.mpf(0)
        for i in range(M):
            for j in range(M):
                col = [W[i][j] for W in gm.weights]
                s0 = mpmath.fsum(col)
                s1 = mpmath.fdot(gm.omegas, col)
                checks = [("sum of weights = <{c_i, c_j+}>", s0, gm.m0[i][j], tol),
                          ("first moment = <{[c_i, H - mu N], c_j+}>", s1, gm.m1[i][j],
                           tol * scale * 4),
                          ("sum of hole weights = <c_j+ c_i>", gm.hole_sum[i][j], gm.n[i][j], tol)]
                if ens.beta is not None and ens.n is None:
                    b = mpmath.mpf(ens.beta.numerator) / ens.beta.denominator
                    g_beta = -sum((W[i][j] * _fermi(b, om) for om, W in
                                   zip(gm.omegas, gm.weights)), mpmath.mpf(0))
                    checks.append(("G(beta-) = -<c_j+ c_i>", g_beta, -gm.n[i][j], tol))
                for name, a, b_, t in checks:
                    dev = abs(a - b_)
                    worst = max(worst, dev)
                    if dev > t:
                        raise VerificationError(
                            f"Green's function check failed for modes ({i}, {j}): {name}: "
                            f"{mpmath.nstr(a, 15)} vs {mpmath.nstr(b_, 15)}")
    gm.certificate["checks"] = [
        "sum of weights = <{c_i, c_j+}> (from the states)",
        "sum of hole weights = <c_j+ c_i> (G(beta-) = -<n> at T = 0)",
        "first moment = <{[c_i, H - mu N], c_j+}> (from the states and H)"] + (
        ["G(beta-) = -<c_j+ c_i> (grand canonical)"] if ens.beta is not None and ens.n is None
        else [])
    gm.certificate["worst_sum_rule_deviation"] = float(worst)


def _fermi(beta, om):
    x = beta * om
    if x > 0:
        e = mpmath.exp(-x)
        return e / (1 + e)
    return 1 / (1 + mpmath.exp(x))
