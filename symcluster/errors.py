"""Every error symcluster raises on purpose.

All derive from :class:`SymclusterError`; the command line turns any of them
into one line on stderr and exit code 2.  Messages name the offending value
and the fix.
"""


class SymclusterError(Exception):
    """Root of all symcluster errors."""


class ClusterError(SymclusterError, ValueError):
    """A cluster description is invalid (bad site index, self-bond, ...)."""


class ModelError(SymclusterError, ValueError):
    """A model or parameter specification is invalid."""


class InputError(SymclusterError, ValueError):
    """A file or command-line value could not be parsed."""


class VerificationError(SymclusterError, ArithmeticError):
    """A computed result failed an independent check; nothing was returned."""


class TooLargeError(SymclusterError, MemoryError):
    """A requested run would clearly exceed the available memory or time."""
