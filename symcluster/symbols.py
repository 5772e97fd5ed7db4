"""The one place where coupling names become sympy symbols."""

import sympy
# sympy imports its tensor module (and with it sympy.combinatorics) on the first evaluated
# addition of a process, about 20 ms on 2 cores; importing it here puts that one-time
# cost into `import symcluster` (measured there) instead of into the first solve.
import sympy.tensor.tensor  # noqa: F401

__all__ = ["coupling_symbol", "ENERGY", "CONSTANT"]

#: The label of the constant part of a block (the terms of couplings held at fixed values,
#: times those values).  No coupling label can take it (labels start with a letter); the
#: exact algebra treats it as a coupling and sets it to 1 after the characteristic polynomial.
CONSTANT = "_1"

#: The energy variable, first generator of every characteristic polynomial.
ENERGY = sympy.Symbol("E", real=True)


def coupling_symbol(name):
    """The real sympy Symbol for the coupling called ``name``.

    Examples
    --------
    >>> coupling_symbol("U").is_real
    True
    """
    return sympy.Symbol(name, real=True)
