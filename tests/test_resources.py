"""Memory guard, progress line and the executor interface of sc.solve."""

import concurrent.futures
import importlib
import io
import os
import re

import pytest

import symcluster as sc
from symcluster.pipeline import resources
from symcluster.blocks.build import build_blocks, plan_symmetries, sectors_to_solve
from symcluster.errors import TooLargeError
from symcluster.pipeline.resources import Progress


def test_guard_refuses_with_the_estimate(monkeypatch):
    monkeypatch.setattr(resources, "available_memory", lambda: 10_000)
    with pytest.raises(TooLargeError) as info:
        sc.solve(sc.hubbard(sc.chain(2)))
    msg = str(info.value)
    assert "GiB" in msg and "force=True" in msg


def test_force_overrides_the_guard(monkeypatch):
    monkeypatch.setattr(resources, "available_memory", lambda: 10_000)
    spec = sc.solve(sc.hubbard(sc.chain(2)), force=True)
    assert spec.n_states == 16


def test_estimate_grows_with_the_sector_size():
    small = resources.estimate_cost(4, [(2, 2)])
    large = resources.estimate_cost(8, [(4, 4)])
    assert 0 < small < large


def test_estimate_grows_with_the_number_of_free_couplings():
    model = sc.hubbard(sc.ring(6))
    plan = plan_symmetries(model)
    sectors = sectors_to_solve(6, plan)
    one = resources.estimate_cost(6, sectors, plan, n_free=1)
    two = resources.estimate_cost(6, sectors, plan, n_free=2)
    assert two > one


@pytest.mark.parametrize("make", [lambda: sc.ring(4), lambda: sc.ring(6), lambda: sc.grid(2, 3),
                                  lambda: sc.chain(6), sc.tetrahedron])
def test_counted_block_dimensions_match_the_built_blocks(make):
    # independent of the counting formula: the blocks that build_blocks constructs
    model = sc.hubbard(make())
    plan = plan_symmetries(model)
    counted = resources.block_dimensions(model.n_sites, sectors_to_solve(model.n_sites, plan), plan)
    built = [b.block.dim for b in build_blocks(model, plan, None)]
    # the count is exact for regular representations; small blocks may be off by a state
    assert abs(max(counted) - max(built)) <= max(1, 0.1 * max(built))


def test_counting_without_symmetry_gives_the_sector_dimensions():
    # no symmetry: one block per (N_up, N_dn) sector, C(L, N_up) C(L, N_dn) states
    dims = resources.block_dimensions(4, [(2, 1), (3, 3)], None)
    assert dims == [6 * 4, 4 * 4]


def test_ten_site_ring_is_refused_on_a_24_gib_machine(monkeypatch):
    # ring(10) at half filling has blocks of thousands of states: refused before any work
    monkeypatch.setattr(resources, "available_memory", lambda: 24 * 2 ** 30)

    def must_not_run(*args, **kwargs):
        raise AssertionError("the guard let ring(10) through to the block construction")

    monkeypatch.setattr(importlib.import_module("symcluster.pipeline.solve"), "build_blocks", must_not_run)
    with pytest.raises(TooLargeError) as info:
        sc.solve(sc.hubbard(sc.ring(10)))
    msg = str(info.value)
    assert "GiB" in msg and "electrons=" in msg and "force=True" in msg and "states" in msg


def test_few_electrons_on_ten_sites_pass_the_guard(monkeypatch):
    monkeypatch.setattr(resources, "available_memory", lambda: 24 * 2 ** 30)
    model = sc.hubbard(sc.ring(10))
    plan = plan_symmetries(model)
    need = resources.check_size(10, sectors_to_solve(10, plan, [2]), plan, 1)
    assert need < 2 ** 30


class _Tty(io.StringIO):
    def isatty(self):
        return True


def test_progress_only_on_a_terminal_after_a_delay():
    tty = _Tty()
    p = Progress(stream=tty, after=0.0)
    p.phase("blocks", 3, "sectors")
    p.step()
    p.close()
    assert "blocks: 1/3 sectors" in tty.getvalue()
    assert tty.getvalue().endswith("\n")          # the line is ended on close
    pipe = io.StringIO()           # not a terminal: quiet
    q = Progress(stream=pipe, after=0.0)
    q.phase("blocks", 3, "sectors")
    q.step()
    q.close()
    assert pipe.getvalue() == ""
    late = _Tty()                  # a terminal, but the run has not lasted long enough yet
    r = Progress(stream=late, after=1e9)
    r.phase("blocks", 3, "sectors")
    r.step()
    r.close()
    assert late.getvalue() == ""
    never = _Tty()
    s = Progress(enabled=False, stream=never)
    s.phase("blocks", 3, "sectors")
    s.step()
    s.close()
    assert never.getvalue() == ""


def test_progress_names_every_phase_of_a_solve_with_a_count(monkeypatch):
    # grid(2,3) at half filling has factors of degree >= 24, whose certified root
    # isolation is a phase of its own; progress=True shows from the start
    tty = _Tty()
    monkeypatch.setattr("sys.stderr", tty)
    model = sc.hubbard(sc.grid(2, 3))
    shown = sc.solve(model, electrons=[6], executor="serial", seed=3, progress=True)
    text = tty.getvalue()
    lines = [l.strip() for l in text.split("\r") if l.strip()]
    assert any(l.startswith("symcluster: symmetry detection") for l in lines)
    for phase, unit in [("blocks", "sectors"), ("exact algebra", "blocks"),
                        ("levels", "blocks"), ("verification, block polynomials", "checks"),
                        ("verification, isolation of roots", "polynomials"),
                        ("verification, values at points", "points"),
                        ("verification, sectors", "sectors")]:
        counts = [re.match(rf"symcluster: {re.escape(phase)}: (\d+)/(\d+) {unit} \(\d+ s\)$", l)
                  for l in lines]
        counts = [(int(m.group(1)), int(m.group(2))) for m in counts if m]
        assert counts, f"no count for the phase {phase!r} in {text!r}"
        total = counts[0][1]
        assert total > 0 and (total, total) in counts      # counted up to the end
        assert [d for d, _ in counts] == sorted(d for d, _ in counts)
    # the phases come in the order of the pipeline
    order = [text.index(p) for p in ("symmetry detection", "blocks:", "exact algebra",
                                     "levels:", "block polynomials", "isolation", "values at points",
                                     "verification, sectors")]
    assert order == sorted(order)
    # reporting never changes the result
    monkeypatch.setattr("sys.stderr", io.StringIO())
    quiet = sc.solve(model, electrons=[6], executor="serial", seed=3, progress=False)
    key = lambda spec: [(str(l.energy), l.degeneracy, str(l.quantum_numbers))
                        for l in spec.levels]
    assert key(shown) == key(quiet)


def test_progress_is_quiet_when_stderr_is_not_a_terminal(capsys):
    sc.solve(sc.hubbard(sc.ring(4)), electrons=[4], seed=1)          # progress=None
    assert capsys.readouterr().err == ""
    sc.solve(sc.hubbard(sc.ring(4)), electrons=[4], seed=1, progress=False)
    assert capsys.readouterr().err == ""


def test_progress_counts_the_tasks_of_an_executor(monkeypatch):
    # with an executor, blocks and isolations are counted as their results arrive
    tty = _Tty()
    monkeypatch.setattr("sys.stderr", tty)
    with concurrent.futures.ThreadPoolExecutor(max_workers=2) as pool:
        sc.solve(sc.hubbard(sc.grid(2, 3)), electrons=[6], executor=pool, seed=3, progress=True)
    text = tty.getvalue()
    algebra = re.findall(r"exact algebra: (\d+)/(\d+) blocks", text)
    assert algebra and algebra[-1][0] == algebra[-1][1] != "0"
    iso = re.findall(r"isolation of roots: (\d+)/(\d+) polynomials", text)
    assert iso and iso[-1][0] == iso[-1][1] != "0"


def test_any_executor_gives_the_same_levels():
    model = sc.hubbard(sc.ring(4))
    serial = sc.solve(model, electrons=[2, 3], executor="serial", seed=4)
    with concurrent.futures.ThreadPoolExecutor(max_workers=2) as pool:
        threaded = sc.solve(model, electrons=[2, 3], executor=pool, seed=4)
    key = lambda spec: sorted((str(l.energy), l.degeneracy, str(l.quantum_numbers))
                              for l in spec.levels)
    assert key(serial) == key(threaded)


def test_executor_also_runs_the_verification_root_isolations():
    # grid(2,3) at half filling has factors of degree >= LAGUERRE_MIN_DEGREE: with an
    # executor their certified isolations are submitted to it during verification, and
    # the values are those of the serial path.
    model = sc.hubbard(sc.grid(2, 3))
    submitted = []

    class Counting(concurrent.futures.ThreadPoolExecutor):
        def submit(self, fn, *args, **kwargs):
            # tasks on a thread pool arrive wrapped (run one at a time): unwrap the name
            inner = args[0] if args and callable(args[0]) else fn
            submitted.append(getattr(inner, "__name__", ""))
            return super().submit(fn, *args, **kwargs)

    with Counting(max_workers=2) as pool:
        spec = sc.solve(model, electrons=[6], executor=pool, seed=5)
    assert "isolate" in submitted
    serial = sc.solve(model, electrons=[6], executor="serial", seed=5)
    pt = {"t": 1, "U": 3}
    assert [str(v) for v, _ in spec.numeric(pt)] == [str(v) for v, _ in serial.numeric(pt)]


def test_thread_pool_tasks_run_one_at_a_time():
    # flint's and mpmath's working precision is process-wide: tasks submitted through
    # symcluster to a thread pool must never overlap (they once computed at each other's
    # precision and raised).  Each task counts the tasks running beside it.
    import threading
    import time as _time
    from symcluster.workers import submit
    state = {"running": 0, "most": 0}
    lock = threading.Lock()

    def task(k):
        with lock:
            state["running"] += 1
            state["most"] = max(state["most"], state["running"])
        _time.sleep(0.01)          # room for another thread to start, if it may
        with lock:
            state["running"] -= 1
        return k

    with concurrent.futures.ThreadPoolExecutor(max_workers=4) as pool:
        results = [f.result() for f in [submit(pool, task, k) for k in range(8)]]
    assert results == list(range(8))
    assert state["most"] == 1, "thread-pool tasks overlapped"


def test_pool_processes_add_to_the_estimate():
    # each local pool process holds its own interpreter: more workers, larger estimate
    model = sc.hubbard(sc.ring(6))
    plan = plan_symmetries(model)
    sectors = sectors_to_solve(6, plan)
    alone = resources.estimate_cost(6, sectors, plan, 1, workers=0)
    pooled = resources.estimate_cost(6, sectors, plan, 1, workers=2)
    assert pooled - alone == 2 * resources._PER_WORKER


def test_sectors_too_large_for_float64_checks_cost_no_dense_matrix():
    # a sector above FLOAT_DIM is not diagonalised in float64 (docs/verification.md)
    from symcluster.tiers import FLOAT_DIM
    big = [(5, 5)]                                   # C(10,5)^2 = 63504 states
    assert 252 ** 2 > FLOAT_DIM
    est = resources.estimate_cost(10, big)      # no symmetry: one block of 63504 states
    # the symmetry detection's states: at most two electrons in 20 orbitals, 1 + 20 + 190
    states = 252 ** 2 + 1 + 20 + 190
    assert est - resources._FIXED - resources._PER_STATE * states == 8 * 63504 ** 3 // 2


@pytest.mark.parametrize("make, electrons", [
    (lambda: sc.ring(4), None), (lambda: sc.ring(6), None), (lambda: sc.ring(6), [3, 4]),
    (lambda: sc.grid(2, 3), None), (lambda: sc.chain(5), [2]), (lambda: sc.chain(2), [2]), (lambda: sc.chain(2), []),
    (sc.tetrahedron, None),
    (lambda: sc.cluster(3, [(0, 1, "t"), (1, 2, "tp")]), None),
    # plans without eta (not bipartite; site energies) and electron subsets (a reviewer's cases)
    (lambda: sc.complete(3), [3]), (lambda: sc.complete(4), [1, 5]), (sc.tetrahedron, [2, 6]),
    (lambda: sc.cluster(2, [(0, 1, "t")], site_labels=["a", "b"]), [2]),
    (lambda: sc.cluster(4, [(0, 1), (1, 2), (2, 3)], site_labels={0: "e"}), [3, 5])])
def test_early_bound_never_exceeds_the_estimate(make, electrons):
    # the early bound assumes every reduction succeeds (spin, eta, a lattice group of the
    # largest accepted order), so it is below the estimate made after the real detection
    # for every cluster, electron choice and number of couplings
    model = sc.hubbard(make())
    plan = plan_symmetries(model)
    n_free = len(model.labels) - 1
    late = resources.estimate_cost(model.n_sites, sectors_to_solve(model.n_sites, plan, electrons),
                                   plan, n_free)
    early = resources.optimistic_cost(model.n_sites, electrons, n_free)
    assert 0 < early <= late
    # and with eta switched off by hand (chain(2) with eta=False was a reviewer's case)
    plan = plan_symmetries(model, eta=False)
    late = resources.estimate_cost(model.n_sites, sectors_to_solve(model.n_sites, plan, electrons),
                                   plan, n_free)
    assert early <= late


@pytest.mark.parametrize("make", [lambda: sc.chain(100), lambda: sc.ring(3000),
                                  lambda: sc.star(5000)])
def test_huge_clusters_are_refused_before_the_symmetry_detection(monkeypatch, make):
    # the detection itself grows with the cluster (commutators on every state with at most
    # two electrons): a cluster that cannot fit must be refused before it starts
    monkeypatch.setattr(resources, "available_memory", lambda: 24 * 2 ** 30)

    def must_not_run(*args, **kwargs):
        raise AssertionError("the symmetry detection ran for a cluster that cannot fit")

    monkeypatch.setattr(importlib.import_module("symcluster.pipeline.solve"), "plan_symmetries", must_not_run)
    with pytest.raises(TooLargeError) as info:
        sc.solve(sc.hubbard(make()))
    msg = str(info.value)
    assert "sites" in msg and "GiB" in msg and "electrons=" in msg and "force=True" in msg


def test_huge_cluster_on_the_command_line_exits_2(capsys):
    from symcluster.cli import main
    assert main(["levels", "chain", "100"]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "--electrons" in err and "--force" in err


@pytest.mark.skipif(not os.path.exists("/proc/meminfo"), reason="needs Linux /proc/meminfo")
def test_available_memory_is_memavailable_of_proc_meminfo():
    # read independently as text with a regular expression; the kernel's figure moves
    # between the two reads, so within 5 %
    with open("/proc/meminfo") as fh:
        want = int(re.search(r"^MemAvailable:\s+(\d+) kB", fh.read(), re.M).group(1)) * 1024
    got = resources.available_memory()
    assert isinstance(got, int) and abs(got - want) <= 0.05 * want


def test_progress_must_be_a_flag_or_a_progress_line():
    with pytest.raises(sc.ModelError, match="progress="):
        sc.solve(sc.hubbard(sc.chain(2)), progress="yes")
    # a caller's own line goes on after the solve (the command line adds its outputs)
    tty = _Tty()
    line = Progress(enabled=True, stream=tty)
    sc.solve(sc.hubbard(sc.chain(2)), progress=line)
    line.phase("output, table", 1, "outputs")
    line.close()
    text = tty.getvalue()
    assert "verification, sectors" in text
    assert text.index("verification, sectors") < text.index("output, table: 0/1 outputs")


# --- portable reading of the available memory (common practice, no source: each OS's
# documented interface; Linux MemAvailable, POSIX sysconf pages, Windows GlobalMemoryStatusEx)

def _no_sysconf(name):
    raise ValueError(name)


def test_memory_falls_back_to_sysconf_pages_without_proc_meminfo(monkeypatch, tmp_path):
    from symcluster.pipeline import memory
    monkeypatch.setattr(memory, "MEMINFO", str(tmp_path / "absent"))
    pages = {"SC_AVPHYS_PAGES": 1000, "SC_PAGE_SIZE": 4096, "SC_PHYS_PAGES": 5000}
    monkeypatch.setattr(memory.os, "sysconf", lambda name: pages[name])
    assert memory.memory_reading() == (1000 * 4096, "sysconf")
    assert resources.available_memory() == 1000 * 4096


def test_memory_reads_a_meminfo_file_in_kib(monkeypatch, tmp_path):
    from symcluster.pipeline import memory
    f = tmp_path / "meminfo"
    f.write_text("MemTotal:  100 kB\nMemFree:  7 kB\nMemAvailable:   12345 kB\n")
    monkeypatch.setattr(memory, "MEMINFO", str(f))
    assert memory.memory_reading() == (12345 * 1024, "meminfo")


def test_memory_only_total_physical_is_used_as_the_bound(monkeypatch, tmp_path):
    from symcluster.pipeline import memory
    monkeypatch.setattr(memory, "MEMINFO", str(tmp_path / "absent"))
    pages = {"SC_PAGE_SIZE": 4096, "SC_PHYS_PAGES": 5000}
    monkeypatch.setattr(memory.os, "sysconf",
                        lambda name: pages[name] if name in pages else _no_sysconf(name))
    monkeypatch.setattr(memory.sys, "platform", "darwin")
    assert memory.memory_reading() == (5000 * 4096, "physical")


def test_memory_unknown_means_the_guard_refuses_nothing(monkeypatch, tmp_path):
    from symcluster.pipeline import memory
    monkeypatch.setattr(memory, "MEMINFO", str(tmp_path / "absent"))
    monkeypatch.setattr(memory.os, "sysconf", _no_sysconf)
    monkeypatch.setattr(memory.sys, "platform", "unknown-os")
    assert memory.memory_reading() == (None, "unknown")
    assert resources.available_memory() is None
    # with 10,000 bytes known the same estimate is refused; unknown: it is returned
    need = resources.check_size(8, [(4, 4)])
    assert need > 10_000
    monkeypatch.setattr(resources, "available_memory", lambda: 10_000)
    with pytest.raises(sc.TooLargeError):
        resources.check_size(8, [(4, 4)])


def test_a_held_coupling_is_no_variable_of_the_memory_estimate():
    # P(E, t, U) is homogeneous, so its algebra has one variable (U/t); with t held at 1
    # the algebra of P(E, U) has one variable too (U): the same estimate for the same
    # blocks (the guard used to count the held coupling as a second variable)
    free = sc.solve(sc.hubbard(sc.ring(4)), electrons=[4])
    held = sc.solve(sc.hubbard(sc.ring(4)), electrons=[4], fixed={"t": 1})
    assert held.timings["memory_estimate_bytes"] == free.timings["memory_estimate_bytes"]
