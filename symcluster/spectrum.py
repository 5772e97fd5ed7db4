"""Level and Spectrum: the result of a solve, as plain data.

Nothing in this module knows how a spectrum was computed; analysis and export
depend only on these classes.

An energy is either a sympy expression in the coupling symbols (closed form)
or an exact implicit root object (``symcluster.numeric.implicit.ImplicitRoot``):
the k-th real root, in ascending order, of an irreducible polynomial
P(E; couplings).  Values at a point come from :mod:`symcluster.numeric`
(:func:`~symcluster.numeric.evaluate.energy_numeric`, re-exported here).
"""

import math
import numbers
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from fractions import Fraction

import mpmath
import sympy

from symcluster.errors import ModelError
from symcluster.numeric.evaluate import energy_numeric

__all__ = ["Level", "Spectrum", "VerificationReport", "coerce_point", "energy_numeric",
           "to_rational", "exact_rational", "check_digits"]


def to_rational(name, value):
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


def exact_rational(name, value):
    """:func:`to_rational`, refusing values that are not rational (sqrt(2), sympy Floats)."""
    r = to_rational(name, value)
    if not isinstance(r, sympy.Rational):
        raise ModelError(f"value {value!r} of {name} is not an exact rational; use e.g. 3/2, "
                         f"1.5 or a Fraction")
    return r


def check_digits(digits, minimum=1):
    """Validate a requested number of significant digits; returns it."""
    if isinstance(digits, bool) or not isinstance(digits, int):
        raise ModelError(f"digits={digits!r} is not an integer; give e.g. digits=30")
    if not minimum <= digits <= MAX_DIGITS:
        raise ModelError(f"digits={digits} is outside {minimum}..{MAX_DIGITS}; give e.g. digits=30")
    return digits


def coerce_point(symbols, values):
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

    def add(self, check, scope, points=(), worst=0.0, **extra):
        entry = {"check": check, "scope": scope,
                 "points": [{k: _exact_str(v) for k, v in p.items()} for p in points],
                 "worst": float(worst)}
        entry.update(extra)
        self.checks.append(entry)

    @property
    def worst(self):
        return max((c["worst"] for c in self.checks), default=0.0)

    def summary(self):
        kinds = {}
        for c in self.checks:
            kinds[c["check"]] = kinds.get(c["check"], 0) + 1
        parts = [f"{n}x {k}" for k, n in sorted(kinds.items())]
        return f"verified: {', '.join(parts)}; worst deviation {self.worst:.1e}"

    def as_dict(self):
        return {"digits": self.digits, "worst_deviation": self.worst, "checks": list(self.checks)}


@dataclass
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

    def eigenvector(self) -> dict | None:
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

    def numeric(self, values: Mapping, digits: int = 30,
                symbols: Sequence[sympy.Symbol] | None = None) -> mpmath.mpf:
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


@dataclass
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

    @property
    def symbols(self) -> tuple:
        """The free couplings (the model's, less those held at fixed values)."""
        return tuple(s for s in self.model.symbols if s.name not in self.fixed)

    @property
    def n_states(self) -> int:
        return sum(l.degeneracy for l in self.levels)

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

    def select(self, **qn: object) -> list["Level"]:
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
