"""Evaluation of claim expression trees, against mpmath (the reference library) and exact arithmetic."""
from __future__ import annotations

from fractions import Fraction

import mpmath
import pytest
from mpmath import mp, mpf

from verifier.algebra.evaluate import DomainError, NotEvaluable, exact_value, has_opaque, numeric_value, variables
from verifier.model.expr import BinOp, Call, Num, Opaque, Pow, Var
from exprs import expr

F = Fraction


def test_exact_rational_arithmetic():
    e = expr("(x + 1/3)**3 / (y - 2) - x**-2")
    x, y = F(3, 4), F(5)
    expected = (x + F(1, 3)) ** 3 / (y - 2) - 1 / x**2
    assert exact_value(e, {"x": x, "y": y}) == expected


def test_exact_square_roots_of_perfect_squares_stay_rational():
    assert exact_value(expr("sqrt(x)"), {"x": F(9, 4)}) == F(3, 2)
    assert exact_value(expr("x**1.5"), {"x": F(4, 9)}) == F(8, 27)
    assert exact_value(expr("x**-0.5"), {"x": F(4)}) == F(1, 2)
    assert exact_value(expr("hypot(a, b)"), {"a": F(3), "b": F(4)}) == F(5)  # 3-4-5 triangle, common practice
    assert exact_value(expr("sqrt(x)"), {"x": F(2)}) is None


def test_exact_elementary_functions_at_their_rational_points():
    zero = {"t": F(0)}
    assert exact_value(expr("sin(t) + cos(t) + tan(t) + exp(t)"), zero) == 2
    assert exact_value(expr("log(t + 1)"), zero) == 0
    assert exact_value(expr("sin(t)"), {"t": F(1)}) is None
    assert exact_value(expr("fma(a, b, c)"), {"a": F(2), "b": F(3), "c": F(-1)}) == 5


@pytest.mark.parametrize("text, point", [
    ("1/(x - 1)", {"x": F(1)}),
    ("x**-3", {"x": F(0)}),
    ("sqrt(x)", {"x": F(-1, 4)}),
    ("x**0.5", {"x": F(-1)}),
    ("log(x)", {"x": F(0)}),
    ("log(x)", {"x": F(-2)}),
])
def test_exact_domain_errors(text, point):
    with pytest.raises(DomainError):
        exact_value(expr(text), point)


def test_numeric_matches_mpmath():
    point = {"x": F(7, 5), "y": F(-2, 3), "t": F(1, 3)}
    e = expr("sin(t) * cos(2*t) + tan(t) - exp(y) + log(x) + hypot(x, y) + x**1.5 + fma(x, y, t)")
    with mp.workdps(50):
        x, y, t = mpf(7) / 5, mpf(-2) / 3, mpf(1) / 3
        reference = (mpmath.sin(t) * mpmath.cos(2 * t) + mpmath.tan(t) - mpmath.exp(y) + mpmath.log(x)
                     + mpmath.hypot(x, y) + mpmath.power(x, 1.5) + x * y + t)
        value = numeric_value(e, point, 50)
        assert abs(value - reference) < mpf(10) ** -45


def test_numeric_principal_square_root_and_precision():
    with mp.workdps(100):
        value = numeric_value(expr("sqrt(x)"), {"x": F(2)}, 100)
        assert value > 0
        assert abs(value**2 - 2) < mpf(10) ** -95


@pytest.mark.parametrize("text, point", [
    ("1/(x - y)", {"x": F(1, 3), "y": F(1, 3)}),
    ("sqrt(x - 1)", {"x": F(1, 2)}),
    ("log(x)", {"x": F(-1)}),
    ("1/(sqrt(x)**2 - 2)", {"x": F(2)}),  # zero up to rounding counts as zero
])
def test_numeric_domain_errors(text, point):
    with pytest.raises(DomainError):
        numeric_value(expr(text), point, 40)


def test_numeric_tan_where_cos_vanishes():
    with mp.workdps(60):
        half_pi = mp.pi / 2
        with pytest.raises(DomainError):
            numeric_value(expr("tan(t)"), {"t": half_pi}, 60)


def test_numeric_radicand_zero_up_to_rounding_is_zero():
    # s**2 + c**2 - 1 at a rounded point on the unit circle is zero only up to rounding
    with mp.workdps(60):
        c = mpf(1) / 3
        s = mpmath.sqrt(1 - c**2)
        value = numeric_value(expr("sqrt(s**2 + c**2 - 1)"), {"s": s, "c": c}, 60)
        assert abs(value) < mpf(10) ** -20


def test_deep_and_shared_trees():
    deep = Var("x")
    for _ in range(5000):
        deep = BinOp("+", deep, Num(F(1)))
    assert exact_value(deep, {"x": F(1, 2)}) == F(10001, 2)
    shared = Var("x")
    for _ in range(300):  # 2**300 paths through the tree, 301 distinct nodes
        shared = BinOp("+", shared, shared)
    assert exact_value(shared, {"x": F(1)}) == 2**300


def test_huge_powers_fall_back_to_numeric():
    e = Pow(Var("x"), F(100000))
    assert exact_value(e, {"x": F(1, 3)}) is None
    with mp.workdps(30):
        value = numeric_value(e, {"x": F(1, 3)}, 30)
        assert abs(mpmath.log10(value) + 100000 * mpmath.log10(3)) < mpf(10) ** -20


def test_variables_and_opaque():
    e = expr("sin(a) + b / sqrt(c)")
    assert variables(e) == {"a", "b", "c"}
    assert not has_opaque(e)
    opaque = BinOp("+", Var("a"), Opaque("helper", (Var("b"),)))
    assert has_opaque(opaque)
    assert variables(opaque) == {"a", "b"}
    with pytest.raises(NotEvaluable):
        exact_value(opaque, {"a": F(1), "b": F(2)})
    with pytest.raises(NotEvaluable):
        numeric_value(Call("sin", (opaque,)), {"a": F(1), "b": F(2)}, 30)
