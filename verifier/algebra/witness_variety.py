"""Exact rational points on a claim's equation conditions, for the cheap counterexample search.

The equations are put in a triangular order: each one gets private variables that no equation before it
uses (found by peeling off, from the last, an equation with variables no other remaining one has), so
solving one for its private variables never breaks another.  One equation is solved at a point by:
- ``v == E`` with v private and not in E: v is E there (a definition);
- affine in a private variable: that variable from the line through two values (``a*d == -b*c``);
- quadratic in a private variable with a rational-square discriminant (``x**2 == y**2``, ``x**2 == 1``);
- a quadric in several private variables (a unit circle, sphere or quaternion): a rational point of it
  at small values (the previous rule with the other private variables at 0, 1, -1), then the line through
  it in a random rational direction, which meets the quadric in one more rational point (the stereographic
  map); every rational point of the quadric but the base is reached this way.
The solved point must satisfy the equation exactly, or it is dropped.  The same steps run modulo the prime
2**61-1 (``MODULAR``; its square roots are one power, as p = 3 mod 4), where a random point of the equations
says cheaply whether the difference vanishes on them.  This module only proposes points; the caller checks
every one on the claim as written (``witness_check.exact_check``).
"""
from __future__ import annotations

import random
from dataclasses import dataclass
from fractions import Fraction
from itertools import product
from math import isqrt
from typing import Sequence

from typing import Any, Mapping

from verifier.algebra.evaluate import DomainError, NotEvaluable, exact_value
from verifier.algebra.modular import PRIME, ZeroDivisorModP, mod_value
from verifier.model.claim import Condition
from verifier.model.expr import BinOp, Expr, Var, variables

_BASE_VALUES = (0, 1, -1)
_BASE_PATTERNS = 27  # assignments of the other private variables tried when looking for a base point
_FAILURES = (ArithmeticError, DomainError, NotEvaluable, ZeroDivisorModP, KeyError, ValueError, TypeError)


@dataclass(frozen=True)
class Residue:
    """An element of the integers modulo the prime, with the operators the solving steps use."""

    value: int

    def __add__(self, other: Any) -> "Residue":
        return Residue((self.value + _int(other)) % PRIME)

    def __radd__(self, other: Any) -> "Residue":
        return self + other

    def __sub__(self, other: Any) -> "Residue":
        return Residue((self.value - _int(other)) % PRIME)

    def __rsub__(self, other: Any) -> "Residue":
        return Residue((_int(other) - self.value) % PRIME)

    def __mul__(self, other: Any) -> "Residue":
        return Residue(self.value * _int(other) % PRIME)

    def __rmul__(self, other: Any) -> "Residue":
        return self * other

    def __truediv__(self, other: Any) -> "Residue":
        divisor = _int(other)
        if not divisor:
            raise ZeroDivisionError()
        return Residue(self.value * pow(divisor, -1, PRIME) % PRIME)

    def __neg__(self) -> "Residue":
        return Residue(-self.value % PRIME)

    def __eq__(self, other: object) -> bool:
        return isinstance(other, (Residue, int)) and self.value == _int(other)

    def __hash__(self) -> int:
        return hash(self.value)


def _int(value: Any) -> int:
    return value.value if isinstance(value, Residue) else int(value) % PRIME


class Arithmetic:
    """Exact rationals: the values of expressions and square roots where they are rational."""

    def value(self, expr: Expr, point: Mapping[str, Any]) -> Any:
        return exact_value(expr, point)

    def sqrt(self, value: Any) -> Any:
        return _rational_sqrt(value)

    def number(self, n: int) -> Any:
        return Fraction(n)


class ModularArithmetic(Arithmetic):
    """Residues modulo the prime (``NotModular`` propagates: an equation with a root has no such value)."""

    def value(self, expr: Expr, point: Mapping[str, Any]) -> Any:
        return Residue(mod_value(expr, {name: _int(v) for name, v in point.items()}))

    def sqrt(self, value: Any) -> Any:
        root = pow(_int(value), (PRIME + 1) // 4, PRIME)
        return Residue(root) if root * root % PRIME == _int(value) else None

    def number(self, n: int) -> Any:
        return Residue(n % PRIME)


EXACT = Arithmetic()
MODULAR = ModularArithmetic()


@dataclass(frozen=True)
class Step:
    """One equation of the plan and the variables it may set (used by no equation before it)."""

    equation: Condition
    private: tuple[str, ...]
    defined: Expr | None  # E of ``v == E`` when the equation is a definition of its only private variable v


def equation_plan(equations: Sequence[Condition]) -> list[Step] | None:
    """The equations in an order where each has private variables, or None when there is none (two
    equations in the same variables only, circular definitions)."""
    remaining = list(equations)
    reverse: list[Step] = []
    while remaining:
        for index, c in enumerate(remaining):
            others: set[str] = set()
            for j, other in enumerate(remaining):
                if j != index:
                    others |= variables(other.left) | variables(other.right)
            private = sorted((variables(c.left) | variables(c.right)) - others)
            if private:
                reverse.append(_step(c, private))
                del remaining[index]
                break
        else:
            return None
    return reverse[::-1]


def _step(c: Condition, private: list[str]) -> Step:
    for side, other in ((c.left, c.right), (c.right, c.left)):
        if isinstance(side, Var) and side.name in private and side.name not in variables(other):
            return Step(c, (side.name,), other)
    return Step(c, tuple(private), None)


def solve_plan(plan: Sequence[Step], point: dict[str, Any], rng: random.Random,
               arithmetic: Arithmetic = EXACT) -> bool:
    """Set the private variables of ``point`` so that every equation of ``plan`` holds exactly (in
    ``arithmetic``); False when some equation was not solved at this point (the point is then of no use)."""
    try:
        for step in plan:
            if not _solve(step, point, rng, arithmetic):
                return False
        return True
    except _FAILURES:
        return False


def _residual(c: Condition, point: Mapping[str, Any], ar: Arithmetic) -> Any:
    return ar.value(BinOp("-", c.left, c.right), point)


def _solve(step: Step, point: dict[str, Any], rng: random.Random, ar: Arithmetic) -> bool:
    if step.defined is not None:
        value = ar.value(step.defined, point)
        if value is None:
            return False
        point[step.private[0]] = value
        return True
    names = list(step.private)
    rng.shuffle(names)
    for name in names:
        if _solve_in_one(step.equation, point, name, rng, ar):
            return True
    if len(names) >= 2 and _on_line_through_base(step, point, rng, ar):
        return True
    return False


def _quadratic_along(c: Condition, point: Mapping[str, Any], direction: Mapping[str, Any], ar: Arithmetic
                     ) -> tuple[Any, Any, Any] | None:
    """(a, b, q) with residual(point + t*direction) = a + b*t + q*t**2 for every t, or None when the
    residual is not a polynomial of degree <= 2 in t (tested at a fourth value) or has no value."""
    values = []
    for t in (0, 1, -1, 2):
        moved = dict(point)
        for name, step in direction.items():
            moved[name] = point[name] + ar.number(t) * step
        value = _residual(c, moved, ar)
        if value is None:
            return None
        values.append(value)
    q0, q1, qm, q2 = values
    two = ar.number(2)
    a, b, q = q0, (q1 - qm) / two, (q1 + qm) / two - q0
    if a + two * b + ar.number(4) * q != q2:
        return None
    return a, b, q


def _rational_sqrt(value: Fraction) -> Fraction | None:
    if value < 0:
        return None
    n, d = isqrt(value.numerator), isqrt(value.denominator)
    if n * n != value.numerator or d * d != value.denominator:
        return None
    return Fraction(n, d)


def _solve_in_one(c: Condition, point: dict[str, Any], name: str, rng: random.Random, ar: Arithmetic) -> bool:
    """Move ``name`` to a root of the equation (affine, or quadratic with a square discriminant)."""
    zero = ar.number(0)
    start = dict(point)
    start[name] = zero
    coefficients = _quadratic_along(c, start, {name: ar.number(1)}, ar)
    if coefficients is None:
        return False
    a, b, q = coefficients
    if q == zero:
        if b == zero:
            return False
        root = -a / b
    else:
        s = ar.sqrt(b * b - ar.number(4) * a * q)
        if s is None:
            return False
        root = (-b + (s if rng.random() < 0.5 else -s)) / (ar.number(2) * q)
    trial = dict(point)
    trial[name] = root
    if _residual(c, trial, ar) != zero:
        return False
    point[name] = root
    return True


def _on_line_through_base(step: Step, point: dict[str, Any], rng: random.Random, ar: Arithmetic) -> bool:
    """The second meeting point of the quadric with a random rational line through a small rational point
    of it (the other variables as they are in ``point``)."""
    names = list(step.private)
    zero = ar.number(0)
    generic = {name: ar.number(rng.randint(1, 9)) for name in names}
    if _quadratic_along(step.equation, point, generic, ar) is None:
        return False  # of degree above 2 along a line: not a quadric, no base point would help
    base: dict[str, Any] | None = None
    for pattern in _patterns(len(names) - 1):
        for solved in names:
            trial = dict(point)
            trial.update(zip([n for n in names if n != solved], (ar.number(v) for v in pattern)))
            if _solve_in_one(step.equation, trial, solved, rng, ar):
                base = trial
                break
        if base is not None:
            break
    if base is None:
        return False
    for _ in range(4):
        width = rng.choice((2, 3, 5, 9))
        direction = {name: ar.number(rng.randint(-width, width)) for name in names}
        if all(v == zero for v in direction.values()):
            continue
        coefficients = _quadratic_along(step.equation, base, direction, ar)
        if coefficients is None:
            return False
        a, b, q = coefficients
        if a != zero:
            return False  # the base point is not on the quadric: degree above 2 somewhere
        if q == zero or b == zero:
            continue  # a line in the quadric, or a tangent: try another direction
        t = -b / q
        trial = dict(base)
        for name in names:
            trial[name] = base[name] + t * direction[name]
        if _residual(step.equation, trial, ar) == zero:
            point.update({name: trial[name] for name in names})
            return True
    return False


def _patterns(size: int) -> list[tuple[int, ...]]:
    patterns = []
    for combo in product(_BASE_VALUES, repeat=size):
        patterns.append(combo)
        if len(patterns) >= _BASE_PATTERNS:
            break
    return patterns
