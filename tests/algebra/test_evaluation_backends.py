"""The four evaluators (exact, mpmath, IEEE double, mod p) agree on one shared table of expressions.

mpmath is the outside reference: each row carries its value written directly with mpmath's own functions
(``mpmath.pi``, ``mpmath.sin``, ...), not through the tool's trees.  The exact back end must give that
value as a rational where the row says the value is rational (and give up otherwise); the double back
end must be within a few units in the last place of it (IEEE 754 correctly rounded + - * / and sqrt,
and math-library functions accurate to about one ulp: common practice); the modular back end, where it
is defined, must give the exact rational value reduced modulo the prime.
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from fractions import Fraction
from typing import Callable, Mapping

import mpmath
import pytest
from mpmath import mp, mpf

from verifier.algebra.evaluate import exact_value, float_value, numeric_value
from verifier.algebra.modular import PRIME, NotModular, mod_value
from verifier.claims.language import parse_expression

F = Fraction
DIGITS = 50


@dataclass(frozen=True)
class Row:
    text: str
    point: Mapping[str, Fraction]  # dyadic values, so that the double inputs are the same numbers
    reference: Callable[[Mapping[str, mpf]], mpf]  # the value, written with mpmath
    rational: bool  # the exact back end finds a rational value
    modular: bool  # the expression is a rational function the modular back end evaluates


ROWS = [
    Row("sin(pi/2)", {}, lambda v: mpmath.sin(mpmath.pi / 2), False, False),
    Row("cos(pi/3) + tan(pi/4)", {}, lambda v: mpmath.cos(mpmath.pi / 3) + mpmath.tan(mpmath.pi / 4), False, False),
    Row("2*pi*r", {"r": F(3, 4)}, lambda v: 2 * mpmath.pi * v["r"], False, False),
    Row("tau - 2*pi", {}, lambda v: mpf(0), False, False),
    Row("math.e", {}, lambda v: mpmath.e, False, False),
    Row("sqrt(x)", {"x": F(2)}, lambda v: mpmath.sqrt(v["x"]), False, False),
    Row("sqrt(x)", {"x": F(9, 4)}, lambda v: mpmath.sqrt(v["x"]), True, False),
    Row("x**1.5 + x**-0.5", {"x": F(1, 4)}, lambda v: v["x"] ** mpf(1.5) + v["x"] ** mpf(-0.5), True, False),
    Row("hypot(a, b)", {"a": F(3), "b": F(4)}, lambda v: mpmath.hypot(v["a"], v["b"]), True, False),
    Row("hypot(a, b)", {"a": F(1), "b": F(2)}, lambda v: mpmath.hypot(v["a"], v["b"]), False, False),
    Row("fma(a, b, c)", {"a": F(3, 4), "b": F(-5, 2), "c": F(1, 8)},
        lambda v: v["a"] * v["b"] + v["c"], True, True),
    Row("sin(t) * cos(2*t) - tan(t)", {"t": F(5, 8)},
        lambda v: mpmath.sin(v["t"]) * mpmath.cos(2 * v["t"]) - mpmath.tan(v["t"]), False, False),
    Row("sin(t) + cos(t) + tan(t) + exp(t) + log(t + 1)", {"t": F(0)}, lambda v: mpf(2), True, False),
    Row("exp(x) * log(y)", {"x": F(1, 2), "y": F(3)}, lambda v: mpmath.exp(v["x"]) * mpmath.log(v["y"]), False, False),
    Row("(x + 1/4)**3 / (y - 2) - x**-2", {"x": F(3, 4), "y": F(-3, 8)},
        lambda v: (v["x"] + mpf(1) / 4) ** 3 / (v["y"] - 2) - v["x"] ** -2, True, True),
    Row("x**7 - 3*x*y**2 + y/x", {"x": F(-5, 2), "y": F(9, 16)},
        lambda v: v["x"] ** 7 - 3 * v["x"] * v["y"] ** 2 + v["y"] / v["x"], True, True),
    Row("-(a - b)**2 / (a*b)", {"a": F(7, 4), "b": F(1, 32)},
        lambda v: -(v["a"] - v["b"]) ** 2 / (v["a"] * v["b"]), True, True),
]


def _floor_mod(a: mpf, b: mpf) -> mpf:
    """Python's a % b on floats: a - b*floor(a/b) (the Python language reference, common practice)."""
    return a - b * mpmath.floor(a / b)


def _c_fmod(a: mpf, b: mpf) -> mpf:
    """C's fmod: a - b*trunc(a/b), the sign of a (C standard 7.12.10.1, common practice; mpmath.fmod differs)."""
    q = a / b
    return a - b * (mpmath.floor(q) if q >= 0 else mpmath.ceil(q))


# the further real functions of the table (issue 10): the same four back ends, mpmath the reference
ROWS += [
    Row("atan(x)", {"x": F(1, 2)}, lambda v: mpmath.atan(v["x"]), False, False),
    Row("atan(x) + asin(x) + atanh(x) + erf(x)", {"x": F(0)}, lambda v: mpf(0), True, False),
    Row("atan2(y, x) + 1", {"y": F(-3, 4), "x": F(-1, 2)}, lambda v: mpmath.atan2(v["y"], v["x"]) + 1, False, False),
    Row("asin(x) + acos(x)", {"x": F(1, 4)}, lambda v: mpmath.asin(v["x"]) + mpmath.acos(v["x"]), False, False),
    Row("acos(x) + acosh(x) + 1", {"x": F(1)}, lambda v: mpf(1), True, False),
    Row("sinh(x)*cosh(x) - tanh(x)", {"x": F(3, 8)},
        lambda v: mpmath.sinh(v["x"]) * mpmath.cosh(v["x"]) - mpmath.tanh(v["x"]), False, False),
    Row("asinh(x) + acosh(y) + atanh(z)", {"x": F(1, 2), "y": F(5, 4), "z": F(-1, 4)},
        lambda v: mpmath.asinh(v["x"]) + mpmath.acosh(v["y"]) + mpmath.atanh(v["z"]), False, False),
    Row("erf(x) - erfc(x)", {"x": F(3, 4)}, lambda v: mpmath.erf(v["x"]) - mpmath.erfc(v["x"]), False, False),
    Row("log1p(x) - expm1(y)", {"x": F(1, 1024), "y": F(-1, 2048)},
        lambda v: mpmath.log(1 + v["x"]) - (mpmath.exp(v["y"]) - 1), False, False),
    Row("radians(x)", {"x": F(90)}, lambda v: mpmath.pi / 2, False, False),
    Row("np.deg2rad(x) - math.degrees(y)", {"x": F(45)/2, "y": F(1, 2)},
        lambda v: v["x"] * mpmath.pi / 180 - v["y"] * 180 / mpmath.pi, False, False),
    Row("abs(x) + fabs(y)", {"x": F(-5, 2), "y": F(3, 4)}, lambda v: abs(v["x"]) + abs(v["y"]), True, False),
    Row("min(a, b, c) - max(a, b)", {"a": F(3, 4), "b": F(-1, 2), "c": F(1, 8)},
        lambda v: min(v["a"], v["b"], v["c"]) - max(v["a"], v["b"]), True, False),
    Row("floor(x) + ceil(y) + trunc(z)", {"x": F(-5, 2), "y": F(7, 4), "z": F(-7, 4)},
        lambda v: mpmath.floor(v["x"]) + mpmath.ceil(v["y"]) + mpmath.ceil(v["z"]), True, False),
    Row("x % y + 10*(x // y)", {"x": F(-7, 2), "y": F(3, 4)},
        lambda v: _floor_mod(v["x"], v["y"]) + 10 * mpmath.floor(v["x"] / v["y"]), True, False),
    Row("fmod(x, y) + 10*copysign(x, y)", {"x": F(-7, 2), "y": F(3, 4)},
        lambda v: _c_fmod(v["x"], v["y"]) + 10 * abs(v["x"]), True, False),
    Row("fmod(y, x) + copysign(y, x)", {"x": F(-7, 2), "y": F(3, 4)},
        lambda v: _c_fmod(v["y"], v["x"]) - abs(v["y"]), True, False),
]


def _ids(row: Row) -> str:
    return f"{row.text} at {dict(row.point)}"


def _reference(row: Row) -> mpf:
    with mp.workdps(DIGITS + 10):
        return row.reference({name: mpf(value.numerator) / value.denominator for name, value in row.point.items()})


@pytest.mark.parametrize("row", ROWS, ids=_ids)
def test_high_precision_back_end_matches_mpmath(row):
    reference = _reference(row)
    value = numeric_value(parse_expression(row.text), row.point, DIGITS)
    with mp.workdps(DIGITS):
        assert abs(value - reference) <= mpf(10) ** -(DIGITS - 5) * max(1, abs(reference))


@pytest.mark.parametrize("row", ROWS, ids=_ids)
def test_exact_back_end_is_rational_exactly_where_expected(row):
    value = exact_value(parse_expression(row.text), row.point)
    if not row.rational:
        assert value is None
        return
    assert isinstance(value, Fraction)
    with mp.workdps(DIGITS + 10):
        assert abs(mpf(value.numerator) / value.denominator - _reference(row)) <= mpf(10) ** -DIGITS


@pytest.mark.parametrize("row", ROWS, ids=_ids)
def test_double_back_end_is_within_a_few_ulps(row):
    doubles = {name: float(value) for name, value in row.point.items()}
    assert all(F(doubles[name]) == value for name, value in row.point.items())  # the inputs are exact doubles
    computed = float_value(parse_expression(row.text), doubles)
    reference = _reference(row)
    with mp.workdps(DIGITS):
        if reference == 0:
            # tau - 2*pi: the same double operations on both sides cancel exactly
            assert computed == 0.0
            return
        ulp = math.ulp(float(reference))
        assert abs(mpf(computed) - reference) <= 8 * ulp


def _reduced(value: Fraction) -> int:
    return value.numerator % PRIME * pow(value.denominator, -1, PRIME) % PRIME


@pytest.mark.parametrize("row", ROWS, ids=_ids)
def test_modular_back_end_reduces_the_exact_value(row):
    tree = parse_expression(row.text)
    point = {name: _reduced(value) for name, value in row.point.items()}
    if not row.modular:
        with pytest.raises(NotModular):
            mod_value(tree, point)
        return
    exact = exact_value(tree, row.point)
    assert exact is not None
    assert mod_value(tree, point) == _reduced(exact)


def test_pi_is_measured_by_every_real_back_end():
    # the defect this table guards against: the double back end refused pi while mpmath evaluated it
    tree = parse_expression("sin(pi/2)")
    assert float_value(tree, {}) == 1.0
    assert float_value(parse_expression("pi"), {}) == math.pi
    with mp.workdps(DIGITS):
        assert numeric_value(tree, {}, DIGITS) == 1
