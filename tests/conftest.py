"""Shared test fixtures: mpmath precision is restored after every test."""

import mpmath
import pytest


@pytest.fixture(autouse=True)
def _restore_mpmath_precision():
    saved = mpmath.mp.prec
    yield
    mpmath.mp.prec = saved
