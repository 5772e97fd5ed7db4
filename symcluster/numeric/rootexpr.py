"""Implicit roots as sympy expressions: :class:`LevelRoot`.

``LevelRoot(k, c_d, ..., c_1, c_0)`` is the real root number ``k`` (counted from 0,
lowest first, the convention of every output of symcluster) of the polynomial
``c_d x^d + ... + c_1 x + c_0`` whose coefficients ``c_n`` are expressions in the
couplings.  It is an ordinary sympy function object, so

* ``subs``/``xreplace`` act on the coefficients (by Symbol; ``Level.subs`` and
  ``Spectrum.symbol`` accept names),
* ``evalf`` gives the root at any precision: certified isolation
  (:func:`~symcluster.numeric.isolate.isolate`) when every coefficient is an exact
  rational, mpmath's polynomial roots otherwise,
* ``sympy.lambdify`` works with numpy arrays (a vectorised companion-matrix eigenvalue
  computation per point, float64),
* ``sympy.latex`` prints it in words, ``\\text{root } k \\text{ of } ...``: the notation
  of symcluster's tables (docs/outputs.md).

:meth:`symcluster.numeric.implicit.ImplicitRoot.as_expr` makes one from a level's
exact root object.
"""

from __future__ import annotations

import mpmath
import numpy as np
import sympy

from symcluster.errors import ModelError
from symcluster.numeric.isolate import isolate

__all__ = ["LevelRoot", "level_root", "roots_on_grid"]

#: The name the energy variable of a polynomial is printed with (E would re-parse as
#: Euler's number in sympy).
DISPLAY_VARIABLE = sympy.Symbol("epsilon", real=True)


def roots_on_grid(index, *coeffs):
    """Root ``index`` (0-based, ascending real parts) of ``sum c_n x^n`` at every grid point.

    The numeric implementation behind ``lambdify`` of a :class:`LevelRoot`: coefficient
    arrays (highest power first) are broadcast together, and each point's roots are the
    eigenvalues of its companion matrix (float64, numpy).

    Examples
    --------
    >>> roots_on_grid(1, 1.0, 0.0, np.array([-1.0, -4.0]))
    array([1., 2.])
    """
    arrays = np.broadcast_arrays(*[np.asarray(c, dtype=float) for c in coeffs])
    shape = arrays[0].shape
    flat = np.stack([a.reshape(-1) for a in arrays], axis=-1)        # (points, d + 1)
    deg = flat.shape[1] - 1
    comp = np.zeros((flat.shape[0], deg, deg))
    comp[:, 0, :] = -flat[:, 1:] / flat[:, :1]
    comp[:, np.arange(1, deg), np.arange(deg - 1)] = 1.0
    roots = np.linalg.eigvals(comp)
    vals = np.sort(roots.real, axis=-1)[:, index]
    for _ in range(2):                       # Newton steps polish the eigenvalue
        p = np.zeros_like(vals)
        dp = np.zeros_like(vals)
        for n in range(deg + 1):
            dp = dp * vals + p
            p = p * vals + flat[:, n]
        step = np.divide(p, dp, out=np.zeros_like(p), where=dp != 0)
        vals = vals - step
    out = vals.reshape(shape)
    return out[()] if out.ndim == 0 else out


class LevelRoot(sympy.Function):
    """Real root ``args[0]`` (0-based, lowest first) of ``sum args[1+n] x^(d-n)``.

    Examples
    --------
    >>> U = sympy.Symbol("U", real=True)
    >>> r = LevelRoot(4, 1, 0, -5, 0, 4, -U)       # x^5 - 5 x^3 + 4 x - U
    >>> r.subs(U, 0).evalf(15)
    2.00000000000000
    >>> f = sympy.lambdify(U, r, "numpy")
    >>> round(float(f(0.0)), 12)
    2.0
    >>> print(sympy.latex(r))
    \\text{root } 4 \\text{ of } \\epsilon^{5} - 5 \\epsilon^{3} + 4 \\epsilon - U = 0
    """

    is_real = True
    _imp_ = staticmethod(roots_on_grid)

    @classmethod
    def eval(cls, index, *coeffs):
        if not (isinstance(index, sympy.Integer) and index >= 0) or len(coeffs) < 2:
            raise ModelError(f"LevelRoot needs an index >= 0 and at least two coefficients, "
                             f"got {index!r} and {len(coeffs)}")
        if int(index) >= len(coeffs) - 1:
            raise ModelError(f"root index {index} is outside 0..{len(coeffs) - 2} for a "
                             f"polynomial of degree {len(coeffs) - 1}")
        return None

    @property
    def index(self) -> int:
        return int(self.args[0])

    @property
    def coefficients(self) -> tuple:
        return self.args[1:]

    def polynomial(self, var=DISPLAY_VARIABLE) -> sympy.Expr:
        """The polynomial in ``var`` (default the printed energy variable epsilon)."""
        d = len(self.coefficients) - 1
        return sympy.Add(*[c * var ** (d - n) for n, c in enumerate(self.coefficients)])

    def _eval_evalf(self, prec):
        if not all(c.is_number for c in self.coefficients):
            return None
        digits = max(int(prec * 0.30103) + 1, 5)
        if all(isinstance(c, sympy.Rational) for c in self.coefficients):
            den = 1
            for c in self.coefficients:
                den = den * c.q // sympy.igcd(den, c.q)
            ints = tuple(int(c * den) for c in reversed(self.coefficients))
            real, _ = isolate(_strip(ints), digits + 2)
            if self.index >= len(real):
                raise ModelError(f"the polynomial has {len(real)} real roots at this point; "
                                 f"root {self.index} does not exist there")
            man, exp = real[self.index]
            with mpmath.workprec(prec + 30):
                value = mpmath.ldexp(mpmath.mpf(man), exp)
        else:
            with mpmath.workprec(prec + 30):
                cs = [mpmath.mpf(str(c.evalf(digits + 10))) for c in self.coefficients]
                roots = sorted(mpmath.polyroots(cs, maxsteps=200, extraprec=2 * prec + 60),
                               key=lambda z: mpmath.re(z))
                value = mpmath.re(roots[self.index])
        return sympy.Float(value, digits)

    def _descending(self, printer, latex):
        d = len(self.coefficients) - 1
        var = printer._print(DISPLAY_VARIABLE)
        out = ""
        for n, c in enumerate(self.coefficients):
            if c == 0:
                continue
            k = d - n
            power = "" if k == 0 else var if k == 1 else (
                f"{var}^{{{k}}}" if latex else f"{var}**{k}")
            neg = not c.is_Add and c.could_extract_minus_sign()
            mag = -c if neg else c
            if mag == 1 and power:
                body = power
            else:
                text = printer._print(mag)
                text = (rf"\left({text}\right)" if latex else f"({text})") if mag.is_Add else text
                body = f"{text} {power}".rstrip() if latex else (
                    f"{text}*{power}" if power else text)
            sign = "-" if neg else "+"
            out += (f"- {body}" if neg else body) if not out else f" {sign} {body}"
        return out

    def _latex(self, printer):
        return rf"\text{{root }} {self.index} \text{{ of }} {self._descending(printer, True)} = 0"

    def _sympystr(self, printer):
        return f"LevelRoot({self.index}, {self._descending(printer, False)})"


def _strip(ints):
    """Drop a leading run of zero coefficients' counterpart: isolation wants a true degree."""
    out = list(ints)
    while len(out) > 1 and out[-1] == 0:
        out.pop()
    return tuple(out)


def level_root(poly, index) -> LevelRoot:
    """The LevelRoot of root ``index`` of a Poly in ``(E, *couplings)``.

    Examples
    --------
    >>> E, U = sympy.symbols("E U", real=True)
    >>> level_root(sympy.Poly(E**2 - U, E, U), 1).subs(U, 4).evalf(10)
    2.000000000
    """
    energy = poly.gens[0]
    rest = poly.gens[1:]
    deg = poly.degree(energy)
    coeffs = [sympy.Integer(0)] * (deg + 1)
    for monom, c in poly.terms():
        term = sympy.Mul(c, *[g ** e for g, e in zip(rest, monom[1:])])
        coeffs[deg - monom[0]] += term
    return LevelRoot(sympy.Integer(index), *coeffs)
