"""A spectrum as a JSON file (format "symcluster-spectrum", version 2), and back.

The schema is written out in docs/outputs.md.  Exact numbers are strings,
exact expressions are trees (:mod:`symcluster.export.exprtree`), and a file is
always written whole or not at all (temporary file + ``os.replace``).  Version 2
stores every distinct level polynomial once, in a top-level table that levels and
implicit roots refer to by position (the 8-site clusters have factors of degree up
to 336 shared by hundreds of levels); version 1 files, which repeat the polynomial
in every level, are still read.
"""

import json
import math
import os

import mpmath
import sympy

from symcluster.errors import InputError
from symcluster.export.files import check_writable, write_text_atomic, write_texts_atomic
from symcluster.export.exprtree import (from_tree, int_to_decimal, is_implicit_root, parse_pi_multiple,
                       poly_from_tree, poly_to_tree, root_of_poly, to_tree)
from symcluster.export.text import energy_text, level_sort_key, numeric_values, poly_text
from symcluster.export.latex import _poly_tex, energy_latex
from symcluster.version import __version__

__all__ = ["FORMAT", "VERSION", "spectrum_to_dict", "dumps_spectrum", "write_json",
           "read_json", "loads_spectrum", "decode_spectrum_dict", "write_text_atomic",
           "write_texts_atomic", "check_writable"]

FORMAT = "symcluster-spectrum"
VERSION = 2
READABLE_VERSIONS = (1, 2)
_RATIONAL_KEYS = ("S", "Sz", "eta")
_INT_KEYS = ("N", "irrep_dim")


def _rat_str(x):
    x = sympy.Rational(x)
    p = int_to_decimal(x.p)
    return p if x.q == 1 else f"{p}/{int_to_decimal(x.q)}"


def _plain(obj):
    """Make report/symmetry data JSON-safe: exact numbers as strings, no NaN."""
    if isinstance(obj, dict):
        return {str(k): _plain(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple, set, frozenset)):
        return [_plain(v) for v in obj]
    if isinstance(obj, bool) or obj is None or isinstance(obj, (int, str)):
        return obj
    if isinstance(obj, float):
        return obj if math.isfinite(obj) else str(obj)
    if isinstance(obj, sympy.Rational):
        return _rat_str(obj)
    return str(obj)


def _qn_to_json(qn):
    out = {}
    for key, val in qn.items():
        if isinstance(val, bool) or val is None:
            out[key] = val
        elif isinstance(val, int):
            out[key] = val
        elif isinstance(val, sympy.Integer) and key in _INT_KEYS:
            out[key] = int(val)
        elif isinstance(val, sympy.Rational):
            out[key] = _rat_str(val)
        else:
            out[key] = _plain(val)
    return out


def _model_dict(model):
    c = model.cluster
    return {
        "name": model.name,
        "description": model.describe(),
        "hamiltonian": model.hamiltonian_text(),
        "couplings": [s.name for s in model.symbols],
        "cluster": {
            "name": c.name,
            "n_sites": c.n_sites,
            "bonds": [[int(i), int(j), str(lab)] for i, j, lab in c.bonds],
            "site_labels": [None if s is None else str(s) for s in c.site_labels],
        },
    }


def spectrum_to_dict(spectrum, point=None, digits=30, eigenvectors=True):
    """The JSON document for a spectrum, as plain Python data.

    Parameters
    ----------
    spectrum : Spectrum
    point : dict, optional
        ``{name or Symbol: number}``; every coupling must get a value.  Each level
        then carries its value at this point to ``digits`` significant digits.
    digits : int
    eigenvectors : bool
        Include the closed-form eigenvector of every level whose block has
        dimension <= 4 (key "eigenvector": list of {"up", "dn", "coefficient"};
        bit masks in the fermion ordering of docs/conventions.md).

    Returns
    -------
    dict
        Ready for :func:`json.dumps`; levels sorted by N, then value at the point
        (or in their original order without a point).
    """
    pt = spectrum.point(point) if point is not None else None
    values = numeric_values(spectrum, pt, digits) if pt is not None else None
    order = sorted(range(len(spectrum.levels)),
                   key=lambda i: level_sort_key(spectrum.levels[i], values, i))
    table = _PolynomialTable()
    levels = []
    for i in order:
        lev = spectrum.levels[i]
        energy = lev.energy
        if is_implicit_root(energy):
            j = table.index(energy.poly)
            var = energy.poly.gens[0].name
            tree = {"root": {"ref": j, "var": var, "index": int(energy.index)}}
            text = f"root {int(energy.index) + 1} of P{j + 1} = 0 (ascending in {var})"
            tex = rf"\operatorname{{root}}_{{{int(energy.index) + 1}}}\left[P_{{{j + 1}}}\right]"
        else:
            tree, text, tex = to_tree(energy), energy_text(energy), energy_latex(energy)
        entry = {
            "energy": tree,
            "energy_text": text,
            "energy_latex": tex,
            "degeneracy": int(lev.degeneracy),
            "quantum_numbers": _qn_to_json(lev.quantum_numbers),
            "polynomial": None if lev.polynomial is None else table.index(lev.polynomial),
            "block": str(lev.block or ""),
        }
        if values is not None:
            with mpmath.workdps(digits):
                entry["values"] = {str(digits): mpmath.nstr(values[i], digits)}
        if eigenvectors:
            vec = lev.eigenvector() if hasattr(lev, "eigenvector") else None
            if vec:
                entry["eigenvector"] = [
                    {"up": int(u), "dn": int(d), "coefficient": to_tree(sympy.sympify(c))}
                    for (u, d), c in sorted(vec.items())]
        levels.append(entry)
    return {
        "format": FORMAT,
        "version": VERSION,
        "symcluster_version": __version__,
        "model": _model_dict(spectrum.model),
        "fixed": {k: str(v) for k, v in (getattr(spectrum, "fixed", None) or {}).items()},
        "sectors": _sectors_text(spectrum),
        "point": None if pt is None else {s.name: _rat_str(v) for s, v in pt.items()},
        "digits": int(digits),
        "n_states": int(spectrum.n_states),
        "polynomials": table.entries,
        "levels": levels,
        "symmetries": _plain(spectrum.symmetries),
        "verification": _plain(spectrum.verification.as_dict()),
        "timings": _plain(spectrum.timings),
    }


def _sectors_text(spectrum):
    """The sector selection of the solve in the command line's grammar, or None (every
    level of the solved electron numbers)."""
    sel = getattr(spectrum, "sectors", None)
    if sel is None:
        return None
    from symcluster.blocks.selection import describe_selection
    return describe_selection(sel)


class _PolynomialTable:
    """Distinct polynomials in order of first use: {"name", "poly", "text", "latex"} each."""

    def __init__(self):
        self.entries = []
        self._by_id = {}       # id -> (object, position); the object keeps the id valid
        self._by_value = {}

    def index(self, poly):
        hit = self._by_id.get(id(poly))
        if hit is not None and hit[0] is poly:
            return hit[1]
        j = self._by_value.get(poly)
        if j is None:
            j = len(self.entries)
            self._by_value[poly] = j
            self.entries.append({"name": f"P{j + 1}", "poly": poly_to_tree(poly),
                                 "text": poly_text(poly),
                                 "latex": _poly_tex(poly)})
        self._by_id[id(poly)] = (poly, j)
        return j


def dumps_spectrum(spectrum, point=None, digits=30):
    """The JSON text of :func:`spectrum_to_dict` (indented, strict: no NaN)."""
    return json.dumps(spectrum_to_dict(spectrum, point, digits), indent=1, allow_nan=False) + "\n"


def write_json(spectrum, path, point=None, digits=30):
    """Write the spectrum as JSON to ``path`` atomically (never a half-written file)."""
    write_text_atomic(path, dumps_spectrum(spectrum, point, digits))


def _need(obj, key, kind, where):
    if not isinstance(obj, dict) or key not in obj:
        raise InputError(f"{where}: key {key!r} is missing; the file is not a complete "
                         f"{FORMAT} document (regenerate it with symcluster)")
    val = obj[key]
    if not isinstance(val, kind) or isinstance(val, bool) and kind is not bool:
        raise InputError(f"{where}: key {key!r} has the wrong type ({type(val).__name__}); "
                         f"regenerate the file")
    return val


def _qn_from_json(qn, where):
    if not isinstance(qn, dict):
        raise InputError(f"{where}: 'quantum_numbers' must be an object")
    out = dict(qn)
    for key in _RATIONAL_KEYS:
        if key in out:
            val = out[key]
            tree = {"rat": val} if isinstance(val, str) else {"int": str(val)} \
                if isinstance(val, int) and not isinstance(val, bool) else val
            try:
                out[key] = from_tree(tree)
            except InputError as exc:
                raise InputError(f"{where}: quantum number {key}: {exc}") from None
    if "k" in out:
        out["k"] = _momentum_from_json(out["k"], where)
    return out


def _momentum_from_json(val, where):
    """Quantum number k: "0", "pi/2", ... or a list of them (an orbit of momenta)."""
    items = val if isinstance(val, list) else [val]
    back = [parse_pi_multiple(v) for v in items]
    if any(b is None for b in back) or not items:
        bad = next((v for v, b in zip(items, back) if b is None), val)
        raise InputError(f"{where}: quantum number k = {bad!r} is not a momentum; write a "
                         f"multiple of pi such as \"0\", \"pi\", \"-pi/2\" or \"2*pi/3\" "
                         f"(or a list of them)")
    return tuple(back) if isinstance(val, list) else back[0]


def decode_spectrum_dict(data, source="<data>", root_factory=None):
    """Check a parsed document against the schema and reload its exact objects.

    Returns the same dict with, per level, ``energy`` a sympy expression or
    implicit root, ``polynomial`` a sympy Poly (or None) and spins/η as sympy
    Rationals; ``point`` values become sympy Rationals keyed by name.

    Raises
    ------
    InputError
        Naming the source, the place and the problem.
    """
    if not isinstance(data, dict):
        raise InputError(f"{source}: the top level must be a JSON object; this is not a "
                         f"{FORMAT} file")
    fmt = data.get("format")
    if fmt != FORMAT:
        raise InputError(f"{source}: 'format' is {fmt!r}, expected {FORMAT!r}; give a file "
                         f"written by symcluster's --json option")
    version = data.get("version")
    if version not in READABLE_VERSIONS:
        raise InputError(f"{source}: version {version!r} is not supported (this symcluster "
                         f"reads versions {', '.join(map(str, READABLE_VERSIONS))}); "
                         f"regenerate the file")
    _need(data, "model", dict, source)
    _need(data, "digits", int, source)
    levels = _need(data, "levels", list, source)
    _need(data, "verification", dict, source)
    out = dict(data)
    point = data.get("point")
    if point is not None:
        if not isinstance(point, dict):
            raise InputError(f"{source}: 'point' must be an object such as {{\"t\": \"1\"}}")
        out["point"] = {k: from_tree({"rat": v}) for k, v in point.items()}
    table = []
    if version >= 2:
        for j, item in enumerate(_need(data, "polynomials", list, source)):
            where = f"{source}: polynomials[{j}]"
            try:
                table.append(poly_from_tree(_need(item, "poly", dict, where)))
            except InputError as exc:
                raise InputError(f"{where}: {exc}") from None
        out["polynomials"] = table
    new_levels = []
    for i, lev in enumerate(levels):
        where = f"{source}: levels[{i}]"
        tree = _need(lev, "energy", dict, where)
        if _need(lev, "degeneracy", int, where) < 1:
            raise InputError(f"{where}: degeneracy {lev['degeneracy']} is not a positive "
                             f"number of states; the file was edited or damaged, regenerate it")
        entry = dict(lev)
        try:
            if version >= 2:
                entry["energy"] = _energy_v2(tree, table, root_factory)
                entry["polynomial"] = _table_entry(lev.get("polynomial"), table, "polynomial")
            else:
                entry["energy"] = from_tree(tree, root_factory=root_factory)
                poly = lev.get("polynomial")
                entry["polynomial"] = None if poly is None else poly_from_tree(poly)
            vec = lev.get("eigenvector")
            if vec is not None:
                if not isinstance(vec, list):
                    raise InputError("'eigenvector' must be a list of {up, dn, coefficient}")
                entry["eigenvector"] = {
                    (_need(v, "up", int, where), _need(v, "dn", int, where)):
                        from_tree(_need(v, "coefficient", dict, where)) for v in vec}
        except InputError as exc:
            raise InputError(f"{where}: {exc}") from None
        entry["quantum_numbers"] = _qn_from_json(_need(lev, "quantum_numbers", dict, where),
                                                 where)
        new_levels.append(entry)
    out["levels"] = new_levels
    return out


def _table_entry(ref, table, what):
    if ref is None:
        return None
    if isinstance(ref, bool) or not isinstance(ref, int) or not 0 <= ref < len(table):
        raise InputError(f"{what} {ref!r} must be a position 0..{len(table) - 1} in the "
                         f"'polynomials' table")
    return table[ref]


def _energy_v2(tree, table, root_factory):
    """An energy tree of version 2: a root node refers to the polynomial table."""
    body = tree.get("root")
    if body is None:
        return from_tree(tree, root_factory=root_factory)
    if set(tree) != {"root"} or not isinstance(body, dict) or set(body) != {"ref", "var", "index"}:
        raise InputError("a root needs exactly the keys 'ref', 'var' and 'index'")
    poly = _table_entry(body["ref"], table, "root ref")
    return root_of_poly(poly, body["var"], body["index"], root_factory)


class _NonFiniteNumber(Exception):
    pass


class _LongBareInteger(Exception):
    pass


def _refuse_constant(name):
    raise _NonFiniteNumber(name)


def _finite_float(text):
    value = float(text)
    if not math.isfinite(value):           # e.g. 1e999 overflows to infinity
        raise _NonFiniteNumber(text if len(text) <= 30 else text[:27] + "...")
    return value


def _short_int(text):
    if len(text.lstrip("-")) > 1000:
        raise _LongBareInteger(len(text.lstrip("-")))
    return int(text)


def loads_spectrum(text, source="<string>", root_factory=None):
    """Parse JSON text and return :func:`decode_spectrum_dict` of it."""
    try:
        data = json.loads(text, parse_constant=_refuse_constant, parse_float=_finite_float,
                          parse_int=_short_int)
    except _NonFiniteNumber as exc:
        raise InputError(f"{source}: not strict JSON: {exc.args[0]} is not a finite number "
                         f"(NaN, Infinity and numbers that overflow are not allowed in this "
                         f"format); the file was not written by symcluster or was edited, "
                         f"regenerate it") from None
    except _LongBareInteger as exc:
        raise InputError(f"{source}: a bare JSON integer has {exc.args[0]} digits; in this "
                         f"format only small counts are bare numbers (exact numbers are "
                         f"strings such as {{\"int\": \"...\"}}), regenerate the file") from None
    except (json.JSONDecodeError, RecursionError) as exc:
        msg = getattr(exc, "msg", "nested too deeply")
        line = getattr(exc, "lineno", "?")
        raise InputError(f"{source}: not valid JSON ({msg}, line {line}); the file is damaged, "
                         f"regenerate it") from None
    return decode_spectrum_dict(data, source, root_factory)


#: Default limit of :func:`read_json`, in bytes (the largest spectra written so far, the
#: 8-site clusters, are far smaller).
MAX_JSON_BYTES = 2 ** 30


def read_json(path, root_factory=None, max_bytes=MAX_JSON_BYTES):
    """Read a file written by :func:`write_json`.

    Parameters
    ----------
    path : str or os.PathLike
    root_factory : callable, optional
        Builds implicit roots from ``(poly, index)``; default ImplicitRoot.
    max_bytes : int
        A larger file (or a device such as /dev/zero) is refused without being
        read whole (default 1 GiB).

    Returns
    -------
    dict
        The document, with exact objects reloaded (see :func:`decode_spectrum_dict`).

    Raises
    ------
    InputError
        If the file cannot be read, is too large or does not follow the schema.

    Examples
    --------
    >>> import os, tempfile
    >>> from symcluster.spectrum import Level, Spectrum
    >>> from symcluster import hubbard, chain
    >>> path = os.path.join(tempfile.mkdtemp(), "one.json")
    >>> write_json(Spectrum(hubbard(chain(1)), [Level(sympy.Integer(0), 1, {"N": 0})]), path)
    >>> read_json(path)["levels"][0]["degeneracy"]
    1
    """
    from symcluster.parsing import read_input_file
    text = read_input_file(path, "JSON file", max_bytes)
    return loads_spectrum(text, source=os.fspath(path), root_factory=root_factory)

