"""Evaluation of claim expression trees at a point: exactly in rationals, or with mpmath.

Trees may share sub-trees (symbolic execution builds DAGs) and may be deep (unrolled loops), so
evaluation is iterative, in post-order, and evaluates each distinct node object once.
Domain rules follow the translation: every denominator is non-zero, every radicand is >= 0 (principal
square root), every logarithm's argument is > 0, and tan needs cos != 0.
"""
from __future__ import annotations

import math
from fractions import Fraction
from typing import Callable, Mapping, Union

import mpmath
from mpmath import mp, mpf

from verifier.model.expr import PI, BinOp, Call, Expr, Neg, Num, Opaque, Pow, Var

Real = Union[mpf, Fraction]

# Exact rationals beyond this many bits are left to the numeric evaluation (and stay printable).
_EXACT_BIT_LIMIT = 12_000
# A numeric value larger than 2**this is treated as an overflow (no real witness is that large).
_MAGNITUDE_LIMIT = 1_000_000


class DomainError(ArithmeticError):
    """The expression is undefined at the point (division by zero, negative radicand, ...)."""


class NotEvaluable(ValueError):
    """The expression contains a node that has no value (an opaque call)."""


# ---------------------------------------------------------------- structure


def children(expr: Expr) -> tuple[Expr, ...]:
    if isinstance(expr, BinOp):
        return (expr.left, expr.right)
    if isinstance(expr, Neg):
        return (expr.operand,)
    if isinstance(expr, Pow):
        return (expr.base,)
    if isinstance(expr, (Call, Opaque)):
        return expr.args
    return ()


def postorder(expr: Expr) -> list[Expr]:
    """Distinct node objects (by identity) in post-order: children before parents."""
    order: list[Expr] = []
    seen: set[int] = set()
    stack: list[tuple[Expr, bool]] = [(expr, False)]
    while stack:
        node, expanded = stack.pop()
        if expanded:
            order.append(node)
            continue
        if id(node) in seen:
            continue
        seen.add(id(node))
        stack.append((node, True))
        for child in reversed(children(node)):
            if id(child) not in seen:
                stack.append((child, False))
    return order


def variables(expr: Expr) -> set[str]:
    return {node.name for node in postorder(expr) if isinstance(node, Var)}


def has_opaque(expr: Expr) -> bool:
    """True when the expression has a value the tool cannot compute (pi is computable)."""
    return any(isinstance(node, Opaque) and node != PI for node in postorder(expr))


# ---------------------------------------------------------------- exact evaluation


class _NotRational(Exception):
    pass


def rational_sqrt(value: Fraction) -> Fraction | None:
    """The rational square root of a non-negative rational, or None when it is irrational."""
    if value < 0:
        raise DomainError(f"square root of the negative number {value}")
    p, q = value.numerator, value.denominator
    rp, rq = math.isqrt(p), math.isqrt(q)
    if rp * rp == p and rq * rq == q:
        return Fraction(rp, rq)
    return None


def _exact_power(base: Fraction, k: int) -> Fraction:
    if k < 0 and base == 0:
        raise DomainError("division by zero: a negative power of 0")
    bits = max(base.numerator.bit_length(), base.denominator.bit_length())
    if bits * abs(k) > _EXACT_BIT_LIMIT:
        raise _NotRational()
    return base**k


def _exact_node(node: Expr, value: Callable[[Expr], Fraction], point: Mapping[str, Fraction]) -> Fraction:
    if isinstance(node, Num):
        return Fraction(node.value)
    if isinstance(node, Var):
        return Fraction(point[node.name])
    if isinstance(node, Neg):
        return -value(node.operand)
    if isinstance(node, BinOp):
        a, b = value(node.left), value(node.right)
        if node.op == "+":
            return a + b
        if node.op == "-":
            return a - b
        if node.op == "*":
            return a * b
        if node.op == "/":
            if b == 0:
                raise DomainError("division by zero")
            return a / b
        raise ValueError(f"unknown operator {node.op!r}")
    if isinstance(node, Pow):
        base = value(node.base)
        exponent = Fraction(node.exponent)
        if exponent.denominator == 2:
            root = rational_sqrt(base)
            if root is None:
                raise _NotRational()
            base = root
        elif exponent.denominator != 1:
            raise ValueError(f"unsupported exponent {exponent}")
        return _exact_power(base, exponent.numerator)
    if isinstance(node, Call):
        args = [value(a) for a in node.args]
        f = node.function
        if f == "sqrt":
            root = rational_sqrt(args[0])
            if root is None:
                raise _NotRational()
            return root
        if f == "hypot":
            root = rational_sqrt(args[0] ** 2 + args[1] ** 2)
            if root is None:
                raise _NotRational()
            return root
        if f == "fma":
            return args[0] * args[1] + args[2]
        if f == "log":
            if args[0] <= 0:
                raise DomainError(f"logarithm of the non-positive number {args[0]}")
            if args[0] == 1:
                return Fraction(0)
            raise _NotRational()
        if f in ("sin", "tan"):
            if args[0] == 0:
                return Fraction(0)
            raise _NotRational()
        if f in ("cos", "exp"):
            if args[0] == 0:
                return Fraction(1)
            raise _NotRational()
        raise ValueError(f"unknown function {f!r}")
    if node == PI:
        raise _NotRational()
    if isinstance(node, Opaque):
        raise NotEvaluable(f"opaque call {node.name}")
    raise ValueError(f"unknown expression node {type(node).__name__}")


def exact_value(expr: Expr, values: Mapping[str, Fraction]) -> Fraction | None:
    """The exact rational value of ``expr``, or None when some step is irrational (or too large).

    Raises DomainError where the expression is undefined, NotEvaluable for opaque calls and KeyError
    for a variable without a value.
    """
    results: dict[int, Fraction] = {}

    def value(node: Expr) -> Fraction:
        return results[id(node)]

    try:
        for node in postorder(expr):
            result = _exact_node(node, value, values)
            if max(result.numerator.bit_length(), result.denominator.bit_length()) > _EXACT_BIT_LIMIT:
                raise _NotRational()
            results[id(node)] = result
    except _NotRational:
        return None
    return results[id(expr)]


# ---------------------------------------------------------------- numeric evaluation


def to_mpf(value: Real) -> mpf:
    """An mpf at the current precision (a Fraction is divided at that precision)."""
    if isinstance(value, Fraction):
        return mpf(value.numerator) / value.denominator
    return mpf(value)


def tiny(prec_digits: int) -> mpf:
    """What counts as zero at this precision: 10**-(0.8 * digits)."""
    return mpf(10) ** (-int(prec_digits * 0.8))


def _check_finite(x: mpf) -> mpf:
    if not mpmath.isfinite(x) or (x != 0 and mpmath.mag(x) > _MAGNITUDE_LIMIT):
        raise DomainError("overflow")
    return x


def _numeric_sqrt(x: mpf, eps: mpf) -> mpf:
    if x < 0:
        if x < -eps or eps == 0:
            raise DomainError("square root of a negative number")
        return mpf(0)
    return mpmath.sqrt(x)


def _numeric_node(node: Expr, value: Callable[[Expr], mpf], point: Mapping[str, Real], eps: mpf,
                  radicand_eps: mpf) -> mpf:
    if isinstance(node, Num):
        return to_mpf(Fraction(node.value))
    if isinstance(node, Var):
        return to_mpf(point[node.name])
    if isinstance(node, Neg):
        return -value(node.operand)
    if isinstance(node, BinOp):
        a, b = value(node.left), value(node.right)
        if node.op == "+":
            return a + b
        if node.op == "-":
            return a - b
        if node.op == "*":
            return a * b
        if node.op == "/":
            if abs(b) <= eps:
                raise DomainError("division by zero (or by a number indistinguishable from it)")
            return a / b
        raise ValueError(f"unknown operator {node.op!r}")
    if isinstance(node, Pow):
        base = value(node.base)
        exponent = Fraction(node.exponent)
        if exponent.denominator == 2:
            base = _numeric_sqrt(base, radicand_eps)
        elif exponent.denominator != 1:
            raise ValueError(f"unsupported exponent {exponent}")
        k = exponent.numerator
        if k < 0 and abs(base) <= eps:
            raise DomainError("division by zero: a negative power of 0")
        if k == 0:
            return mpf(1)
        if base != 0 and abs(k) * abs(mpmath.mag(base)) > _MAGNITUDE_LIMIT:
            raise DomainError("overflow")
        return base**k
    if isinstance(node, Call):
        args = [value(a) for a in node.args]
        f = node.function
        if f == "sqrt":
            return _numeric_sqrt(args[0], radicand_eps)
        if f == "hypot":
            return mpmath.sqrt(args[0] ** 2 + args[1] ** 2)
        if f == "fma":
            return args[0] * args[1] + args[2]
        if f == "sin":
            return mpmath.sin(args[0])
        if f == "cos":
            return mpmath.cos(args[0])
        if f == "tan":
            c = mpmath.cos(args[0])
            if abs(c) <= eps:
                raise DomainError("tan where cos is 0")
            return mpmath.sin(args[0]) / c
        if f == "exp":
            if args[0] > _MAGNITUDE_LIMIT / 2:
                raise DomainError("overflow in exp")
            return mpmath.exp(args[0])
        if f == "log":
            if args[0] <= eps:
                raise DomainError("logarithm of a non-positive number")
            return mpmath.log(args[0])
        raise ValueError(f"unknown function {f!r}")
    if node == PI:
        return +mpmath.pi
    if isinstance(node, Opaque):
        raise NotEvaluable(f"opaque call {node.name}")
    raise ValueError(f"unknown expression node {type(node).__name__}")


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
        radicand_eps = mpf(0) if strict_radicands else eps
        results: dict[int, mpf] = {}

        def value(node: Expr) -> mpf:
            return results[id(node)]

        for node in postorder(expr):
            results[id(node)] = _check_finite(_numeric_node(node, value, values, eps, radicand_eps))
        return +results[id(expr)]
