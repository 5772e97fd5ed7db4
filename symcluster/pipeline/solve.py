"""The pipeline behind ``symcluster.pipeline.solve``: blocks -> exact algebra -> levels -> verification."""

import concurrent.futures
import functools
import os
import random
import time
from collections.abc import Iterable, Mapping, Sequence

import sympy

from symcluster.algebra.charpoly import charpoly_dict
from symcluster.algebra.closed import add_shift
from symcluster.algebra.factor import factor_integer_dict
from symcluster.algebra.polydict import poly_from_dict
from symcluster.symmetry.spin import shift_expr
from symcluster.blocks import bloch
from symcluster.blocks.build import (build_blocks, eta_member_irrep, plan_symmetries,
                                     sectors_to_solve)
from symcluster.blocks.selection import (block_needed, check_selection, level_matches,
                                         normalise_selection)
from symcluster.pipeline.derived import (Written, _closed_forms_once, _copy_factors,  # noqa: F401
                                         _negate_couplings, _Shifter, derived_blocks,
                                         equal_blocks, gauge_twins, twin_image)
from symcluster.pipeline.resources import Progress, block_dimensions, check_early, check_size
from symcluster.workers import submit
from symcluster.errors import ModelError, VerificationError
from symcluster.interrupts import process_pool, stop_pool
from symcluster.linalg import integer_multiple
from symcluster.models import Model
from symcluster.numeric.implicit import ImplicitRoot, remember_terms
from symcluster.spectrum import Level, Spectrum, VerificationReport, check_digits
from symcluster.symbols import CONSTANT
from symcluster.verify.core import verify_blocks, verify_spectrum

__all__ = ["solve", "solve_block"]


def _check_electrons(model, electrons):
    if electrons is None:
        return None
    if isinstance(electrons, int) and not isinstance(electrons, bool):
        electrons = [electrons]
    if isinstance(electrons, (str, bytes)):
        raise ModelError(f"electrons={electrons!r} is text; give an integer or a list of "
                         "integers, e.g. electrons=2 or electrons=[2, 3]")
    try:
        wanted = sorted(set(electrons))
    except TypeError:
        raise ModelError(f"electrons={electrons!r} is not an integer or list of integers") from None
    if not model.space.has_charge:
        raise ModelError(f"electrons={electrons!r}: a spin model has no electron number; "
                         "leave electrons= out")
    top = model.space.max_particles
    for n in wanted:
        if isinstance(n, bool) or not isinstance(n, int) or not 0 <= n <= top:
            raise ModelError(
                f"electron number {n!r} is impossible on {model.n_sites} sites "
                f"({model.space.describe()}); choose 0..{top}")
    return wanted


def solve_block(spec, names, gens=None, written=None):
    """Irreducible factors and their roots for one block: list of (poly, mult, roots).

    ``gens`` (optional) are the generators ``(E, *couplings)`` of `names`, and
    ``written`` a :class:`Written` (see :func:`_solve_packed`), both made once by a
    caller that solves many blocks.
    """
    return _unpack(_solve_packed(spec.block, names, gens, written), gens)


def _generators(names):
    """``(E, *coupling symbols)`` for the coupling `names` (the constant part left out)."""
    from symcluster.symbols import ENERGY, coupling_symbol
    return (ENERGY,) + tuple(coupling_symbol(n) for n in names if n != CONSTANT)


def _set_constant(poly, names):
    """A charpoly dict in (E, *names) with the constant part's variable (last) set to 1."""
    if not names or names[-1] != CONSTANT:
        return poly
    out = {}
    for exps, c in poly.items():
        key = exps[:-1]
        out[key] = out.get(key, 0) + c
    return {k: c for k, c in out.items() if c}


def _solve_packed(block, names, gens=None, written=None):
    """Worker side: factors and roots of one LinearBlock as plain, cheaply picklable data.

    sympy Polys pickle by rebuilding their expressions, which is slow for
    high-degree factors; integer term dicts and generator names travel instead.
    ``written`` (optional, one solve's :class:`Written`) holds the closed forms
    written so far, so that a factor met in several blocks is solved once, and
    polynomials in the couplings shared by several factors are written once.
    """
    names = tuple(names)
    gens = _generators(names) if gens is None else gens
    if isinstance(block, bloch.BlochBlock):
        cp = _bloch_dict(block)
    else:
        cp = _set_constant(charpoly_dict(block, names), names)
    _, ints = integer_multiple(cp)
    out = []
    for rep, mult in factor_integer_dict(ints, gens)[1]:
        closed = _closed_forms_once(rep, gens, written)
        if closed is None:
            roots = [("implicit", k) for k in range(max(m[0] for m in rep))]
        else:
            roots = [("closed", r) for r in closed]
        out.append((rep, tuple(g.name for g in gens), mult, roots))
    return out


def _bloch_dict(block):
    """det(E - H) of a :class:`~symcluster.blocks.bloch.BlochBlock` in (E, coupling):
    ``det(E - J H_1) = sum_a c_a scale^(a - n) E^a J^(n - a)`` from the integer
    polynomial ``sum_a c_a x^a = det(x - scale H_1)`` of its one coupling at 1."""
    from fractions import Fraction
    coeffs = block.integer_charpoly()
    n = len(coeffs) - 1
    return {(a, n - a): Fraction(c, block.scale ** (n - a)) for a, c in enumerate(coeffs) if c}


def _unpack(packed, gens=None):
    """Sympy Polys and roots from :func:`_solve_packed`'s data (``gens``: the generators
    if the caller has them)."""
    from symcluster.symbols import coupling_symbol
    out = []
    for rep, names, mult, roots in packed:
        if gens is None or len(gens) != len(names) or any(g.name != n for g, n in zip(gens, names)):
            gens = tuple(coupling_symbol(n) for n in names)
        fac = poly_from_dict(rep, gens, sympy.ZZ)
        if roots and roots[0][0] == "implicit":
            remember_terms(fac, rep)
        out.append((fac, mult, [ImplicitRoot(fac, r) if kind == "implicit" else r
                                for kind, r in roots]))
    return out


def _level_order(level):
    """Stable order of levels: N, then spin, eta, lattice label (no expression printing)."""
    qn = level.quantum_numbers
    spin = qn.get("S", qn.get("Sz", 0))
    eta = qn.get("eta", 0)
    return (qn.get("N", 0), _twice(spin), _twice(eta), str(qn.get("irrep", "")))


def _twice(x):
    """``int(2*x)`` of an integer or half-integer (int or sympy Rational)."""
    return 2 * x if isinstance(x, int) else int(x.p) * 2 // int(x.q)


_POOL_WORK = 2_000_000      # sum of dim^3 over the blocks from which a process pool pays


def _pool_workers(dims):
    """Processes of the default pool for blocks of these dimensions: all cores, or 0
    when the algebra is too light to pay for a pool (or there is one core)."""
    cores = os.cpu_count() or 1
    return cores if cores >= 2 and sum(m ** 3 for m in dims) >= _POOL_WORK else 0


def _default_executor(blocks):
    """A process pool on all cores when the algebra is heavy enough to pay for it (its
    processes never outlive this one: interrupts.process_pool)."""
    workers = _pool_workers([b.block.dim for b in blocks])
    return process_pool(workers) if workers else None


def _expected_workers(executor, dims):
    """Local pool processes a solve will start or use, for the memory estimate."""
    if executor is None:
        return _pool_workers(dims)
    if isinstance(executor, concurrent.futures.ProcessPoolExecutor):
        return getattr(executor, "_max_workers", os.cpu_count() or 1)
    return 0       # "serial", threads, or a remote engine: no local processes


def _run_blocks(blocks, names, executor, progress, written=None):
    """Solve every block, through ``executor`` if given; order of results = order of blocks.

    Without an executor, the closed forms go through ``written`` (the solve's
    :class:`Written`; a new one if None).
    """
    if executor is None:
        out = []
        gens = _generators(tuple(names))
        written = Written() if written is None else written
        for b in blocks:
            out.append(solve_block(b, names, gens, written))
            progress.step()
        return out
    # largest first, so that the pool stays busy; results put back in order
    order = sorted(range(len(blocks)), key=lambda i: -blocks[i].block.dim)
    futures = {submit(executor, _solve_packed, blocks[i].block, names): i for i in order}
    out = [None] * len(blocks)
    pending = set(futures)
    while pending:
        # a time-out now and then keeps the progress line's clock going while the
        # largest blocks (submitted first) take minutes
        done, pending = concurrent.futures.wait(
            pending, timeout=1.0, return_when=concurrent.futures.FIRST_COMPLETED)
        for fut in done:
            out[futures[fut]] = _unpack(fut.result())
            progress.step()
        progress.tick()
    return out


def _check_fixed(model, fixed):
    """``{label: sympy.Rational}`` from ``fixed`` (exact numbers or number texts)."""
    if fixed is None:
        return {}
    if not isinstance(fixed, dict):
        raise ModelError(f"fixed={fixed!r} is not a dict; give e.g. fixed={{'V_1': 1, 'eps_1': '-1/2'}}")
    from fractions import Fraction
    from symcluster.parsing import parse_number
    out = {}
    for label, value in fixed.items():
        if label not in model.labels:
            raise ModelError(f"fixed coupling {label!r} is not a coupling of the model; its "
                             "couplings are " + ", ".join(model.labels))
        if isinstance(value, str):
            value = parse_number(value, label)
        elif isinstance(value, bool) or not isinstance(value, (int, Fraction, sympy.Rational)):
            raise ModelError(f"fixed value of {label!r} is {value!r}; give an exact number such as "
                             "1, '-1/2' or fractions.Fraction(1, 3) (floats are not exact)")
        out[label] = sympy.Rational(value.numerator, value.denominator) \
            if isinstance(value, Fraction) else sympy.Rational(value)
    if len(out) == len(model.labels):
        raise ModelError("every coupling is fixed; keep at least one symbolic (the energies "
                         "are then exact expressions in it)")
    return out


def _with_constant(model, fixed):
    """The model with each fixed coupling's terms scaled by its value under the label CONSTANT."""
    if not fixed:
        return model
    from dataclasses import replace
    from fractions import Fraction
    terms = []
    for t in model.terms:
        if t.label in fixed:
            v = fixed[t.label]
            f = Fraction(int(v.p), int(v.q))
            if not f:
                continue
            t = replace(t, label=CONSTANT, operator=tuple((p, c * f) for p, c in t.operator),
                        scale=t.scale * f)
        terms.append(t)
    # the constant part last, so that the block builder and the algebra see it last
    terms = [t for t in terms if t.label != CONSTANT] + [t for t in terms if t.label == CONSTANT]
    return replace(model, terms=tuple(terms))


class _CountedList(list):
    """A list that reports every append to ``step`` (build_blocks appends one entry per
    sector to its ``report`` list: the progress of the block phase)."""

    def __init__(self, step):
        super().__init__()
        self._step = step

    def append(self, item):
        super().append(item)
        self._step()


def solve(model: Model, electrons: int | Iterable[int] | None = None, verify: bool = True,
          lattice: bool = True, spin: bool = True, eta: bool = True, digits: int = 30,
          seed: int | None = None, executor: concurrent.futures.Executor | str | None = None,
          progress: bool | Progress | None = None, force: bool = False,
          fixed: Mapping[str, object] | None = None,
          sectors: Sequence[Mapping[str, object]] | None = None) -> Spectrum:
    """Exact, verified spectrum of a model.

    Parameters
    ----------
    model : Model
        e.g. ``hubbard(ring(4))``.
    electrons : int or list of int, optional
        Electron numbers to solve (default: all, 0 .. 2L).
    verify : bool
        Must stay True for results that are returned to users; ``False`` is
        refused (verification is not optional).
    lattice, spin, eta : bool
        Use the cluster's automorphism group, spin SU(2), eta-pseudospin
        SU(2) where they are found (default True); switch off for cross-checks.
    digits : int
        Precision of the numerical verification (>= 30).
    seed : int, optional
        Seed of the random verification points (recorded in the report).
    executor : concurrent.futures.Executor, "serial" or None
        Solve blocks, and run the verification's root isolations of high-degree
        factors, through this executor (any object with ``submit``, e.g. a
        process pool or a distributed engine's executor).  None (default)
        picks a process pool on all cores when the blocks are large enough to
        pay for it; pass ``"serial"`` to stay in this process.  A
        ``ThreadPoolExecutor`` is accepted but runs one task at a time: the
        working precision of python-flint and mpmath is process-wide.
    progress : bool or Progress, optional
        Progress line on stderr naming each phase (symmetry detection, blocks,
        exact algebra, the verification's steps) with its count.  Default (None):
        only when stderr is a terminal, once the run has lasted a few seconds;
        True: from the start, terminal or not; False: never; a
        :class:`~symcluster.pipeline.resources.Progress` of the caller's (which goes on
        reporting the caller's own phases afterwards): that one.  It never
        changes the result.
    force : bool
        Run even if the memory estimate exceeds the available memory.
    fixed : dict, optional
        ``{label: exact value}`` of couplings to hold at fixed values (ints, Fractions,
        sympy Rationals or number texts such as ``"-1/2"``).  The energies are then exact
        expressions in the other couplings only; every fixed coupling saves a variable
        of the exact algebra.  Recorded in ``Spectrum.fixed``.
    sectors : list of dict, optional
        Solve only the levels whose quantum numbers match every key of at least one
        dict, e.g. ``[{"N": 10, "S": 0}, {"N": 9, "S": "1/2", "k": "0"}]``.  Keys: the
        names the levels carry, ``N``, ``S`` (with spin SU(2)) or ``Sz`` (without),
        ``eta``, ``k`` (a multiple of pi) and ``irrep`` (the lattice label).  Blocks
        that give no selected level are never built.  The result records the
        selection in ``Spectrum.sectors``, and analyses that need sectors it does
        not hold refuse it (docs/sectors.md).  Not together with ``electrons=``.

    Returns
    -------
    Spectrum

    Raises
    ------
    VerificationError
        If any level fails a check; nothing is returned then.
    InputError
        An unknown key or an impossible value in ``sectors``.

    Examples
    --------
    >>> import symcluster as sc
    >>> spec = sc.solve(sc.hubbard(sc.ring(4)), sectors=[{"N": 4, "S": 0, "k": 0}], seed=1)
    >>> spec.sectors
    [{'N': 4, 'S': 0, 'k': Fraction(0, 1)}]
    >>> sorted({str(l.quantum_numbers["irrep"]) for l in spec.levels})
    ['k=0,+', 'k=0,−']
    >>> spec.n_states
    6
    """
    if not isinstance(model, Model):
        raise ModelError(f"solve() needs a Model such as hubbard(ring(4)), got {type(model).__name__}")
    if verify is not True:
        raise ModelError("verification cannot be switched off; call solve(model) without verify=")
    if isinstance(digits, bool) or not isinstance(digits, int) or digits < 30:
        raise ModelError(f"digits={digits!r}: verification needs at least 30 digits; use digits>=30")
    check_digits(digits, minimum=30)
    if seed is not None and (isinstance(seed, bool) or not isinstance(seed, int)):
        raise ModelError(f"seed={seed!r} is not an integer; give e.g. seed=1 or leave it out")
    wanted = _check_electrons(model, electrons)
    selection = None
    if sectors is not None:
        if electrons is not None:
            raise ModelError("give either electrons= or sectors= (a sector dict may name N)")
        selection = normalise_selection(sectors)
    fixed = _check_fixed(model, fixed)
    if progress is not None and not isinstance(progress, (bool, Progress)):
        raise ModelError(f"progress={progress!r}: give True, False or leave it out")
    timings = {}
    t0 = time.perf_counter()
    prog = progress if isinstance(progress, Progress) else Progress(enabled=progress)
    try:
        return _solve(model, wanted, lattice, spin, eta, digits, seed, executor, prog, force,
                      timings, t0, fixed, selection)
    finally:
        if prog is not progress:
            prog.close()


def _solve(model, wanted, lattice, spin, eta, digits, seed, executor, prog, force, timings, t0,
           fixed, selection=None):
    """:func:`solve` after its arguments were checked."""
    original, model = model, _with_constant(model, fixed)
    # before the detection, whose cost also grows with the cluster (commutators on every
    # state with at most two electrons, the automorphism search)
    space = model.space
    # variables of the exact algebra: every label but one, whether the model is
    # homogeneous (one coupling scaled to 1) or has held couplings (their terms under
    # CONSTANT, the part without a variable)
    n_free = len(model.labels) - 1
    # a selection: only the detection is counted early (a lower bound of any selection)
    check_early(space, [] if selection is not None else wanted, n_free, force)
    prog.phase("symmetry detection")
    plan = plan_symmetries(model, lattice=lattice, spin=spin, eta=eta)
    if fixed:
        _drop_constant_shifts(plan)
    keep = None
    if selection is not None:
        check_selection(selection, space, plan)
        keep = functools.partial(_block_kept, selection, plan, space)
    sectors = sectors_to_solve(space, plan, wanted)
    if keep is not None:
        sectors = [s for s in sectors if block_dimensions(space, [s], plan, keep)]
    # the large sectors of a spin ring: momentum blocks modulo primes (blocks/bloch.py)
    big = {s for s in sectors if space.sector_dim(*s) > bloch.MODULAR_MIN_SECTOR}
    route = bloch.ring_route(model, plan) if big else None
    if route is None:
        big = set()
    estimate = check_size(space, sectors, plan, n_free, force,
                          _expected_workers(executor, block_dimensions(space, sectors, plan, keep)),
                          keep, big)
    timings["memory_estimate_bytes"] = estimate
    prog.phase("blocks", len(sectors), "sectors")
    sizes = _CountedList(prog.step)
    modular = bloch.bloch_blocks(model, plan, sorted(big), keep, sizes, route) if big else None
    if modular is not None:
        blocks = build_blocks(model, plan, wanted, report=sizes,
                              keep=functools.partial(_not_in, big, keep)) + modular
    else:
        blocks = build_blocks(model, plan, wanted, report=sizes, keep=keep)
    timings["blocks"] = time.perf_counter() - t0
    names = model.labels
    t1 = time.perf_counter()
    own_pool = None
    if executor is None:
        executor = own_pool = _default_executor(blocks)
    elif executor == "serial":
        executor = None
    twins, copies, mirrored = derived_blocks(model, plan, blocks, names,
                                             seed=0 if seed is None else seed)
    # blocks derived from others (gauge twins, equal copies, spectral twins) are not counted
    derived = {**twins, **copies, **mirrored}
    prog.phase("exact algebra", len(blocks) - len(derived), "blocks")
    try:
        todo = [i for i in range(len(blocks)) if i not in derived]
        written = Written()             # the closed forms of this solve
        solved = dict(zip(todo, _run_blocks([blocks[i] for i in todo], names, executor, prog,
                                            written)))
        for i, (j, flipped, shift) in mirrored.items():
            solved[i] = twin_image(solved[j], flipped, shift, written)
        for i, j in copies.items():
            solved[i] = _copy_factors(solved[j])
        odd = plan.odd_labels           # the labels G maps to minus themselves
        results = [solved[i] if i in solved else _negate_couplings(solved[twins[i]], odd, written)
                   for i in range(len(blocks))]
    except BaseException:
        # KeyboardInterrupt included: kill the workers rather than wait for their tasks
        if own_pool is not None:
            stop_pool(own_pool)
        raise
    try:
        spectrum = _finish(original, plan, blocks, results, twins, sizes, wanted, digits, seed,
                           timings, t0, t1, executor, prog, fixed, selection, len(mirrored))
    except BaseException:
        if own_pool is not None:
            stop_pool(own_pool)
        raise
    if own_pool is not None:
        own_pool.shutdown()
    return spectrum


def _not_in(big, keep, sector, irrep):
    """``keep`` of the exact build when the sectors ``big`` go the modular route."""
    return sector not in big and (keep is None or keep(sector, irrep))


def _block_kept(selection, plan, space, sector, irrep):
    """Whether a selection keeps the block of (sector, lattice irrep): the ``keep`` of
    :func:`~symcluster.blocks.build.build_blocks`."""
    return block_needed(selection, plan, space.n_modes, sector, irrep, space.has_charge)


def _drop_constant_shifts(plan):
    """Shortcuts whose energy shift involves a fixed coupling are not used (the shifted
    polynomials would leave the integers): eta members, and the S^z members of a field."""
    if plan.eta and CONSTANT in plan.eta[1]:
        plan.eta, plan.sublattice_char, plan.odd_labels = None, [], None
    if plan.spin_split and CONSTANT in plan.spin_shift:
        plan.spin, plan.spin_shift = False, {}
    if plan.odd_labels is not None and CONSTANT in plan.odd_labels:
        plan.odd_labels = None          # t -> -t twins need the sign of a free coupling


def _finish(model, plan, blocks, results, twins, sizes, wanted, digits, seed, timings, t0, t1,
            executor, progress=None, fixed=None, selection=None, n_mirrored=0):
    """Levels from the block results, then verification (through `executor` if given;
    steps reported to `progress`, a :class:`~symcluster.pipeline.resources.Progress`)."""
    timings["algebra"] = time.perf_counter() - t1
    t_levels = time.perf_counter()
    levels = []
    shift = plan.eta_shift
    shifter = _Shifter(shift, plan.eta[1] if plan.eta else None)
    # a field: each step down in S^z moves the energy by -d ([H, S+] = d S+)
    down = {lab: -x for lab, x in plan.spin_shift.items()} if plan.spin_split else None
    spin_shift = shift_expr(down) if down else None
    spin_shifter = _Shifter(spin_shift, down)
    moved = {}      # (irrep label, k odd) -> the irrep of the k-th eta member
    shifted = {}    # (id(closed form), k) -> the form moved by k eta pairs (forms shared by
                    # equal or twin blocks are moved once; `results` keeps them alive)
    if progress is not None:
        progress.phase("levels", len(blocks), "blocks")
    for spec, factors in zip(blocks, results):
        if progress is not None:
            progress.step()
        for fac, mult, roots in factors:
            if mult % spec.copies:
                raise VerificationError(
                    f"block {spec.labels}: factor multiplicity {mult} is not a multiple of the "
                    f"{spec.copies} copies the symmetry projection predicts")
            deg = spec.states_per_root * mult // spec.copies
            for k in range(spec.eta_members):
                qn = dict(spec.labels)
                if k:
                    qn["N"] = spec.labels["N"] + 2 * k
                if wanted is not None and qn.get("N") not in wanted:
                    continue
                if k and "irrep" in qn:
                    key = (qn["irrep"], k % 2)
                    irr = moved[key] if key in moved else moved.setdefault(
                        key, eta_member_irrep(plan, spec.irrep, k))
                    qn["irrep"] = irr.label if irr is not None else qn["irrep"] + "*"
                    qn.pop("mulliken", None)
                    if getattr(irr, "mulliken", None):
                        qn["mulliken"] = irr.mulliken
                    if irr is not None and getattr(irr, "momentum", None) is not None:
                        qn["k"] = irr.momentum
                poly = shifter(fac, k)
                for j in range(spec.spin_members):
                    # the j-th S^z member below S^z = S (a field splits the multiplet)
                    if j:
                        qn_j = dict(qn)
                        qn_j["Sz"] = qn["S"] - j
                        poly_j = spin_shifter(poly, j)
                    else:
                        qn_j, poly_j = qn, poly
                    if selection is not None and not level_matches(selection, qn_j):
                        continue
                    for r in roots:
                        energy = r
                        if k:
                            if isinstance(r, ImplicitRoot):
                                energy = ImplicitRoot(poly, r.index)
                            else:
                                energy = shifted.get((id(r), k))
                                if energy is None:
                                    energy = shifted[id(r), k] = add_shift(r, k, shift)
                        if j:
                            energy = (ImplicitRoot(poly_j, r.index) if isinstance(r, ImplicitRoot)
                                      else add_shift(energy, j, spin_shift))
                        src = (spec.block, spec.vectors) if not (k or j) and spec.vectors \
                            and spec.block.dim <= 4 else None
                        levels.append(Level(energy, deg, dict(qn_j), poly_j, None,
                                            block=f"{spec.sector}:{spec.labels.get('irrep', '')}",
                                            source=src))
    levels.sort(key=_level_order)
    timings["levels"] = time.perf_counter() - t_levels
    report = VerificationReport(digits=digits)
    spectrum = Spectrum(model, levels, [], report, timings, dict(fixed or {}), selection)
    used = plan.names()
    if twins:
        used.append(f"sublattice gauge t -> -t ({len(twins)} odd-N blocks derived from their twins)")
    if n_mirrored:
        used.append(f"spectral twins E -> E + shift, couplings -> +-couplings ({n_mirrored} "
                    "blocks derived, each pair found by an exact comparison at a random point)")
    spectrum.symmetries = [{"symmetries": used}] + [
        {"sector": s["sector"], "sector_dim": s["sector_dim"], "steps": s["steps"],
         "largest_block": s["largest_block"]} for s in sizes]
    t2 = time.perf_counter()
    seed = random.SystemRandom().randrange(2 ** 31) if seed is None else seed
    n_checked = verify_blocks(blocks, results, seed, progress=progress, executor=executor)
    report.add("exact block characteristic polynomials vs. their factors "
               "(modulo a random 62-bit prime per point)", f"{n_checked} blocks", worst=0.0)
    # a field splits the spin multiplets: the spin flip is no symmetry then
    proven = (("spin",) if plan.spin and not plan.spin_split else ()) + (
        ("eta",) if plan.eta else ())
    verify_spectrum(spectrum, wanted, digits=digits, seed=seed, proven=proven, executor=executor,
                    lattice=plan.lattice, progress=progress, selection=selection)
    timings["verify"] = time.perf_counter() - t2
    timings["total"] = time.perf_counter() - t0
    return spectrum
