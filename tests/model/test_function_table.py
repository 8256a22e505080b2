"""The function table decides what a claim may call: every entry with each accepted spelling, and nothing else.

The names are those of Python's math module and numpy for the same functions (``math.sqrt``,
``math.hypot``, ``math.fma`` since Python 3.13, ``numpy.sin`` ...: the libraries' reference documentation).
"""
from __future__ import annotations

from fractions import Fraction

import pytest

from verifier.claims.language import ClaimSyntaxError, parse_expression
from verifier.model.expr import KNOWN_FUNCTIONS, PI, Call, Pow, Var
from verifier.model.functions import CONSTANTS, FUNCTIONS, MODULE_PREFIXES

ARGUMENTS = ("x", "y", "z")


@pytest.mark.parametrize("name", sorted(FUNCTIONS))
@pytest.mark.parametrize("prefix", ("",) + tuple(f"{module}." for module in MODULE_PREFIXES))
def test_every_entry_is_callable_with_every_prefix(name, prefix):
    arity = FUNCTIONS[name].arity
    text = f"{prefix}{name}({', '.join(ARGUMENTS[:arity])})"
    assert parse_expression(text) == Call(name, tuple(Var(a) for a in ARGUMENTS[:arity]))
    wrong = f"{prefix}{name}({', '.join(ARGUMENTS[:arity] + ('w',))})"
    with pytest.raises(ClaimSyntaxError, match="takes"):
        parse_expression(wrong)


@pytest.mark.parametrize("spelling", ["pow", "power", "math.pow", "np.power", "numpy.power"])
def test_power_spellings_build_a_power_node(spelling):
    assert parse_expression(f"{spelling}(x, 3)") == Pow(Var("x"), Fraction(3))


@pytest.mark.parametrize("text", ["cbrt(x)", "math.atan2(y, x)", "np.arcsin(x)", "erf(x)"])
def test_names_outside_the_table_are_refused(text):
    with pytest.raises(ClaimSyntaxError, match="unknown function"):
        parse_expression(text)


def test_constants_and_derived_views():
    assert set(CONSTANTS) == {"pi"}
    for spelling in ("pi", "math.pi", "np.pi", "numpy.pi"):
        assert parse_expression(spelling) == PI
    assert KNOWN_FUNCTIONS == {name: entry.arity for name, entry in FUNCTIONS.items()}
    assert all(entry.arity >= 1 for entry in FUNCTIONS.values())
