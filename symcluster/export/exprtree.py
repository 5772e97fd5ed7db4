"""Exact expressions as nested JSON data, and back, through a whitelist.

An energy is stored as a tree of plain JSON objects (schema in docs/outputs.md)::

    U/2 - sqrt(U**2 + 16*t**2)/2
    -> {"op": "add", "args": [{"op": "mul", "args": [{"rat": "1/2"}, {"sym": "U"}]}, ...]}

Decoding never evaluates text: every node kind is looked up in a fixed table
(numbers are parsed with :class:`fractions.Fraction`-style regular
expressions, names with a strict identifier pattern), so a file can only ever
produce the sympy objects listed here.  Nodes are rebuilt with
``evaluate=False``, so a decoded expression is structurally identical to the
one that was encoded (``==`` holds even for forms such as ``2*(x + y)``).

Node kinds
----------
``{"int": "-3"}``, ``{"rat": "3/2"}``, ``{"const": "pi" | "E" | "I"}``,
``{"sym": "t"}`` (a real symbol; ``"assume": [...]`` records other
assumptions), ``{"op": NAME, "args": [...]}`` with NAME in :data:`OPS`,
``{"poly": {"gens": [...], "domain": "ZZ" | "QQ", "terms": [[[e0, e1, ...], "c"], ...]}}``
and, only at the top of an energy, ``{"root": {"poly": POLY, "var": "E", "index": k}}``
(the k-th real root, 0-based ascending, of POLY in its first generator).
"""

import re

import sympy

from symcluster.errors import InputError, ModelError

__all__ = ["to_tree", "from_tree", "poly_to_tree", "poly_from_tree", "root_of_poly",
           "is_implicit_root", "int_to_decimal", "decimal_to_int", "parse_pi_multiple", "OPS",
           "MAX_DEPTH", "MAX_DIGITS"]

#: operation name -> (sympy class, number of arguments or None for "two or more")
OPS = {
    "add": (sympy.Add, None),
    "mul": (sympy.Mul, None),
    "pow": (sympy.Pow, 2),
    "cos": (sympy.cos, 1),
    "sin": (sympy.sin, 1),
    "tan": (sympy.tan, 1),
    "acos": (sympy.acos, 1),
    "asin": (sympy.asin, 1),
    "atan": (sympy.atan, 1),
    "atan2": (sympy.atan2, 2),
    "abs": (sympy.Abs, 1),
    "exp": (sympy.exp, 1),
    "log": (sympy.log, 1),
    "cosh": (sympy.cosh, 1),
    "sinh": (sympy.sinh, 1),
    "tanh": (sympy.tanh, 1),
    "acosh": (sympy.acosh, 1),
    "asinh": (sympy.asinh, 1),
    "atanh": (sympy.atanh, 1),
    "sign": (sympy.sign, 1),
}
_OP_OF_CLASS = {cls: name for name, (cls, _) in OPS.items()}
_CONSTS = {"pi": sympy.pi, "E": sympy.E, "I": sympy.I}
_CONST_NAME = {v: k for k, v in _CONSTS.items()}
_ASSUMPTIONS = ("real", "positive", "negative", "nonnegative", "nonpositive", "nonzero",
                "integer")
_DOMAINS = {"ZZ": sympy.ZZ, "QQ": sympy.QQ}

#: most decimal digits of one integer (numerator or denominator) written or read; far
#: beyond real coefficients, small enough that a hostile file cannot stall the reader
MAX_DIGITS = 100_000

_INT = re.compile(r"^-?[0-9]+$")
_RAT = re.compile(r"^-?[0-9]+(/[0-9]+)?$")
_NAME = re.compile(r"^[A-Za-z][A-Za-z0-9_]{0,63}$")
_PI_MULTIPLE = re.compile(r"^(-?)(?:([0-9]{1,9})\*)?pi(?:/([0-9]{1,9}))?$")

#: deepest nesting accepted when decoding (real energies are far shallower)
MAX_DEPTH = 200

# Python refuses str(int) and int(str) beyond 4300 digits (sys.get_int_max_str_digits);
# below this size the built-in conversions are used directly
_CHUNK = 4000


def int_to_decimal(n):
    """Decimal text of an integer of any size (not subject to Python's 4300-digit limit).

    Raises
    ------
    ModelError
        If the integer has more than MAX_DIGITS digits (the most a reader accepts).
    """
    n = int(n)
    if n.bit_length() * 0.30102 > MAX_DIGITS + 10:      # clearly too long: do not convert
        text = None
    else:
        text = _to_decimal(abs(n))
    if text is None or len(text) > MAX_DIGITS:
        raise ModelError(f"an integer of about {int(n.bit_length() * 0.30103)} digits cannot be "
                         f"stored (at most {MAX_DIGITS}); this is far beyond any real "
                         f"coefficient, please report it")
    return "-" + text if n < 0 else text


def _to_decimal(n):
    if n.bit_length() <= 3 * _CHUNK:          # < 10**3612: the built-in str is allowed
        return str(n)
    half = int(n.bit_length() * 0.30103) // 2
    hi, lo = divmod(n, 10 ** half)
    return _to_decimal(hi) + _to_decimal(lo).rjust(half, "0")


def decimal_to_int(digits):
    """Integer from a string of decimal digits (optional leading ``-``), of any length.

    The caller checks the characters; this only converts (in pieces of <= 4000 digits).
    """
    if digits.startswith("-"):
        return -decimal_to_int(digits[1:])
    if len(digits) <= _CHUNK:
        return int(digits)
    half = len(digits) // 2
    return decimal_to_int(digits[:-half]) * 10 ** half + decimal_to_int(digits[-half:])


def parse_pi_multiple(text):
    """A momentum such as ``"0"``, ``"pi"``, ``"-pi/2"``, ``"2*pi/3"`` as the sympy object r*pi.

    The only grammar accepted is ``0`` or ``[-][p*]pi[/q]`` with decimal p, q (how sympy
    prints a rational multiple of pi); nothing is evaluated.  Returns None if ``text``
    does not match.
    """
    if not isinstance(text, str):
        return None
    if text == "0":
        return sympy.Integer(0)
    m = _PI_MULTIPLE.match(text)
    if not m:
        return None
    p, q = int(m.group(2) or 1), int(m.group(3) or 1)
    if p == 0 or q == 0:
        return None
    return sympy.Rational(-p if m.group(1) else p, q) * sympy.pi


def is_implicit_root(obj):
    """True for objects following the implicit-root protocol (``.poly``, ``.index``, ``.numeric``)."""
    return (not isinstance(obj, sympy.Basic) and hasattr(obj, "poly")
            and hasattr(obj, "index") and hasattr(obj, "numeric"))


# ----------------------------------------------------------------------------- encoding

def _sym_tree(sym):
    if not _NAME.match(sym.name):
        raise ModelError(f"symbol name {sym.name!r} cannot be stored; use letters, digits and "
                         f"underscores, starting with a letter")
    if isinstance(sym, (sympy.Dummy, sympy.Wild)):
        raise ModelError(f"symbol {sym.name!r} is a dummy/wild symbol and cannot be stored; "
                         f"replace it by an ordinary Symbol")
    orig = dict(getattr(sym, "_assumptions_orig", {}))
    if orig == {"real": True}:
        return {"sym": sym.name}
    kept = sorted(k for k, v in orig.items() if v is True and k in _ASSUMPTIONS)
    if len(kept) != len(orig):
        raise ModelError(f"symbol {sym.name!r} has assumptions {orig} that cannot be stored; "
                         f"only true values of {', '.join(_ASSUMPTIONS)} are supported")
    return {"sym": sym.name, "assume": kept}


def to_tree(expr):
    """Encode an exact sympy expression (or implicit root) as a JSON-ready tree.

    Parameters
    ----------
    expr : sympy.Expr or implicit root
        Built from integers, rationals, pi, E, I, symbols, and the operations in
        :data:`OPS`.  An implicit root (``.poly``, ``.index``) becomes a root node.

    Returns
    -------
    dict

    Raises
    ------
    ModelError
        If the expression contains a floating-point number or an operation outside
        the whitelist.

    Examples
    --------
    >>> import sympy
    >>> to_tree(sympy.Rational(3, 2) * sympy.Symbol("t", real=True))
    {'op': 'mul', 'args': [{'rat': '3/2'}, {'sym': 't'}]}
    """
    if is_implicit_root(expr):
        poly = expr.poly
        return {"root": {"poly": poly_to_tree(poly), "var": poly.gens[0].name,
                         "index": int(expr.index)}}
    if isinstance(expr, sympy.Poly):
        return poly_to_tree(expr)
    if isinstance(expr, bool) or not isinstance(expr, (sympy.Basic, int)):
        raise ModelError(f"cannot store {expr!r} (type {type(expr).__name__}) as an exact "
                         f"expression; give a sympy expression")
    expr = sympy.Integer(expr) if isinstance(expr, int) else expr
    if expr in _CONST_NAME:
        return {"const": _CONST_NAME[expr]}
    if isinstance(expr, sympy.Integer):
        return {"int": int_to_decimal(expr.p)}
    if isinstance(expr, sympy.Rational):
        return {"rat": f"{int_to_decimal(expr.p)}/{int_to_decimal(expr.q)}"}
    if isinstance(expr, sympy.Symbol):
        return _sym_tree(expr)
    name = _OP_OF_CLASS.get(type(expr))
    if name is None:
        raise ModelError(
            f"cannot store {expr} exactly: {type(expr).__name__} is not among the supported "
            f"node kinds (integers, rationals, pi, E, I, symbols, {', '.join(OPS)})")
    return {"op": name, "args": [to_tree(a) for a in expr.args]}


def poly_to_tree(poly):
    """Encode a sympy Poly with rational coefficients as a ``{"poly": ...}`` node."""
    dom = str(poly.get_domain())
    if dom not in _DOMAINS:
        raise ModelError(f"polynomial over domain {dom} cannot be stored; only ZZ and QQ "
                         f"coefficients are supported")
    terms = []
    for monom, coeff in poly.terms():
        c = sympy.Rational(coeff)
        terms.append([list(monom), int_to_decimal(c.p) if c.q == 1
                      else f"{int_to_decimal(c.p)}/{int_to_decimal(c.q)}"])
    return {"poly": {"gens": [_sym_tree(g) for g in poly.gens], "domain": dom, "terms": terms}}


# ----------------------------------------------------------------------------- decoding

def _where(path):
    return "at " + (path or "top level")


def _bad(path, message):
    raise InputError(f"expression tree {_where(path)}: {message}")


def _expect_dict(node, path, keys):
    if not isinstance(node, dict):
        _bad(path, f"expected an object such as {{\"int\": \"3\"}}, found {type(node).__name__} "
                   f"{_short(node)}; fix or regenerate the file")
    extra = set(node) - set(keys)
    if extra:
        _bad(path, f"unexpected key {sorted(extra)[0]!r} in {_short(node)}; allowed keys here: "
                   + ", ".join(sorted(keys)))


def _short(obj):
    text = repr(obj)
    return text if len(text) <= 60 else text[:57] + "..."


def _check_length(digits, path, what):
    n = len(digits.lstrip("-"))
    if n > MAX_DIGITS:
        _bad(path, f"{what} has {n} digits, more than the {MAX_DIGITS} this reader accepts; "
                   f"the file is corrupt or was not written by symcluster")


def _parse_int(text, path):
    if not isinstance(text, str) or not _INT.match(text):
        _bad(path, f"integer {_short(text)} must be a string of digits such as \"-3\"")
    _check_length(text, path, "integer")
    return sympy.Integer(decimal_to_int(text))


def _parse_rat(text, path):
    if not isinstance(text, str) or not _RAT.match(text):
        _bad(path, f"rational {_short(text)} must be a string such as \"3/2\" or \"-4\"")
    num, _, den = text.partition("/")
    _check_length(num, path, "numerator")
    _check_length(den, path, "denominator")
    if den and not den.strip("0"):
        _bad(path, f"rational {_short(text)} has a zero denominator; write a nonzero "
                   f"denominator")
    return sympy.Rational(decimal_to_int(num), decimal_to_int(den) if den else 1)


def _parse_sym(node, path):
    _expect_dict(node, path, {"sym", "assume"})
    name = node["sym"]
    if not isinstance(name, str) or not _NAME.match(name):
        _bad(path, f"symbol name {_short(name)} is not valid; use letters, digits and underscores, "
                   f"starting with a letter")
    if "assume" not in node:
        return sympy.Symbol(name, real=True)
    assume = node["assume"]
    if not isinstance(assume, list) or any(a not in _ASSUMPTIONS for a in assume):
        _bad(path, f"symbol {name!r}: 'assume' must be a list drawn from "
                   + ", ".join(_ASSUMPTIONS))
    return sympy.Symbol(name, **{a: True for a in assume})


def poly_from_tree(node, path="poly"):
    """Decode a ``{"poly": ...}`` node into a sympy Poly (whitelist only)."""
    _expect_dict(node, path, {"poly"})
    body = node["poly"]
    _expect_dict(body, path, {"gens", "domain", "terms"})
    for key in ("gens", "domain", "terms"):
        if key not in body:
            _bad(path, f"polynomial needs key {key!r}; regenerate the file")
    gens = body["gens"]
    if not isinstance(gens, list) or not gens:
        _bad(path, "polynomial 'gens' must be a non-empty list of symbols")
    gens = [_parse_sym(g, f"{path}.gens[{i}]") for i, g in enumerate(gens)]
    if len(set(gens)) != len(gens):
        _bad(path, "polynomial 'gens' repeats a symbol; list each generator once")
    dom = body["domain"]
    if dom not in _DOMAINS:
        _bad(path, f"polynomial domain {_short(dom)} is not supported; use \"ZZ\" or \"QQ\"")
    terms = body["terms"]
    if not isinstance(terms, list):
        _bad(path, "polynomial 'terms' must be a list of [[exponents], \"coefficient\"]")
    rep = {}
    for i, term in enumerate(terms):
        where = f"{path}.terms[{i}]"
        if not (isinstance(term, list) and len(term) == 2 and isinstance(term[0], list)):
            _bad(where, f"term {_short(term)} must be [[exponents], \"coefficient\"]")
        monom = term[0]
        if len(monom) != len(gens) or any(
                isinstance(e, bool) or not isinstance(e, int) or e < 0 for e in monom):
            _bad(where, f"exponents {_short(monom)} must be {len(gens)} non-negative integers")
        coeff = _parse_rat(term[1], where)
        if dom == "ZZ" and coeff.q != 1:
            _bad(where, f"coefficient {term[1]!r} is not an integer but the domain is ZZ; "
                        f"use domain \"QQ\"")
        if tuple(monom) in rep:
            _bad(where, f"exponents {monom} appear twice; merge the terms")
        rep[tuple(monom)] = coeff
    return sympy.Poly.from_dict(rep, *gens, domain=_DOMAINS[dom])


def _default_root_factory():
    try:
        from symcluster.numeric.implicit import ImplicitRoot
    except ImportError:
        raise InputError("the file contains implicit roots but symcluster.numeric.implicit is not "
                         "available in this installation; update symcluster") from None
    return ImplicitRoot


def root_of_poly(poly, var, index, root_factory=None):
    """The implicit root ``index`` (0-based, ascending) of `poly` in its first generator `var`.

    Checks what a file may get wrong (index range, generator name) with InputError.
    """
    if isinstance(index, bool) or not isinstance(index, int) or not \
            0 <= index < max(poly.degree(poly.gens[0]), 1):
        _bad("root", f"index {_short(index)} must be an integer from 0 to "
                     f"{poly.degree(poly.gens[0]) - 1} (roots counted from 0, ascending)")
    if var != poly.gens[0].name:
        _bad("root", f"var {var!r} is not the first generator "
                     f"{poly.gens[0].name!r} of the polynomial")
    return (root_factory or _default_root_factory())(poly, index)


def from_tree(node, root_factory=None):
    """Decode a tree made by :func:`to_tree` (whitelisted node kinds only).

    Parameters
    ----------
    node : dict
        Parsed JSON.
    root_factory : callable, optional
        ``root_factory(poly, index)`` builds implicit roots; default
        ``symcluster.numeric.implicit.ImplicitRoot``.

    Returns
    -------
    sympy.Expr, sympy.Poly or implicit root

    Raises
    ------
    InputError
        For any node outside the schema, naming where it is and what is allowed.

    Examples
    --------
    >>> from_tree({"op": "pow", "args": [{"sym": "t"}, {"rat": "1/2"}]})
    sqrt(t)
    """
    if isinstance(node, dict) and "root" in node:
        _expect_dict(node, "", {"root"})
        body = node["root"]
        _expect_dict(body, "root", {"poly", "var", "index"})
        if "poly" not in body or "index" not in body:
            _bad("root", "a root needs keys 'poly' and 'index'")
        poly = poly_from_tree(body["poly"], "root.poly")
        return root_of_poly(poly, body.get("var", poly.gens[0].name), body["index"],
                            root_factory)
    if isinstance(node, dict) and "poly" in node:
        return poly_from_tree(node)
    return _decode(node, "", 0)


def _decode(node, path, depth):
    if depth > MAX_DEPTH:
        _bad(path, f"nesting deeper than {MAX_DEPTH} levels; the file is corrupt or hostile")
    if not isinstance(node, dict) or len(node) == 0:
        _bad(path, f"expected an object such as {{\"int\": \"3\"}}, found {_short(node)}")
    if "int" in node:
        _expect_dict(node, path, {"int"})
        return _parse_int(node["int"], path)
    if "rat" in node:
        _expect_dict(node, path, {"rat"})
        return _parse_rat(node["rat"], path)
    if "const" in node:
        _expect_dict(node, path, {"const"})
        if node["const"] not in _CONSTS:
            _bad(path, f"unknown constant {_short(node['const'])}; allowed: "
                       + ", ".join(_CONSTS))
        return _CONSTS[node["const"]]
    if "sym" in node:
        return _parse_sym(node, path)
    if "root" in node or "poly" in node:
        _bad(path, "roots and polynomials may only appear at the top of an energy, not inside "
                   "an expression")
    if "op" not in node:
        _bad(path, f"unknown node {_short(node)}; a node has one of the keys int, rat, const, "
                   f"sym, op")
    _expect_dict(node, path, {"op", "args"})
    name = node["op"]
    if not isinstance(name, str) or name not in OPS:
        _bad(path, f"unknown operation {_short(name)}; allowed: {', '.join(OPS)}")
    args = node.get("args")
    cls, arity = OPS[name]
    if not isinstance(args, list):
        _bad(path, f"operation {name!r} needs a list 'args'")
    if (arity is None and len(args) < 2) or (arity is not None and len(args) != arity):
        want = "at least 2" if arity is None else str(arity)
        _bad(path, f"operation {name!r} takes {want} arguments, found {len(args)}")
    vals = [_decode(a, f"{path}/{name}[{i}]", depth + 1) for i, a in enumerate(args)]
    return cls(*vals, evaluate=False)
