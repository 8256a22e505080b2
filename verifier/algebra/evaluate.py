"""Evaluation of claim expression trees at a point: exactly in rationals, with mpmath, or in IEEE double.

Each evaluator is a back end of the one fold over expression trees (verifier/model/expr.py): it says
what the arithmetic operations and powers do, and takes each function's meaning from the function table
(verifier/model/functions.py).  The fold is iterative and evaluates each distinct node object once, so
deep trees and shared sub-trees cost no recursion and no repeated work.  (Evaluation modulo a prime is
the fourth back end, in verifier/algebra/modular.py.)
Domain rules follow the translation: every denominator is non-zero, every radicand is >= 0 (principal
square root), every logarithm's argument is > 0, and tan needs cos != 0.
"""
from __future__ import annotations

import math
from fractions import Fraction
from typing import Any, Mapping, Sequence, Union

import mpmath
from mpmath import mp, mpf

from verifier.model.expr import REAL_POWER, BinOp, Call, Expr, Neg, Num, Opaque, Pow, Var, fold, is_constant
from verifier.model.expr import has_opaque, variables  # noqa: F401  (re-exported for the evaluators' callers)
from verifier.model.functions import (
    CONSTANTS,
    FUNCTIONS,
    DomainError,
    HighPrecision,
    NotEvaluable,
    NotRational,
    exact_sqrt,
    numeric_sqrt,
    rational_sqrt,
)

__all__ = [
    "DomainError", "NotEvaluable", "exact_value", "float_value", "has_opaque", "numeric_value", "rational_sqrt",
    "tiny", "to_mpf", "variables",
]

Real = Union[mpf, Fraction]

# Exact rationals beyond this many bits are left to the numeric evaluation (and stay printable).
_EXACT_BIT_LIMIT = 12_000
# A numeric value larger than 2**this is treated as an overflow (no real witness is that large).
_MAGNITUDE_LIMIT = 1_000_000


def _arithmetic(op: str, a: Any, b: Any, divisor_is_zero: bool) -> Any:
    """``a op b`` for the four operators (the same in every field); ``divisor_is_zero`` as the back end sees it."""
    if op == "+":
        return a + b
    if op == "-":
        return a - b
    if op == "*":
        return a * b
    if op == "/":
        if divisor_is_zero:
            raise DomainError("division by zero")
        return a / b
    raise ValueError(f"unknown operator {op!r}")


_MAX_REAL_POWER = 1000  # integer exponents evaluated exactly up to this size


def _real_power_domain(base: Any, exponent: Any) -> None:
    """``base ** exponent`` over the reals: a negative base needs an integer exponent, 0 a positive one."""
    if base == 0 and exponent <= 0:
        raise DomainError("division by zero: a non-positive power of 0")
    if base < 0 and exponent != int(exponent):
        raise DomainError("a fractional power of a negative number")


def _opaque_error(node: Opaque) -> NotEvaluable:
    return NotEvaluable(f"opaque call {node.name}")


# ---------------------------------------------------------------- exact evaluation


class _ExactValues:
    """Rationals; NotRational as soon as a step is irrational or its numbers grow beyond the limit."""

    def __init__(self, point: Mapping[str, Fraction]) -> None:
        self.point = point

    @staticmethod
    def _bounded(value: Fraction) -> Fraction:
        if max(value.numerator.bit_length(), value.denominator.bit_length()) > _EXACT_BIT_LIMIT:
            raise NotRational()
        return value

    def num(self, node: Num) -> Fraction:
        return self._bounded(Fraction(node.value))

    def var(self, node: Var) -> Fraction:
        return self._bounded(Fraction(self.point[node.name]))

    def neg(self, node: Neg, operand: Fraction) -> Fraction:
        return -operand

    def binop(self, node: BinOp, left: Fraction, right: Fraction) -> Fraction:
        return self._bounded(_arithmetic(node.op, left, right, right == 0))

    def pow(self, node: Pow, base: Fraction) -> Fraction:
        exponent = Fraction(node.exponent)
        if exponent.denominator == 2:
            base = exact_sqrt(base)
        elif exponent.denominator != 1:
            raise ValueError(f"unsupported exponent {exponent}")
        k = exponent.numerator
        if k < 0 and base == 0:
            raise DomainError("division by zero: a negative power of 0")
        bits = max(base.numerator.bit_length(), base.denominator.bit_length())
        if bits * abs(k) > _EXACT_BIT_LIMIT:
            raise NotRational()
        return self._bounded(base**k)

    def call(self, node: Call, args: Sequence[Fraction]) -> Fraction:
        entry = FUNCTIONS.get(node.function)
        if entry is None:
            raise ValueError(f"unknown function {node.function!r}")
        return self._bounded(entry.exact(args))

    def opaque(self, node: Opaque, args: Sequence[Fraction]) -> Fraction:
        if is_constant(node):
            return self._bounded(CONSTANTS[node.name].exact(()))
        if node.name == REAL_POWER:
            base, exponent = args
            _real_power_domain(base, exponent)
            if exponent.denominator != 1 or abs(exponent) > _MAX_REAL_POWER:
                raise NotRational()  # left to the high-precision evaluation
            return self.pow(Pow(Num(base), exponent), base)
        raise _opaque_error(node)


def exact_value(expr: Expr, values: Mapping[str, Fraction]) -> Fraction | None:
    """The exact rational value of ``expr``, or None when some step is irrational (or too large).

    Raises DomainError where the expression is undefined, NotEvaluable for opaque calls and KeyError
    for a variable without a value.
    """
    try:
        return fold(expr, _ExactValues(values))
    except NotRational:
        return None


# ---------------------------------------------------------------- numeric evaluation


def to_mpf(value: Real) -> mpf:
    """An mpf at the current precision (a Fraction is divided at that precision)."""
    if isinstance(value, Fraction):
        return mpf(value.numerator) / value.denominator
    return mpf(value)


def tiny(prec_digits: int) -> mpf:
    """What counts as zero at this precision: 10**-(0.8 * digits)."""
    return mpf(10) ** (-int(prec_digits * 0.8))


class _NumericValues:
    """mpmath at the current precision; every value must stay finite and below 2**_MAGNITUDE_LIMIT."""

    def __init__(self, point: Mapping[str, Real], at: HighPrecision) -> None:
        self.point = point
        self.at = at

    @staticmethod
    def _finite(x: mpf) -> mpf:
        if not mpmath.isfinite(x) or (x != 0 and mpmath.mag(x) > _MAGNITUDE_LIMIT):
            raise DomainError("overflow")
        return x

    def num(self, node: Num) -> mpf:
        return self._finite(to_mpf(Fraction(node.value)))

    def var(self, node: Var) -> mpf:
        return self._finite(to_mpf(self.point[node.name]))

    def neg(self, node: Neg, operand: mpf) -> mpf:
        return self._finite(-operand)

    def binop(self, node: BinOp, left: mpf, right: mpf) -> mpf:
        if node.op == "/" and abs(right) <= self.at.eps:
            raise DomainError("division by zero (or by a number indistinguishable from it)")
        return self._finite(_arithmetic(node.op, left, right, False))

    def pow(self, node: Pow, base: mpf) -> mpf:
        exponent = Fraction(node.exponent)
        if exponent.denominator == 2:
            base = numeric_sqrt(base, self.at)
        elif exponent.denominator != 1:
            raise ValueError(f"unsupported exponent {exponent}")
        k = exponent.numerator
        if k < 0 and abs(base) <= self.at.eps:
            raise DomainError("division by zero: a negative power of 0")
        if k == 0:
            return mpf(1)
        if base != 0 and abs(k) * abs(mpmath.mag(base)) > _MAGNITUDE_LIMIT:
            raise DomainError("overflow")
        return self._finite(base**k)

    def call(self, node: Call, args: Sequence[mpf]) -> mpf:
        entry = FUNCTIONS.get(node.function)
        if entry is None:
            raise ValueError(f"unknown function {node.function!r}")
        return self._finite(entry.high_precision(args, self.at))

    def opaque(self, node: Opaque, args: Sequence[mpf]) -> mpf:
        if is_constant(node):
            return self._finite(CONSTANTS[node.name].high_precision((), self.at))
        if node.name == REAL_POWER:
            base, exponent = args
            if abs(base) <= self.at.eps and base != 0:
                raise DomainError("a power of a number indistinguishable from 0")
            _real_power_domain(base, exponent)
            if base != 0 and abs(exponent) * (abs(mpmath.mag(base)) + 1) > _MAGNITUDE_LIMIT:
                raise DomainError("overflow")
            return self._finite(mpmath.power(base, exponent) if base > 0 else base ** int(exponent))
        raise _opaque_error(node)


def numeric_value(expr: Expr, values: Mapping[str, Real], prec_digits: int, *,
                  strict_radicands: bool = False) -> mpf:
    """The value of ``expr`` with mpmath at ``prec_digits`` decimal digits (principal square roots).

    Raises DomainError where the expression is undefined at this precision (a denominator, a cos under
    tan or a log argument within 10**-(0.8*digits) of 0, a radicand below minus that), or overflows.
    With ``strict_radicands`` every negative radicand is an error, even one that may be rounding noise
    (a witness must not borrow sqrt(0) for a radicand that is truly slightly negative).
    """
    with mp.workdps(prec_digits):
        eps = tiny(prec_digits)
        at = HighPrecision(mp, eps, mpf(0) if strict_radicands else eps, _MAGNITUDE_LIMIT)
        return +fold(expr, _NumericValues(values, at))


# ---------------------------------------------------------------- IEEE double evaluation


class _FloatValues:
    """Python floats, operation by operation in tree order (what the program computes)."""

    def __init__(self, point: Mapping[str, float]) -> None:
        self.point = point

    def num(self, node: Num) -> float:
        return float(node.value)

    def var(self, node: Var) -> float:
        return float(self.point[node.name])

    def neg(self, node: Neg, operand: float) -> float:
        return -operand

    def binop(self, node: BinOp, left: float, right: float) -> float:
        if node.op == "/":
            return left / right  # ZeroDivisionError as in Python
        return _arithmetic(node.op, left, right, False)

    def pow(self, node: Pow, base: float) -> float:
        exponent = Fraction(node.exponent)
        if exponent.denominator == 1:
            k = exponent.numerator
            if k < 0:
                if base == 0:
                    raise ZeroDivisionError("division by zero")
                return 1.0 / (base ** (-k))
            return base**k
        if base < 0:
            raise ValueError("negative base of a fractional power")
        return base ** float(exponent)

    def call(self, node: Call, args: Sequence[float]) -> float:
        entry = FUNCTIONS.get(node.function)
        if entry is None:
            raise ValueError(f"unknown function {node.function!r}")
        return entry.ieee(args)

    def opaque(self, node: Opaque, args: Sequence[float]) -> float:
        if is_constant(node):
            return CONSTANTS[node.name].ieee(())
        if node.name == REAL_POWER:
            base, exponent = args
            _real_power_domain(base, exponent)
            return math.pow(base, exponent)  # OverflowError / ValueError like the other IEEE operations
        raise _opaque_error(node)


def float_value(expr: Expr, values: Mapping[str, float]) -> float:
    """``expr`` evaluated in IEEE double, operation by operation in tree order (Python float semantics).

    Raises ArithmeticError/ValueError where Python's float arithmetic does (division by zero, sqrt of a
    negative number, overflow in ``**`` or ``exp``) and NotEvaluable for opaque calls; pi is ``math.pi``.
    """
    return fold(expr, _FloatValues(values))
