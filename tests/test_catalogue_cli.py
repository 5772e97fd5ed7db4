"""``symcluster catalogue`` (symcluster/catalogue/command.py): bad specs, a run stopped by
SIGTERM half-way and resumed, and the same rows through Dask's distributed scheduler.

Exit codes as documented in docs/catalogues.md: 2 bad input (nothing written), 143 for
SIGTERM (128 + signal number, the shell convention; common practice, no source).  The
time limits are generous bounds on a loaded machine, not measurements.
"""

import json
import os
import signal

import pytest

from symcluster.catalogue import rows, run_catalogue
from symcluster.cli import main

from helpers_catalogue import table, write_spec
from helpers_cli import error_line
from helpers_procs import HAVE_PROC, descendants, kill_all, start_cli, survivors, wait_for

pytest.importorskip("networkx")

BAD = {
    "not-toml.toml": "clusters = [",
    "no-format.toml": None,
    "unknown-key.toml": 'colour = "red"\n[clusters]\natlas = 2\n',
    "bad-shape.toml": '[clusters]\nlist = [["hexagon", 6]]\n',
    "float-point.toml": 'reports = ["ground"]\npoint = { t = 0.1, U = 4 }\n[clusters]\natlas = 2\n',
    "no-point.toml": 'reports = ["gaps"]\n[clusters]\natlas = 2\n',
    "big-atlas.toml": '[clusters]\natlas = 12\n',
    "missing-file.toml": '[clusters]\nfiles = ["nowhere.toml"]\n',
    "bad-family.toml": '[clusters]\natlas = 2\n[[models]]\nfamily = "ising"\n',
}


@pytest.mark.parametrize("name", sorted(BAD))
def test_a_bad_spec_is_one_line_exit_2_and_writes_nothing(tmp_path, capsys, name):
    text = BAD[name]
    path = tmp_path / name
    if text is None:
        path.write_text("[clusters]\natlas = 2\n")
    elif name == "not-toml.toml":
        path.write_text(text)
    else:
        write_spec(tmp_path, text, name)
    before = sorted(p.name for p in tmp_path.iterdir())
    assert main(["catalogue", str(path)]) == 2
    line = error_line(capsys, quiet_stdout=True)
    assert name in line or "catalogue" in line or "cluster file" in line
    assert sorted(p.name for p in tmp_path.iterdir()) == before       # no database


def test_choosing_two_engines_is_refused(tmp_path, capsys):
    path = write_spec(tmp_path, '[clusters]\natlas = 2\n')
    assert main(["catalogue", path, "--workers", "2", "--scheduler", "tcp://127.0.0.1:1"]) == 2
    assert "--workers and --scheduler" in error_line(capsys, quiet_stdout=True)
    assert main(["catalogue", path, "--workers", "0"]) == 2
    error_line(capsys, quiet_stdout=True)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["spec.toml"]


def test_status_counts_the_tasks_of_the_spec(tmp_path, capsys):
    path = write_spec(tmp_path, 'fillings = [1, 2]\n[clusters]\nlist = [["chain", 2]]\n')
    assert main(["catalogue", path, "--workers", "1"]) == 0
    assert "2 tasks: 2 done, 0 failed, 0 pending" in capsys.readouterr().out
    write_spec(tmp_path, 'fillings = [1, 2, 3]\n[clusters]\nlist = [["chain", 2]]\n')
    assert main(["catalogue", path, "--status"]) == 0
    assert "3 tasks: 2 done, 0 failed, 1 pending" in capsys.readouterr().out


SIGTERM_SPEC = 'reports = ["levels", "ground"]\npoint = { t = 1, U = 4 }\n[clusters]\natlas = 4\n'


@pytest.mark.skipif(not HAVE_PROC, reason="reads the process table from /proc")
def test_sigterm_half_way_then_a_rerun_finishes_without_duplicates_or_losses(tmp_path):
    work = tmp_path / "run"
    work.mkdir()
    write_spec(work, SIGTERM_SPEC, "graphs.toml")
    db = work / "graphs.db"
    n_tasks = 1 * 3 + 1 * 5 + 2 * 7 + 6 * 9             # graphs with 1..4 sites x 2L + 1

    def done():
        try:
            return table(db, "SELECT COUNT(*) AS n FROM tasks WHERE status = 'done'")[0]["n"]
        except Exception:       # not created yet
            return 0

    proc, out, err = start_cli(["catalogue", "graphs.toml", "--workers", "2"], str(work))
    workers = []
    try:
        assert wait_for(lambda: done() >= 6, 120, step=0.02), "no task finished in 120 s"
        workers = descendants(proc.pid)
        proc.send_signal(signal.SIGTERM)
        code = proc.wait(timeout=30)
    finally:
        if proc.poll() is None:
            proc.kill()
            proc.wait()
    assert code == 128 + signal.SIGTERM
    with open(err) as fh:
        message = fh.read()
    assert "stopped by SIGTERM" in message and "run the same command again" in message
    assert "Traceback" not in message
    assert survivors(workers) == []                     # the pool went with the run
    first = {r["key"]: r for r in table(db, "SELECT * FROM tasks")}
    finished = {k: r for k, r in first.items() if r["status"] == "done"}
    assert len(first) == n_tasks                         # every task has its row
    assert 6 <= len(finished) < n_tasks, "the run was not stopped half-way"
    assert table(db, "SELECT outcome FROM runs") == [{"outcome": "stopped by SIGTERM"}]

    proc, out, err = start_cli(["catalogue", "graphs.toml", "--workers", "2"], str(work))
    try:
        assert proc.wait(timeout=300) == 0
    finally:
        kill_all([proc.pid])
    final = table(db, "SELECT * FROM tasks ORDER BY task_id")
    assert len(final) == n_tasks == len({r["key"] for r in final})        # no duplicate
    assert all(r["status"] == "done" for r in final)                      # none lost
    by_key = {r["key"]: r for r in final}
    for key, row in finished.items():                                     # not redone
        assert by_key[key] == row
    runs = table(db, "SELECT outcome, tasks_run FROM runs ORDER BY run_id")
    assert runs[1] == {"outcome": "complete", "tasks_run": n_tasks - len(finished)}
    assert runs[0]["tasks_run"] == len(finished)


def test_a_dask_local_cluster_gives_the_rows_of_the_local_pool(tmp_path):
    pytest.importorskip("distributed")
    from symcluster.catalogue.engines import dask_executor
    spec = {"format": "symcluster-catalogue", "clusters": {"atlas": 3, "list": [["ring", 4]]},
            "reports": ["levels", "ground", "gaps"], "point": {"t": 1, "U": "9/2"}}
    run_catalogue(spec, db=tmp_path / "local.db", workers=2, progress=False)
    with dask_executor(n_workers=2) as ex:
        run = run_catalogue(spec, db=tmp_path / "dask.db", executor=ex, progress=False)
    assert run.done == run.tasks == 22 + 9
    local, dask = rows(tmp_path / "local.db"), rows(tmp_path / "dask.db")
    assert local == dask
    workers = {r["worker"] for r in table(tmp_path / "dask.db", "SELECT worker FROM tasks")}
    assert len(workers) >= 1 and all(w.split(":")[1] != str(os.getpid()) for w in workers)
    assert all(json.loads(r["result"])["format"] == "symcluster-spectrum" for r in dask)


def test_one_solve_runs_its_blocks_on_a_dask_local_cluster():
    # issue 21: "large single solves can use the same executor for their blocks"; the
    # energies are checked against the plain Fock reference (numpy eigenvalues of the
    # bit-string Hamiltonian, tests/reference_fock.py), not against another solve
    pytest.importorskip("distributed")
    import numpy as np
    from reference_fock import FockReference

    import symcluster as sc
    from symcluster.catalogue.engines import dask_executor
    with dask_executor(n_workers=2) as ex:
        spec = sc.solve(sc.hubbard(sc.ring(4)), executor=ex)
    values = {"t": 1, "U": "7/2"}
    mine = np.sort(np.repeat([float(v) for v, _ in spec.numeric(values, 20)],
                             [d for _, d in spec.numeric(values, 20)]))
    ref = FockReference(4, [(i, (i + 1) % 4, "t") for i in range(4)])
    assert np.max(np.abs(mine - ref.eigenvalues({"t": 1.0, "U": 3.5}))) < 1e-12
    assert spec.verification.checks          # a result exists only after its checks passed
