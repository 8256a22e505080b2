"""The tests' expression stand-in reads what the claim parser reads (exact decimals, the same trees)."""
from __future__ import annotations

from fractions import Fraction

import pytest
from exprs import expr

from verifier.claims.language import parse_expression
from verifier.model.expr import Num


def test_a_decimal_literal_is_its_exact_decimal_value() -> None:
    # Fraction("0.1") is exactly 1/10 (Python's fractions module), not the nearest double 3602879701896397/2**55
    assert expr("0.1") == Num(Fraction(1, 10))
    assert expr("3.14159265358979323846") == Num(Fraction("3.14159265358979323846"))


@pytest.mark.parametrize("text", ["0.1", "3.14159265358979323846", "2*x + 0.5", "(a + b)**2 - 1e-30", "x**-2",
                                  "sqrt(x)/3"])
def test_the_stand_in_agrees_with_the_claim_parser(text: str) -> None:
    assert expr(text) == parse_expression(text)
