"""The one number grammar of the command line (symcluster/parsing.py)."""

from fractions import Fraction

import pytest
import sympy

from symcluster.errors import InputError
from symcluster.parsing import parse_number


@pytest.mark.parametrize("text", ["4", "-2.5", "+.5", "1e-3", "2.5E+2", "-7/2", " 3/2 ", "0"])
def test_accepted_numbers_are_their_exact_decimal_or_fraction(text):
    # expected value: Python's own exact reading of the same text
    want = Fraction(text.strip())
    assert parse_number(text, "U") == sympy.Rational(want.numerator, want.denominator)


@pytest.mark.parametrize("text,why", [
    ("2.5/3", "not a number"), ("1e1000", "not a number"), ("\u0663", "not a number"),
    ("nan", "not a number"), ("inf", "not a number"), ("0x10", "not a number"),
    ("1_000", "not a number"), ("2**3", "not a number"), ("", "not a number"),
    ("1/0", "divides by zero"), ("1" * 1001, "1001 characters"),
])
def test_refused_texts_get_one_message_naming_the_value(text, why):
    with pytest.raises(InputError, match=why) as err:
        parse_number(text, "U")
    assert str(err.value).startswith("U")


def test_levels_and_analysis_commands_read_numbers_with_the_same_function():
    from symcluster import cli
    from symcluster.analysis import commands
    assert cli.parse_number is parse_number and commands._number is parse_number
    with pytest.raises(InputError, match="not of the form name=number"):
        commands.parse_assignment(["U=2.5/3"])
    assert commands.parse_range("-1e-3:7/2") == (sympy.Rational(-1, 1000), sympy.Rational(7, 2))
