"""Stopping runs: SIGINT/SIGTERM on the command line, KeyboardInterrupt in sc.solve, and
pool processes that never outlive the run.

Real subprocesses, checked in the process table (/proc, Linux).  The expected behaviour
is the one documented in docs/cli.md: exit code 128 + signal number (130 for SIGINT, 143
for SIGTERM; the shell convention, common practice, no source), nothing written, no
process of the run left.  The time limits are generous bounds that separate "stops at
once" from "runs on for minutes" on a loaded machine, not measurements.
"""

import json
import os
import random
import signal
import subprocess
import sys
import textwrap
import time

import pytest

from helpers_procs import (HAVE_PROC, alive, descendants, kill_all, start_cli, survivors,
                           wait_for)

pytestmark = pytest.mark.skipif(not HAVE_PROC, reason="reads the process table from /proc")

#: seconds a stopped run may take to end in these tests (the target is 2 s; see above)
STOP_LIMIT = 10
#: a run that keeps the default process pool busy for minutes (8-site ring, all N)
BUSY = ["levels", "ring", "8"]
POOL = (os.cpu_count() or 1) >= 2          # the default pool needs two cores


def _start_busy(tmp_path, extra=()):
    work = tmp_path / "run"
    work.mkdir()
    proc, out, err = start_cli([*BUSY, "--json", "r8.json", "--latex", "r8.tex", *extra],
                               str(work))
    if POOL:
        # the pool's processes appear once the blocks are built (a few seconds)
        workers = wait_for(lambda: len(descendants(proc.pid)) >= 2, 180)
        if not workers:
            proc.kill()
            proc.wait()
            pytest.fail("the 8-site run started no process pool within 180 s")
    return proc, descendants(proc.pid), work, err


def _finish(proc, workers):
    try:
        code = proc.wait(timeout=STOP_LIMIT)
    except subprocess.TimeoutExpired:
        proc.kill()
        proc.wait()
        kill_all(workers)
        pytest.fail(f"the run did not stop within {STOP_LIMIT} s")
    left = survivors(workers)
    kill_all(left)
    return code, left


@pytest.mark.parametrize("sig, code, name", [(signal.SIGTERM, 143, "SIGTERM"),
                                             (signal.SIGINT, 130, "SIGINT")])
def test_a_signal_to_the_main_process_stops_the_run_and_its_workers(tmp_path, sig, code, name):
    # `kill -TERM PID` (or -INT) of the command alone: its workers must not run on
    proc, workers, work, err = _start_busy(tmp_path)
    os.kill(proc.pid, sig)
    got, left = _finish(proc, workers)
    assert got == code
    assert left == [], f"worker processes {left} outlived the run"
    assert os.listdir(work) == []           # no output, no temporary file
    lines = open(err, encoding="utf-8").read().splitlines()
    assert lines == [f"symcluster: stopped by {name}; nothing was written"]


def test_ctrl_c_to_the_process_group_stops_the_run(tmp_path):
    # Ctrl-C on a terminal signals the whole process group: the workers too
    proc, workers, work, err = _start_busy(tmp_path)
    os.killpg(proc.pid, signal.SIGINT)
    got, left = _finish(proc, workers)
    assert got == 130
    assert left == []
    assert os.listdir(work) == []


@pytest.mark.skipif(not POOL, reason="the default process pool needs two cores")
def test_workers_die_with_a_killed_run(tmp_path):
    # SIGKILL cannot be handled: the workers must still not outlive the run
    proc, workers, work, err = _start_busy(tmp_path)
    os.kill(proc.pid, signal.SIGKILL)
    got, left = _finish(proc, workers)
    assert got == -signal.SIGKILL
    assert left == [], f"worker processes {left} outlived the killed run"


@pytest.mark.skipif(not POOL, reason="the default process pool needs two cores")
def test_keyboard_interrupt_in_solve_kills_the_pool(tmp_path):
    # the Python API: Ctrl-C in sc.solve raises KeyboardInterrupt at once, having killed
    # the workers of the pool it started (shutting the pool down waits for running tasks)
    script = textwrap.dedent("""
        import sys
        import symcluster as sc
        try:
            sc.solve(sc.hubbard(sc.ring(8)))
        except KeyboardInterrupt:
            print("KeyboardInterrupt", flush=True)
            sys.exit(7)
        """)
    out = tmp_path / "out.txt"
    with open(out, "wb") as fo:
        proc = subprocess.Popen([sys.executable, "-c", script], stdout=fo,
                                stderr=subprocess.DEVNULL, start_new_session=True)
    workers = wait_for(lambda: len(descendants(proc.pid)) >= 2, 180)
    if not workers:
        proc.kill()
        proc.wait()
        pytest.fail("sc.solve started no process pool within 180 s")
    workers = descendants(proc.pid)
    os.kill(proc.pid, signal.SIGINT)
    got, left = _finish(proc, workers)
    assert got == 7 and out.read_text() == "KeyboardInterrupt\n"
    assert left == []


def test_pool_processes_die_with_their_parent(tmp_path):
    # interrupts.process_pool: a worker busy with a long task dies with its parent
    script = textwrap.dedent("""
        import time
        from symcluster.interrupts import process_pool
        pool = process_pool(1)
        pool.submit(time.sleep, 600)
        time.sleep(600)
        """)
    proc = subprocess.Popen([sys.executable, "-c", script], start_new_session=True)
    workers = wait_for(lambda: descendants(proc.pid), 60)
    assert workers, "no pool process appeared"
    os.kill(proc.pid, signal.SIGKILL)
    proc.wait()
    left = survivors(workers, timeout=STOP_LIMIT)
    kill_all(left)
    assert left == []


def test_signals_wait_for_a_held_step(tmp_path):
    # signals_held: a SIGTERM that arrives during the step ends the process right after it
    script = textwrap.dedent("""
        import os, signal
        from symcluster.interrupts import signals_held

        @signals_held
        def commit():
            os.kill(os.getpid(), signal.SIGTERM)
            open("inside", "w").close()

        commit()
        open("after", "w").close()
        """)
    got = subprocess.run([sys.executable, "-c", script], cwd=tmp_path, timeout=60).returncode
    assert got == -signal.SIGTERM
    assert sorted(os.listdir(tmp_path)) == ["inside"]


@pytest.mark.parametrize("decorator, code, files", [
    ("signals_held", 143, ["inside"]),        # held, then the stop: nothing after the step
    ("outputs_commit", 0, ["after", "inside"])])  # outputs in place: the run finishes
def test_a_stop_during_a_held_step_of_the_command_line(tmp_path, decorator, code, files):
    script = textwrap.dedent(f"""
        import os, signal, sys
        from symcluster.interrupts import {decorator}, stop_on_signals

        @{decorator}
        def step():
            os.kill(os.getpid(), signal.SIGTERM)
            open("inside", "w").close()

        with stop_on_signals():
            step()
            open("after", "w").close()
        """)
    got = subprocess.run([sys.executable, "-c", script], cwd=tmp_path, timeout=60,
                         stderr=subprocess.DEVNULL).returncode
    assert got == code
    assert sorted(os.listdir(tmp_path)) == files


def _body(tex):
    """A LaTeX table without its comment lines (they name the random verification points)."""
    return [line for line in tex.splitlines() if not line.startswith("%")]


def _complete(work, reference):
    """True if both outputs are there and complete, False if neither is; fails otherwise."""
    names = sorted(n for n in os.listdir(work))
    if names == []:
        return False
    assert names == ["r6.json", "r6.tex"], f"partial or stray files: {names}"
    doc = json.loads((work / "r6.json").read_text(encoding="utf-8"))
    assert len(doc["levels"]) == reference["levels"]
    assert _body((work / "r6.tex").read_text(encoding="utf-8")) == reference["tex"]
    return True


@pytest.mark.slow
def test_sigterm_at_random_moments_leaves_both_outputs_or_none(tmp_path):
    # fault injection: SIGTERM at 10 moments of a 6-site run writing JSON and LaTeX
    args = ["levels", "ring", "6", "--json", "r6.json", "--latex", "r6.tex"]
    ref = tmp_path / "ref"
    ref.mkdir()
    proc, _, _ = start_cli(args, str(ref))
    assert proc.wait(timeout=600) == 0
    reference = {"levels": len(json.loads((ref / "r6.json").read_text())["levels"]),
                 "tex": _body((ref / "r6.tex").read_text(encoding="utf-8"))}
    # moments spread over the whole run (start-up, solve, writing), the length of a run
    # counted by polling its process (no clock is compared with anything)
    polls = 0
    probe = tmp_path / "probe"
    probe.mkdir()
    proc, _, _ = start_cli(args, str(probe))
    while proc.poll() is None:
        polls += 1
        time.sleep(0.05)
    rng = random.Random(18)
    moments = sorted(rng.randrange(1, polls + polls // 5 + 2) for _ in range(10))
    outcomes = []
    for k, moment in enumerate(moments):
        work = tmp_path / f"run{k}"
        work.mkdir()
        proc, _, _ = start_cli(args, str(work))
        seen = set()
        for _ in range(moment):
            if proc.poll() is not None:
                break
            seen.update(descendants(proc.pid))
            time.sleep(0.05)
        proc.send_signal(signal.SIGTERM)
        try:
            code = proc.wait(timeout=STOP_LIMIT)
        except subprocess.TimeoutExpired:
            proc.kill()
            proc.wait()
            pytest.fail(f"run {k} did not stop within {STOP_LIMIT} s of SIGTERM")
        left = survivors(seen)
        kill_all(left)
        assert left == []
        # 143: stopped by the handler; -15: the signal came while the interpreter was still
        # starting, before the handlers were installed, and the default action ended it (a
        # shell reports both as exit status 143; nothing can have been written yet)
        assert code in (0, 143, -signal.SIGTERM)
        done = _complete(work, reference)
        # stopped: nothing written; too late to stop (outputs in place): a complete run
        assert done == (code == 0)
        outcomes.append(done)
    assert not all(outcomes), "every signal came too late to stop a run"


def test_a_sigint_while_pools_start_is_never_lost(tmp_path):
    # a SIGINT that lands while a pool forks its workers must still raise
    # KeyboardInterrupt in the caller (a signal raised inside the fork's after-fork hooks
    # would be printed and dropped by Python, and the run would go on); the child starts
    # and stops pools in a loop for about a minute, so a lost signal shows as a child
    # that does not end within STOP_LIMIT
    script = textwrap.dedent("""
        import sys, time
        from symcluster.interrupts import process_pool, stop_pool
        print("ready", flush=True)
        t0 = time.monotonic()
        try:
            while time.monotonic() - t0 < 60:
                stop_pool(process_pool(2))
        except KeyboardInterrupt:
            sys.exit(7)
        sys.exit(0)
        """)
    rng = random.Random(11)
    for _ in range(6):
        proc = subprocess.Popen([sys.executable, "-c", script], stdout=subprocess.PIPE,
                                stderr=subprocess.DEVNULL, start_new_session=True)
        assert proc.stdout.readline() == b"ready\n"
        time.sleep(rng.uniform(0.2, 1.5))
        os.kill(proc.pid, signal.SIGINT)
        try:
            code = proc.wait(STOP_LIMIT)
        except subprocess.TimeoutExpired:
            kill_all([proc.pid] + descendants(proc.pid))
            proc.wait()
            pytest.fail("a SIGINT sent while pools were starting was lost")
        assert code == 7
