"""Model files: a Hamiltonian written as TOML tables, parsed and checked, never evaluated.

The format is described in docs/model-files.md.  In short::

    format = "symcluster-model"        # required
    version = 1                        # optional; 1 if left out
    name = "two-site Anderson"         # optional, used in outputs
    shared = ["J"]                     # optional: couplings allowed on several term kinds

    [space]                            # the local space (not needed with [family])
    kind = "electrons"                 # or "spins"
    sites = 2
    orbitals = 1                       # optional, electrons only
    projected = false                  # optional: no double occupancy

    [cluster]                          # optional geometry: shape = "ring 6", or the keys
    shape = "ring 6"                   # of a cluster file (sites, bonds, site_energy)

    [family]                           # optional: start from a family of symcluster.models
    name = "anderson"                  # hubbard, anderson, kanamori, heisenberg, t_j
    n_bath = 1                         # the family's own arguments
    field = "h"                        # optional: add -h sum_i 2 S^z_i

    [[term]]                           # any number of terms
    kind = "hopping"                   # a builder of symcluster.models.terms
    coupling = "t"                     # the coupling's label
    bonds = [[0, 1]]                   # or "cluster"; one-site kinds take sites = [...]
    spin = "up"                        # optional (hopping); number_product: ["up", "down"]
    factor = "-1/2"                    # optional exact factor (a string or an integer)

    [fixed]                            # optional exact values of couplings
    V_1 = "1/2"

Nothing read from a file is evaluated: labels must be plain names, numbers go through
:func:`symcluster.parsing.parse_number`, and every key is checked against a closed list.
"""

import os
import re
from fractions import Fraction

import sympy

from symcluster.lattice.clusters import BUILTIN_SHAPES, MAX_SITES, Cluster, cluster_from_table, grid
from symcluster.errors import ClusterError, InputError, ModelError
from symcluster.hilbert.space import LocalSpace
from symcluster.parsing import parse_number, parse_toml, read_input_file
from symcluster.models import families, terms as T
from symcluster.models.model import make_model
from symcluster.models.model import Model

__all__ = ["load_model_file", "parse_model_toml", "MAX_BYTES", "FORMAT",
           "TERM_KINDS", "FAMILIES"]

#: The value of the ``format`` key.
FORMAT = "symcluster-model"
#: Largest model file read (bytes); a longer file is refused after reading MAX_BYTES + 1.
MAX_BYTES = 1_000_000

# kind -> (builder, arity: 1 for sites, 2 for bonds, extra keys it reads)
_KINDS = {
    "hopping": (T.hopping, 2, ("spin",)),
    "hybridization": (T.hybridization, 2, ()),
    "onsite": (T.onsite, 1, ()),
    "hubbard_u": (T.hubbard_u, 1, ()),
    "number_product": (T.number_product, 2, ("spin",)),
    "density_density": (T.density_density, 2, ()),
    "zeeman": (T.zeeman, 1, ()),
    "chemical_potential": (T.chemical_potential, 1, ()),
    "exchange": (T.exchange, 2, ()),
    "exchange_z": (T.exchange_z, 2, ()),
    "exchange_xy": (T.exchange_xy, 2, ()),
    "pair_hopping": (T.pair_hopping, 2, ()),
    "spin_flip": (T.spin_flip, 2, ()),
}
#: The term kinds a model file accepts (the builders of :mod:`symcluster.models.terms`).
TERM_KINDS = tuple(_KINDS)
# term kinds that keep a spin space (one fermion per site) in itself and do not vanish there
_SPIN_KINDS = ("exchange", "exchange_z", "exchange_xy", "spin_flip", "zeeman", "number_product")
# family -> (needs a [cluster], {argument: (type, default)})
_FAMILY_ARGS = {
    "hubbard": (True, {"U": (str, "U"), "V": (str, None)}),
    "anderson": (False, {"n_bath": (int, None), "eps_d": (str, "eps_d"), "U": (str, "U")}),
    "kanamori": (False, {"n_orbitals": (int, None), "U": (str, "U"), "J": (str, "J"),
                         "U_prime": (str, None)}),
    "heisenberg": (True, {}),
    "t_j": (True, {}),
}
#: The families a model file's ``[family]`` table may name.
FAMILIES = tuple(_FAMILY_ARGS)
_TOP_KEYS = ("format", "version", "name", "shared", "space", "cluster", "family", "term", "fixed")
_SPACE_KEYS = ("kind", "sites", "orbitals", "projected")
_TERM_KEYS = ("kind", "coupling", "sites", "bonds", "bond_label", "spin", "factor")
_SPINS = {"up": 0, "down": 1, "dn": 1}
_INT = re.compile(r"^[0-9]{1,6}$")


def load_model_file(path: str | os.PathLike) -> Model:
    """Read a model file: the model and the fixed coupling values it gives.

    Parameters
    ----------
    path : str or os.PathLike

    Returns
    -------
    (Model, dict)
        The model, and ``{label: sympy.Rational}`` from its ``[fixed]`` table (empty if
        there is none).

    Raises
    ------
    InputError, ModelError, ClusterError
        One message naming the file, the problem and the fix.

    Examples
    --------
    >>> import os, tempfile
    >>> text = '''format = "symcluster-model"
    ... [space]
    ... kind = "spins"
    ... sites = 2
    ... [[term]]
    ... kind = "exchange"
    ... coupling = "J"
    ... bonds = [[0, 1]]
    ... '''
    >>> with tempfile.TemporaryDirectory() as d:
    ...     p = os.path.join(d, "dimer.toml")
    ...     with open(p, "w", encoding="utf-8") as fh:
    ...         _ = fh.write(text)
    ...     model, fixed = load_model_file(p)
    >>> model.labels, fixed
    (('J',), {})
    """
    text = read_input_file(path, "model file", MAX_BYTES)
    stem = os.path.splitext(os.path.basename(str(path)))[0]
    return parse_model_toml(text, source=str(path), default_name=stem)


def parse_model_toml(text: str, source: str = "<string>", default_name: str = "custom") -> Model:
    """Model and fixed values from the text of a model file (docs/model-files.md).

    Parameters
    ----------
    text : str
    source : str
        Names the file in messages.
    default_name : str
        The model's name when the file gives none and no family names it.

    Returns
    -------
    (Model, dict)

    Examples
    --------
    >>> model, fixed = parse_model_toml('''format = "symcluster-model"
    ... [family]
    ... name = "anderson"
    ... n_bath = 1
    ... [fixed]
    ... eps_1 = "0"
    ... V_1 = 1
    ... ''')
    >>> model.labels, fixed
    (('eps_d', 'U', 'eps_1', 'V_1'), {'eps_1': 0, 'V_1': 1})
    """
    if len(text.encode("utf-8", "surrogatepass")) > MAX_BYTES:
        raise InputError(f"{source}: the model text is larger than {MAX_BYTES} bytes; a model "
                         "file is a few kilobytes")
    data = parse_toml(text, source, "docs/model-files.md")
    return _Reader(source).read(data, default_name)


class _Reader:
    """Reads one parsed TOML document; ``self.where`` prefixes every message."""

    def __init__(self, source):
        self.where = source

    # ------------------------------------------------------------------ small checks

    def fail(self, message, cls=InputError):
        raise cls(f"{self.where}: {message}")

    def keys(self, table, allowed, what):
        if not isinstance(table, dict):
            self.fail(f"{what} must be a table ([{what}] or {what} = {{ ... }})")
        extra = sorted(set(table) - set(allowed))
        if extra:
            self.fail(f"unknown key {extra[0]!r} in {what}; allowed keys are "
                      + ", ".join(allowed))

    def integer(self, value, what, minimum=0, maximum=None):
        if type(value) is not int or value < minimum or (maximum is not None and value > maximum):
            top = f" and at most {maximum}" if maximum is not None else ""
            self.fail(f"{what} = {value!r} must be a whole number >= {minimum}{top}")
        return value

    def label(self, value, what):
        if not isinstance(value, str):
            self.fail(f"{what} = {value!r} must be a name in quotes, e.g. \"t\"")
        try:
            return T.check_coupling_label(value, what)
        except ModelError as exc:
            self.fail(str(exc), ModelError)

    def number(self, value, what):
        """Exact Fraction from a TOML integer or a number string (``"-1/2"``, ``"0.25"``)."""
        if type(value) is int:
            return Fraction(value)
        if isinstance(value, float):
            self.fail(f"{what} = {value!r} is a binary floating-point number; write it as a "
                      f"string so that it stays exact, e.g. {what} = \"{value!r}\"")
        if not isinstance(value, str):
            self.fail(f"{what} = {value!r} is not a number; write e.g. {what} = \"-1/2\"")
        try:
            r = parse_number(value, what)
        except InputError as exc:
            self.fail(str(exc))
        return Fraction(int(r.p), int(r.q))

    # ------------------------------------------------------------------ the document

    def read(self, data, default_name):
        fmt = data.get("format")
        if fmt != FORMAT:
            self.fail(f"missing or wrong 'format' key ({fmt!r}); the first line must be "
                      f"format = \"{FORMAT}\"")
        version = data.get("version", 1)
        if type(version) is not int or version != 1:
            self.fail(f"model file version {version!r} is not supported; use version = 1")
        self.keys(data, _TOP_KEYS, "the top level")
        name = data.get("name")
        if name is not None and (not isinstance(name, str) or not name.isprintable()
                                 or not name.strip() or len(name) > 200):
            self.fail(f"name = {name!r} must be one line of printable text (at most 200 "
                      "characters)")
        shared = data.get("shared", [])
        if not isinstance(shared, list):
            self.fail("shared must be a list of coupling names, e.g. shared = [\"J\"]")
        shared = {self.label(s, "shared coupling") for s in shared}

        cl = self.cluster(data["cluster"]) if "cluster" in data else None
        family = self.family(data["family"], cl) if "family" in data else None
        if family is not None:
            base, field = family
            if "space" in data:
                self.check_space_matches(data["space"], base.space)
            space, cl = base.space, base.cluster
        else:
            if "space" not in data:
                self.fail("no [space] table; add [space] with kind = \"electrons\" or "
                          "\"spins\" and sites = ... (or start from a [family])")
            space = self.space(data["space"], cl)
            base, field = None, None
        raw_terms = data.get("term", [])
        if not isinstance(raw_terms, list):
            self.fail("'term' must be an array of tables: write each term as [[term]]")
        built = self.terms(raw_terms, space, cl, base, shared)
        all_terms = (list(base.terms) if base is not None else []) + built
        if not all_terms:
            self.fail("the model has no terms; add [[term]] tables or a [family]", ModelError)
        if name is None:
            name = base.name if base is not None else default_name
        if cl is None:
            cl = _geometry(space, all_terms)
        if cl.site_labels != (None,) * cl.n_sites and (base is None
                                                        or base.name not in ("hubbard", "t-J")):
            self.fail("site_energy in [cluster] is read only by the hubbard and t_j families; "
                      "write onsite terms instead", ModelError)
        try:
            model = make_model(cl, all_terms, space, name=name)
            if field is not None:
                model = families.with_field(model, *field)
                if data.get("name") is not None:
                    model = make_model(model.cluster, model.terms, model.space, name=name)
        except (ModelError, ClusterError) as exc:
            self.fail(str(exc), ModelError)
        fixed = self.fixed(data.get("fixed", {}), model)
        return model, fixed

    # ------------------------------------------------------------------ geometry and space

    def cluster(self, table):
        self.keys(table, ("name", "shape", "sites", "bonds", "site_energy"), "[cluster]")
        if "shape" not in table:
            return cluster_from_table(table, f"{self.where}: [cluster]")
        if set(table) - {"shape", "name"}:
            self.fail("[cluster] takes either shape = \"ring 4\" or sites/bonds/site_energy, "
                      "not both")
        shape = table["shape"]
        words = shape.split() if isinstance(shape, str) else []
        if not words or words[0] not in BUILTIN_SHAPES:
            self.fail(f"[cluster] shape {shape!r} is not a built-in shape; write e.g. shape = "
                      "\"ring 4\" (shapes: " + ", ".join(BUILTIN_SHAPES) + ")")
        fn, arity = BUILTIN_SHAPES[words[0]]
        sizes = words[1:]
        if len(sizes) != arity or not all(_INT.match(s) for s in sizes):
            self.fail(f"[cluster] shape {shape!r}: {words[0]} takes {arity} whole-number "
                      f"size(s), e.g. shape = \"{words[0]}{' 4' * arity}\"")
        ints = [int(s) for s in sizes]
        try:
            cl = grid(*ints, periodic=True) if words[0] == "pgrid" else fn(*ints)
        except ClusterError as exc:
            self.fail(f"[cluster] shape {shape!r}: {exc}", ClusterError)
        if "name" in table:
            if not isinstance(table["name"], str) or not table["name"].isprintable():
                self.fail("[cluster] name must be one line of text")
            cl = Cluster(cl.n_sites, cl.bonds, cl.site_labels, table["name"])
        return cl

    def space(self, table, cl):
        self.keys(table, _SPACE_KEYS, "[space]")
        kind = table.get("kind")
        if kind not in ("electrons", "spins"):
            self.fail(f"[space] kind = {kind!r}; write kind = \"electrons\" or kind = \"spins\"")
        if "sites" in table:
            sites = self.integer(table["sites"], "[space] sites", 1, MAX_SITES)
            if cl is not None and cl.n_sites != sites:
                self.fail(f"[space] sites = {sites} but the [cluster] has {cl.n_sites} sites; "
                          "make them equal (or leave sites out)", ModelError)
        elif cl is not None:
            sites = cl.n_sites
        else:
            self.fail("[space] needs sites = ... (the number of sites), or a [cluster]")
        orbitals = self.integer(table.get("orbitals", 1), "[space] orbitals", 1, 64)
        if sites * orbitals > MAX_SITES:
            self.fail(f"{sites} sites x {orbitals} orbitals is far beyond exact "
                      "diagonalisation; give fewer", ModelError)
        projected = table.get("projected", False)
        if not isinstance(projected, bool):
            self.fail(f"[space] projected = {projected!r} must be true or false")
        try:
            return LocalSpace(kind, sites, orbitals, projected)
        except ModelError as exc:
            self.fail(f"[space]: {exc}", ModelError)

    def check_space_matches(self, table, space):
        self.keys(table, _SPACE_KEYS, "[space]")
        want = {"kind": space.kind, "sites": space.n_sites, "orbitals": space.n_orbitals,
                "projected": space.projected}
        for key, value in table.items():
            if value != want[key] or type(value) is not type(want[key]):
                self.fail(f"[space] {key} = {value!r} disagrees with the [family]'s space "
                          f"({key} = {want[key]!r}); remove [space] or make it agree", ModelError)

    # ------------------------------------------------------------------ family

    def family(self, table, cl):
        if not isinstance(table, dict):
            self.fail("family must be a table: [family] with name = \"hubbard\" ...")
        name = table.get("name")
        if name not in _FAMILY_ARGS:
            self.fail(f"[family] name = {name!r} is not a family; choose one of "
                      + ", ".join(_FAMILY_ARGS), ModelError)
        needs_cluster, args = _FAMILY_ARGS[name]
        self.keys(table, ("name", "field", "field_sites") + tuple(args), f"[family] {name}")
        kwargs = {}
        for arg, (typ, default) in args.items():
            if arg in table:
                what = f"[family] {arg}"
                kwargs[arg] = (self.integer(table[arg], what, 1, MAX_SITES) if typ is int
                               else self.label(table[arg], what))
            elif default is None and typ is int:
                self.fail(f"[family] {name} needs {arg} = ... (a whole number >= 1)")
        if needs_cluster and cl is None:
            self.fail(f"the {name} family needs a [cluster] (shape = \"ring 4\" or "
                      "sites/bonds)", ModelError)
        if not needs_cluster and cl is not None:
            self.fail(f"the {name} family builds its own sites; remove the [cluster] table",
                      ModelError)
        try:
            if name == "anderson":
                model = families.anderson(kwargs.pop("n_bath"), **kwargs)
            elif name == "kanamori":
                model = families.kanamori(kwargs.pop("n_orbitals"), **kwargs)
            else:
                model = getattr(families, name)(cl, **kwargs)
        except (ModelError, ClusterError) as exc:
            self.fail(f"[family] {name}: {exc}", ModelError)
        field = None
        if "field" in table:
            h = self.label(table["field"], "[family] field")
            sites = table.get("field_sites")
            if sites is not None:
                if not isinstance(sites, list):
                    self.fail("[family] field_sites must be a list of site indices")
                sites = [self.integer(s, "[family] field_sites entry", 0, model.n_sites - 1)
                         for s in sites]
            field = (h, sites)
        elif "field_sites" in table:
            self.fail("[family] field_sites needs field = \"h\" (the field's label)")
        return model, field

    # ------------------------------------------------------------------ terms

    def terms(self, raw_terms, space, cl, base, shared):
        kinds_of = {}                      # label -> set of kinds (a family's are accepted)
        if base is not None:
            for t in base.terms:
                kinds_of.setdefault(t.label, set()).add(t.kind)
        family_labels = set(kinds_of)
        seen = {}
        out = []
        for k, table in enumerate(raw_terms, 1):
            what = f"term {k}"
            if not isinstance(table, dict):
                self.fail(f"{what} is not a table; write each term as [[term]] with kind = ...")
            kind = table.get("kind")
            what = f"term {k} ({kind})" if isinstance(kind, str) else what
            if kind not in _KINDS:
                self.fail(f"{what}: kind = {kind!r} is not a term kind; choose one of "
                          + ", ".join(_KINDS), ModelError)
            builder, arity, extra = _KINDS[kind]
            allowed = ("kind", "coupling", "factor", "spin") if "spin" in extra else \
                ("kind", "coupling", "factor")
            allowed += ("sites",) if arity == 1 else ("bonds", "bond_label")
            self.keys(table, allowed, what)
            if "coupling" not in table:
                self.fail(f"{what}: add coupling = \"...\" (the label of its coupling)")
            label = self.label(table["coupling"], f"{what} coupling")
            factor = self.number(table.get("factor", 1), f"{what} factor")
            if factor == 0:
                self.fail(f"{what}: factor = 0 removes the term; delete the term instead")
            self.check_space_kind(kind, space, what)
            spin = self.spin(table, kind, what)
            places = (self.sites(table, space, what) if arity == 1
                      else self.bonds(table, space, cl, what))
            kinds = kinds_of.setdefault(label, set())
            if kinds and kind not in kinds and label not in shared:
                first = sorted(kinds)[0]
                origin = " (from the [family])" if label in family_labels else ""
                self.fail(
                    f"{what}: coupling {label!r} already multiplies {first} terms{origin}; "
                    f"one name for two kinds of term is usually a slip, so rename one (e.g. "
                    f"{label}_2), or add shared = [\"{label}\"] at the top of the file if they "
                    "really share one coupling (as J in the t-J model)", ModelError)
            kinds.add(kind)
            for place in places:
                try:
                    if kind == "number_product":
                        a, b = place
                        term = builder(a, spin[0], b, spin[1], label, factor)
                    elif kind == "hopping":
                        term = builder(*place, label, spin, factor)
                    else:
                        term = builder(*place, label, factor)
                except ModelError as exc:
                    self.fail(f"{what} on {self.place_text(place, space)}: {exc}", ModelError)
                key = (term.kind, term.label, term.operator)   # [0, 1] and [1, 0] alike
                if key in seen:
                    self.fail(f"{what}: the {kind} term with coupling {label!r} on "
                              f"{self.place_text(place, space)} is given twice ({seen[key]} "
                              "and this one); give it once, or use factor = 2", ModelError)
                seen[key] = what
                out.append(term)
        return out

    def check_space_kind(self, kind, space, what):
        if space.kind == "spins" and kind not in _SPIN_KINDS:
            self.fail(f"{what}: a {kind} term moves charge or is a constant on a spin space "
                      "(one electron per site); use exchange, exchange_z, exchange_xy, "
                      "spin_flip, zeeman or number_product, or make [space] kind = "
                      "\"electrons\"", ModelError)
        if space.projected and kind in ("hubbard_u", "pair_hopping"):
            self.fail(f"{what}: a {kind} term needs doubly occupied sites, which a projected "
                      "space (no double occupancy) excludes; remove it or set projected = "
                      "false", ModelError)

    def spin(self, table, kind, what):
        value = table.get("spin")
        if kind == "number_product":
            if (not isinstance(value, list) or len(value) != 2
                    or not all(isinstance(v, str) and v in _SPINS for v in value)):
                self.fail(f"{what}: number_product needs spin = [\"up\", \"down\"] (the spins "
                          "of its two densities, each \"up\" or \"down\")")
            return (_SPINS[value[0]], _SPINS[value[1]])
        if value is None:
            return None
        if not isinstance(value, str) or value not in _SPINS:
            self.fail(f"{what}: spin = {value!r}; write spin = \"up\" or spin = \"down\" (or "
                      "leave it out for both spins)")
        return _SPINS[value]

    def mode_ref(self, ref, space, what):
        """A site index (every orbital) -> ('site', s); [site, orbital] -> ('mode', m)."""
        if type(ref) is int:
            if not 0 <= ref < space.n_sites:
                self.fail(f"{what}: site {ref} is outside 0..{space.n_sites - 1}; fix the index "
                          "or raise [space] sites", ModelError)
            return ("site", ref)
        if (isinstance(ref, list) and len(ref) == 2 and all(type(x) is int for x in ref)):
            s, o = ref
            if not 0 <= s < space.n_sites:
                self.fail(f"{what}: site {s} in {ref} is outside 0..{space.n_sites - 1}; fix "
                          "the index or raise [space] sites", ModelError)
            if not 0 <= o < space.n_orbitals:
                self.fail(f"{what}: orbital {o} in {ref} is outside 0..{space.n_orbitals - 1}; "
                          "fix the index or raise [space] orbitals", ModelError)
            return ("mode", space.mode(s, o))
        self.fail(f"{what}: {ref!r} is not a site index or [site, orbital] pair")

    def sites(self, table, space, what):
        value = table.get("sites")
        if value is None:
            self.fail(f"{what}: add sites = [0, 1, ...] (or sites = \"all\")")
        if value == "all":
            return [(m,) for m in range(space.n_modes)]
        if not isinstance(value, list) or not value:
            self.fail(f"{what}: sites = {value!r} must be \"all\" or a non-empty list of site "
                      "indices or [site, orbital] pairs")
        out = []
        for ref in value:
            kind, x = self.mode_ref(ref, space, what)
            out += ([(space.mode(x, o),) for o in range(space.n_orbitals)] if kind == "site"
                    else [(x,)])
        return out

    def bonds(self, table, space, cl, what):
        value = table.get("bonds")
        if value is None:
            self.fail(f"{what}: add bonds = [[0, 1], ...] (or bonds = \"cluster\")")
        if value == "cluster":
            if cl is None:
                self.fail(f"{what}: bonds = \"cluster\" needs a [cluster] table; add one or "
                          "list the bonds")
            lab = table.get("bond_label")
            if lab is not None and lab not in cl.hopping_labels:
                self.fail(f"{what}: bond_label = {lab!r} is not a bond label of the cluster ("
                          + ", ".join(cl.hopping_labels) + ")", ModelError)
            value = [[i, j] for i, j, l in cl.bonds if lab is None or l == lab]
        elif "bond_label" in table:
            self.fail(f"{what}: bond_label selects bonds of the cluster; it needs bonds = "
                      "\"cluster\"")
        if not isinstance(value, list) or not value:
            self.fail(f"{what}: bonds = {value!r} must be \"cluster\" or a non-empty list of "
                      "pairs such as [[0, 1], [1, 2]]")
        out = []
        for pair in value:
            if not isinstance(pair, list) or len(pair) != 2:
                self.fail(f"{what}: bond {pair!r} is not a pair [i, j] (sites) or "
                          "[[i, o], [j, p]] ([site, orbital] ends)")
            (ka, a), (kb, b) = (self.mode_ref(r, space, what) for r in pair)
            if ka != kb:
                self.fail(f"{what}: bond {pair!r} mixes a site with a [site, orbital] end; give "
                          "two sites or two [site, orbital] pairs")
            if ka == "site":
                out += [(space.mode(a, o), space.mode(b, o)) for o in range(space.n_orbitals)]
            else:
                out.append((a, b))
        return out

    def place_text(self, place, space):
        def one(m):
            if space.n_orbitals == 1:
                return f"site {m}"
            return f"[site, orbital] [{m // space.n_orbitals}, {m % space.n_orbitals}]"
        return " and ".join(one(m) for m in place)

    # ------------------------------------------------------------------ fixed values

    def fixed(self, table, model):
        if not isinstance(table, dict):
            self.fail("fixed must be a table: [fixed] with lines such as V_1 = \"1/2\"")
        out = {}
        for label, value in table.items():
            if label not in model.labels:
                self.fail(f"[fixed] {label!r} is not a coupling of this model; its couplings "
                          "are " + ", ".join(model.labels), ModelError)
            f = self.number(value, f"[fixed] {label}")
            out[label] = sympy.Rational(f.numerator, f.denominator)
        return out


def _geometry(space, terms):
    """A Cluster for a model file without [cluster]: the site pairs its terms join."""
    pairs = {}
    for t in terms:
        sites = sorted({m // space.n_orbitals for m in t.modes})
        if len(sites) == 2:
            pairs.setdefault(tuple(sites), t.label)
    bonds = tuple(sorted((i, j, lab) for (i, j), lab in pairs.items()))
    return Cluster(space.n_sites, bonds, (None,) * space.n_sites,
                   "atom" if space.n_sites == 1 else "cluster")
