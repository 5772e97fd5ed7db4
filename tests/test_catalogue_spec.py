"""Catalogue specs (symcluster/catalogue/spec.py): what a spec expands to, and refusals.

Expected counts come from outside the code: the number of connected graphs on n
unlabelled nodes, 1, 1, 2, 6, 21, 112 for n = 1..6 (OEIS A001349, from memory), checked
for n <= 5 by the brute-force count of tests/helpers_catalogue.py; the number of
electron numbers on L sites, 0..2L (2L + 1 of them).
"""

import pytest

import symcluster as sc
from symcluster.catalogue import catalogue_tasks, load_spec, task_key

from helpers_catalogue import connected_graph_counts, write_spec

pytest.importorskip("networkx")

BASE = {"format": "symcluster-catalogue"}


def _spec(**kw):
    return {**BASE, **kw}


def test_the_atlas_gives_every_connected_graph_once():
    tasks = catalogue_tasks(_spec(clusters={"atlas": 6}, fillings=[1]))
    per_size = {}
    for t in tasks:
        n = t["cluster"]["n_sites"]
        per_size[n] = per_size.get(n, 0) + 1
    assert per_size == {1: 1, 2: 1, 3: 2, 4: 6, 5: 21, 6: 112}      # OEIS A001349
    assert {n: per_size[n] for n in range(1, 6)} == connected_graph_counts(5)
    # every cluster is connected and has as many bonds as its graph
    for t in tasks:
        c = t["cluster"]
        assert sc.cluster(c["n_sites"], [tuple(b) for b in c["bonds"]]).is_connected()


def test_every_filling_of_every_cluster():
    tasks = catalogue_tasks(_spec(clusters={"atlas": 4}))
    by_cluster = {}
    for t in tasks:
        by_cluster.setdefault(t["cluster"]["name"], []).append(t["electrons"])
    assert len(by_cluster) == 1 + 1 + 2 + 6
    for name, ns in by_cluster.items():
        n_sites = next(t["cluster"]["n_sites"] for t in tasks if t["cluster"]["name"] == name)
        assert ns == list(range(2 * n_sites + 1))


def test_shapes_times_sizes_lists_and_half_filling():
    tasks = catalogue_tasks(_spec(
        clusters={"list": [["grid", 2, 2]],
                  "product": [{"shapes": ["ring", "chain"], "sizes": [3, 4]}]},
        fillings="half"))
    names = [t["cluster"]["name"] for t in tasks]
    assert sorted(names) == sorted(["grid(2,2,open)", "ring(3)", "ring(4)", "chain(3)",
                                    "chain(4)"])
    # half filling: one electron per site (N = L), odd L included
    assert all(t["electrons"] == t["cluster"]["n_sites"] for t in tasks)
    # the t-J model's projected space: N = L is its largest filling
    (tj,) = catalogue_tasks(_spec(clusters={"list": [["ring", 3]]}, fillings="half",
                                  models=[{"family": "t_j"}]))
    assert tj["electrons"] == 3


def test_keys_are_stable_and_distinct():
    a = catalogue_tasks(_spec(clusters={"atlas": 3}))
    b = catalogue_tasks(_spec(clusters={"atlas": 3}))
    assert [task_key(t) for t in a] == [task_key(t) for t in b]
    assert len({task_key(t) for t in a}) == len(a)
    # a cluster listed twice is one task per filling
    twice = catalogue_tasks(_spec(clusters={"list": [["chain", 2], ["chain", 2]]}))
    assert len(twice) == 5


def test_models_spin_models_and_own_site_families():
    tasks = catalogue_tasks(_spec(
        clusters={"list": [["chain", 2]]}, fillings=[2],
        models=[{"family": "heisenberg"}, {"family": "anderson", "size": 1},
                {"family": "hubbard", "hold": {"U": "4"}}]))
    kinds = [(t["model"]["family"], t["electrons"]) for t in tasks]
    # a spin model has no electron number: one task per cluster
    assert kinds == [("heisenberg", None), ("anderson", 2), ("hubbard", 2)]


def test_a_spec_file_names_cluster_files_beside_it(tmp_path):
    (tmp_path / "tri.toml").write_text('format = "symcluster-cluster"\nsites = 3\n'
                                       'bonds = [[0, 1], [1, 2], [0, 2, "tp"]]\n')
    path = write_spec(tmp_path, 'fillings = [1]\n[clusters]\nfiles = ["tri.toml"]\n')
    (task,) = load_spec(path)["tasks"]
    assert task["cluster"]["bonds"] == [[0, 1, "t"], [0, 2, "tp"], [1, 2, "t"]]


def test_report_options_travel_with_the_task_and_change_its_key():
    plain = catalogue_tasks(_spec(clusters={"list": [["chain", 2]]}, fillings=[2]))[0]
    opts = {"levels": {"coupling": "U", "interval": ["0", "10"], "closed": [True, False]}}
    (task,) = catalogue_tasks(_spec(clusters={"list": [["chain", 2]]}, fillings=[2],
                                    report_options=opts))
    assert task["report_options"] == opts and task_key(task) != task_key(plain)


@pytest.mark.parametrize("spec, words", [
    ({**BASE, "clusters": {"atlas": 2}, "report_options": {"ground": {"a": 1}}}, "not in reports"),
    ({**BASE, "clusters": {"atlas": 2}, "report_options": {"levels": {"a": 0.5}}}, "report_options.levels.a"),
    ({"format": "other"}, "format"),
    ({**BASE, "version": 2}, "version"),
    ({**BASE, "clusters": {"list": [["hexagon", 6]]}}, "unknown shape"),
    ({**BASE, "clusters": {"list": [["ring", 2]]}}, "ring"),
    ({**BASE, "clusters": {"list": [["grid", 2]]}}, "takes 2 size"),
    ({**BASE, "clusters": {"atlas": 9}}, "atlas"),
    ({**BASE, "clusters": {"atlas": 2}, "fillings": "some"}, "fillings"),
    ({**BASE, "clusters": {"atlas": 2}, "reports": ["towers?"]}, "unknown"),
    ({**BASE, "clusters": {"atlas": 2}, "reports": ["ground"]}, "point"),
    ({**BASE, "clusters": {"atlas": 2}, "reports": ["ground"], "point": {"t": 1}}, "U"),
    ({**BASE, "clusters": {"atlas": 2}, "point": {"t": 0.1, "U": 1}}, "float"),
    ({**BASE, "clusters": {"atlas": 2}, "point": {"t": 1, "U": 1, "x": 2}}, "'x'"),
    ({**BASE, "clusters": {"atlas": 2}, "models": [{"family": "ising"}]}, "ising"),
    ({**BASE, "models": [{"family": "anderson"}]}, "size"),
    ({**BASE, "clusters": {"atlas": 2}, "models": [{"family": "hubbard", "hold": {"W": 1}}]},
     "W"),
    ({**BASE, "clusters": {"atlas": 2}, "colour": "red"}, "unknown key"),
    ({**BASE}, "no clusters"),
    ({**BASE, "clusters": {"list": [["chain", 1]]}, "fillings": [5]}, "no task"),
])
def test_bad_specs_are_refused_in_one_line(spec, words):
    with pytest.raises(sc.InputError) as info:
        load_spec(spec)
    msg = str(info.value)
    assert words in msg and "\n" not in msg


def test_the_worked_catalogue_spec_expands():
    import os
    path = os.path.join(os.path.dirname(__file__), "..", "worked", "catalogues",
                        "small_graphs.toml")
    tasks = load_spec(path)["tasks"]
    # 10 connected graphs with 1..4 sites (OEIS A001349) at 2L + 1 fillings, ring(5) at 11
    assert len(tasks) == (1 * 3 + 1 * 5 + 2 * 7 + 6 * 9) + 11
