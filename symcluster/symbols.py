"""The one place where coupling names become sympy symbols."""

import sympy

__all__ = ["coupling_symbol", "ENERGY"]

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
