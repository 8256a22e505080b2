"""Domains and jumps of the further real functions (verifier/model/real_functions.py) in the evaluators.

Outside its domain a function has no real value (asin(2), acosh(1/2), atanh(1), log1p(-1), atan2(0, 0),
a remainder by 0: Python's math module raises ValueError or ZeroDivisionError there, common practice), so
both real back ends raise DomainError and no witness can come from such a point.  Near a jump the value
depends on the side that rounding lands on, so the mpmath back end refuses it, while the exact back end,
which has no rounding, gives the value (floor(3) = 3).  Where the result depends on the sign of a zero
(copysign(1, 0), atan2(0, -1): IEEE gives different values for +0 and -0) there is no real value either.
"""
from __future__ import annotations

from fractions import Fraction

import pytest

from mpmath import mp, mpf

from verifier.algebra.evaluate import DomainError, exact_value, numeric_value, to_mpf
from verifier.claims.language import parse_expression

F = Fraction

OUTSIDE = [
    ("asin(x)", F(2)), ("acos(x)", F(-9, 8)), ("acosh(x)", F(1, 2)), ("atanh(x)", F(1)), ("atanh(x)", F(-3)),
    ("log1p(x)", F(-1)), ("log1p(x)", F(-2)), ("atan2(x, x)", F(0)), ("atan2(x, x - 1)", F(0)),
    ("x % (x - 1)", F(1)), ("x // (x - 1)", F(1)), ("fmod(x, x - 1)", F(1)), ("copysign(1, x)", F(0)),
]


@pytest.mark.parametrize("text, x", OUTSIDE)
def test_outside_the_domain_both_real_back_ends_refuse(text, x):
    tree = parse_expression(text)
    with pytest.raises(DomainError):
        exact_value(tree, {"x": x})
    with pytest.raises(DomainError):
        numeric_value(tree, {"x": x}, 50)


@pytest.mark.parametrize("text, x, exact", [
    ("floor(x)", F(3), F(3)), ("ceil(x)", F(-2), F(-2)), ("trunc(x)", F(5), F(5)), ("x % 1", F(4), F(0)),
    ("x // 2", F(6), F(3)), ("fmod(x, 2)", F(-4), F(0)), ("floor(x*x/2)", F(2), F(2)),
])
def test_at_a_jump_only_the_exact_back_end_gives_a_value(text, x, exact):
    tree = parse_expression(text)
    assert exact_value(tree, {"x": x}) == exact
    with pytest.raises(DomainError, match="jump"):
        numeric_value(tree, {"x": x}, 50)
    # a hair away from the jump, far beyond rounding, the mpmath value is the one on that side
    near = x + F(1, 10**20)
    with mp.workdps(50):
        difference = numeric_value(tree, {"x": near}, 50) - to_mpf(exact_value(tree, {"x": near}))
        assert abs(difference) < mpf(10) ** -40


def test_just_outside_by_rounding_noise_counts_as_the_boundary_except_in_a_witness_check():
    # as radicands of square roots: asin(1 + 1e-45) is asin(1) at 50 digits, but not with strict checking
    tree = parse_expression("asin(x)")
    point = {"x": 1 + F(1, 10**45)}
    assert numeric_value(tree, point, 50) > 1.57
    with pytest.raises(DomainError):
        numeric_value(tree, point, 50, strict_radicands=True)
