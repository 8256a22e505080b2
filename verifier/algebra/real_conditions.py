"""Consequences of conditions that hold only over the reals, added before translation (untrusted search
of facts; every one is a theorem about real numbers, so adding it keeps the conditions' real points).

The algebra sees ``exp(x)`` and ``sin(x)`` as atoms unrelated to ``x``; these rules state what the reals
add, as further conditions the ideal and the sign reasoning can use:
- ``exp(A) == exp(B)`` gives ``A == B`` and ``exp(A) == 1`` gives ``A == 0`` (exp is one-to-one);
- ``sin(v) == 0`` (or ``tan(v) == 0``) with bounds ``a < v < b`` inside (-pi, pi) gives ``v == 0``;
- ``exp(A) >= 1`` gives ``A >= 0`` (and likewise for >, <=, <; exp is increasing), ``exp(A) >= exp(B)``
  gives ``A >= B``;
- ``1/P > 0`` (or ``>= 0``) gives ``P > 0``; ``P**k >= 0`` (> 0) with k odd gives ``P >= 0`` (> 0).
"""
from __future__ import annotations

from dataclasses import replace
from fractions import Fraction
from typing import Iterator

from verifier.model.claim import Condition, Obligation, Relation
from verifier.model.expr import BinOp, Call, Expr, Neg, Num, Pow, Var

# pi > 157/50 = 3.14: a bound strictly inside (-3.14, 3.14) is strictly inside (-pi, pi)
_PI_BELOW = Fraction(157, 50)
_MIRROR: dict[str, Relation] = {"<": ">", "<=": ">=", ">": "<", ">=": "<=", "==": "==", "!=": "!="}
_ORIGIN = "over the reals"


def with_real_consequences(obligation: Obligation) -> Obligation:
    """The obligation with the real consequences of its conditions appended (itself when there are none)."""
    derived = [c for c in _consequences(obligation.conditions) if c not in obligation.conditions]
    derived = list(dict.fromkeys(derived))
    if not derived:
        return obligation
    return replace(obligation, conditions=tuple(obligation.conditions) + tuple(derived))


def _number(expr: Expr) -> Fraction | None:
    if isinstance(expr, Num):
        return expr.value
    if isinstance(expr, Neg) and isinstance(expr.operand, Num):
        return -expr.operand.value
    return None


def _call(expr: Expr, function: str) -> Expr | None:
    """The argument of ``function(arg)`` (any spelling the parser folded to this name), else None."""
    if isinstance(expr, Call) and expr.function == function and len(expr.args) == 1:
        return expr.args[0]
    return None


def _condition(relation: Relation, left: Expr, right: Expr, source: Condition) -> Condition:
    return Condition(relation, left, right, f"a consequence over the reals of {source.text}", _ORIGIN)


def _oriented(cond: Condition) -> Iterator[tuple[Relation, Expr, Expr]]:
    yield cond.relation, cond.left, cond.right
    yield _MIRROR[cond.relation], cond.right, cond.left


def _consequences(conditions: tuple[Condition, ...]) -> Iterator[Condition]:
    lower: dict[str, Fraction] = {}
    upper: dict[str, Fraction] = {}
    for cond in conditions:
        for relation, left, right in _oriented(cond):
            bound = _number(right)
            if isinstance(left, Var) and bound is not None:
                if relation in (">", ">="):
                    lower[left.name] = max(lower.get(left.name, bound), bound)
                elif relation in ("<", "<="):
                    upper[left.name] = min(upper.get(left.name, bound), bound)
    for cond in conditions:
        yield from _exp_rules(cond)
        yield from _sign_rules(cond)
        if cond.relation == "==":
            for _, left, right in _oriented(cond):
                for function in ("sin", "tan"):
                    arg = _call(left, function)
                    if isinstance(arg, Var) and _number(right) == 0:
                        low, high = lower.get(arg.name), upper.get(arg.name)
                        if low is not None and high is not None and -_PI_BELOW < low and high < _PI_BELOW:
                            yield _condition("==", arg, Num(Fraction(0)), cond)


def _exp_rules(cond: Condition) -> Iterator[Condition]:
    if cond.relation == "!=":
        return
    first, second = _call(cond.left, "exp"), _call(cond.right, "exp")
    if first is not None and second is not None:
        yield _condition(cond.relation, first, second, cond)
        return
    for relation, left, right in _oriented(cond):
        arg = _call(left, "exp")
        if arg is not None and _number(right) == 1:
            yield _condition(relation, arg, Num(Fraction(0)), cond)


def _sign_rules(cond: Condition) -> Iterator[Condition]:
    for relation, left, right in _oriented(cond):
        if relation not in (">", ">=") or _number(right) != 0:
            continue
        if isinstance(left, BinOp) and left.op == "/" and _number(left.left) is not None:
            numerator = _number(left.left)
            if numerator is not None and numerator > 0:  # c/P >= 0 with P != 0 means P > 0
                yield _condition(">", left.right, Num(Fraction(0)), cond)
        if isinstance(left, Pow) and left.exponent.denominator == 1 and left.exponent.numerator % 2:
            strict: Relation = ">" if left.exponent < 0 else relation  # P**-k >= 0 means P > 0
            yield _condition(strict, left.base, Num(Fraction(0)), cond)
