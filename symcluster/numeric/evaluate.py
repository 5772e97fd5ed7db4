"""Values of energies at exact points, at any precision.

An energy is a closed form (a sympy expression in the couplings) or an
:class:`~symcluster.numeric.implicit.ImplicitRoot`.  :func:`energy_numeric` gives its
value as an mpmath number in one of two ways:

* for users, with the level's polynomial: the certified root of the polynomial that the
  closed form's ball enclosure singles out (every returned digit is right);
* for the verification, without it: the closed form evaluated as it is
  (:class:`~symcluster.numeric.compiled.Program`), so that comparing the value with the
  polynomial is not circular.

:class:`Evaluation` holds what one caller's evaluations share (the compiled program of
its closed forms, isolations computed ahead on an executor).  A caller that evaluates
many energies makes one and passes it explicitly; nothing is shared otherwise.
"""

import flint
import mpmath
import sympy

from symcluster.errors import ModelError
from symcluster.numeric.compiled import Program
from symcluster.numeric.isolate import exact_value, real_roots_at, root_counter_at

__all__ = ["Evaluation", "closed_values", "energy_numeric"]


class Evaluation:
    """What the numeric evaluations of one caller (a verification) share.

    Attributes
    ----------
    program : Program
        The closed forms evaluated through this object, compiled into one program: a
        square root or an arc cosine common to many levels is computed once per point
        and precision.  The values equal those of evaluating each form on its own.
    isolations : dict
        Certified root isolations computed ahead, for instance on a process pool,
        keyed by :meth:`ImplicitRoot.isolation_key
        <symcluster.numeric.implicit.ImplicitRoot.isolation_key>` (results of
        :func:`~symcluster.numeric.isolate.isolate`).  Implicit roots use them instead
        of isolating again; their values do not depend on where they were computed.

    The caller owns the object and drops it when done; nothing of it outlives the caller.

    Examples
    --------
    >>> t, U = sympy.symbols("t U", real=True)
    >>> ev = Evaluation()
    >>> forms = [U / 2 - sympy.sqrt(U**2 + 16 * t**2) / 2, U / 2 + sympy.sqrt(U**2 + 16 * t**2) / 2]
    >>> [float(v) for v in ev.closed_values(forms, {t: sympy.Integer(1), U: sympy.Integer(0)}, 15)]
    [-2.0, 2.0]
    """

    def __init__(self):
        self.program = Program()
        self.isolations = {}

    def closed_values(self, energies, point, digits):
        """:func:`closed_values` through this evaluation's program."""
        return closed_values(energies, point, digits, self)

    def value(self, energy, point, digits=30, polynomial=None):
        """:func:`energy_numeric` through this evaluation."""
        return energy_numeric(energy, point, digits, polynomial, self)


def energy_numeric(energy, point, digits=30, polynomial=None, evaluation=None):
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
    working digits (:func:`closed_values`); the verification does this, so that its
    comparison with the polynomial is not circular.

    Parameters
    ----------
    energy : sympy.Expr or ImplicitRoot
    point : dict
        ``{Symbol: sympy.Rational}``.
    digits : int
    polynomial : sympy.Poly, optional
        The level's polynomial, ``E`` its first generator.
    evaluation : Evaluation, optional
        Shared with the caller's other evaluations (see :class:`Evaluation`).

    Returns
    -------
    mpmath.mpf

    Raises
    ------
    ModelError
        If no root can be chosen (the message names the point).
    VerificationError
        If the polynomial has non-real roots at the point or its degree drops there.

    Examples
    --------
    >>> E, t = sympy.symbols("E t", real=True)
    >>> x = energy_numeric(sympy.sqrt(2) * t, {t: sympy.Integer(1)}, 20,
    ...                    sympy.Poly(E**2 - 2 * t**2, E, t))
    >>> mpmath.nstr(x, 20)
    '1.4142135623730950488'
    """
    if hasattr(energy, "numeric"):
        if evaluation is not None and evaluation.isolations:
            return energy.numeric(point, digits=digits, isolations=evaluation.isolations)
        return energy.numeric(point, digits=digits)
    if polynomial is None:
        return closed_values((energy,), point, digits, evaluation)[0]
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


def closed_values(energies, point, digits, evaluation=None):
    """Closed forms evaluated as they are at ``2 digits + 10`` working digits, in one sweep.

    The forms are compiled into the program of `evaluation` (a fresh one if None) and
    evaluated together (:meth:`Program.evaluate_all
    <symcluster.numeric.compiled.Program.evaluate_all>`): ball arithmetic, each value its
    ball's midpoint rounded to the working precision.

    Returns
    -------
    list of mpmath.mpf
        At the working precision ``2 digits + 10`` digits.

    Raises
    ------
    ArithmeticError
        Where a value has an imaginary part beyond rounding (the form is not real at the
        point).

    Examples
    --------
    >>> t = sympy.Symbol("t", real=True)
    >>> [float(v) for v in closed_values([t / 3, sympy.sqrt(t)], {t: sympy.Integer(4)}, 15)]
    [1.3333333333333333, 2.0]
    """
    program = evaluation.program if evaluation is not None else Program()
    with mpmath.workdps(2 * digits + 10):
        out = program.evaluate_all(energies, point)
        for i, val in enumerate(out):
            if isinstance(val, mpmath.mpc):
                if abs(val.imag) > mpmath.mpf(10) ** (-digits) * (1 + abs(val.real)):
                    raise ArithmeticError(f"energy {energies[i]} is not real at {point}")
                out[i] = val.real
    return out      # mpf values rounded to the working precision


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


def _fmpq_of(exact_arb):
    """The value of an exact arb (zero radius: a midpoint or a radius) as an fmpq."""
    man, exp = exact_arb.man_exp()
    man, exp = int(man), int(exp)
    return flint.fmpq(man * 2 ** exp) if exp >= 0 else flint.fmpq(man, 2 ** -exp)


def _bits_for(digits):
    """mpmath's binary precision for `digits` decimal digits."""
    with mpmath.workdps(digits):
        return mpmath.mp.prec


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
    counter = root_counter_at(polynomial, point)
    need = _bits_for(digits) + 32
    if counter.n_distinct == 1:
        return _mpf_of(counter.only_root(), need)
    bits = 8 * (digits + 10)
    max_bits = max(2 ** 14, 16 * bits, 4 * counter.degree * counter.height_bits)
    values = {s: exact_value(point, s) for s in energy.free_symbols}
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
