#!/usr/bin/env python
"""One-command benchmark of symcluster against naive baselines, measured in one run.

Usage::

    python tests/bench/run_bench.py [--quick] [--cap SECONDS] [--case-cap SECONDS]
                                    [--only NAME,...] [--jobs N] [--pairs K]
                                    [--out docs/performance-table.md]

Every measurement runs in a fresh Python subprocess (this same file started
with ``--worker``), so that each case has its own peak-memory figure and can be
killed at its time cap.  Times are wall-clock seconds of the computation
itself, measured inside the subprocess after all imports; the first call in
the fresh process ("cold") is the headline figure, and for the small cases the
best of a few further calls in the same process ("warm") is shown beside it.
Peak memory is the subprocess's maximum resident set size
(``resource.getrusage``; read from ``/proc/PID/status`` ``VmHWM`` when a case is
killed at its cap).

Measured items (names for ``--only`` in brackets):

1. [ring4] ring(4): full verified exact spectrum with symcluster vs naive
   ``sympy.Matrix.eigenvals()`` on every (N_up, N_dn) sector (see naive.py);
   ``--pairs`` interleaved pairs of fresh processes (default 7), medians reported
   beside every pair's figures.
2. [ring6-naive] ring(6): the same naive approach under a total time cap
   (``--cap``, default 400 s), vs symcluster.  The half-filled sector (3, 3)
   is attempted first, then the others by increasing dimension.
3. [ring6-numpy] ring(6): symcluster vs float64 ``numpy.linalg.eigvalsh`` of
   every dense sector matrix at t=1, U=4 (a baseline that already uses the
   particle-number and Sz symmetry).
3b. [ring6-fock] ring(6): symcluster vs the plain full diagonalization, one
   float64 ``eigvalsh`` of the dense 4096 x 4096 Fock-space matrix at t=1, U=4.
4. [ring6, grid2x3, cube, ring8, ladder4, ring6-tp] full-spectrum time, peak
   memory, level counts, block sizes, timing breakdown and verification
   summary, each under ``--case-cap`` (default 1800 s).

``--quick`` runs items 1-3b only (the ring(6) row of item 4 comes free).
Nothing is asserted: this file measures and reports.
"""

import argparse
import json
import os
import platform
import resource
import signal
import statistics
import subprocess
import sys
import tempfile
import time
import traceback

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(os.path.dirname(HERE))

# Independent bond lists for the baselines (the symcluster side uses its own constructors).
RING4_BONDS = [(i, (i + 1) % 4, "t") for i in range(4)]
RING6_BONDS = [(i, (i + 1) % 6, "t") for i in range(6)]
POINT = {"t": 1.0, "U": 4.0}

# Item-4 cases: name -> (display name, number of sites, target seconds or None, python expression).
SC_CASES = {
    "ring4": ("ring(4)", 4, None, "sc.ring(4)"),
    "ring6": ("ring(6)", 6, None, "sc.ring(6)"),
    "grid2x3": ("grid(2,3)", 6, None, "sc.grid(2, 3)"),
    "cube": ("cube", 8, 120, "sc.cube()"),
    "ring8": ("ring(8)", 8, 600, "sc.ring(8)"),
    "ladder4": ("2x4 ladder", 8, 1800, "sc.ladder(4)"),
    "ring6-tp": ("ring(6) t, tp", 6, 60,
                 'sc.cluster(6, [(i, (i + 1) % 6, "t") for i in range(6)]'
                 ' + [(i, (i + 2) % 6, "tp") for i in range(6)])'),
    # a spin model (the expression gives the model itself): only with --only heis16
    "heis16": ("Heisenberg ring(16)", 16, 120, "sc.heisenberg(sc.ring(16))"),
}
FULL_CASES = ["ring6", "grid2x3", "cube", "ring8", "ladder4", "ring6-tp"]
COMPARISONS = ["ring4", "ring6-naive", "ring6-numpy", "ring6-fock"]
ALL_NAMES = COMPARISONS + [c for c in FULL_CASES if c not in COMPARISONS]
#: Cases run only when named with --only (a minute or more each).
EXTRA_CASES = ["heis16"]


# ----------------------------------------------------------------------------------------------
# Worker side (runs in the subprocess)
# ----------------------------------------------------------------------------------------------

class _Events:
    """Append-only JSON-lines channel from a worker to the parent.

    Parameters
    ----------
    path : str
        File the parent reads after the worker ends or is killed.
    """

    def __init__(self, path):
        self.path = path

    def emit(self, **record):
        """Append one record and flush it to disk immediately."""
        with open(self.path, "a") as fh:
            fh.write(json.dumps(record) + "\n")
            fh.flush()


def _maxrss_mb(who=resource.RUSAGE_SELF):
    """Maximum resident set size in MB (Linux reports kB)."""
    return resource.getrusage(who).ru_maxrss / 1024.0


def _cpu_seconds():
    """User + system CPU seconds of this process and its waited-for children."""
    s = resource.getrusage(resource.RUSAGE_SELF)
    c = resource.getrusage(resource.RUSAGE_CHILDREN)
    return s.ru_utime + s.ru_stime + c.ru_utime + c.ru_stime


def _error_text(exc):
    """One-line description of an exception for the table."""
    msg = " ".join(str(exc).split())
    if len(msg) > 300:
        msg = msg[:297] + "..."
    return f"{type(exc).__name__}: {msg}"


def worker_symcluster(case, events, repeat, jobs, compare):
    """Solve one case with symcluster and report time, memory and spectrum statistics.

    Parameters
    ----------
    case : str
        Key of :data:`SC_CASES`.
    events : _Events
    repeat : int
        Number of extra ("warm") solves after the first one.
    jobs : int
        ``1``: call ``sc.solve(model)`` as is; ``> 1``: pass a
        ``ProcessPoolExecutor(jobs)`` as ``executor=``.
    compare : bool
        Also report the sorted float eigenvalues at t=1, U=4 (not timed).
    """
    t_import = time.perf_counter()
    import symcluster as sc  # noqa: F401  (used by the case expressions)
    t_import = time.perf_counter() - t_import
    from sympy.core.cache import clear_cache

    baseline = _maxrss_mb()
    built = eval(SC_CASES[case][3], {"sc": sc})
    model = built if isinstance(built, sc.Model) else sc.hubbard(built)
    executor = None
    if jobs > 1:
        from concurrent.futures import ProcessPoolExecutor
        executor = ProcessPoolExecutor(max_workers=jobs)
    kwargs = {"executor": executor} if executor is not None else {}
    cpu0 = _cpu_seconds()
    t0 = time.perf_counter()
    spec = sc.solve(model, **kwargs)
    cold = time.perf_counter() - t0
    cpu = _cpu_seconds() - cpu0
    warm = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        sc.solve(model, **kwargs)
        warm.append(time.perf_counter() - t0)
    # "steady": sympy's one-time imports are paid, but its expression cache is emptied
    # before each call, so nothing is reused from the previous solve of the same model
    steady = []
    for _ in range(repeat):
        clear_cache()
        t0 = time.perf_counter()
        sc.solve(model, **kwargs)
        steady.append(time.perf_counter() - t0)
    if executor is not None:
        executor.shutdown()
    implicit = sum(1 for lev in spec.levels if not lev.is_closed_form)
    degrees = [lev.polynomial.degree(lev.polynomial.gens[0])
               for lev in spec.levels if lev.polynomial is not None]
    result = {
        "status": "ok", "seconds": cold, "warm": min(warm) if warm else None, "cpu": cpu,
        "steady": min(steady) if steady else None, "import": t_import,
        "levels": len(spec.levels), "implicit": implicit,
        "largest_block": max((s.get("largest_block", 0) for s in spec.symmetries), default=0),
        "max_degree": max(degrees, default=0), "n_states": spec.n_states,
        "timings": {k: float(v) for k, v in spec.timings.items()},
        "verification": spec.verification.summary(),
        "n_checks": len(spec.verification.checks),
        "baseline_mb": baseline,
    }
    if compare:
        result["eigenvalues"] = sorted(float(e) for e, d in spec.numeric({"t": 1, "U": 4})
                                       for _ in range(d))
    result["peak_mb"] = max(_maxrss_mb(), _maxrss_mb(resource.RUSAGE_CHILDREN))
    events.emit(event="result", **result)


def worker_naive(case, events):
    """Naive sympy ``eigenvals()`` over all sectors, reporting progress sector by sector.

    Parameters
    ----------
    case : str
        ``"ring4"`` or ``"ring6"``.
    events : _Events
    """
    import sympy
    import naive

    baseline = _maxrss_mb()
    n, bonds = (4, RING4_BONDS) if case == "ring4" else (6, RING6_BONDS)
    sectors = naive.all_sectors(n)
    half = (n // 2, n // 2)
    sizes = {s: len(naive.sector_basis(n, *s)) for s in sectors}
    order = [half] + sorted((s for s in sectors if s != half), key=lambda s: (sizes[s], s))

    def progress(event, sector, dim, seconds):
        events.emit(event=event, sector=list(sector), dim=dim, seconds=seconds,
                    peak_mb=_maxrss_mb())

    events.emit(event="begin", epoch=time.time())
    cpu0 = _cpu_seconds()
    t0 = time.perf_counter()
    out = naive.naive_sympy_eigenvals(n, bonds, order, progress)
    seconds = time.perf_counter() - t0
    cpu = _cpu_seconds() - cpu0
    eig = []
    for sec, vals in out.items():
        for expr, mult in vals.items():
            sub = {s: POINT[s.name] for s in expr.free_symbols}
            z = complex(sympy.N(expr.subs(sub), 30))
            eig.extend([z.real] * mult)
    events.emit(event="result", status="ok", seconds=seconds, cpu=cpu, sectors=len(out),
                n_states=sum(sum(v.values()) for v in out.values()),
                eigenvalues=sorted(eig), baseline_mb=baseline, peak_mb=_maxrss_mb())


def worker_numpy(case, events, repeat, fock=False):
    """Dense float64 ``eigvalsh`` at t=1, U=4: of every sector, or (``fock``) of the Fock space.

    Parameters
    ----------
    case : str
        ``"ring4"`` or ``"ring6"``.
    events : _Events
    repeat : int
        Number of extra ("warm") runs after the first one.
    fock : bool
        One dense matrix on all 4**L states instead of one per (N_up, N_dn) sector.
    """
    import naive

    baseline = _maxrss_mb()
    n, bonds = (4, RING4_BONDS) if case == "ring4" else (6, RING6_BONDS)
    spectrum = naive.numpy_fock_spectrum if fock else naive.numpy_full_spectrum
    cpu0 = _cpu_seconds()
    t0 = time.perf_counter()
    eig, build, diag = spectrum(n, bonds, POINT)
    cold = time.perf_counter() - t0
    cpu = _cpu_seconds() - cpu0
    warm = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        spectrum(n, bonds, POINT)
        warm.append(time.perf_counter() - t0)
    events.emit(event="result", status="ok", seconds=cold, warm=min(warm) if warm else None,
                cpu=cpu, build=build, diag=diag, eigenvalues=eig.tolist(),
                baseline_mb=baseline, peak_mb=_maxrss_mb())


def worker_main(argv):
    """Entry point of a worker subprocess: ``--worker KIND CASE EVENTS [REPEAT JOBS COMPARE]``."""
    kind, case, path = argv[:3]
    repeat, jobs, compare = (int(x) for x in argv[3:6])
    sys.path.insert(0, HERE)
    sys.path.insert(0, ROOT)
    events = _Events(path)
    try:
        if kind == "symcluster":
            worker_symcluster(case, events, repeat, jobs, bool(compare))
        elif kind == "naive":
            worker_naive(case, events)
        elif kind == "numpy":
            worker_numpy(case, events, repeat)
        elif kind == "numpy-fock":
            worker_numpy(case, events, repeat, fock=True)
        else:
            raise ValueError(f"unknown worker kind {kind!r}")
    except Exception as exc:  # recorded in the table, never hidden
        events.emit(event="result", status="error", message=_error_text(exc),
                    traceback=traceback.format_exc(), peak_mb=_maxrss_mb())


# ----------------------------------------------------------------------------------------------
# Parent side
# ----------------------------------------------------------------------------------------------

def _vm_hwm_mb(pid):
    """Peak RSS of a running process from /proc (MB), or None."""
    try:
        with open(f"/proc/{pid}/status") as fh:
            for line in fh:
                if line.startswith("VmHWM:"):
                    return int(line.split()[1]) / 1024.0
    except OSError:
        return None
    return None


def run_worker(kind, case, cap, repeat=0, jobs=1, compare=False, log=print):
    """Run one measurement in a fresh subprocess, killing it at ``cap`` seconds.

    Parameters
    ----------
    kind : {"symcluster", "naive", "numpy", "numpy-fock"}
    case : str
    cap : float
        Wall-clock cap in seconds (includes interpreter start and imports).
    repeat, jobs : int
        Passed to the worker (see :func:`worker_symcluster`).
    compare : bool
        Ask the worker for eigenvalues at t=1, U=4.
    log : callable
        Progress messages (to stderr).

    Returns
    -------
    dict
        The worker's result record plus ``"wall"`` (parent-side seconds),
        ``"load"`` (1-minute load average at start), and ``"events"`` (all
        progress records).  ``status`` is ``"ok"``, ``"error"`` (exception
        inside the worker, with ``message``), ``"timeout"`` or ``"crashed"``.
    """
    fd, path = tempfile.mkstemp(prefix=f"bench-{kind}-{case}-", suffix=".jsonl")
    os.close(fd)
    err = tempfile.TemporaryFile()
    cmd = [sys.executable, os.path.abspath(__file__), "--worker", kind, case, path,
           str(repeat), str(jobs), str(int(compare))]
    load = os.getloadavg()[0]
    log(f"[bench] {kind} {case} (cap {cap:.0f} s, load {load:.2f}) ...")
    start = time.perf_counter()
    proc = subprocess.Popen(cmd, stdout=subprocess.DEVNULL, stderr=err, cwd=ROOT,
                            start_new_session=True)
    killed_peak = killed_at = None
    while proc.poll() is None:
        if time.perf_counter() - start > cap:
            killed_at = time.time()
            killed_peak = _vm_hwm_mb(proc.pid)
            try:  # the worker and any pool processes it started: its own session's group
                os.killpg(proc.pid, signal.SIGKILL)
            except ProcessLookupError:
                pass
            proc.wait()
            break
        time.sleep(0.2)
    wall = time.perf_counter() - start
    with open(path) as fh:
        records = [json.loads(line) for line in fh if line.strip()]
    os.unlink(path)
    err.seek(0)
    stderr_tail = err.read().decode(errors="replace").strip().splitlines()[-3:]
    err.close()
    results = [r for r in records if r.get("event") == "result"]
    progress = [r for r in records if r.get("event") != "result"]
    if killed_peak is not None:
        res = {"status": "timeout", "peak_mb": killed_peak}
        begin = [r["epoch"] for r in progress if r.get("event") == "begin"]
        if begin:  # computation time before the kill (the cap also covers start-up)
            res["seconds_at_kill"] = killed_at - begin[0]
    elif results:
        res = dict(results[-1])
    else:
        res = {"status": "crashed",
               "message": f"exit code {proc.returncode}: {' | '.join(stderr_tail)}"}
    res.update(wall=wall, load=load, events=progress, cap=cap)
    log(f"[bench]   -> {res['status']} after {wall:.1f} s")
    return res


def _fmt_s(x):
    """Seconds with a sensible number of digits."""
    if x is None:
        return "—"
    return f"{x:.3f}" if x < 10 else f"{x:.1f}" if x < 100 else f"{x:.0f}"


def _fmt_mb(x):
    return "—" if x is None else f"{x:.0f}"


def _agreement(a, b):
    """Max deviation between two sorted eigenvalue lists, as a table cell."""
    if not a or not b:
        return "—"
    if len(a) != len(b):
        return f"no: {len(a)} vs {len(b)} values"
    dev = max(abs(x - y) for x, y in zip(a, b))
    return f"{'yes' if dev < 1e-8 else 'NO'} (max dev {dev:.1e})"


def _failure(res):
    """Table cell for a run that did not produce a result."""
    if res["status"] == "timeout":
        return f"> {res['cap']:.0f} s (killed at cap)"
    return f"{res['status']}: {res.get('message', '')}"


def _naive_timeout_cell(res, cap):
    """Honest description of how far a capped naive run got."""
    done = [e for e in res["events"] if e["event"] == "done"]
    started = [e for e in res["events"] if e["event"] == "start"]
    cell = f"> {res.get('seconds_at_kill', cap):.0f} s (killed at the {cap:.0f} s cap)"
    if started and (not done or started[-1]["sector"] != done[-1]["sector"]):
        s = started[-1]
        cell += f", did not finish sector ({s['sector'][0]},{s['sector'][1]}) (dim {s['dim']})"
    cell += f"; {len(done)} of 49 sectors finished"
    return cell


def machine_info():
    """Short description of the machine and software versions."""
    cpu = "unknown CPU"
    try:
        with open("/proc/cpuinfo") as fh:
            for line in fh:
                if line.startswith("model name"):
                    cpu = line.split(":", 1)[1].strip()
                    break
    except OSError:
        pass
    mem = ""
    try:
        with open("/proc/meminfo") as fh:
            kb = int(fh.readline().split()[1])
            mem = f", {kb / 1024 ** 2:.1f} GB RAM"
    except (OSError, ValueError, IndexError):
        pass
    versions = []
    for mod in ("sympy", "numpy", "mpmath", "flint"):
        try:
            versions.append(f"{mod} {__import__(mod).__version__}")
        except Exception:  # pragma: no cover - informational only
            versions.append(f"{mod} ?")
    try:
        rev = subprocess.run(["git", "rev-parse", "--short", "HEAD"], cwd=ROOT,
                             capture_output=True, text=True).stdout.strip()
        dirty = subprocess.run(["git", "status", "--porcelain", "--untracked-files=no"], cwd=ROOT,
                               capture_output=True, text=True).stdout.strip()
        rev = rev + (" + uncommitted changes" if dirty else "")
    except OSError:
        rev = "?"
    return (f"{os.cpu_count()} cores ({cpu}){mem}; Linux {platform.release()}; "
            f"Python {platform.python_version()}; {', '.join(versions)}; symcluster at {rev}")


def first_sympy_addition():
    """Seconds of the first ``x + y`` in a fresh Python process (sympy's first-use imports)."""
    code = ("import time, sympy; x, y = sympy.symbols('x y'); t = time.perf_counter(); "
            "x + y; print(time.perf_counter() - t)")
    try:
        out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                             timeout=120, check=True)
        return float(out.stdout.strip())
    except (subprocess.SubprocessError, ValueError, OSError):
        return None


def build_report(args, sc_res, naive_res, numpy_res, started, finished, load_start, load_end,
                 first_add=None):
    """Assemble the Markdown report.

    Parameters
    ----------
    args : argparse.Namespace
    sc_res, naive_res, numpy_res : dict
        Results of :func:`run_worker` keyed by case name.
    started, finished : str
        Wall-clock time stamps.
    load_start, load_end : tuple of float
        ``os.getloadavg()`` at the start and the end.

    Returns
    -------
    str
    """
    lines = ["# symcluster benchmark", ""]
    lines.append(f"Machine: {machine_info()}.  ")
    lines.append(f"Run: {started} → {finished}; `python tests/bench/run_bench.py "
                 f"{' '.join(sys.argv[1:])}`.  ")
    lines.append(f"Load average (1/5/15 min) at start {load_start[0]:.2f}/{load_start[1]:.2f}/"
                 f"{load_start[2]:.2f}, at end {load_end[0]:.2f}/{load_end[1]:.2f}/"
                 f"{load_end[2]:.2f} (other processes may be running; the per-row load is "
                 f"the 1-minute average when the row started).")
    lines.append("")
    lines.append("Times: seconds of the computation in a fresh subprocess after imports; "
                 "symcluster = `sc.solve(sc.hubbard(cluster))` with verification on. "
                 "\"cold\" = first call in the process (headline), \"warm\" = best further call, "
                 "\"steady\" = best further call after `sympy.core.cache.clear_cache()` (sympy's "
                 "one-time imports paid, no expressions reused from the previous solve).")
    if first_add is not None:
        lines.append("")
        lines.append(f"For scale: the first sympy addition `x + y` in a fresh process takes "
                     f"{first_add * 1000:.1f} ms (sympy imports its tensor and combinatorics "
                     f"modules on first use). `import symcluster` imports them itself, so "
                     f"symcluster pays this in its import, not in its first solve; the naive "
                     f"baseline pays it inside its timed run.")
    imports = [r["import"] for r in sc_res.values() if r.get("status") == "ok" and r.get("import")]
    if imports:
        lines.append("")
        lines.append(f"`import symcluster` (not part of any timed solve): "
                     f"{min(imports):.2f}–{max(imports):.2f} s in the worker processes of this run.")
    lines.append("")

    if naive_res or numpy_res:
        lines += ["## Symcluster vs baselines (same run)", "",
                  "| comparison | symcluster cold (warm; steady) s | baseline s | ratio | target | "
                  "spectra agree at t=1, U=4 | peak RSS MB symcluster / baseline | load |",
                  "| --- | --- | --- | --- | --- | --- | --- | --- |"]
        if "ring4" in naive_res:
            s, b = sc_res["ring4"], naive_res["ring4"]
            pairs = len(s.get("samples", [])) if s["status"] == "ok" else 0
            if s["status"] == "ok" and b["status"] == "ok":
                ratio = f"naive/symcluster = {b['seconds'] / s['seconds']:.1f}× cold"
                if s.get("warm") and s.get("steady"):
                    ratio += (f" ({b['seconds'] / s['warm']:.1f}× warm; "
                              f"{b['seconds'] / s['steady']:.1f}× steady)")
                if pairs > 1:
                    each = ", ".join(f"{nb / ns:.0f}×" for ns, nb in zip(s["samples"],
                                                                        b["samples"]))
                    ratio += f"; medians of {pairs} interleaved pairs, cold ratio of each: {each}"
            else:
                ratio = "—"
            base = _fmt_s(b["seconds"]) if b["status"] == "ok" else _failure(b)
            if b["status"] == "ok" and pairs > 1:
                base += " (" + ", ".join(_fmt_s(x) for x in b["samples"]) + ")"
            cell = _cell_sc(s)
            if pairs > 1:
                cell += " (cold: " + ", ".join(_fmt_s(x) for x in s["samples"]) + ")"
            lines.append(
                f"| ring(4): exact spectrum vs naive sympy `eigenvals()` on all 25 (N↑,N↓) "
                f"sectors | {cell} | {base} | {ratio} | "
                f"naive/symcluster ≥ 200× | {_agreement(s.get('eigenvalues'), b.get('eigenvalues'))}"
                f" | {_mem_pair(s, b)} | {b['load']:.2f} |")
        if "ring6" in naive_res:
            s, b = sc_res["ring6"], naive_res["ring6"]
            if b["status"] == "ok":
                base = _fmt_s(b["seconds"])
                ratio = (f"naive/symcluster = {b['seconds'] / s['seconds']:.1f}×"
                         if s["status"] == "ok" else "—")
            elif b["status"] == "timeout":
                base = _naive_timeout_cell(b, args.cap)
                ratio = (f"naive/symcluster > {b.get('seconds_at_kill', args.cap) / s['seconds']:.0f}×"
                         if s["status"] == "ok" else "—")
            else:
                base, ratio = _failure(b), "—"
            lines.append(
                f"| ring(6): exact spectrum vs naive sympy `eigenvals()` (cap {args.cap:.0f} s; "
                f"sector (3,3) first) | {_cell_sc(s)} | {base} | {ratio} | — | "
                f"{_agreement(s.get('eigenvalues'), b.get('eigenvalues'))} | {_mem_pair(s, b)} | "
                f"{b['load']:.2f} |")
        for key, what in (("ring6", "float64 numpy `eigvalsh` of all 49 dense (N↑,N↓) sectors"),
                          ("ring6-fock", "plain full diagonalization: float64 numpy `eigvalsh` "
                                         "of the dense 4096×4096 Fock-space matrix")):
            if key not in numpy_res:
                continue
            s, b = sc_res["ring6"], numpy_res[key]
            if s["status"] == "ok" and b["status"] == "ok":
                ratio = (f"symcluster/numpy = {s['seconds'] / b['seconds']:.2f} "
                         f"(warm {s['warm'] / b['warm']:.2f})" if s.get("warm") and b.get("warm")
                         else f"symcluster/numpy = {s['seconds'] / b['seconds']:.2f}")
                base = (f"{_fmt_s(b['seconds'])} (warm {_fmt_s(b['warm'])}; build "
                        f"{_fmt_s(b['build'])} + eigvalsh {_fmt_s(b['diag'])})")
            else:
                ratio = "—"
                base = _fmt_s(b["seconds"]) if b["status"] == "ok" else _failure(b)
            lines.append(
                f"| ring(6): exact spectrum vs {what} at t=1, U=4 | {_cell_sc(s)} | {base} | "
                f"{ratio} | symcluster/numpy ≤ 2 | "
                f"{_agreement(s.get('eigenvalues'), b.get('eigenvalues'))} | {_mem_pair(s, b)} | "
                f"{b['load']:.2f} |")
        lines.append("")

    full = [c for c in FULL_CASES + EXTRA_CASES if c in sc_res]
    if full:
        lines += ["## Full verified exact spectra", "",
                  "| case | time s | target s | CPU s | blocks / algebra / levels / verify s | "
                  "peak RSS MB (after imports) | guard's estimate / measured growth MB | levels | "
                  "implicit-root levels | largest block | largest factor degree | states | "
                  "verified | load |",
                  "| --- | --- | --- | --- | --- | --- | --- | --- | --- | --- | --- | --- | --- "
                  "| --- |"]
        notes = []
        for c in full:
            name, n_sites, target, _ = SC_CASES[c]
            r = sc_res[c]
            tgt = "—" if target is None else f"≤ {target}"
            if r["status"] != "ok":
                lines.append(f"| {name} | {_failure(r)} | {tgt} | — | — | "
                             f"{_fmt_mb(r.get('peak_mb'))} | — | — | — | — | — | — | — | "
                             f"{r['load']:.2f} |")
                continue
            tm = r["timings"]
            breakdown = " / ".join(_fmt_s(tm.get(k)) for k in ("blocks", "algebra", "levels", "verify"))
            ok_states = r["n_states"] == (2 if c in EXTRA_CASES else 4) ** n_sites
            verified = "yes" if r["n_checks"] > 0 else "NO"
            lines.append(
                f"| {name} | {_fmt_s(r['seconds'])} | {tgt} | {_fmt_s(r['cpu'])} | {breakdown} | "
                f"{_fmt_mb(r['peak_mb'])} ({_fmt_mb(r['baseline_mb'])}) | "
                f"{_fmt_mb(tm.get('memory_estimate_bytes', 0) / 2 ** 20)} / "
                f"{_fmt_mb(r['peak_mb'] - r['baseline_mb'])} | {r['levels']} | "
                f"{r['implicit']} | {r['largest_block']} | {r['max_degree']} | "
                f"{r['n_states']}{'' if ok_states else ' (≠ 4^L or 2^L!)'} | {verified}¹ | "
                f"{r['load']:.2f} |")
            notes.append(f"{name}: {r['verification']}")
        lines += ["", "¹ Verification reports:", ""] + [f"- {n}" for n in notes]
        lines.append("")
    return "\n".join(lines)


def _mem_pair(a, b):
    """Peak-memory cell "a / b" in MB."""
    return f"{_fmt_mb(a.get('peak_mb'))} / {_fmt_mb(b.get('peak_mb'))}"


def _cell_sc(res):
    """Symcluster time cell: cold (warm; steady)."""
    if res["status"] != "ok":
        return _failure(res)
    warm = ""
    if res.get("warm") is not None:
        steady = f"; {_fmt_s(res['steady'])}" if res.get("steady") is not None else ""
        warm = f" ({_fmt_s(res['warm'])}{steady})"
    return _fmt_s(res["seconds"]) + warm


def _median_of_runs(runs):
    """One result for repeated runs of a case: the first run's record with the medians of
    the cold, warm and steady seconds, and every run's cold seconds in ``samples``; the
    first failed run's record if any failed."""
    for r in runs:
        if r["status"] != "ok":
            return r
    out = dict(runs[0])
    for key in ("seconds", "warm", "steady"):
        vals = [r[key] for r in runs if r.get(key) is not None]
        if vals:
            out[key] = statistics.median(vals)
    out["samples"] = [r["seconds"] for r in runs]
    out["peak_mb"] = max(r["peak_mb"] for r in runs)
    return out


def parse_args(argv):
    """Command-line options (see the module docstring)."""
    p = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    p.add_argument("--quick", action="store_true",
                   help="only the ring(4)/ring(6) comparisons (items 1-3b)")
    p.add_argument("--cap", type=float, default=400.0,
                   help="time cap in seconds of the naive sympy ring(6) run (default 400)")
    p.add_argument("--case-cap", type=float, default=1800.0,
                   help="time cap in seconds of each symcluster case (default 1800)")
    p.add_argument("--only", default="",
                   help=f"comma-separated subset of: {','.join(ALL_NAMES)}")
    p.add_argument("--jobs", type=int, default=1,
                   help="1 (default): sc.solve(model) as is; N>1: pass a ProcessPoolExecutor(N)")
    p.add_argument("--repeat", type=int, default=2,
                   help="extra warm runs for the small ring(4)/ring(6) measurements (default 2)")
    p.add_argument("--pairs", type=int, default=7,
                   help="interleaved (symcluster, naive sympy) pairs of fresh processes for the "
                        "ring(4) comparison; the table gives the medians (default 7)")
    p.add_argument("--out", default="", help="also write the Markdown table to this file")
    return p.parse_args(argv)


def main(argv=None):
    """Run the selected measurements and print (and optionally write) the Markdown table."""
    argv = sys.argv[1:] if argv is None else argv
    if argv and argv[0] == "--worker":
        worker_main(argv[1:])
        return 0
    args = parse_args(argv)
    if args.only:
        names = [n.strip() for n in args.only.split(",") if n.strip()]
        unknown = [n for n in names if n not in ALL_NAMES + EXTRA_CASES]
        if unknown:
            raise SystemExit(f"--only: unknown name(s) {unknown}; choose from "
                             f"{ALL_NAMES + EXTRA_CASES}")
    elif args.quick:
        names = list(COMPARISONS)
    else:
        names = list(ALL_NAMES)

    def log(msg):
        print(msg, file=sys.stderr, flush=True)

    started = time.strftime("%Y-%m-%d %H:%M:%S")
    load_start = os.getloadavg()
    sc_res, naive_res, numpy_res = {}, {}, {}
    first_add = first_sympy_addition() if "ring4" in names else None

    def write(partial):
        report = build_report(args, sc_res, naive_res, numpy_res, started,
                              time.strftime("%Y-%m-%d %H:%M:%S") + (" (partial)" if partial else ""),
                              load_start, os.getloadavg(), first_add)
        if args.out:  # rewritten after every case, so an interrupted run leaves its rows
            with open(args.out, "w") as fh:
                fh.write(report + "\n")
        return report

    def symcluster(case, warm_and_compare):
        if case not in sc_res:
            sc_res[case] = run_worker(
                "symcluster", case, args.case_cap, repeat=args.repeat if warm_and_compare else 0,
                jobs=args.jobs, compare=warm_and_compare, log=log)
            write(partial=True)
        return sc_res[case]

    if "ring4" in names:
        # interleaved pairs (symcluster, naive), each in fresh processes: both sides see the
        # same drift of the machine's load; the table gives the medians and every pair
        sc_runs, naive_runs = [], []
        for i in range(max(1, args.pairs)):
            sc_runs.append(run_worker("symcluster", "ring4", args.case_cap, repeat=args.repeat,
                                      jobs=args.jobs, compare=(i == 0), log=log))
            naive_runs.append(run_worker("naive", "ring4", max(args.cap, 600.0), log=log))
            sc_res["ring4"] = _median_of_runs(sc_runs)
            naive_res["ring4"] = _median_of_runs(naive_runs)
            write(partial=True)
    if "ring6-naive" in names or "ring6-numpy" in names or "ring6-fock" in names:
        symcluster("ring6", True)
    if "ring6-naive" in names:
        naive_res["ring6"] = run_worker("naive", "ring6", args.cap, log=log)
        write(partial=True)
    if "ring6-numpy" in names:
        numpy_res["ring6"] = run_worker("numpy", "ring6", 600.0, repeat=args.repeat, log=log)
        write(partial=True)
    if "ring6-fock" in names:
        numpy_res["ring6-fock"] = run_worker("numpy-fock", "ring6", 600.0, repeat=args.repeat,
                                             log=log)
        write(partial=True)
    for case in FULL_CASES + EXTRA_CASES:
        if case in names:
            symcluster(case, False)
    report = write(partial=False)
    print(report)
    if args.out:
        log(f"[bench] wrote {args.out}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
