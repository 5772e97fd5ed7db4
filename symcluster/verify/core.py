"""Every check a spectrum must pass before it is returned (docs/verification.md).

Tiers, per (N_up, N_dn) sector, at >= 2 random rational parameter points:

* dim <= MP_DIM: the eigenvalues of the unreduced sector, enclosed in balls at
  ``digits`` + 10 digits (python-flint), equal the level values with their
  multiplicities;
* dim <= EXACT_DIM: the characteristic polynomial of the unreduced sector at
  the point (python-flint, independent of the symbolic pipeline) equals the
  product of the levels' polynomials at the point -- an exact identity test
  carried out modulo a random 62-bit prime per point (a false pass at one
  point needs the prime to divide a fixed non-zero integer of at most a few
  thousand bits: probability < 1e-14; both points must pass);
  every level's value is a root of its polynomial at >= ``digits`` digits;
* dim <= FLOAT_DIM: float64 eigenvalues of the unreduced sector equal the level
  values (relative 1e-9);
* beyond (``float_dim=``): exact Tr H^m (m = 1..4) at every point and the lowest
  Lanczos eigenvalues at the first point (:mod:`symcluster.verify.large`);
* every block's exact charpoly at the point equals the product of its factors.

Every unreduced sector matrix comes from the model's terms by the plain route of
:mod:`symcluster.verify.plain`, which shares no code with the block builder.

Always: degeneracies add up to each sector's dimension and to 4^L; the
symbolic sum rules sum deg*E = Tr H and sum deg*E^2 = Tr H^2 per sector; each
closed form is checked against its own polynomial at >= ``digits`` digits, and the
forms of one factor are distinct roots of it (pairwise disjoint Newton disks).
"""

import concurrent.futures
import random
import sys
from fractions import Fraction

import flint
import mpmath
import numpy as np
import sympy

from symcluster.errors import ModelError
from symcluster.verify.labels import check_state_labels
from symcluster.verify.large import check_large_sector
from symcluster.verify.plain import sector_matrices, sector_matrix, sector_occupations
from symcluster.verify.sitegroup import SectorSplit, abelian_generators
from symcluster.numeric.evaluate import Evaluation, closed_values, energy_numeric
from symcluster.numeric.implicit import ImplicitRoot
from symcluster.numeric.isolate import LAGUERRE_MIN_DEGREE, isolate, scaled_isolation
from symcluster.numeric.residuals import (exact_backward_error, float_newton_radius, mp_coefficients,
                                newton_radius, root_deviation)
from symcluster.workers import submit
from symcluster.symbols import coupling_symbol
from symcluster.tiers import EXACT_DIM, FLOAT_DIM, MP_DIM, SELECTED_DENSE_DIM
from symcluster.verify.blockpolys import verify_blocks  # noqa: F401  (the solve imports it here)
from symcluster.verify.failure import _fail  # noqa: F401
from symcluster.verify.points import random_points
from symcluster.verify.forms import (FormCache, _Form, _at_fixed, _clean, _padd, _pmul, _power_sums,  # noqa: F401
                                     _rational_terms, _top_key, coeffs_at)
from symcluster.verify.modular import (_charpoly_mod, _label_matrices, _mod, _next_prime,  # noqa: F401
                                       _nmod_matrix, _poly_mod)
from symcluster.verify.sectors import (_check_sum_rules, _enclosed_eigenvalues,  # noqa: F401
                                       _factor_groups, _numeric_matrix, _sector_eigenvalues,
                                       _sector_shares, _sector_traces, sector_share)
from symcluster.verify.lattice_labels import (_BlockImages, _check_lattice_labels,  # noqa: F401
                                              _isotypic_traces)

__all__ = ["verify_spectrum", "random_points", "sector_share", "MP_DIM", "EXACT_DIM",
           "FLOAT_DIM", "root_deviation"]


_FLOAT_MIN = sys.float_info.min        # the smallest normal float64


def _separate_roots(group, pt, floats):
    """Fail unless the values of one polynomial's levels are distinct roots of it.

    Returns True when they are, and False, undecided, when two disks touch and the
    polynomial has a multiple root at the point (exact test): roots of an irreducible
    factor merge on a hypersurface of the couplings (at t = t' for the two-dimer factor
    with roots U +- a(t) +- a(t')), where distinct forms take equal values.

    ``group`` lists ``(level, value, ints)`` for the closed-form levels of one level
    polynomial (one factor of one block; ``ints`` its coefficients at the point as
    :meth:`_Form.ints_at` gives them, ``(acc, full)``).  About each value, a disk holds a
    root (:func:`~symcluster.numeric.residuals.newton_radius`); pairwise disjoint disks
    hold distinct roots, so the n
    forms of a degree-n factor are its n roots, each once.  The disks are tried in
    float64 first, about the values rounded to float64 and widened by that rounding, with
    the coefficients rounded once to float64; where they touch, again at working
    precision (mpmath).  ``floats`` caches the float64 coefficients for the call (None
    where one is out of the float64 range).
    """
    disks = []
    for lev, x, ints in group:
        fc = floats.get(id(ints), False)
        if fc is False:
            acc, full = ints
            try:
                c = [a / full for a in acc]         # correctly rounded
                # a coefficient below the normal range (subnormal, or 0) is not rounded
                # within the relative bound
                fc = (None if any(a and abs(v) < _FLOAT_MIN for a, v in zip(acc, c))
                      else (c, [abs(v) for v in c]))
            except OverflowError:
                fc = None
            floats[id(ints)] = fc
        r = None
        if fc is not None and type(x) is mpmath.mpf:
            xf = float(x)
            r = float_newton_radius(*fc, xf)
        if r is None:
            break
        disks.append((xf, r + 4 * 2.0 ** -53 * abs(xf)))
    else:
        if all(abs(x - y) > rx + ry for i, (x, rx) in enumerate(disks) for y, ry in disks[i + 1:]):
            return True
    mp = {}
    radii = []
    for _, x, ints in group:
        cs = mp.get(id(ints))
        if cs is None:
            cs = mp[id(ints)] = mp_coefficients(*ints)
        radii.append(newton_radius(cs, x))
    for i, ((lev, x, _), rx) in enumerate(zip(group, radii)):
        for (lev2, y, _), ry in zip(group[i + 1:], radii[i + 1:]):
            far = rx is not None and ry is not None and abs(x - y) > rx + ry
            if not far:
                if _has_multiple_root(group[0][2][0]):
                    return False
                _fail(f"levels {lev.energy} and {lev2.energy} (N={lev.quantum_numbers['N']}) "
                      f"are not distinct roots of their polynomial at {pt}: the same root is "
                      "listed twice and another one is missing")
    return True


def _separate_elsewhere(group, symbols, seed, digits, tries=5):
    """:func:`_separate_roots` for one polynomial's levels at fresh random points, until
    one point decides (fails if none of ``tries`` does)."""
    form = _Form(group[0][0].polynomial)
    for attempt in range(tries):
        pt = random_points(symbols, 2, seed + 3000 + attempt)[1]
        evaluation = Evaluation()       # the forms of one factor share subexpressions
        try:
            vals = [energy_numeric(lev.energy, pt, digits + 5, evaluation=evaluation)
                    for lev, _, _ in group]
        except (ZeroDivisionError, ValueError, ModelError, ArithmeticError):
            continue
        ints = form.ints_at(pt)
        if _separate_roots([(lev, x, ints) for (lev, _, _), x in zip(group, vals)], pt, {}):
            return
    _fail(f"the roots of the polynomial of level {group[0][0].energy} "
          f"(N={group[0][0].quantum_numbers['N']}) merge at every point tried, so its closed "
          f"forms could not be shown to be distinct roots; rerun with another seed")


def _has_multiple_root(acc):
    """True if the integer polynomial with coefficients ``acc`` (highest first) has a
    multiple root: a non-constant gcd with its derivative (exact, python-flint)."""
    p = flint.fmpz_poly(list(reversed(acc)))
    return p.gcd(p.derivative()).degree() > 0


def _fixed_point(spectrum):
    """{Symbol: Rational} of the couplings the spectrum holds at fixed values (or None)."""
    fixed = getattr(spectrum, "fixed", None)
    return {coupling_symbol(l): v for l, v in fixed.items()} if fixed else None


def _scaled_keys(roots, points, digits):
    """``{isolation key: (key at coupling 1, num)}`` for the polynomials in one coupling
    whose key at a point J = num/den is exactly the key at J = 1 scaled by num (checked
    coefficient by coefficient); the others are left out."""
    out = {}
    for r in roots:
        gens = r.poly.gens
        if len(gens) != 2:
            continue
        base = r.isolation_key({gens[1]: sympy.Integer(1)}, digits)
        n = len(base[0]) - 1
        for pt in points:
            key = r.isolation_key(pt, digits)
            v = pt.get(gens[1])
            if v is None or key == base or key[1] != base[1]:
                continue
            num = int(sympy.Rational(v).p)
            if num and key[0] == tuple(c * num ** (n - a) for a, c in enumerate(base[0])):
                out[key] = (base, num)
    return out


def _first_equal(levels):
    """For each level, the index of the first level with an equal energy."""
    first = {}
    return [first.setdefault(lev.energy, i) for i, lev in enumerate(levels)]


def _values_at_usable_point(spectrum, symbols, points, pi, seed, digits, evaluation, tries=5,
                            first=None):
    """Values of all levels at ``points[pi]``; a point where a closed form is 0/0 is redrawn.

    A random rational point can, rarely, fall where roots of some level polynomial
    merge and its closed form is undefined (for instance a vanishing discriminant);
    such a point says nothing about correctness, so it is replaced in ``points`` by
    a fresh one (the same for every check that follows).  ``evaluation`` is the
    caller's :class:`~symcluster.numeric.evaluate.Evaluation`; ``first`` is
    :func:`_first_equal` of the levels, if the caller has it.
    """
    levels = spectrum.levels
    first = _first_equal(levels) if first is None else first
    last = None
    for attempt in range(tries):
        pt = points[pi]
        try:
            # closed forms evaluated as they are (no polynomial): the checks that follow
            # compare these values with the polynomials and with the blocks
            # levels that share an energy (multiplets in several label sets, twins) share
            # its value: each distinct closed form or implicit root is evaluated once
            # the closed forms in one sweep of the shared program, implicit roots each
            own = [i for i, k in enumerate(first) if k == i]
            closed = [i for i in own if not hasattr(levels[i].energy, "numeric")]
            vals = dict(zip(closed, closed_values([levels[i].energy for i in closed], pt,
                                                  digits + 5, evaluation=evaluation)))
            for i in own:
                if i not in vals:
                    vals[i] = energy_numeric(levels[i].energy, pt, digits + 5,
                                             evaluation=evaluation)
            return [vals[k] for k in first]
        except (ZeroDivisionError, ValueError, ModelError) as exc:
            last = exc
            # the replacement is drawn like the point it replaces (only the first point
            # has every hopping positive; later points take random signs)
            points[pi] = random_points(symbols, pi + 1, seed + 1000 * (attempt + 1),
                                       _fixed_point(spectrum))[pi]
        except ArithmeticError as exc:   # a closed form that is not real: wrong, not unlucky
            _fail(str(exc))
    _fail(f"no usable verification point after {tries} draws ({last})")




def verify_spectrum(spectrum, electrons=None, digits=30, seed=None, n_points=2, proven=(),
                    executor=None, lattice=None, float_dim=FLOAT_DIM, progress=None,
                    selection=None):
    """Run every check on ``spectrum``; fill its verification report; raise on failure.

    Every sector matrix is built from the model's terms by the plain route of
    :mod:`symcluster.verify.plain`, which shares no code with the block builder.
    Sectors of dimension above ``float_dim`` (default :data:`FLOAT_DIM`) are not
    diagonalised in float64: they get the exact power traces Tr H^m (m = 1 .. 4) at each
    point and the lowest Lanczos eigenvalues at the first point
    (:mod:`symcluster.verify.large`) instead.

    ``lattice`` (the detected lattice symmetry, or None) adds the check of the lattice
    labels: in every sector of dimension at most ``EXACT_DIM`` the levels labelled with an
    irrep carry the traces of H^0, H^1, H^2 on that irrep's isotypic subspace (float64, first
    point; see :func:`_check_lattice_labels`).  ``progress`` (optional, a
    :class:`~symcluster.pipeline.resources.Progress`) is told each step: the isolation of roots, the
    values at each point, each sector.

    ``proven`` names symmetries that were proven exactly by operator identities
    ("spin": [H, S+] = 0; "eta": [H, eta+] = delta eta+).  Sectors that such a
    symmetry maps onto another checked sector (N_up < N_dn; N > L when the
    sector 2L - N is also checked) still get the counting and the symbolic
    sum rules, but not the numerical eigenvalue checks: their levels are the
    checked ones moved by an exactly proven symmetry.  With "spin" proven, a sector
    N_up < N_dn whose levels and shares are those of (N_dn, N_up) gets the counting
    only: the spin flip maps one sector onto the other and commutes with H and with
    every U(g), so the traces Tr H^m and Tr U(g) H^m, and with them the sum rules and
    the lattice-label check, are those of (N_dn, N_up).  The report counts such sectors
    as ``spin_flip_images`` in both checks (beside ``sectors`` for the labels, those
    checked) and names the rule in their scopes.

    ``selection`` (a normalised sector selection, see
    :mod:`symcluster.blocks.selection`) replaces the checks that need whole sectors (the
    counts, sum rules and eigenvalues of each sector) by those of
    :func:`~symcluster.verify.selected.check_selected_sectors`: the selected levels
    against the selected subspace of each plain sector matrix.
    """
    model = spectrum.model
    report = spectrum.verification
    space = model.space
    L = space.n_modes
    n_fixed = None if space.has_charge else space.n_modes
    selection_lattice = lattice     # the selection's projectors act on any local space
    # the lattice-label check reads sectors as products of up and down spin blocks
    if space.kind != "electrons" or space.projected:
        lattice = None
    symbols = spectrum.symbols          # the free couplings (fixed ones are in every point)
    spectrum_fixed = {l: Fraction(int(v.p), int(v.q))
                      for l, v in (getattr(spectrum, "fixed", None) or {}).items()}
    seed = random.SystemRandom().randrange(2 ** 31) if seed is None else seed
    report.seed = seed
    points = random_points(symbols, n_points, seed, _fixed_point(spectrum))
    rng = random.Random(seed + 1)
    # one random 62-bit prime per point
    primes = [_next_prime(rng.randrange(2 ** 61, 2 ** 62)) for _ in points]
    report.primes = primes
    forms = FormCache()     # integer forms of the level polynomials, for this call only
    wanted = set(space.particle_numbers()) if electrons is None else set(electrons)

    # 1. state counting (a selection: per sector, below)
    total = sum(l.degeneracy for l in spectrum.levels)
    if selection is None:
        expected = sum(space.states_with_n(n) for n in wanted)
        if total != expected:
            _fail(f"degeneracies add up to {total}, expected {expected} states")
        report.add("state count", f"N in {sorted(wanted)}" if space.has_charge else "all states",
                   worst=0.0, states=total)
    n_labelled = check_state_labels(spectrum.levels, n_fixed)
    report.add("N and Sz labels match the basis states of the level's block (S: the highest "
               "weight Sz = S)", "levels from blocks of dimension <= 4", worst=0.0,
               levels=n_labelled)

    # numeric values of every level at every point (closed forms and implicit roots),
    # through one Evaluation that this call owns: closed forms share the values of common
    # subexpressions, and the certified isolations of high-degree factors run first (on the
    # executor, if any; counted by the progress line) and are handed to the implicit roots
    # through it
    evaluation = Evaluation()
    # one representative root per polynomial: the isolation does not depend on the index
    reps = {id(l.energy.poly): l.energy for l in spectrum.levels
            if isinstance(l.energy, ImplicitRoot) and l.energy.degree >= LAGUERRE_MIN_DEGREE}
    if reps:
        keys = list(dict.fromkeys(r.isolation_key(pt, digits + 5)
                                  for pt in points for r in reps.values()))
        # one coupling: the polynomial at J = num/den is that at J = 1 with the roots times
        # num, so one isolation serves every point (numeric.isolate.scaled_isolation)
        scaled = _scaled_keys(reps.values(), points, digits + 5)
        keys = list(dict.fromkeys([scaled[k][0] if k in scaled else k for k in keys]))
        if progress is not None:
            progress.phase("verification, isolation of roots", len(keys), "polynomials")
        if executor is None:
            for key in keys:
                evaluation.isolations[key] = isolate(*key)
                if progress is not None:
                    progress.step()
        else:
            futures = {submit(executor, isolate, *key): key for key in keys}
            pending = set(futures)
            while pending:
                done, pending = concurrent.futures.wait(
                    pending, timeout=1.0, return_when=concurrent.futures.FIRST_COMPLETED)
                for fut in done:
                    evaluation.isolations[futures[fut]] = fut.result()
                    if progress is not None:
                        progress.step()
                if progress is not None:
                    progress.tick()
        for key, (base, num) in scaled.items():
            evaluation.isolations[key] = scaled_isolation(evaluation.isolations[base], base[0],
                                                          num, key[0])
    first = _first_equal(spectrum.levels)
    values = []
    if progress is not None:
        progress.phase("verification, values at points", len(points), "points")
    with mpmath.workdps(digits + 10):
        for pi in range(len(points)):
            values.append(_values_at_usable_point(spectrum, symbols, points, pi, seed, digits,
                                                  evaluation, first=first))
            if progress is not None:
                progress.step()
    del evaluation      # its compiled forms and values are not needed below

    # 2. each level is a root of its own polynomial (closed forms against polynomials)
    with mpmath.workdps(digits + 10):
        # energies are homogeneous of degree one in the couplings: their scale at a point
        scales = [max(abs(mpmath.mpf(int(v.p)) / int(v.q)) for v in pt.values()) if pt else
                  mpmath.mpf(1) for pt in points]
        limit = mpmath.mpf(10) ** (-digits)
        worst_root = mpmath.mpf(0)
        merged = {}         # id(level polynomial) -> its groups at points where roots merged
        # the integer form of each level's polynomial; None for an implicit root, whose
        # value is a certified root of this very polynomial
        level_forms = []
        for li, lev in enumerate(spectrum.levels):
            if lev.polynomial is None:
                _fail(f"level {li} has no polynomial")
            level_forms.append(None if hasattr(lev.energy, "numeric") else forms(lev.polynomial))
        for pi, pt in enumerate(points):
            floor = scales[pi] * mpmath.mpf(10) ** (-digits)
            done = set()    # (id(form), id(value)): a level equal to one checked before
            by_poly = {}    # id(level polynomial) -> [(level, value, its coefficients)]
            at = values[pi]
            for li, form in enumerate(level_forms):
                if form is None:
                    continue
                x = at[li]                  # one object per distinct energy
                key = (id(form), id(x))
                ints = form.ints_at(pt)     # the coefficients times a positive integer
                if key not in done:
                    done.add(key)
                    if type(x) is mpmath.mpf and mpmath.isfinite(x):
                        # |P(x)| and its scale exactly at the value, one rounding
                        dev = exact_backward_error(ints[0], x, floor)
                    else:
                        dev = root_deviation(mp_coefficients(*ints), x, scales[pi], digits)
                    if not dev <= limit:
                        lev = spectrum.levels[li]
                        _fail(f"level {lev.energy} (N={lev.quantum_numbers['N']}) is not a root of "
                              f"its polynomial at {pt}: deviation {mpmath.nstr(dev, 3)}")
                    worst_root = max(worst_root, dev)
                if len(ints[0]) > 2:
                    lev = spectrum.levels[li]
                    by_poly.setdefault(id(lev.polynomial), []).append((lev, x, ints))
            floats = {}     # id(coefficients) -> their float64 values and |.|, or None
            for key, group in by_poly.items():
                if not _separate_roots(group, pt, floats):
                    merged.setdefault(key, []).append(group)
        # a factor whose roots merged at every point is separated at further points
        for groups in merged.values():
            if len(groups) == len(points):
                _separate_elsewhere(groups[0], symbols, seed, digits)
    worst_root = float(worst_root)
    report.add("closed forms are roots of their polynomials", "all levels", points, worst_root)
    report.add("closed forms of one factor are distinct roots of it (pairwise disjoint disks "
               "of radius 2n|P(x)|/|P'(x)| about the values)",
               "factors of degree >= 2 with closed forms", points, 0.0)

    if selection is not None:
        from symcluster.verify.selected import check_selected_sectors
        got = check_selected_sectors(spectrum, selection, values, points, primes, forms,
                                     selection_lattice, float_dim, seed, progress, digits)
        report.add("selected sectors: states of the selected levels = trace of the plain "
                   "projector onto the selected spins and irreps (characters, exact)",
                   "sectors holding selected levels, no eta selected", worst=0.0,
                   sectors=got["counted"], states=total)
        report.add("selected sectors: sum of share*E^m of the selected levels = exact Tr P H^m "
                   "(m = 1, 2; characters and the plain sector matrices, in integers)",
                   "sectors holding selected levels, no eta selected", points, 0.0,
                   sectors=got["traced"])
        report.add("selected sectors: float64 eigenvalues of the plain sector matrix on the "
                   "selected subspace (projector trace per eigenspace); exact divisibility "
                   "of det(x - H_sector) by the selected levels' polynomials (modulo a "
                   "random 62-bit prime per point) up to dim " + str(EXACT_DIM),
                   f"sectors with dim <= {min(float_dim, SELECTED_DENSE_DIM)}", points[:1],
                   got["worst"] if got["dense"]
                   else 0.0, sectors=got["dense"], primes=primes)
        if got["lanczos"]:
            report.add("selected sectors: lowest Lanczos eigenvalues (float64) of the plain "
                       "sector matrix on the selected subspace",
                       f"sectors with dim > {min(float_dim, SELECTED_DENSE_DIM)}",
                       points[:1], got["worst"], sectors=got["lanczos"],
                       lanczos_residual=got["lanczos_residual"])
        return report

    # 3. per sector: counting, sum rules, eigenvalues
    by_sector = {}
    shares = {}         # (N, S, Sz, degeneracy) -> the shares, all they depend on
    for li, lev in enumerate(spectrum.levels):
        qn = lev.quantum_numbers
        key = (qn.get("N", n_fixed), qn.get("S"), qn.get("Sz"), lev.degeneracy)
        split = shares.get(key)
        if split is None:
            split = shares[key] = _sector_shares(lev, L, n_fixed)
        for sector, share in split:
            by_sector.setdefault(sector, []).append((li, share))
    worst = {"balls": 0.0, "float": 0.0, "labels": 0.0}
    skipped = 0
    labelled = 0
    flipped = 0             # sectors N_up < N_dn that hold the levels of their spin-flip image
    flipped_labels = 0      # those of them with lattice labels (all of the group's irreps)
    label_images = _BlockImages(lattice, L) if lattice is not None else None
    floats0 = {}            # level index -> its float64 value at the first point
    sums = {}               # Vieta's power sums by polynomial (_check_sum_rules)
    reduced = [{} for _ in points]      # id(form) -> monic nmod_poly, per point and prime
    spectra = {}            # exact sector matrix -> its eigenvalues (equal sectors once)
    large = []              # worst deviations of the sectors above float_dim

    # the float64 tier splits a sector by an abelian group of site permutations (from the
    # lattice group; each is checked to commute with the plain sector matrix)
    split_gens = (abelian_generators(selection_lattice.group.elements)
                  if selection_lattice is not None
                  and selection_lattice.group.n_sites == space.n_modes else [])
    split_sectors = 0

    def flip_covered(n_up, n_dn):
        return ("spin" in proven and n_up < n_dn
                and by_sector.get((n_up, n_dn), []) == by_sector.get((n_dn, n_up)))

    # the plain route's sector matrices, every sector up to float_dim in one pass
    plain = sector_matrices(model, [
        (n_up, n - n_up) for n in sorted(wanted) for n_up in range(max(0, n - L), min(n, L) + 1)
        if 0 < space.sector_dim(n_up, n - n_up) <= float_dim
        and not flip_covered(n_up, n - n_up)])
    if progress is not None:
        progress.phase("verification, sectors",
                       sum(min(n, L) + 1 - max(0, n - L) for n in wanted), "sectors")
    for n in sorted(wanted):
        for n_up in range(max(0, n - L), min(n, L) + 1):
            if progress is not None:
                progress.step()
            n_dn = n - n_up
            members = by_sector.get((n_up, n_dn), [])
            dim = space.sector_dim(n_up, n_dn)
            got = sum(s for _, s in members)
            if got != dim:
                _fail(f"sector (N_up={n_up}, N_dn={n_dn}) has {got} states in the levels, expected {dim}")
            if not dim:
                continue
            mirrored = (("spin" in proven and n_up < n_dn)
                        or ("eta" in proven and n > L and (2 * L - n) in wanted))
            if flip_covered(n_up, n_dn):
                # the spin flip (a rotation by pi about the x axis, which commutes with H
                # once [H, S+] = 0 is proven, and with every site permutation U(g)) maps
                # this sector onto (n_dn, n_up), which holds the same levels with the same
                # shares: its traces Tr H^m and Tr U(g) H^m are those of the image, so
                # the sum rules and the lattice-label check there are the ones here
                flipped += 1
                if lattice is not None and dim <= EXACT_DIM and all(
                        spectrum.levels[li].quantum_numbers.get("irrep") in label_images.known
                        for li, _ in members):
                    flipped_labels += 1
                skipped += 1
                continue
            matrix = (plain[n_up, n_dn] if dim <= float_dim
                      else sector_matrix(model, n_up, n_dn))
            terms = matrix.as_dicts()
            tr1, tr2 = _sector_traces(terms, dim)
            if spectrum_fixed:
                tr1, tr2 = _at_fixed(tr1, spectrum_fixed), _at_fixed(tr2, spectrum_fixed)
            groups = _factor_groups(spectrum, members, (n_up, n_dn))
            _check_sum_rules(groups, tr1, tr2, (n_up, n_dn), sums, forms)
            if dim > float_dim:
                if not mirrored:
                    large.append(_check_large_sector(matrix, members, values, points, symbols,
                                                     (n_up, n_dn), digits, seed))
                continue
            if lattice is not None and dim <= EXACT_DIM:
                by_label = {s.name: v for s, v in points[0].items()}
                vals = []
                for li, _ in members:       # float64 values at the first point, once per level
                    x = floats0.get(li)
                    if x is None:
                        x = floats0[li] = float(values[0][li])
                    vals.append(x)
                dev = _check_lattice_labels(spectrum, lattice, members, dim, terms,
                                            by_label, vals, (n_up, n_dn), label_images)
                if dev is not None:
                    labelled += 1
                    worst["labels"] = max(worst["labels"], dev)
            if mirrored:
                skipped += 1
                continue
            # large sectors: the float64 comparison at the first point only (the
            # exact per-level checks above already cover both points)
            use_points = points if dim <= EXACT_DIM else points[:1]
            for pi, pt in enumerate(use_points):
                by_label = {s.name: v for s, v in pt.items()}
                level_vals = []
                if dim <= MP_DIM or dim > EXACT_DIM:     # the tiers that compare values
                    for li, share in members:
                        level_vals.extend([values[pi][li]] * share)
                    level_vals.sort()
                if dim <= MP_DIM:
                    with mpmath.workdps(digits + 10):
                        ev = _sector_eigenvalues(terms, dim, by_label, spectra)
                        # an eigenvalue lies within ``bound`` of ``y``: |x - it| <= |x - y| + bound
                        dev = max(((abs(x - y) + bound) / max(1, abs(y))
                                   for x, (y, bound) in zip(level_vals, ev)),
                                  default=mpmath.mpf(0))
                        if dev > mpmath.mpf(10) ** (-digits):
                            _fail(f"sector ({n_up},{n_dn}) at {pt}: levels differ from the "
                                  f"eigenvalues of the sector by {mpmath.nstr(dev, 3)}")
                        worst["balls"] = max(worst["balls"], float(dev))
                elif dim <= EXACT_DIM:
                    prime = primes[pi]
                    if not pi:
                        mats = _label_matrices(terms, dim)
                    cp = _charpoly_mod(mats, dim, by_label, prime)
                    prod = flint.nmod_poly([1], prime)
                    for p, share in groups:
                        prod *= _poly_mod(forms(p), pt, prime, reduced[pi]) ** share
                    if prod != cp:
                        _fail(f"sector ({n_up},{n_dn}): characteristic polynomial at {pt} "
                              f"differs from the product of the level polynomials "
                              f"(exact comparison modulo the prime {prime})")
                else:
                    if split_gens:
                        # block-diagonal by the plain site permutations (checked to commute)
                        ev = SectorSplit(matrix, sector_occupations(space, n_up, n_dn),
                                         split_gens).eigenvalues(by_label)
                        split_sectors += 1
                    else:
                        ev = np.linalg.eigvalsh(_numeric_matrix(terms, dim, by_label))
                    lv = np.array([float(x) for x in level_vals])
                    dev = float(np.max(np.abs(ev - lv)) / max(1.0, float(np.max(np.abs(ev)))))
                    if dev > 1e-9:
                        _fail(f"sector ({n_up},{n_dn}) at {pt}: levels differ from float64 "
                              f"eigenvalues by {dev:.2e}")
                    worst["float"] = max(worst["float"], dev)
    report.add("certified eigenvalues of unreduced sectors (ball arithmetic, python-flint)",
               f"sectors with dim <= {MP_DIM}",
               points, worst["balls"])
    report.add("exact sector characteristic polynomial (modulo a random 62-bit prime per point)",
               f"sectors {MP_DIM} < dim <= {EXACT_DIM}", points, 0.0, primes=primes)
    report.add("float64 eigenvalues of unreduced sectors" + (
        " (block-diagonal by the characters of an abelian group of plain signed site "
        "permutations, each checked exactly to commute with the sector matrix)"
        if split_sectors else ""), f"sectors {EXACT_DIM} < dim <= {float_dim}",
        points[:1], worst["float"], **({"split_sectors": split_sectors} if split_sectors else {}))
    if large:
        report.add("large sectors: exact power traces Tr H^m (m = 1..4) at every point, lowest "
                   "Lanczos eigenvalues (float64) at the first point",
                   f"sectors with dim > {float_dim}", points, max(d for d, _ in large),
                   sectors=len(large), lanczos_residual=max(r for _, r in large))
    scope, extra = "every sector", {}
    if flipped:
        scope += _FLIP_SCOPE
        extra["spin_flip_images"] = flipped
    report.add("sum rules Tr H, Tr H^2", scope, worst=0.0, **extra)
    if labelled:
        # a test of the labels, not of the energies: its float64 residual is reported
        # beside it and kept out of the report's worst deviation (that of the values)
        scope, extra = f"sectors with dim <= {EXACT_DIM}", {}
        if flipped_labels:
            scope += _FLIP_SCOPE
            extra["spin_flip_images"] = flipped_labels
        report.add("lattice labels: traces of H^0, H^1, H^2 on each irrep's isotypic subspace "
                   "(float64)",
                   scope, points[:1], 0.0,
                   sectors=labelled, float64_residual=float(worst["labels"]), **extra)
    if skipped:
        report.add("sectors covered by exactly proven symmetries", ", ".join(sorted(proven)),
                   worst=0.0, sectors=skipped)
    return report


_FLIP_SCOPE = (", except a sector N_up < N_dn that holds the levels of its spin-flip image "
               "(N_dn, N_up) (spin SU(2) proven): that image's check covers it")


def _check_large_sector(matrix, members, values, points, symbols, sector, digits, seed):
    """:func:`~symcluster.verify.large.check_large_sector` of one sector's members
    (``(level index, share)``) with their values at every point."""
    levels = [[(at[li], share) for li, share in members] for at in values]
    by_label = [{s.name: v for s, v in pt.items()} for pt in points]
    return check_large_sector(matrix, levels, by_label, sector, digits, seed)

