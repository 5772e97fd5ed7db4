"""Running catalogues in this process (symcluster/catalogue/runner.py, store.py, reports.py).

Expected values come from outside the code:

* two-site Hubbard model, t = 1, U = 4 (textbook; e.g. the dimer of any many-body text,
  from memory): E0(N=0) = 0; E0(1) = -t (bonding orbital, S = 1/2, 2 states);
  E0(2) = (U - sqrt(U^2 + 16 t^2))/2 (singlet, S = 0); E0(3) = U - t (particle-hole
  image of N = 1); E0(4) = 2U; at N = 2 the triplet lies at 0, so the spin gap is
  -E0(2);
* one electron on a graph: -t times the largest eigenvalue of the adjacency matrix
  (tight binding; numpy on the adjacency matrix built here); two electrons at U = 0:
  twice that (both in the lowest orbital, a singlet);
* two spins 1/2 with J S1.S2: singlet -3J/4, triplet J/4 (textbook, from memory).
"""

import concurrent.futures
import json

import mpmath
import numpy as np
import pytest
import sympy

import symcluster as sc
from symcluster.catalogue import CONTENT_COLUMNS, Report, rows, run_catalogue

from helpers_catalogue import table

pytest.importorskip("networkx")

BASE = {"format": "symcluster-catalogue"}


def _run(spec, db, **kw):
    with concurrent.futures.ThreadPoolExecutor(2) as pool:
        return run_catalogue(spec, db=db, executor=pool, progress=False, **kw)


def _reports(db):
    return {(r["cluster"], r["electrons"]): json.loads(r["reports"]) for r in rows(db)}


def test_two_site_hubbard_ground_energies_and_gaps(tmp_path):
    db = tmp_path / "dimer.db"
    spec = {**BASE, "clusters": {"list": [["chain", 2]]}, "digits": 20,
            "reports": ["levels", "ground", "gaps"], "point": {"t": 1, "U": 4}}
    run = _run(spec, db)
    assert (run.tasks, run.done, run.failed, run.pending, run.ran) == (5, 5, 0, 0, 5)
    rep = {n: r for (_, n), r in _reports(db).items()}
    t, U = mpmath.mpf(1), mpmath.mpf(4)
    with mpmath.workdps(30):
        expected = {0: 0, 1: -t, 2: (U - mpmath.sqrt(U ** 2 + 16 * t ** 2)) / 2, 3: U - t,
                    4: 2 * U}
        for n, e in expected.items():
            assert abs(mpmath.mpf(rep[n]["ground"]["energy"]) - e) < mpmath.mpf(10) ** -18
    assert rep[2]["ground"]["S"] == ["0"] and rep[2]["ground"]["degeneracy"] == 1
    assert rep[1]["ground"]["S"] == ["1/2"] and rep[1]["ground"]["degeneracy"] == 2
    assert rep[2]["ground"]["exact"] == "U/2 - sqrt(U**2 + 16*t**2)/2"
    with mpmath.workdps(30):
        gap = -(U - mpmath.sqrt(U ** 2 + 16 * t ** 2)) / 2
        assert abs(mpmath.mpf(rep[2]["gaps"]["spin"]) - gap) < mpmath.mpf(10) ** -18
    # the levels report counts the states of each filling: C(4, N)
    assert [rep[n]["levels"]["states"] for n in range(5)] == [1, 4, 6, 4, 1]
    # every row carries its spectrum as a symcluster-spectrum document and a verification
    for r in rows(db):
        doc = json.loads(r["result"])
        assert doc["format"] == "symcluster-spectrum" and "timings" not in doc
        assert r["verification"].startswith("verified:") and r["status"] == "done"


def test_one_and_two_electrons_on_every_graph_up_to_four_sites(tmp_path):
    db = tmp_path / "graphs.db"
    spec = {**BASE, "clusters": {"atlas": [2, 4]}, "fillings": [1, 2], "reports": ["ground"],
            "point": {"t": 1}, "models": [{"family": "hubbard", "hold": {"U": "0"}}]}
    run = _run(spec, db)
    assert run.done == run.tasks == 2 * (1 + 2 + 6)
    for r in rows(db):
        task = json.loads(r["task"])
        c = task["cluster"]
        adj = np.zeros((c["n_sites"], c["n_sites"]))
        for i, j, _ in c["bonds"]:
            adj[i, j] = adj[j, i] = 1
        lowest = -max(np.linalg.eigvalsh(adj))
        energy = float(json.loads(r["reports"])["ground"]["energy"])
        assert energy == pytest.approx(r["electrons"] * lowest, abs=1e-12), c


def test_a_spin_model_has_one_task_per_cluster(tmp_path):
    db = tmp_path / "spins.db"
    spec = {**BASE, "clusters": {"list": [["chain", 2]]}, "models": [{"family": "heisenberg"}],
            "reports": ["ground", "gaps"], "point": {"J": 1}}
    _run(spec, db)
    ((key, rep),) = _reports(db).items()
    assert key == ("chain(2)", None)
    assert float(rep["ground"]["energy"]) == pytest.approx(-0.75, abs=1e-14)
    assert float(rep["gaps"]["excitation"]) == pytest.approx(1.0, abs=1e-14)


def test_a_second_run_does_nothing_and_a_larger_spec_adds_its_tasks(tmp_path):
    db = tmp_path / "c.db"
    small = {**BASE, "clusters": {"list": [["chain", 2]]}}
    _run(small, db)
    before = table(db, "SELECT * FROM tasks ORDER BY task_id")
    again = _run(small, db)
    assert again.ran == 0 and table(db, "SELECT * FROM tasks ORDER BY task_id") == before
    larger = {**BASE, "clusters": {"list": [["chain", 2], ["chain", 3]]}}
    run = _run(larger, db)
    assert run.ran == 7 and run.tasks == 12
    after = table(db, "SELECT * FROM tasks ORDER BY task_id")
    assert after[:5] == before                 # untouched: not redone
    assert len({r["key"] for r in after}) == len(after) == 12
    runs = table(db, "SELECT outcome, tasks_run FROM runs ORDER BY run_id")
    assert runs == [{"outcome": "complete", "tasks_run": n} for n in (5, 0, 7)]


def explode(spec, task):
    """A report that fails on two electrons (module level: a worker imports it)."""
    if task["electrons"] == 2:
        raise ValueError("no report for two electrons")
    return {"n": task["electrons"]}


def test_a_failing_task_is_recorded_and_can_be_retried(tmp_path):
    db = tmp_path / "c.db"
    spec = {**BASE, "clusters": {"list": [["chain", 2]]}, "reports": ["levels", "boom"]}
    run = _run(spec, db, reports={"boom": Report(explode)})
    assert (run.done, run.failed) == (4, 1)
    (bad,) = [r for r in rows(db) if r["status"] == "failed"]
    assert bad["electrons"] == 2 and "no report for two electrons" in bad["error"]
    assert bad["result"] is None
    again = _run(spec, db, reports={"boom": Report(explode)})
    assert again.ran == 0                       # failed tasks wait for retry_failed
    retried = _run(spec, db, reports={"boom": Report(explode)}, retry_failed=True)
    assert retried.ran == 1 and retried.failed == 1


def test_the_content_of_rows_does_not_depend_on_the_executor(tmp_path):
    spec = {**BASE, "clusters": {"list": [["ring", 3]]}, "reports": ["levels", "ground"],
            "point": {"t": 1, "U": "7/2"}}
    _run(spec, tmp_path / "a.db")
    with concurrent.futures.ProcessPoolExecutor(1) as pool:
        run_catalogue(spec, db=tmp_path / "b.db", executor=pool, progress=False)
    a, b = rows(tmp_path / "a.db"), rows(tmp_path / "b.db")
    assert a == b and len(a) == 7 and set(a[0]) == set(CONTENT_COLUMNS)


def test_the_callers_executor_stays_open(tmp_path):
    spec = {**BASE, "clusters": {"list": [["chain", 2]]}, "fillings": [1]}
    with concurrent.futures.ThreadPoolExecutor(1) as pool:
        run_catalogue(spec, db=tmp_path / "c.db", executor=pool, progress=False)
        assert pool.submit(abs, -3).result() == 3


def test_bad_database_paths_write_nothing(tmp_path):
    spec = {**BASE, "clusters": {"list": [["chain", 2]]}}
    other = tmp_path / "notes.txt"
    other.write_text("my notes\n")
    for path, words in ((tmp_path, "folder"), (other, "not a catalogue"),
                        (tmp_path / "no" / "c.db", "does not exist")):
        with pytest.raises(sc.InputError, match=words):
            run_catalogue(spec, db=path, progress=False)
    assert other.read_text() == "my notes\n"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["notes.txt"]


def test_results_false_keeps_reports_and_verification_only(tmp_path):
    db = tmp_path / "c.db"
    spec = {**BASE, "clusters": {"list": [["chain", 2]]}, "fillings": [2], "results": False,
            "reports": ["ground"], "point": {"t": 1, "U": 4}}
    _run(spec, db)
    (row,) = rows(db)
    assert row["result"] is None and row["status"] == "done"
    assert row["verification"].startswith("verified:")
    assert float(json.loads(row["reports"])["ground"]["energy"]) == pytest.approx(
        2 - 8 ** 0.5, abs=1e-14)                    # (U - sqrt(U^2 + 16 t^2))/2 at t=1, U=4


def test_tower_verdicts_as_a_catalogue_report(tmp_path):
    """The 4-site ring with 3 electrons loses its spin-tower ordering at U = 8 + 4 sqrt(7):
    there the S = 3/2 level (-2t for every U) meets the lowest S = 1/2 level (the k = ±π/2
    root E = -2t of U^2 - 16 U - 48 = 0, derived in tests/test_towers.py; the
    ferromagnetic instability of this ring is from memory, Nagaoka-type).  Below it the
    ordering holds; the two-site ring holds on the whole attractive interval."""
    db = tmp_path / "towers.db"
    spec = {**BASE, "clusters": {"list": [["ring", 4]]}, "fillings": [3],
            "reports": ["towers"],
            "report_options": {"towers": {"interval": ["0", "100"], "closed": [True, True]}}}
    run = _run(spec, db)
    assert (run.done, run.failed) == (1, 0)
    (report,) = _reports(db).values()
    (row,) = report["towers"]["rows"]
    assert row["n_electrons"] == 3 and row["kind"] == "spin" and row["holds"] is False
    # exact: the crossing is printed as a surd (parsed here by sympy, test side only)
    (crossing,) = row["crossings"]
    assert sympy.simplify(sympy.sympify(crossing) - (8 + 4 * sympy.sqrt(7))) == 0
    (bad,) = row["violations"]
    assert sympy.simplify(sympy.sympify(bad["interval"]["lower"]) - (8 + 4 * sympy.sqrt(7))) == 0
    assert (bad["value"], bad["next_value"]) == ("1/2", "3/2")
