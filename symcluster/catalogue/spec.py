"""Catalogue specifications: a TOML file (or a dict) read, checked and expanded into tasks.

The format is written out in docs/catalogues.md.  In short::

    format = "symcluster-catalogue"     # required
    version = 1                         # optional; 1 if left out
    name = "graphs up to 4 sites"       # optional
    fillings = "all"                    # "all", "half", or electron numbers [1, 2]
    reports = ["levels", "ground", "gaps"]
    digits = 15                         # digits of the values at the point
    report_options.NAME = { ... }       # plain values handed to report NAME
    results = true                      # false: store reports and verification only
    point = { t = 1, U = "4" }          # where the reports evaluate levels

    [clusters]
    list = [["chain", 2], ["grid", 2, 3]]      # shapes with their sizes
    files = ["dimer.toml"]                     # cluster files, beside the spec
    atlas = 4                                  # every connected graph with <= 4 sites
                                               # (atlas = [2, 4]: with 2 to 4 sites)
    [[clusters.product]]                       # shapes x sizes
    shapes = ["ring", "chain"]
    sizes = [3, 4, 5]

    [[models]]                                 # default: one Hubbard model
    family = "hubbard"                         # hubbard, t_j, heisenberg, anderson, kanamori
    hold = { U = "4" }                         # couplings held at exact values

A task is plain data (a dict of strings, integers and lists) so that it can travel to
a worker process or another machine: one cluster (bonds written out), one model, one
electron number, the point and the reports.  Its key is the SHA-256 of its canonical
JSON text, so that the same task has the same key in every run.

Nothing read from a spec is evaluated: names are checked against closed lists, numbers
go through :func:`symcluster.parsing.parse_number`.
"""

import hashlib
import json
import os

from symcluster.errors import InputError, SymclusterError
from symcluster.lattice.clusters import BUILTIN_SHAPES, cluster as make_cluster, grid, load_cluster_file
from symcluster.models import families
from symcluster.models.modelfile import MAX_BYTES as MODEL_MAX_BYTES, parse_model_toml
from symcluster.parsing import parse_number, parse_toml, read_input_file

__all__ = ["FORMAT", "VERSION", "MAX_SPEC_BYTES", "load_spec", "catalogue_tasks", "task_key",
           "build_task_model", "CLUSTER_FAMILIES", "OWN_SITE_FAMILIES"]

FORMAT = "symcluster-catalogue"
VERSION = 1
#: Largest spec file read (bytes).
MAX_SPEC_BYTES = 1_000_000
#: Largest ``atlas`` size: networkx's atlas holds the graphs of up to 7 nodes.
MAX_ATLAS_SITES = 7
#: Most tasks one spec may expand to (a typo such as sizes = [3, 400] is caught early).
MAX_TASKS = 200_000

#: families that put a model on each cluster of the spec
CLUSTER_FAMILIES = ("hubbard", "t_j", "heisenberg")
#: families that build their own sites (``size``: bath sites or orbitals); no cluster
OWN_SITE_FAMILIES = ("anderson", "kanamori")

_DOC = "docs/catalogues.md"
_TOP_KEYS = ("format", "version", "name", "fillings", "reports", "digits", "point",
             "eigenvectors", "clusters", "models", "report_options", "results")
_CLUSTER_KEYS = ("list", "files", "atlas", "product")
_MODEL_KEYS = ("family", "size", "field", "hold", "file")


def _fail(source, text):
    raise InputError(f"{source}: {text}")


def _keys(table, allowed, where, source):
    if not isinstance(table, dict):
        _fail(source, f"{where} must be a table; see {_DOC}")
    extra = sorted(set(table) - set(allowed))
    if extra:
        _fail(source, f"unknown key {extra[0]!r} in {where}; allowed keys are "
                      + ", ".join(allowed))


def _whole(value, what, source, lo=0, hi=10 ** 6):
    if type(value) is not int or not lo <= value <= hi:
        _fail(source, f"{what} = {value!r} is not a whole number from {lo} to {hi}")
    return value


def _exact_text(value, what, source):
    """An exact number from a TOML integer or string, as text ``p`` or ``p/q``."""
    if type(value) is int:
        return str(value)
    if isinstance(value, float):
        _fail(source, f"{what} = {value!r} is a binary float; write it as a string such "
                      f"as \"{value}\" or \"1/2\" so that it stays exact")
    if not isinstance(value, str):
        _fail(source, f"{what} = {value!r} is not a number; write e.g. 4 or \"1/2\"")
    r = parse_number(value, f"{source}: {what}")
    return str(r.p) if r.q == 1 else f"{r.p}/{r.q}"


def _shape_cluster(words, source):
    """A cluster from ``["ring", 4]`` (a built-in shape and its sizes)."""
    if not isinstance(words, list) or not words or not isinstance(words[0], str):
        _fail(source, f"cluster {words!r} is not a shape with sizes such as [\"ring\", 4]")
    shape, sizes = words[0].lower(), words[1:]
    if shape not in BUILTIN_SHAPES:
        _fail(source, f"unknown shape {words[0]!r}; choose one of " + ", ".join(BUILTIN_SHAPES))
    fn, n_args = BUILTIN_SHAPES[shape]
    if len(sizes) != n_args:
        _fail(source, f"shape {shape!r} takes {n_args} size(s), got {len(sizes)} in {words!r}")
    for s in sizes:
        _whole(s, f"size of {shape}", source, 1, 10 ** 4)
    try:
        if shape == "pgrid":
            return grid(sizes[0], sizes[1], periodic=True)
        return fn(*sizes)
    except SymclusterError as exc:
        _fail(source, f"{words!r}: {exc}")


def _atlas_clusters(min_sites, max_sites, source):
    """Every connected graph with min_sites .. max_sites sites, in the atlas's order."""
    try:
        import networkx as nx
        from networkx.generators.atlas import graph_atlas_g
    except ImportError:
        _fail(source, "atlas needs networkx; install it (pip install networkx) or list the "
                      "clusters instead")
    out = []
    for index, g in enumerate(graph_atlas_g()):
        n = g.number_of_nodes()
        if not min_sites <= n <= max_sites or not nx.is_connected(g):
            continue
        bonds = sorted((min(i, j), max(i, j)) for i, j in g.edges())
        out.append(make_cluster(n, bonds, name=f"atlas G{index}"))
    return out


def _clusters(table, source, folder):
    _keys(table, _CLUSTER_KEYS, "[clusters]", source)
    out = []
    entries = table.get("list", [])
    if not isinstance(entries, list):
        _fail(source, "clusters.list must be a list such as [[\"chain\", 2], [\"ring\", 4]]")
    out += [_shape_cluster(w, source) for w in entries]
    products = table.get("product", [])
    if not isinstance(products, list):
        _fail(source, "clusters.product must be an array of tables ([[clusters.product]])")
    for prod in products:
        _keys(prod, ("shapes", "sizes"), "[[clusters.product]]", source)
        shapes, sizes = prod.get("shapes"), prod.get("sizes")
        if not isinstance(shapes, list) or not shapes or not isinstance(sizes, list) or not sizes:
            _fail(source, "[[clusters.product]] needs shapes = [...] and sizes = [...], "
                          "e.g. shapes = [\"ring\"] and sizes = [3, 4]")
        for shape in shapes:
            for size in sizes:
                out.append(_shape_cluster([shape] + (size if isinstance(size, list) else [size]),
                                          source))
    files = table.get("files", [])
    if not isinstance(files, list) or not all(isinstance(f, str) for f in files):
        _fail(source, "clusters.files must be a list of file names such as [\"dimer.toml\"]")
    for name in files:
        out.append(load_cluster_file(os.path.join(folder, name)))
    if "atlas" in table:
        atlas = table["atlas"]
        low, high = atlas if isinstance(atlas, list) and len(atlas) == 2 else (1, atlas)
        low = _whole(low, "clusters.atlas (smallest size)", source, 1, MAX_ATLAS_SITES)
        high = _whole(high, "clusters.atlas (largest size)", source, low, MAX_ATLAS_SITES)
        out += _atlas_clusters(low, high, source)
    return out


def _model_entry(entry, source, folder):
    """Checked model entry: {"family", "size", "field", "hold", "file_text", "file"}."""
    _keys(entry, _MODEL_KEYS, "[[models]]", source)
    hold = entry.get("hold", {})
    if not isinstance(hold, dict):
        _fail(source, "models.hold must be a table such as { U = \"4\" }")
    hold = {str(k): _exact_text(v, f"hold {k}", source) for k, v in sorted(hold.items())}
    field = entry.get("field")
    if field is not None and not isinstance(field, str):
        _fail(source, f"models.field = {field!r} is not a coupling name such as \"h\"")
    if "file" in entry:
        if "family" in entry or "size" in entry:
            _fail(source, "a [[models]] entry gives either file = ... or family = ..., not both")
        if not isinstance(entry["file"], str):
            _fail(source, "models.file must be a file name such as \"anderson.toml\"")
        path = os.path.join(folder, entry["file"])
        text = read_input_file(path, "model file", MODEL_MAX_BYTES)
        parse_model_toml(text, source=entry["file"])       # checked now, in this process
        return {"file": entry["file"], "file_text": text, "field": field, "hold": hold}
    family = entry.get("family", "hubbard")
    known = CLUSTER_FAMILIES + OWN_SITE_FAMILIES
    if family not in known:
        _fail(source, f"model family {family!r} is unknown; choose one of " + ", ".join(known))
    size = entry.get("size")
    if family in OWN_SITE_FAMILIES:
        _whole(size, f"size of {family} (bath sites or orbitals)", source, 1, 16)
    elif size is not None:
        _fail(source, f"family {family!r} takes no size; it is put on each cluster")
    return {"family": family, "size": size, "field": field, "hold": hold}


def _plain_value(value, where, source):
    if isinstance(value, bool) or type(value) is int or isinstance(value, str):
        return value
    if isinstance(value, list):
        return [_plain_value(v, where, source) for v in value]
    _fail(source, f"{where} = {value!r}: give strings, integers, booleans or lists of them "
                  "(numbers as strings such as \"1/2\")")


def _report_options(table, reports, source):
    """``[report_options.NAME]`` tables: plain values handed to report NAME (in its task)."""
    if not isinstance(table, dict):
        _fail(source, "report_options must be a table of tables such as "
                      "[report_options.towers]")
    out = {}
    for name, opts in sorted(table.items()):
        if name not in reports:
            _fail(source, f"report_options.{name}: {name!r} is not in reports; add it to "
                          "reports or drop its options")
        if not isinstance(opts, dict):
            _fail(source, f"report_options.{name} must be a table")
        out[name] = {k: _plain_value(v, f"report_options.{name}.{k}", source)
                     for k, v in sorted(opts.items())}
    return out


def _fillings(value, source):
    if value in ("all", "half"):
        return value
    if isinstance(value, list) and value:
        return sorted({_whole(v, "filling", source, 0, 10 ** 4) for v in value})
    _fail(source, f"fillings = {value!r}; give \"all\", \"half\" or electron numbers such "
                  "as [1, 2]")


def load_spec(spec, source=None, reports=None):
    """A checked catalogue specification from a TOML file path, TOML text or a dict.

    Parameters
    ----------
    spec : str, os.PathLike or dict
        A path to a ``.toml`` file, or the parsed document.  Cluster and model files
        named in a file are read relative to its folder (to the working folder for a
        dict).
    source : str, optional
        Names the spec in messages (default: the path, or ``"<spec>"``).
    reports : dict, optional
        The reports a spec may name (default:
        :data:`symcluster.catalogue.reports.REPORTS`).

    Returns
    -------
    dict
        ``{"name", "tasks": [task, ...], "source"}``; every task a plain dict (see
        :func:`catalogue_tasks`).

    Raises
    ------
    InputError
        The first problem found, in one line naming the key and the fix.

    Examples
    --------
    >>> s = load_spec({"format": "symcluster-catalogue", "clusters": {"list": [["chain", 2]]},
    ...                "fillings": [2], "point": {"t": 1, "U": 4}})
    >>> [t["electrons"] for t in s["tasks"]], s["tasks"][0]["cluster"]["bonds"]
    ([2], [[0, 1, 't']])
    """
    if isinstance(spec, dict):
        data, folder = spec, os.getcwd()
        source = source or "<spec>"
    else:
        path = os.fspath(spec)
        source = source or path
        data = parse_toml(read_input_file(path, "catalogue spec", MAX_SPEC_BYTES), source, _DOC)
        folder = os.path.dirname(os.path.abspath(path))
    _keys(data, _TOP_KEYS, "the spec", source)
    if data.get("format") != FORMAT:
        _fail(source, f"missing or wrong 'format' key ({data.get('format')!r}); the first "
                      f"line must be format = \"{FORMAT}\"")
    version = data.get("version", VERSION)
    if type(version) is not int or version != VERSION:
        _fail(source, f"catalogue version {version!r} is not supported; use version = {VERSION}")
    name = data.get("name", os.path.basename(source))
    if not isinstance(name, str):
        _fail(source, "name must be a string such as name = \"small graphs\"")
    from symcluster.catalogue.reports import REPORTS
    known = REPORTS if reports is None else reports
    reports = data.get("reports", ["levels"])
    if not isinstance(reports, list) or not all(isinstance(r, str) for r in reports):
        _fail(source, "reports must be a list of names such as [\"levels\", \"ground\"]")
    for r in reports:
        if r not in known:
            _fail(source, f"report {r!r} is unknown; choose from " + ", ".join(known))
    point = data.get("point")
    if point is not None:
        if not isinstance(point, dict) or not point:
            _fail(source, "point must be a table of coupling values such as { t = 1, U = \"4\" }")
        point = {str(k): _exact_text(v, f"point {k}", source) for k, v in sorted(point.items())}
    needs_point = [r for r in reports if known[r].needs_point]
    if needs_point and point is None:
        _fail(source, f"report {needs_point[0]!r} evaluates levels at a point; add e.g. "
                      "point = { t = 1, U = \"4\" }")
    options = _report_options(data.get("report_options", {}), reports, source)
    digits = _whole(data.get("digits", 15), "digits", source, 1, 1000)
    eigenvectors = data.get("eigenvectors", False)
    if not isinstance(eigenvectors, bool):
        _fail(source, "eigenvectors must be true or false")
    results = data.get("results", True)
    if not isinstance(results, bool):
        _fail(source, "results must be true (store each spectrum's JSON) or false (only the "
                      "reports and the verification)")
    fillings = _fillings(data.get("fillings", "all"), source)
    clusters = _clusters(data.get("clusters", {}), source, folder)
    models = data.get("models", [{"family": "hubbard"}])
    if not isinstance(models, list) or not models:
        _fail(source, "models must be an array of tables ([[models]] with family = ...)")
    models = [_model_entry(m, source, folder) for m in models]
    if not clusters and any(m.get("family") in CLUSTER_FAMILIES for m in models):
        _fail(source, "no clusters: add [clusters] with list, product, files or atlas "
                      f"(see {_DOC}), or use only families that build their own sites")
    common = {"point": point, "digits": digits, "reports": list(reports),
              "eigenvectors": eigenvectors}
    if options:
        common["report_options"] = options
    if not results:                         # only when false: the default keys stay
        common["results"] = False
    tasks = _expand(clusters, models, fillings, common, source)
    if not tasks:
        _fail(source, "the spec expands to no task; check fillings against the clusters' sizes")
    return {"name": name, "tasks": tasks, "source": source}


def _cluster_dict(cl):
    return {"name": cl.name, "n_sites": cl.n_sites,
            "bonds": [[int(i), int(j), str(lab)] for i, j, lab in cl.bonds],
            "site_labels": [None if s is None else str(s) for s in cl.site_labels]}


def _expand(clusters, models, fillings, common, source):
    tasks = []
    seen = set()            # every coupling of some model: a point or hold name must be one
    for m in models:
        on = [None] if "file" in m or m["family"] in OWN_SITE_FAMILIES else clusters
        for cl in on:
            task = {"cluster": None if cl is None else _cluster_dict(cl), "model": m, **common}
            try:
                model = build_task_model(task, labels_only=True)
                seen.update(model.labels)
                task["model"] = {**m, "hold": {k: v for k, v in m["hold"].items()
                                               if k in model.labels}}
                model, fixed = build_task_model(task)
            except SymclusterError as exc:
                where = "a model file" if cl is None else cl.name
                _fail(source, f"{where}: {exc}")
            free = [s.name for s in model.symbols if s.name not in fixed]
            point = common["point"]
            if point is not None:
                missing = [n for n in free if n not in point]
                if missing:
                    _fail(source, f"point gives no value for {', '.join(missing)}, a free "
                                  f"coupling of {model.name} on {model.cluster.name}; add it")
                task["point"] = {n: point[n] for n in free}
            for n in _electron_numbers(model, fillings):
                tasks.append({**task, "electrons": n})
                if len(tasks) > MAX_TASKS:
                    _fail(source, f"the spec expands to more than {MAX_TASKS} tasks; split it")
    for what, names in (("point", common["point"] or {}),
                        ("hold", {k for m in models for k in m["hold"]})):
        for n in names:
            if n not in seen:
                _fail(source, f"{what} names {n!r}, a coupling of no model here; the "
                              "couplings are " + ", ".join(sorted(seen)))
    keys = set()
    unique = []
    for t in tasks:                         # the same cluster listed twice: one task
        k = task_key(t)
        if k not in keys:
            keys.add(k)
            unique.append(t)
    return unique


def _electron_numbers(model, fillings):
    if not model.space.has_charge:
        return [None]
    top = model.space.max_particles
    if fillings == "all":
        return list(range(top + 1))
    if fillings == "half":                  # one electron per spatial mode
        return [model.space.n_modes]
    return [n for n in fillings if n <= top]


def catalogue_tasks(spec):
    """The tasks of a spec (path, TOML text file or dict), in the order they run.

    Each task is a plain dict: ``cluster`` (``name``, ``n_sites``, ``bonds`` as
    ``[i, j, label]``, ``site_labels``; None for a model that builds its own sites),
    ``model`` (``family``, ``size``, ``field``, ``hold``; or ``file`` and
    ``file_text``), ``electrons`` (None for a spin model), ``point``, ``digits``,
    ``reports``, ``eigenvectors``, ``report_options`` (``{report: {key: value}}``)
    where the spec gives any, and ``results`` (False) where the spec says so.

    Examples
    --------
    >>> tasks = catalogue_tasks({"format": "symcluster-catalogue", "clusters": {"atlas": 3}})
    >>> len(tasks), sorted({t["cluster"]["n_sites"] for t in tasks})
    (22, [1, 2, 3])
    """
    return load_spec(spec)["tasks"]


def task_key(task):
    """The task's key: SHA-256 (hex) of its canonical JSON text.

    Examples
    --------
    >>> a = {"electrons": 2, "cluster": None}
    >>> task_key(a) == task_key({"cluster": None, "electrons": 2})
    True
    """
    text = json.dumps(task, sort_keys=True, separators=(",", ":"), ensure_ascii=True)
    return hashlib.sha256(text.encode()).hexdigest()


def build_task_model(task, labels_only=False):
    """(Model, fixed) of a task: its family on its cluster, or its model file
    (``labels_only``: the model alone, before the held couplings are checked).

    Examples
    --------
    >>> t = catalogue_tasks({"format": "symcluster-catalogue", "clusters": {"list": [["chain", 2]]},
    ...                      "models": [{"family": "hubbard", "hold": {"U": "4"}}]})[0]
    >>> model, fixed = build_task_model(t)
    >>> model.labels, fixed
    (('t', 'U'), {'U': 4})
    """
    from symcluster.models import with_field
    m = task["model"]
    if "file_text" in m:
        model, fixed = parse_model_toml(m["file_text"], source=m["file"])
        fixed = dict(fixed)
    else:
        if m["family"] in OWN_SITE_FAMILIES:
            model = getattr(families, m["family"])(m["size"])
        else:
            c = task["cluster"]
            cl = make_cluster(c["n_sites"], [tuple(b) for b in c["bonds"]],
                              site_labels={i: s for i, s in enumerate(c["site_labels"])
                                           if s is not None}, name=c["name"])
            model = getattr(families, m["family"])(cl)
        fixed = {}
    if m.get("field"):
        model = with_field(model, m["field"])
    if labels_only:
        return model
    for name, text in m.get("hold", {}).items():
        if name not in model.labels:
            raise InputError(f"hold: {name!r} is not a coupling of the model; its couplings "
                             "are " + ", ".join(model.labels))
        if name in fixed:
            raise InputError(f"hold: {name} is fixed by the model file already; leave it out")
        fixed[name] = parse_number(text, name)
    return model, fixed
