"""How a failed check ends: one VerificationError, the result discarded."""

from symcluster.errors import VerificationError


def _fail(msg):
    """Raise the VerificationError of a failed check (nothing is returned then)."""
    raise VerificationError("verification failed: " + msg + "; the result was discarded")
