"""The function table decides what a claim may call: every entry with each accepted spelling, and nothing else.

The names are those of Python's math module and numpy for the same functions (``math.sqrt``,
``math.hypot``, ``math.fma`` since Python 3.13, ``numpy.sin``, ``math.atan2``, ``numpy.arctan2``,
``numpy.deg2rad``, ``math.fabs``, ``numpy.minimum`` ...: the libraries' reference documentation).
"""
from __future__ import annotations

from fractions import Fraction

import pytest

from verifier.claims.language import ClaimSyntaxError, parse_expression
from verifier.model.expr import KNOWN_FUNCTIONS, PI, Call, Pow, Var
from verifier.model.functions import BARE_ONLY, CONSTANTS, FUNCTIONS, MODULE_PREFIXES, VARIADIC

ARGUMENTS = ("x", "y", "z")


SPELLINGS = sorted((spelling, entry.name) for entry in FUNCTIONS.values() for spelling in (entry.name,) + entry.spellings)


@pytest.mark.parametrize("spelling, name", SPELLINGS)
@pytest.mark.parametrize("prefix", ("",) + tuple(f"{module}." for module in MODULE_PREFIXES))
def test_every_entry_is_callable_with_every_prefix(spelling, name, prefix):
    if prefix and spelling in BARE_ONLY:
        # np.min(a, b) is a reduction along the axis b, not the smaller of a and b (numpy's reference)
        with pytest.raises(ClaimSyntaxError, match="reduction"):
            parse_expression(f"{prefix}{spelling}(x, y)")
        return
    arity = FUNCTIONS[name].arity
    text = f"{prefix}{spelling}({', '.join(ARGUMENTS[:arity])})"
    assert parse_expression(text) == Call(name, tuple(Var(a) for a in ARGUMENTS[:arity]))
    wrong_arguments = ARGUMENTS[:arity - 1] if name in VARIADIC else ARGUMENTS[:arity] + ("w",)
    with pytest.raises(ClaimSyntaxError, match="takes"):
        parse_expression(f"{prefix}{spelling}({', '.join(wrong_arguments)})")


def test_min_and_max_of_more_arguments_nest():
    assert parse_expression("min(x, y, z)") == Call("min", (Call("min", (Var("x"), Var("y"))), Var("z")))
    assert parse_expression("np.maximum(x, y)") == Call("max", (Var("x"), Var("y")))


def test_remainder_and_floor_division_are_the_table_entries():
    # Python's % and // on floats: a % b == a - b*floor(a/b) (Python language reference, common practice)
    assert parse_expression("x % y") == Call("mod", (Var("x"), Var("y")))
    assert parse_expression("x // y") == Call("floordiv", (Var("x"), Var("y")))


@pytest.mark.parametrize("spelling", ["pow", "power", "math.pow", "np.power", "numpy.power"])
def test_power_spellings_build_a_power_node(spelling):
    assert parse_expression(f"{spelling}(x, 3)") == Pow(Var("x"), Fraction(3))


@pytest.mark.parametrize("text", ["cbrt(x)", "math.gamma(x)", "np.sign(x)", "lgamma(x)"])
def test_names_outside_the_table_are_refused(text):
    with pytest.raises(ClaimSyntaxError, match="unknown function"):
        parse_expression(text)


def test_constants_and_derived_views():
    assert set(CONSTANTS) == {"pi"}
    for spelling in ("pi", "math.pi", "np.pi", "numpy.pi"):
        assert parse_expression(spelling) == PI
    assert KNOWN_FUNCTIONS == {name: entry.arity for name, entry in FUNCTIONS.items()}
    assert all(entry.arity >= 1 for entry in FUNCTIONS.values())
