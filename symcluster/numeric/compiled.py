"""Closed forms compiled into one program of operations, evaluated in ball arithmetic.

:class:`Program` is the engine behind the direct evaluation of closed forms (what the
verification compares with the level polynomials): every distinct subexpression of the
forms compiled into one program is computed once per point and precision, in
python-flint ``arb`` balls where its arguments are real, with mpmath where they are not.
The values equal those of evaluating each form on its own.
"""

import operator
from fractions import Fraction

import flint
import mpmath
import sympy

__all__ = ["Program"]


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


# operations of a compiled closed form (see Program)
_SYMBOL, _INTEGER, _RATIONAL, _PI, _ADD, _MUL, _POW_INT, _SQRT, _POWER, _FUNC, _SIGN, _SYMPY = \
    range(12)


def _ball(v):
    """A value of the program as an ``arb`` ball: balls as they are, a finite real mpf
    exactly, None for a complex or non-finite value."""
    if type(v) is flint.arb:
        return v
    if type(v) is mpmath.mpf and mpmath.isfinite(v):
        man, exp = v.man_exp                # the mantissa without its sign
        return flint.arb((-man if v < 0 else man, exp))
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


def _midpoint(v):
    """A ball's midpoint rounded to the working precision of mpmath (an mpf)."""
    m, e = v.mid().man_exp()
    return mpmath.mpf((int(m), int(e)))


class Program:
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
        self._ops = []          # (argument slots, ball step or None, (code, data, expr))
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
        prec = mpmath.mp.prec
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
            with flint.ctx.workprec(prec + _BALL_GUARD):
                for slot, wanted in enumerate(need):
                    if wanted:
                        args, step, op = ops[slot]
                        value = step(values, point) if step is not None else None
                        if value is None:
                            value = self._run_mp(op, args, values, point)
                        values[slot] = value
        return [_midpoint(values[r]) if type(values[r]) is flint.arb else values[r]
                for r in roots]

    @staticmethod
    def _run_mp(op, args, values, point):
        """One operation with mpmath numbers (the mpmath operations themselves), on the
        midpoints of its arguments' balls, at the working precision."""
        code, data, expr = op
        mpf = mpmath.mpf
        vals = [_midpoint(v) if type(v) is flint.arb else v for v in (values[a] for a in args)]
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
                env[s] = sympy.Float(mpf(int(v.p)) / int(v.q), dps)
            val = sympy.N(expr.subs(env), dps)
            out = mpmath.mpmathify(complex(val)) if not val.is_real else mpmath.mpf(str(val))
        return out


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
