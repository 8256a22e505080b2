"""An evaluator of claim expression trees with mpmath, written for the tests only.

It shares nothing with the tool's own evaluation code, so a refutation confirmed with it is confirmed by
the reference library (mpmath) rather than by the code under test.
"""
from __future__ import annotations

import mpmath

from verifier.model.expr import BinOp, Call, Neg, Num, Opaque, Pow, Var

_FUNCTIONS = {
    "sqrt": mpmath.sqrt,
    "sin": mpmath.sin,
    "cos": mpmath.cos,
    "tan": mpmath.tan,
    "exp": mpmath.exp,
    "log": mpmath.log,
    "hypot": lambda a, b: mpmath.sqrt(a * a + b * b),
    "fma": lambda a, b, c: a * b + c,
    # the further real functions (Python's math module semantics, common practice), written with mpmath
    "atan": mpmath.atan, "atan2": mpmath.atan2, "asin": mpmath.asin, "acos": mpmath.acos,
    "sinh": mpmath.sinh, "cosh": mpmath.cosh, "tanh": mpmath.tanh,
    "asinh": mpmath.asinh, "acosh": mpmath.acosh, "atanh": mpmath.atanh,
    "erf": mpmath.erf, "erfc": mpmath.erfc, "log1p": mpmath.log1p, "expm1": mpmath.expm1,
    "radians": lambda a: a * mpmath.pi / 180, "degrees": lambda a: a * 180 / mpmath.pi,
    "abs": abs, "min": min, "max": max,
    "floor": mpmath.floor, "ceil": mpmath.ceil, "trunc": lambda a: mpmath.floor(a) if a >= 0 else mpmath.ceil(a),
    "mod": lambda a, b: a - b * mpmath.floor(a / b), "floordiv": lambda a, b: mpmath.floor(a / b),
    # C's fmod takes the sign of a (mpmath.fmod does not: fmod(-7, 2) is 1 there, -1 in C)
    "fmod": lambda a, b: a - b * (mpmath.floor(a / b) if a / b >= 0 else mpmath.ceil(a / b)), "copysign": lambda a, b: abs(a) if b > 0 else -abs(a),
}


def parse_value(text: str) -> mpmath.mpf:
    if "/" in text:
        n, d = text.split("/")
        return mpmath.mpf(int(n)) / int(d)
    return mpmath.mpf(text)


def mp_eval(expr, env: dict):
    if isinstance(expr, Num):
        return mpmath.mpf(expr.value.numerator) / expr.value.denominator
    if isinstance(expr, Var):
        return env[expr.name]
    if isinstance(expr, Neg):
        return -mp_eval(expr.operand, env)
    if isinstance(expr, BinOp):
        a, b = mp_eval(expr.left, env), mp_eval(expr.right, env)
        return {"+": a + b, "-": a - b, "*": a * b}[expr.op] if expr.op != "/" else a / b
    if isinstance(expr, Pow):
        base = mp_eval(expr.base, env)
        e = expr.exponent
        if e.denominator == 2:
            return mpmath.sqrt(base) ** e.numerator
        return base ** e.numerator
    if isinstance(expr, Call):
        return _FUNCTIONS[expr.function](*[mp_eval(a, env) for a in expr.args])
    if isinstance(expr, Opaque) and expr.name == "pi" and not expr.args:
        return +mpmath.pi
    raise TypeError(type(expr).__name__)


def confirm_witness(left, right, conditions, values, digits: int = 60) -> None:
    """Assert with mpmath that every condition holds at ``values`` and that the sides differ."""
    with mpmath.workdps(digits):
        env = {name: parse_value(v) for name, v in values}
        tol = mpmath.mpf(10) ** (-(digits // 3))
        for cond in conditions:
            a, b = mp_eval(cond.left, env), mp_eval(cond.right, env)
            scale = 1 + abs(a) + abs(b)
            d = a - b
            if cond.relation == "==":
                assert abs(d) <= tol * scale, (cond.text, d)
            elif cond.relation == "!=":
                assert abs(d) > tol * scale, cond.text
            elif cond.relation == "<":
                assert d < -tol * scale, cond.text
            elif cond.relation == "<=":
                assert d <= tol * scale, cond.text
            elif cond.relation == ">":
                assert d > tol * scale, cond.text
            elif cond.relation == ">=":
                assert d >= -tol * scale, cond.text
        lv, rv = mp_eval(left, env), mp_eval(right, env)
        assert abs(lv - rv) > tol * (1 + abs(lv) + abs(rv)), (lv, rv)
