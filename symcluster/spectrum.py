"""Level and Spectrum: the result of a solve, as plain data.

Nothing in this module knows how a spectrum was computed; analysis and export
depend only on these classes.

An energy is either a sympy expression in the coupling symbols (closed form)
or an exact implicit root object (``symcluster.algebra.roots.ImplicitRoot``):
the k-th real root, in ascending order, of an irreducible polynomial
P(E; couplings).  Both evaluate at any precision through :func:`energy_numeric`.
"""

import contextlib
import functools
import math
import numbers
import operator
import threading
from dataclasses import dataclass, field
from fractions import Fraction

import flint
import mpmath
import sympy
from mpmath import libmp

from .algebra.roots import real_roots_at
from .errors import ModelError, VerificationError

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
            + "; give every coupling a value, e.g. t=1 U=4"
        )
    return out


_MP_FUNCS = {
    sympy.cos: mpmath.cos, sympy.sin: mpmath.sin, sympy.tan: mpmath.tan,
    sympy.acos: mpmath.acos, sympy.asin: mpmath.asin, sympy.atan: mpmath.atan,
    sympy.exp: mpmath.exp, sympy.log: mpmath.log, sympy.Abs: abs,
}

#: The python-flint ``arb`` method for each elementary function above (abs is ``abs``).
_ARB_METHODS = {
    mpmath.cos: "cos", mpmath.sin: "sin", mpmath.tan: "tan", mpmath.acos: "acos",
    mpmath.asin: "asin", mpmath.atan: "atan", mpmath.exp: "exp",
}

#: Bits beyond the working precision at which closed forms are evaluated in balls.
_BALL_GUARD = 32


# operations of a compiled closed form (see _Program)
_SYMBOL, _INTEGER, _RATIONAL, _PI, _ADD, _MUL, _POW_INT, _SQRT, _POWER, _FUNC, _SIGN, _SYMPY = \
    range(12)


def _ball(v):
    """A value of the program as an ``arb`` ball: balls as they are, a raw real mpf
    exactly, None for a complex value."""
    if type(v) is flint.arb:
        return v
    if type(v) is tuple:
        sign, man, exp, _ = v
        return flint.arb((-man if sign else man, exp)) if man or not exp else None
    return None


def _ball_step(code, data, args):
    """The ball-arithmetic form of one operation: ``f(values, point)``.

    It returns an ``arb`` ball (python-flint, at the precision set by the caller) that
    encloses the exact result of the operation on its arguments' balls, or None where an
    argument is complex or the result is not a finite real (then the caller runs the
    mpmath operation on the balls' midpoints).
    """
    arb = flint.arb
    if code in (_MUL, _ADD):                # left to right
        combine = operator.mul if code == _MUL else operator.add

        def step(values, point):
            out = None
            for a in args:
                v = _ball(values[a])
                if v is None:
                    return None
                out = v if out is None else combine(out, v)
            return out
    elif code in (_POW_INT, _SQRT, _FUNC):  # x ** n, sqrt, abs, cos, acos, ...
        if code == _POW_INT:
            n = data

            def fn(v):
                return v ** n
        elif code == _SQRT:
            fn = arb.sqrt
        elif data is abs:
            fn = abs
        elif data in _ARB_METHODS and len(args) == 1:
            fn = getattr(arb, _ARB_METHODS[data])
        else:
            return None
        a = args[0]

        def step(values, point):
            v = _ball(values[a])
            if v is None:
                return None
            out = fn(v)
            return out if out.is_finite() else None
    elif code == _POWER:                    # x ** y of two reals
        a, b = args

        def step(values, point):
            x, y = _ball(values[a]), _ball(values[b])
            if x is None or y is None:
                return None
            out = x ** y
            return out if out.is_finite() else None
    elif code == _SYMBOL:                   # p / q
        def step(values, point):
            v = point[data]
            return arb(flint.fmpq(int(v.p), int(v.q)))
    elif code == _PI:
        def step(values, point):
            return arb.pi()
    elif code in (_INTEGER, _RATIONAL):
        value = flint.fmpq(data) if code == _INTEGER else flint.fmpq(*data)

        def step(values, point):
            return arb(value)
    else:
        return None
    return step


def _midpoint(v, prec, rnd):
    """A ball's midpoint rounded to ``prec`` bits (a raw mpf)."""
    m, e = v.mid().man_exp()
    return libmp.from_man_exp(int(m), int(e), prec, rnd)


class _Program:
    """Closed forms compiled into one list of operations, shared between them.

    Every distinct subexpression (sympy equality) is compiled once into an operation
    on the values of its arguments, so closed forms that share a square root or an arc
    cosine (the levels of one multiplet, the roots of one cubic) compute it once per
    point and precision.  Each operation is the one a walk of the single expression
    tree performs at that node, with the same arguments in the same order (sums and
    products left to right, integer powers, square roots, elementary functions), so a
    value does not depend on the other closed forms compiled with it or evaluated before
    it.  Real values are python-flint ``arb`` balls at the working precision plus
    ``_BALL_GUARD`` bits, each enclosing the exact result of its operation on its
    arguments (:func:`_ball_step`); a form's value is its ball's midpoint rounded to the
    working precision.  An operation that has a complex argument, or whose result is not
    a finite real ball (a square root of a ball that reaches below 0), runs as the mpmath
    operation on the midpoints instead.

    Node types that closed forms are not made of fall back to sympy's own evaluation at
    the working precision.  ``sign`` of a polynomial in the couplings is exact
    (evaluated in rational arithmetic), so that it is right even where its argument
    vanishes at the point.
    """

    def __init__(self):
        self._slots = {}        # subexpression -> index of its operation
        self._by_id = {}        # id(subexpression) -> (subexpression, index)
        self._ops = []          # (argument slots, raw step or None, (code, data, expr))
        self._values = {}       # (point items, precision) -> {slot: value}
        self._last = None       # (point, precision, values) of the latest evaluation

    def _compile(self, expr):
        hit = self._by_id.get(id(expr))     # the same object again: no sympy hash needed
        if hit is not None and hit[0] is expr:
            return hit[1]
        slot = self._slots.get(expr)
        if slot is not None:
            self._by_id[id(expr)] = (expr, slot)
            return slot
        args = ()
        data = None
        if expr.is_Symbol:
            code, data = _SYMBOL, expr
        elif expr.is_Integer:
            code, data = _INTEGER, int(expr)
        elif expr.is_Rational:
            code, data = _RATIONAL, (int(expr.p), int(expr.q))
        elif expr is sympy.pi:
            code = _PI
        elif expr.is_Add or expr.is_Mul:
            code = _ADD if expr.is_Add else _MUL
            args = tuple(map(self._compile, expr.args))
        elif expr.is_Pow:
            ex = expr.exp
            if ex.is_Integer:
                code, data, args = _POW_INT, int(ex), (self._compile(expr.base),)
            elif ex == sympy.S.Half:
                code, args = _SQRT, (self._compile(expr.base),)
            else:
                code, args = _POWER, (self._compile(expr.base), self._compile(ex))
        elif expr.func in _MP_FUNCS:
            code, data = _FUNC, _MP_FUNCS[expr.func]
            args = tuple(map(self._compile, expr.args))
        elif expr.func is sympy.sign and _is_rational_function(expr.args[0]):
            code, data = _SIGN, expr.args[0]
        else:
            code = _SYMPY
        slot = self._slots[expr] = len(self._ops)
        self._by_id[id(expr)] = (expr, slot)
        self._ops.append((args, _ball_step(code, data, args), (code, data, expr)))
        return slot

    def evaluate(self, expr, point):
        """Value of `expr` at `point` ({Symbol: sympy Rational}), current mpmath precision.

        An mpf, or an mpc where the form has a complex value there.
        """
        return self.evaluate_all((expr,), point)[0]

    def evaluate_all(self, exprs, point):
        """``[self.evaluate(e, point) for e in exprs]``, in one sweep.

        The operations the forms need and that this point and precision have not computed
        yet are marked from the forms down (an operation's arguments have smaller slots:
        they are compiled first), then computed in ascending order, each once.
        """
        roots = [self._compile(e) for e in exprs]
        prec, rnd = mpmath.mp._prec_rounding
        last = self._last
        if last is not None and last[0] is point and last[1] == prec:
            values = last[2]
        else:
            key = (tuple(point.items()), prec)
            values = self._values.get(key)
            if values is None:
                values = self._values[key] = {}
            self._last = (point, prec, values)
        ops = self._ops
        todo = [r for r in roots if r not in values]
        if todo:
            need = bytearray(max(todo) + 1)
            for r in todo:
                need[r] = 1
            for slot in range(len(need) - 1, -1, -1):
                if need[slot]:
                    if slot in values:
                        need[slot] = 0
                    else:
                        for a in ops[slot][0]:
                            need[a] = 1
            ctx = flint.ctx
            old = ctx.prec
            ctx.prec = prec + _BALL_GUARD
            try:
                for slot, wanted in enumerate(need):
                    if wanted:
                        args, step, op = ops[slot]
                        value = step(values, point) if step is not None else None
                        if value is None:
                            value = self._run_mp(op, args, values, point, prec, rnd)
                        values[slot] = value
            finally:
                ctx.prec = old
        make = mpmath.mp.make_mpf
        out = []
        for r in roots:
            value = values[r]
            if type(value) is flint.arb:
                value = make(_midpoint(value, prec, rnd))
            elif type(value) is tuple:
                value = make(value)
            out.append(value)
        return out

    @staticmethod
    def _run_mp(op, args, values, point, prec, rnd):
        """One operation with mpmath numbers (the mpmath operations themselves), on the
        midpoints of its arguments' balls."""
        code, data, expr = op
        mpf = mpmath.mpf
        vals = [mpmath.mp.make_mpf(_midpoint(v, prec, rnd)) if type(v) is flint.arb
                else mpmath.mp.make_mpf(v) if type(v) is tuple else v
                for v in (values[a] for a in args)]
        if code == _SYMBOL:
            v = point[data]
            out = mpf(int(v.p)) / int(v.q)
        elif code == _INTEGER:
            out = mpf(data)
        elif code == _RATIONAL:
            out = mpf(data[0]) / data[1]
        elif code == _PI:
            out = +mpmath.pi
        elif code == _ADD:
            out = mpmath.fsum(vals)
        elif code == _MUL:
            out = mpf(1)
            for v in vals:
                out = out * v
        elif code == _POW_INT:
            out = vals[0] ** data
        elif code == _SQRT:
            out = mpmath.sqrt(vals[0])
        elif code == _POWER:
            out = mpmath.power(vals[0], vals[1])
        elif code == _FUNC:
            out = data(*vals)
        elif code == _SIGN:
            x = _rational_at(data, point)
            out = mpf((x > 0) - (x < 0))
        else:
            dps = mpmath.mp.dps
            env = {}
            for s in expr.free_symbols:
                v = point[s]
                env[s] = sympy.Float((mpf(int(v.p)) / int(v.q))._mpf_, dps)
            val = sympy.N(expr.subs(env), dps)
            out = mpmath.mpmathify(complex(val)) if not val.is_real else mpmath.mpf(str(val))
        return out._mpf_ if hasattr(out, "_mpf_") else out


def _is_rational_function(expr):
    """True if `expr` is a polynomial: built from symbols and rationals by +, * and
    non-negative integer powers (so that its exact value is defined at every point)."""
    if expr.is_Symbol or expr.is_Rational:
        return True
    if expr.is_Add or expr.is_Mul:
        return all(_is_rational_function(a) for a in expr.args)
    return bool(expr.is_Pow and expr.exp.is_Integer and expr.exp >= 0
                and _is_rational_function(expr.base))


def _rational_at(expr, point):
    """Exact value (Fraction) of a rational function of the couplings at `point`."""
    if expr.is_Symbol:
        v = point[expr]
        return Fraction(int(v.p), int(v.q))
    if expr.is_Rational:
        return Fraction(int(expr.p), int(expr.q))
    if expr.is_Add:
        return sum((_rational_at(a, point) for a in expr.args), Fraction(0))
    if expr.is_Mul:
        out = Fraction(1)
        for a in expr.args:
            out *= _rational_at(a, point)
        return out
    return _rational_at(expr.base, point) ** int(expr.exp)


_SHARED = threading.local()


@contextlib.contextmanager
def shared_evaluation():
    """Let closed forms evaluated inside the block share subexpression values.

    Within the block, :func:`energy_numeric` without a polynomial compiles every closed
    form into one :class:`_Program` (this thread only), so a square root or an arc
    cosine common to many levels is computed once per point and precision.  The values
    are those of evaluating each form on its own.  Nothing outlives the block.
    """
    stack = getattr(_SHARED, "stack", None)
    if stack is None:
        stack = _SHARED.stack = []
    stack.append(_Program())
    try:
        yield
    finally:
        stack.pop()


def energy_numeric(energy, point, digits=30, polynomial=None):
    """Value of a closed-form expression or implicit root at an exact point, as mpmath.mpf.

    Implicit roots are isolated with a certificate (``ImplicitRoot.numeric``).  A
    closed form given with its level's `polynomial` is used only to decide *which*
    root of that polynomial the level is; the value returned is that root, enclosed
    with a certificate, so all `digits` digits are right even where the closed form
    itself loses digits to cancellation (nested radicals at t = 0 or U = 0, or
    couplings of very different sizes).  The choice (:func:`_enclosed_root`):

    * all roots of the polynomial coincide at the point: that root (exact);
    * otherwise the closed form is evaluated in ball arithmetic (python-flint ``arb``),
      which encloses its exact value, at doubling precision until Sturm's theorem,
      applied in exact rational arithmetic, shows that the ball contains exactly one
      distinct root of the polynomial and the ball is narrower than `digits` need:
      the ball's midpoint;
    * where that never happens because the closed form is 0/0 or its sign terms are
      undecidable at the point: its limit along a fixed ray (:func:`_limit_along_a_ray`).

    Without `polynomial`, a closed form is evaluated directly at ``2 digits + 10``
    working digits (ball arithmetic, midpoint rounded; see :class:`_Program`); the
    verification does this, so that its comparison with the polynomial is not circular.

    Raises
    ------
    ModelError
        If no root can be chosen (the message names the point).
    VerificationError
        If the polynomial has non-real roots at the point or its degree drops there.
    """
    if hasattr(energy, "numeric"):
        return energy.numeric(point, digits=digits)
    if polynomial is None:
        return _closed_numeric(energy, point, digits)
    chosen = _enclosed_root(energy, point, polynomial, digits)
    if chosen is None:
        distinct = sorted(set(real_roots_at(polynomial, point, digits)))
        if len(distinct) == 1:
            chosen = distinct[0]
        else:
            chosen = _limit_along_a_ray(energy, point, digits, polynomial, distinct)
    if chosen is None:
        raise ModelError(
            f"the closed form {energy} cannot be evaluated at {point} (0/0 where roots of its "
            "polynomial merge); evaluate at a nearby point")
    with mpmath.workdps(digits):
        return +chosen


class _Undecided(Exception):
    """A ball contains 0 where a sign or a division needs to know it is not 0."""


_ARB_FUNCS = {sympy.cos: "cos", sympy.sin: "sin", sympy.tan: "tan", sympy.atan: "atan",
              sympy.exp: "exp"}


def _arb_eval(expr, env):
    """Enclosure (python-flint arb) of a real closed form at the current flint precision.

    Square roots and arc cosines of balls that reach past their domain use only the
    admissible part (a correct real closed form never leaves its domain).  Raises
    :class:`_Undecided` where a ball containing 0 is divided by or asked for its sign,
    and NotImplementedError for node types closed forms are not made of.
    """
    import flint
    if expr.is_Symbol:
        return env[expr]
    if expr.is_Rational:
        return flint.arb(flint.fmpq(int(expr.p), int(expr.q)))
    if expr is sympy.pi:
        return flint.arb.pi()
    if expr.is_Add or expr.is_Mul:
        out = flint.arb(0 if expr.is_Add else 1)
        for a in expr.args:
            out = out + _arb_eval(a, env) if expr.is_Add else out * _arb_eval(a, env)
        return out
    if expr.is_Pow and expr.exp.is_Rational and expr.exp.q in (1, 2):
        base = _arb_eval(expr.base, env)
        p = int(expr.exp.p)
        if expr.exp.q == 2:
            if base < 0:                     # certainly negative: not a real closed form here
                raise _Undecided
            base = base.nonnegative_part().sqrt()
        if p < 0 and base.contains(0):
            raise _Undecided
        return base ** p
    f = expr.func
    if f in (sympy.acos, sympy.asin):
        x = _arb_eval(expr.args[0], env)
        if x > 1 or x < -1:                  # certainly outside the domain
            raise _Undecided
        lo, hi = (1 - x).nonnegative_part().sqrt(), (1 + x).nonnegative_part().sqrt()
        acos = 2 * flint.arb.atan2(lo, hi)        # acos x = 2 atan2(sqrt(1-x), sqrt(1+x))
        return acos if f is sympy.acos else flint.arb.pi() / 2 - acos
    if f is sympy.sign:
        x = _arb_eval(expr.args[0], env)
        if x.is_zero():
            return flint.arb(0)
        if x > 0 or x < 0:
            return flint.arb(1 if x > 0 else -1)
        raise _Undecided
    if f is sympy.Abs:
        return abs(_arb_eval(expr.args[0], env))
    if f is sympy.log:
        x = _arb_eval(expr.args[0], env)
        if not x > 0:
            raise _Undecided
        return x.log()
    name = _ARB_FUNCS.get(f)
    if name is None:
        raise NotImplementedError(f"ball evaluation of {f}")
    return getattr(_arb_eval(expr.args[0], env), name)()


def _exact_value(point, s):
    """The coupling `s` at `point` (keyed by Symbol or name) as a python-flint fmpq."""
    import flint
    v = point[s] if s in point else point.get(s.name)
    if v is None:
        raise ModelError(f"point {point!r} gives no value for coupling {s.name!r}; add it")
    if isinstance(v, int) and not isinstance(v, bool):
        v = sympy.Integer(v)
    elif isinstance(v, Fraction):
        v = sympy.Rational(v.numerator, v.denominator)
    if not isinstance(v, sympy.Rational):
        raise ModelError(f"value {v!r} for coupling {s.name!r} is not an exact rational; "
                         "use sympy.Rational, int or fractions.Fraction")
    return flint.fmpq(int(v.p), int(v.q))


def _specialised(polynomial, point):
    """Exact rational coefficients (ascending in E) of polynomial(E, point), as fmpq."""
    import flint
    gens = polynomial.gens
    vals = [_exact_value(point, s) for s in gens[1:]]
    coeffs = [flint.fmpq(0)] * (polynomial.degree(gens[0]) + 1)
    for monom, c in polynomial.terms():
        c = sympy.Rational(c)
        x = flint.fmpq(int(c.p), int(c.q))
        for v, e in zip(vals, monom[1:]):
            if e:
                x *= v ** e
        coeffs[monom[0]] += x
    return coeffs


class _RootCounter:
    """Exact count of the distinct real roots of a rational polynomial in a closed interval.

    Sturm's theorem (C. Sturm, 1835; e.g. S. Basu, R. Pollack, M.-F. Roy, Algorithms in
    Real Algebraic Geometry, ch. 2): for the squarefree part g of p and its Sturm chain
    g_0 = g, g_1 = g', g_(k+1) = -rem(g_(k-1), g_k), the number of distinct real roots of
    p in (a, b) is V(a) - V(b) for a < b not roots, where V(x) counts the sign changes of
    g_0(x), g_1(x), ... with zeros dropped.  At a root r of g, g'(r) != 0 (g is
    squarefree) and just right of r g and g' have one sign, so V(r) = V(r+) and the
    count in the closed interval [a, b] is V(a) - V(b) + [g(a) = 0] for any a < b.
    Every evaluation is exact (python-flint fmpq), so the counts are certificates; each
    chain member is divided by the absolute value of its leading coefficient, which
    changes no sign.
    """

    def __init__(self, coeffs):
        import flint
        p = flint.fmpq_poly(list(coeffs))
        self.degree = p.degree()
        g = p // p.gcd(p.derivative()) if self.degree > 0 else p
        chain = [g, g.derivative()]
        while chain[-1].degree() > 0:
            chain.append(-(chain[-2] % chain[-1]))
        chain = [c for c in chain if c.degree() >= 0 and c != 0]
        self.chain = [c / abs(c.coeffs()[-1]) for c in chain]
        self.squarefree = self.chain[0]
        lead = [int(c.coeffs()[-1] > 0) * 2 - 1 for c in self.chain]
        at_minus = [s * (-1) ** c.degree() for s, c in zip(lead, self.chain)]
        self.n_real = self._changes(at_minus) - self._changes(lead)
        self.n_distinct = self.squarefree.degree()
        nums = [abs(int(c.p)) for c in coeffs if c != 0] + [abs(int(c.q)) for c in coeffs]
        self.height_bits = max(n.bit_length() for n in nums)

    @staticmethod
    def _changes(signs):
        signs = [s for s in signs if s]
        return sum(1 for a, b in zip(signs, signs[1:]) if a != b)

    def _variations(self, x):
        return self._changes([(v > 0) - (v < 0) for v in (c(x) for c in self.chain)])

    def is_root(self, x):
        return self.squarefree(x) == 0

    def count(self, lo, hi):
        """Number of distinct real roots in [lo, hi] (exact fmpq bounds, lo <= hi)."""
        on_lo = int(self.is_root(lo))
        if lo == hi:
            return on_lo
        return self._variations(lo) - self._variations(hi) + on_lo

    def only_root(self):
        """The root when every root coincides (squarefree part linear): exact fmpq."""
        c0, c1 = self.squarefree.coeffs()
        return -c0 / c1


@functools.lru_cache(maxsize=2048)
def _root_counter(key):
    import flint
    return _RootCounter([flint.fmpq(p, q) for p, q in key])


def _counter_at(polynomial, point):
    """The :class:`_RootCounter` of polynomial(E, point); checks degree and real roots."""
    coeffs = _specialised(polynomial, point)
    if coeffs[-1] == 0:
        raise VerificationError(
            f"leading coefficient of {polynomial.as_expr()} in {polynomial.gens[0]} vanishes "
            f"at {point}; choose another parameter point")
    counter = _root_counter(tuple((int(c.p), int(c.q)) for c in coeffs))
    if counter.n_real != counter.n_distinct:
        raise VerificationError(
            f"{polynomial.as_expr()} has {counter.n_distinct - counter.n_real} distinct non-real "
            f"root(s) at {point}, but levels of a Hermitian block must be real; check the "
            "block or the factor")
    return counter


def _fmpq_of(exact_arb):
    """The value of an exact arb (zero radius: a midpoint or a radius) as an fmpq."""
    import flint
    man, exp = exact_arb.man_exp()
    man, exp = int(man), int(exp)
    return flint.fmpq(man * 2 ** exp) if exp >= 0 else flint.fmpq(man, 2 ** -exp)


def _mpf_of(q, prec):
    """An fmpq as an mpmath.mpf rounded to `prec` bits."""
    with mpmath.workprec(prec):
        return mpmath.mpf(int(q.p)) / int(q.q)


def _enclosed_root(energy, point, polynomial, digits):
    """The root of `polynomial` at `point` that the closed form's enclosure singles out.

    If every root coincides at the point (the squarefree part is linear) that root,
    exactly.  Otherwise the closed form is evaluated in ball arithmetic from
    8 (digits + 10) bits, doubling the precision, until the ball [m - r, m + r]
    contains exactly one distinct root of the polynomial (Sturm count, exact) and is
    narrow enough for `digits`: r <= |m| 2^-(p + 32) with p the binary precision of
    `digits` decimal digits (or the root is exactly 0).  The ball's midpoint m is then
    within r of a certified root; nothing about the closed form is trusted.  No root
    isolation is needed, so roots that nearly coincide (t = 10^-300 against U = 1)
    cost only the precision that separates them.

    The precision cap max(2^14, 16 (start), 4 d h) bits, d the degree and h the largest
    bit size of a numerator or denominator of the polynomial's coefficients at the
    point, grows with `digits` and with the spread of the couplings (the distance
    between roots of an integer polynomial is bounded below by a power of its height,
    K. Mahler, Michigan Math. J. 11, 257 (1964); the factor 4 d is common practice, no
    source).  The cap only bounds the work: nothing returned depends on it.  None if
    no precision up to it decides (0/0, or undecidable signs at the point).
    """
    import flint
    counter = _counter_at(polynomial, point)
    need = mpmath.libmp.dps_to_prec(digits) + 32
    if counter.n_distinct == 1:
        return _mpf_of(counter.only_root(), need)
    bits = 8 * (digits + 10)
    max_bits = max(2 ** 14, 16 * bits, 4 * counter.degree * counter.height_bits)
    values = {s: _exact_value(point, s) for s in energy.free_symbols}
    while bits <= max_bits:
        with flint.ctx.workprec(bits):
            env = {s: flint.arb(v) for s, v in values.items()}
            try:
                ball = _arb_eval(energy, env)
            except _Undecided:
                ball = None
            except NotImplementedError:
                return None
        if ball is not None and ball.is_finite():
            mid, rad = _fmpq_of(ball.mid()), _fmpq_of(ball.rad())
            lo, hi = mid - rad, mid + rad
            if counter.count(lo, hi) == 1:
                if lo <= 0 <= hi and counter.is_root(flint.fmpq(0)):
                    return mpmath.mpf(0)
                if rad * 2 ** need <= abs(mid):
                    return _mpf_of(mid, max(need, bits))
        bits *= 2
    return None


def _limit_along_a_ray(energy, point, digits, polynomial, distinct):
    """The root in `distinct` that the closed form tends to at `point`, or None.

    Where a closed form is 0/0 (several roots of its polynomial merge, e.g. every
    hopping zero), its value is its limit along a fixed ray p + eps d with |d_c| <= 1.
    Eigenvalues of a Hermitian matrix move by at most ||eps sum_c d_c A_c|| (Weyl's
    inequality, Horn & Johnson, Matrix Analysis, Thm 4.3.1); the coupling matrices A_c
    of clusters of a few sites have norms of order 10, so steps eps = g 10^-4, g 10^-9,
    g 10^-14, with g the smallest gap between the distinct roots at p, move the levels
    by far less than g / 3.  At each step the closed form's value near p is the root
    its enclosure singles out there (:func:`_enclosed_root`), and it must lie within a
    third of the local gap of one root at p.  The two smallest steps that give a value
    must pick the same root.  All levels use the same ray, so the values at p together
    are the roots with their multiplicities.
    """
    gap = min(b - a for a, b in zip(distinct, distinct[1:]))
    decade = int(mpmath.floor(mpmath.log10(gap)))
    syms = sorted(point, key=str)
    ray = {s: sympy.Rational(7 + 3 * i, 11 + 5 * i) * (-1) ** i for i, s in enumerate(syms)}
    picked = []
    for below in (4, 9, 14):
        eps = sympy.Rational(10) ** (decade - below)
        near = {s: point[s] + eps * ray[s] for s in syms}
        value = _enclosed_root(energy, near, polynomial, digits)
        if value is not None:
            picked.append(_unambiguous_root(value, distinct))
    if len(picked) >= 2 and picked[-1] is not None and picked[-2] == picked[-1]:
        return picked[-1]
    return None


def _unambiguous_root(value, distinct):
    """The root in `distinct` nearest `value` if closer than a third of its local gap."""
    k = min(range(len(distinct)), key=lambda i: abs(distinct[i] - value))
    gaps = [abs(distinct[j] - distinct[k]) for j in (k - 1, k + 1) if 0 <= j < len(distinct)]
    return distinct[k] if abs(distinct[k] - value) < min(gaps) / 3 else None


def _closed_numeric(energy, point, digits):
    """A closed form evaluated at ``2 digits + 10`` working digits (an mpf; :class:`_Program`).

    Inside :func:`shared_evaluation` the form joins that block's compiled program;
    otherwise it is compiled on its own.  Raises ArithmeticError where the value has an
    imaginary part beyond rounding (the form is not real at the point).
    """
    return closed_values((energy,), point, digits)[0]


def closed_values(energies, point, digits):
    """``[_closed_numeric(e, point, digits) for e in energies]``, in one sweep of the
    program (:meth:`_Program.evaluate_all`)."""
    stack = getattr(_SHARED, "stack", None)
    program = stack[-1] if stack else _Program()
    ctx = mpmath.mp
    prec = ctx.prec
    ctx.dps = 2 * digits + 10       # mpmath.workdps, without the context object
    try:
        out = program.evaluate_all(energies, point)
        for i, val in enumerate(out):
            if isinstance(val, mpmath.mpc):
                if abs(val.imag) > mpmath.mpf(10) ** (-digits) * (1 + abs(val.real)):
                    raise ArithmeticError(f"energy {energies[i]} is not real at {point}")
                out[i] = val.real
        return out      # mpf values rounded to the working precision
    finally:
        ctx.prec = prec


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
        as a multiple of pi) where the lattice symmetry was used.
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

    def eigenvector(self):
        """Closed-form eigenvector of a small block, {(up, dn): coefficient}, or None.

        The state is the representative of the level's multiplet: Sz = S,
        lowest eta_z, one row of the lattice irrep; unnormalised; occupation
        states in the fermion ordering of docs/conventions.md.  Available when
        the level's block has dimension <= 4 (None otherwise).
        """
        if self.eigenvectors is None and self.source is not None:
            from .eigvec import block_eigenvector
            block, vectors = self.source
            vec = block_eigenvector(block, vectors, self.polynomial, self.energy)
            self.eigenvectors = [vec] if vec else []
        return self.eigenvectors[0] if self.eigenvectors else None

    @property
    def is_closed_form(self):
        return not hasattr(self.energy, "numeric")

    def numeric(self, values, digits=30, symbols=None):
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
    """

    model: object
    levels: list
    symmetries: list = field(default_factory=list)
    verification: VerificationReport = field(default_factory=VerificationReport)
    timings: dict = field(default_factory=dict)

    @property
    def symbols(self):
        return tuple(self.model.symbols)

    @property
    def n_states(self):
        return sum(l.degeneracy for l in self.levels)

    def point(self, values):
        """Exact {Symbol: Rational} point from {name: number}."""
        return coerce_point(self.symbols, values)

    def numeric(self, values, digits=30):
        """Every level's value with its degeneracy, ascending: list of (mpmath.mpf, int)."""
        check_digits(digits)
        pt = self.point(values)
        with mpmath.workdps(digits):
            out = [(+energy_numeric(l.energy, pt, digits, l.polynomial), l.degeneracy)
                   for l in self.levels]
        out.sort(key=lambda p: p[0])
        return out

    def select(self, **qn):
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
