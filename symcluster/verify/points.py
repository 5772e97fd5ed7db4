"""Random rational parameter points of the verification (one denominator per point)."""

import random

import sympy

__all__ = ["random_points"]


def random_points(symbols, count, seed, fixed=None):
    """``count`` random rational points; all values share one denominator per point.

    The first point has positive values (nothing special about any coupling's name);
    ``fixed`` ({Symbol: Rational}) adds couplings held at fixed exact values.
    """
    rng = random.Random(seed)
    pts = []
    for k in range(count):
        den = rng.choice([101, 103, 107, 109, 113, 127, 131, 137])
        pt = {}
        for s in symbols:
            num = 0
            while num == 0 or num % den == 0:
                num = rng.randint(-900, 900)
            if k == 0:
                num = abs(num)
            pt[s] = sympy.Rational(num, den)
        if fixed:
            pt.update(fixed)
        pts.append(pt)
    return pts
