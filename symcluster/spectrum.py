"""Level and Spectrum: the result of a solve, as plain data.

Nothing in this module knows how a spectrum was computed; analysis and export
depend only on these classes.

An energy is either a sympy expression in the coupling symbols (closed form)
or an exact implicit root object (``symcluster.numeric.implicit.ImplicitRoot``):
the k-th real root, in ascending order, of an irreducible polynomial
P(E; couplings).  Values at a point come from :mod:`symcluster.numeric`
(:func:`~symcluster.numeric.evaluate.energy_numeric`, re-exported here).
"""

from __future__ import annotations

import math
import numbers
from collections.abc import Iterable, Mapping, Sequence
from typing import Any, Optional
from dataclasses import dataclass, field
from fractions import Fraction

import mpmath
import sympy

from symcluster.errors import ModelError
from symcluster.numeric.evaluate import energy_numeric

import numpy

__all__ = ["Level", "Spectrum", "VerificationReport", "coerce_point", "energy_numeric",
           "to_rational", "exact_rational", "check_digits"]


def to_rational(name: str, value: object) -> sympy.Expr:
    """One coupling value as an exact sympy number (the rules of docs/quickstart.md).

    Integers, Fractions, sympy Rationals and strings such as "3/2" or "-2.5" are exact; a
    float (numpy floats included) means the decimal it was written as: 0.1 is 1/10.
    """
    if isinstance(value, bool):
        raise ModelError(f"value of {name} is a boolean; give a number such as 1 or 3/2")
    if isinstance(value, sympy.Rational):
        return value
    if isinstance(value, numbers.Integral):          # int, numpy integers
        return sympy.Integer(int(value))
    if isinstance(value, Fraction):
        return sympy.Rational(value.numerator, value.denominator)
    if isinstance(value, float) or (isinstance(value, numbers.Real) and hasattr(value, "dtype")):
        if not math.isfinite(float(value)):
            raise ModelError(f"value of {name} is {value}; give a finite number")
        # the decimal the float was written as (its shortest repr: 0.1 -> 1/10), not its
        # binary value (0.1 -> 3602879701896397/36028797018963968), whose "certified"
        # digits would belong to another point; numpy floats print their shortest
        # decimal in their own precision (np.float32(0.1) -> "0.1")
        text = float.__repr__(value) if type(value) is float else str(value)
        return sympy.Rational(Fraction(text))
    if isinstance(value, mpmath.mpf):
        return sympy.Rational(str(value))
    if isinstance(value, str):
        try:
            return sympy.Rational(Fraction(value.strip()))
        except (ValueError, ZeroDivisionError):
            raise ModelError(
                f"value {value!r} of {name} is not a number; write e.g. 4, -2.5 or 3/2"
            ) from None
    if isinstance(value, sympy.Expr) and value.is_number:
        return value
    raise ModelError(f"value {value!r} of {name} is not a number; write e.g. 4, -2.5 or 3/2")


#: Largest number of digits accepted for values and for the verification.
MAX_DIGITS = 10000


def exact_rational(name: str, value: object) -> sympy.Rational:
    """:func:`to_rational`, refusing values that are not rational (sqrt(2), sympy Floats)."""
    r = to_rational(name, value)
    if not isinstance(r, sympy.Rational):
        raise ModelError(f"value {value!r} of {name} is not an exact rational; use e.g. 3/2, "
                         f"1.5 or a Fraction")
    return r


def check_digits(digits: int, minimum: int = 1) -> int:
    """Validate a requested number of significant digits; returns it."""
    if isinstance(digits, bool) or not isinstance(digits, int):
        raise ModelError(f"digits={digits!r} is not an integer; give e.g. digits=30")
    if not minimum <= digits <= MAX_DIGITS:
        raise ModelError(f"digits={digits} is outside {minimum}..{MAX_DIGITS}; give e.g. digits=30")
    return digits


def coerce_point(symbols: Sequence[sympy.Symbol], values: Mapping) -> dict:
    """Map {name or Symbol: number} onto {Symbol: exact sympy number}.

    Every symbol in ``symbols`` must receive a value; unknown names are an error.
    """
    by_name = {s.name: s for s in symbols}
    out = {}
    for key, value in dict(values).items():
        name = key.name if isinstance(key, sympy.Symbol) else str(key)
        if name not in by_name:
            known = ", ".join(sorted(by_name)) or "(none)"
            raise ModelError(f"unknown coupling {name!r}; this model's couplings are {known}")
        out[by_name[name]] = to_rational(name, value)
    missing = sorted(n for n, s in by_name.items() if s not in out)
    if missing:
        raise ModelError(
            "no value given for coupling(s) " + ", ".join(missing)
            + "; give every coupling a value, e.g. "
            + " ".join(f"{n}=1" for n in by_name)
        )
    return out


def _exact_str(v):
    """``str(v)`` of a coordinate of a verification point: ``p/q`` (or ``p``) of a sympy
    Rational written directly, as sympy prints it, without its printer."""
    if isinstance(v, sympy.Rational):
        return f"{v.p}" if v.q == 1 else f"{v.p}/{v.q}"
    return str(v)


@dataclass
class VerificationReport:
    """What was checked before a result was returned.

    ``checks`` is a list of dicts, one per check, each with at least
    ``{"check": name, "scope": what it covered, "points": [...], "worst": float}``.
    """

    checks: list = field(default_factory=list)
    digits: int = 30

    def add(self, check: str, scope: str, points: Iterable[Mapping] = (), worst: float = 0.0,
            **extra) -> None:
        entry = {"check": check, "scope": scope,
                 "points": [{k: _exact_str(v) for k, v in p.items()} for p in points],
                 "worst": float(worst)}
        entry.update(extra)
        self.checks.append(entry)

    @property
    def worst(self) -> float:
        return max((c["worst"] for c in self.checks), default=0.0)

    def summary(self) -> str:
        kinds = {}
        for c in self.checks:
            kinds[c["check"]] = kinds.get(c["check"], 0) + 1
        parts = [f"{n}x {k}" for k, n in sorted(kinds.items())]
        return f"verified: {', '.join(parts)}; worst deviation {self.worst:.1e}"

    def short(self) -> str:
        """One short line: how many checks passed and the worst deviation.

        Examples
        --------
        >>> r = VerificationReport()
        >>> r.add("state count", "all", worst=0.0)
        >>> r.short()
        'verified: 1 check passed, worst deviation 0.0e+00'
        """
        n = len(self.checks)
        return (f"verified: {n} check{'s' if n != 1 else ''} passed, worst deviation "
                f"{self.worst:.1e}")

    def as_dict(self) -> dict:
        return {"digits": self.digits, "worst_deviation": self.worst, "checks": list(self.checks)}


@dataclass(repr=False)
class Level:
    """One energy level.

    Attributes
    ----------
    energy : sympy.Expr or ImplicitRoot
        Exact energy as a function of the coupling symbols.
    degeneracy : int
        Number of Fock states this level stands for (spin multiplet, lattice
        irrep dimension included).
    quantum_numbers : dict
        Always ``"N"``; ``"S"`` (sympy Rational) where spin is conserved, else
        ``"Sz"``; ``"eta"`` where eta-pseudospin applies; ``"irrep"`` (label),
        ``"irrep_dim"`` and, on clusters with translations, ``"k"`` (momentum
        as a multiple of pi) where the lattice symmetry was used; ``"mulliken"``
        (e.g. ``"B1"``, ``"T2g"``) where the lattice group is a known point group.
    polynomial : sympy.Poly or None
        Irreducible polynomial in ``E`` (first generator) and the couplings
        that the energy is a root of.
    eigenvectors : list or None
        Closed-form eigenvectors for small blocks: each a dict
        {(up, dn): sympy coefficient} in the fermion ordering of
        docs/conventions.md.
    """

    energy: object
    degeneracy: int
    quantum_numbers: dict
    polynomial: object = None
    eigenvectors: object = None
    block: str = ""
    source: object = field(default=None, repr=False, compare=False)

    def __repr__(self) -> str:
        from symcluster.display import level_repr
        return level_repr(self)

    def _repr_latex_(self) -> str:
        from symcluster.display import level_latex
        return level_latex(self)

    def _repr_html_(self):
        from symcluster.display import html_table, qn_text, tex
        return html_table(["E", "g", "quantum numbers"],
                          [[("math", tex(self.energy)), self.degeneracy,
                            qn_text(self.quantum_numbers)]])

    def eigenvector(self) -> Optional[dict]:
        """Closed-form eigenvector of a small block, {(up, dn): coefficient}, or None.

        The state is the representative of the level's multiplet: Sz = S,
        lowest eta_z, one row of the lattice irrep; unnormalised; occupation
        states in the fermion ordering of docs/conventions.md.  Available when
        the level's block has dimension <= 4 (None otherwise).
        """
        if self.eigenvectors is None and self.source is not None:
            from symcluster.blocks.eigvec import block_eigenvector
            block, vectors = self.source
            vec = block_eigenvector(block, vectors, self.polynomial, self.energy)
            self.eigenvectors = [vec] if vec else []
        return self.eigenvectors[0] if self.eigenvectors else None

    @property
    def is_closed_form(self) -> bool:
        return not hasattr(self.energy, "numeric")

    @property
    def expr(self) -> sympy.Expr:
        """The energy as a sympy expression: the closed form, or an implicit root as a
        :class:`~symcluster.numeric.rootexpr.LevelRoot` (substitutes, ``evalf``,
        ``sympy.lambdify``, ``sympy.latex``).

        Examples
        --------
        >>> import sympy, symcluster as sc
        >>> E, U = sympy.symbols("E U", real=True)
        >>> from symcluster.numeric.implicit import ImplicitRoot
        >>> lev = Level(ImplicitRoot(sympy.Poly(E**5 - 5*E**3 + 4*E - U, E, U), 4), 1, {"N": 1})
        >>> lev.subs({"U": 0}).evalf(10)
        2.000000000
        """
        e = self.energy
        return e.as_expr() if hasattr(e, "as_expr") and not isinstance(e, sympy.Basic) else e

    def subs(self, values: Mapping) -> sympy.Expr:
        """The energy with couplings substituted; keys are names (``"U"``) or Symbols.

        Names are matched to the level's real coupling symbols, so ``{"U": 4}`` works
        where ``expr.subs(sympy.Symbol("U"), 4)`` would silently do nothing (the couplings
        are real symbols).  Values are taken exactly (0.1 means 1/10).
        """
        expr = self.expr
        by_name = {s.name: s for s in expr.free_symbols}
        out = {}
        for key, value in dict(values).items():
            name = key.name if isinstance(key, sympy.Symbol) else str(key)
            if name not in by_name:
                continue
            out[by_name[name]] = value if isinstance(value, sympy.Basic) else \
                to_rational(name, value)
        return expr.subs(out)

    def numeric(self, values: Mapping, digits: int = 30,
                symbols: Optional[Sequence[sympy.Symbol]] = None) -> mpmath.mpf:
        check_digits(digits)
        syms = symbols if symbols is not None else _free_symbols(self)
        point = coerce_point(syms, values) if not _is_exact_point(values) else values
        with mpmath.workdps(digits):
            return +energy_numeric(self.energy, point, digits, self.polynomial)


def _is_exact_point(values):
    return all(isinstance(k, sympy.Symbol) for k in values) and all(
        isinstance(v, sympy.Basic) for v in values.values())


def _free_symbols(level):
    e = level.energy
    if hasattr(e, "symbols"):
        return tuple(e.symbols)
    if level.polynomial is not None:
        return tuple(level.polynomial.gens[1:])
    return tuple(sorted(e.free_symbols, key=lambda s: s.name))


@dataclass(repr=False)
class Spectrum:
    """All levels of a model, with what was checked and which symmetries were used.

    Attributes
    ----------
    model : object
        The model that was solved (its ``symbols`` and ``cluster``).
    levels : list of Level
    symmetries : list of dict
        Detected symmetries and block sizes per sector (see docs/symmetry.md).
    verification : VerificationReport
    fixed : dict
        ``{label: sympy.Rational}`` of couplings held at fixed values in the solve; the
        energies depend on the other couplings only.
    sectors : list of dict or None
        The sector selection of the solve (``solve(model, sectors=...)``): the spectrum
        holds exactly the levels whose quantum numbers match one of these dicts.  None
        when no selection was made (every level of the solved electron numbers).
    """

    model: object
    levels: list
    symmetries: list = field(default_factory=list)
    verification: VerificationReport = field(default_factory=VerificationReport)
    timings: dict = field(default_factory=dict)
    fixed: dict = field(default_factory=dict)
    sectors: object = None

    @property
    def is_selection(self) -> bool:
        """True if the spectrum holds only selected sectors (``solve(..., sectors=...)``)."""
        return self.sectors is not None

    def _title(self):
        model = self.model
        what = model.describe().split(";")[0] if hasattr(model, "describe") else "spectrum"
        fixed = ", ".join(f"{k}={v}" for k, v in self.fixed.items())
        return (f"{what}: {len(self.levels)} levels, {self.n_states} states"
                + (f"; fixed {fixed}" if fixed else ""))

    def __repr__(self):
        couplings = ", ".join(s.name for s in self.symbols) or "none"
        checks = len(self.verification.checks)
        return (f"<Spectrum of {self._title()}; couplings {couplings}; "
                f"{checks} verification checks, worst deviation {self.verification.worst:.1e}>")

    def _display_rows(self):
        from symcluster.display import MAX_ROWS, tex
        keys = []
        for lev in self.levels:
            for k in lev.quantum_numbers:
                if k not in keys and k != "irrep_dim":
                    keys.append(k)
        rows = []
        for lev in self.levels[:MAX_ROWS]:
            q = lev.quantum_numbers
            rows.append([str(q.get(k, "")) if not isinstance(q.get(k), tuple) else
                         ", ".join(map(str, q[k])) for k in keys]
                        + [lev.degeneracy, ("math", tex(lev.energy))])
        return keys, rows

    def _repr_html_(self):
        from symcluster.display import html_table
        keys, rows = self._display_rows()
        return html_table(keys + ["g", "E"], rows, caption=self._title(),
                          total=len(self.levels))

    def _repr_latex_(self):
        from symcluster.display import MAX_ROWS, qn_latex, tex
        lines = [r"\begin{array}{rl}", r"g & E \\ \hline"]
        for lev in self.levels[:MAX_ROWS]:
            lines.append(f"{lev.degeneracy} & {tex(lev.energy)}"
                         rf"\quad ({qn_latex(lev.quantum_numbers)}) \\")
        if len(self.levels) > MAX_ROWS:
            lines.append(rf"\multicolumn{{2}}{{l}}{{\dots\ {len(self.levels) - MAX_ROWS}"
                         r"\text{ more levels}} \\")
        lines.append(r"\end{array}")
        return "$" + "\n".join(lines) + "$"

    @property
    def symbols(self) -> tuple:
        """The free couplings (the model's, less those held at fixed values)."""
        return tuple(s for s in self.model.symbols if s.name not in self.fixed)

    @property
    def n_states(self) -> int:
        return sum(l.degeneracy for l in self.levels)

    def symbol(self, name: str) -> sympy.Symbol:
        """The sympy Symbol of the coupling ``name`` (a real symbol: ``sympy.Symbol("U")``
        without ``real=True`` is a different symbol and would not substitute).

        Examples
        --------
        >>> import symcluster as sc
        >>> spec = sc.Spectrum(sc.hubbard(sc.chain(2)), [])
        >>> spec.symbol("U").is_real
        True
        """
        for s in self.model.symbols:
            if s.name == name:
                return s
        raise ModelError(f"unknown coupling {name!r}; this model's couplings are "
                         + ", ".join(s.name for s in self.model.symbols))

    def point(self, values: Mapping) -> dict:
        """Exact {Symbol: Rational} point from {name: number}."""
        return coerce_point(self.symbols, values)

    def numeric(self, values: Mapping, digits: int = 30) -> list[tuple[mpmath.mpf, int]]:
        """Every level's value with its degeneracy, ascending: list of (mpmath.mpf, int)."""
        check_digits(digits)
        pt = self.point(values)
        with mpmath.workdps(digits):
            out = [(+energy_numeric(l.energy, pt, digits, l.polynomial), l.degeneracy)
                   for l in self.levels]
        out.sort(key=lambda p: p[0])
        return out

    def energies(self, values: Mapping) -> numpy.ndarray:
        """Every eigenvalue at many coupling points: float64 array (points, states).

        Parameters
        ----------
        values : dict
            ``{name: number or 1-D array}`` for every free coupling; arrays (all of one
            length) give the points, numbers are held fixed.  Floats stand for the
            decimals they are written as (0.1 is 1/10).

        Returns
        -------
        numpy.ndarray
            Shape ``(number of points, n_states)``: each row holds every eigenvalue,
            repeated by its degeneracy, in ascending order.  Closed forms are evaluated on
            whole arrays; implicit roots come from batched companion-matrix eigenvalues
            polished by Newton steps, and where roots come close (or a closed form has no
            finite float value) the value is recomputed with certified isolation
            (:mod:`symcluster.numeric.grid`).

        Examples
        --------
        >>> import numpy as np, symcluster as sc
        >>> spec = sc.solve(sc.hubbard(sc.chain(2)))
        >>> e = spec.energies({"t": 1, "U": np.array([0.0, 4.0])})
        >>> e.shape
        (2, 16)
        >>> e[:, 0].round(10).tolist()      # lowest: -2t (N = 2, U = 0), -t (N = 1, U = 4)
        [-2.0, -1.0]
        """
        import numpy as np
        from symcluster.numeric.grid import GridEvaluator
        syms = self.symbols
        by_name = {s.name: s for s in syms}
        given = {}
        for key, value in dict(values).items():
            name = key.name if isinstance(key, sympy.Symbol) else str(key)
            if name not in by_name:
                known = ", ".join(sorted(by_name)) or "(none)"
                raise ModelError(f"unknown coupling {name!r}; this model's couplings are {known}")
            given[name] = value
        missing = [n for n in by_name if n not in given]
        if missing:
            raise ModelError("no value given for coupling(s) " + ", ".join(missing)
                             + "; give every coupling a number or an array, e.g. "
                             + " ".join(f"{n}=1" for n in by_name))
        columns, exact, n = [], [], None
        for s in syms:
            v = given[s.name]
            if np.ndim(v) == 0 and not isinstance(v, np.ndarray):
                exact.append(to_rational(s.name, v))
                columns.append(None)
                continue
            arr = np.asarray(v, dtype=float)
            if arr.ndim != 1 or (n is not None and len(arr) != n) or not np.all(np.isfinite(arr)):
                raise ModelError(f"values of {s.name} must be one finite number or a 1-D array "
                                 f"of finite numbers of the same length as the others")
            n = len(arr)
            columns.append(arr)
            exact.append(None)
        n = 1 if n is None else n
        columns = [np.full(n, float(e)) if c is None else c for c, e in zip(columns, exact)]
        grid = self.__dict__.get("_grid")
        if grid is None or grid.symbols != syms or len(grid.energies) != len(self.levels):
            grid = GridEvaluator([l.energy for l in self.levels],
                                 [l.polynomial for l in self.levels], syms)
            self.__dict__["_grid"] = grid
        vals = grid.values(columns, exact)
        degs = np.array([l.degeneracy for l in self.levels], dtype=int)
        return np.sort(np.repeat(vals, degs, axis=1), axis=1)

    def to_dataframe(self, point: Optional[Mapping] = None,
                     digits: int = 15) -> Any:
        """The levels as a pandas DataFrame (pandas needed; imported here only).

        Parameters
        ----------
        point : dict, optional
            ``{name: number}`` for every coupling: adds ``value`` (float64) and
            ``value_exact`` (a string of ``digits`` certified digits), rows sorted by it.
        digits : int

        Returns
        -------
        pandas.DataFrame
            One row per level: its quantum numbers, ``degeneracy``, ``closed_form``,
            ``energy_exact`` (sympy's one-line text) and, with a point, the values.

        Examples
        --------
        >>> import symcluster as sc
        >>> df = sc.solve(sc.hubbard(sc.chain(2))).to_dataframe({"t": 1, "U": 4})
        >>> float(df.loc[0, "value"]), int(df.loc[0, "degeneracy"]), df.loc[0, "energy_exact"]
        (-1.0, 2, '-t')
        """
        from symcluster.frames import level_records, pandas
        pd = pandas()
        check_digits(digits)
        values = None
        if point is not None:
            pt = self.point(point)
            with mpmath.workdps(digits + 5):
                values = [+energy_numeric(l.energy, pt, digits + 5, l.polynomial)
                          for l in self.levels]
        df = pd.DataFrame.from_records(level_records(self.levels, values, digits))
        if values is not None:
            df = df.sort_values(["value"], kind="stable").reset_index(drop=True)
        return df

    def select(self, **qn: object) -> list[Level]:
        """Levels whose quantum numbers match every given key, e.g. select(N=2).

        Raises
        ------
        ModelError
            A key is not a quantum number of any level (``select(n=4)``), naming
            the keys there are.

        Examples
        --------
        >>> import sympy
        >>> spec = Spectrum(None, [Level(sympy.Integer(0), 1, {"N": 0})])
        >>> len(spec.select(N=0)), len(spec.select(N=1))
        (1, 0)
        >>> spec.select(n=0)
        Traceback (most recent call last):
        ...
        symcluster.errors.ModelError: select(n=...): 'n' is not a quantum number of these levels; the keys are N
        """
        known = {k for l in self.levels for k in l.quantum_numbers}
        for k in qn:
            if self.levels and k not in known:
                raise ModelError(f"select({k}=...): {k!r} is not a quantum number of these "
                                 f"levels; the keys are {', '.join(sorted(known))}")
        return [l for l in self.levels
                if all(l.quantum_numbers.get(k) == v for k, v in qn.items())]
