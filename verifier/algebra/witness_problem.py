"""What a witness must satisfy: the claim's sides and its conditions, sorted for the search and the check.

Equations are split into the system that Newton's method refines (distinct and not proportional, so that
its Jacobian can have full rank) and the rest (repeats, multiples, constant equations), which must still
hold at a witness.
"""
from __future__ import annotations

import random
from dataclasses import dataclass
from fractions import Fraction
from typing import Sequence, Union

from mpmath import mpf

from verifier.algebra.modular import proportional_mod_p
from verifier.model.claim import Condition
from verifier.model.expr import BinOp, Call, Expr, Neg, Num, Opaque, Pow, Var, fold, has_opaque, variables

Real = Union[mpf, Fraction]


@dataclass(frozen=True)
class WitnessProblem:
    left: Expr
    right: Expr
    equations: tuple[Condition, ...]  # the system that Newton refines: distinct and not proportional
    extra_equations: tuple[Condition, ...]  # repeats, multiples of a kept equation, constant equations
    others: tuple[Condition, ...]
    names: tuple[str, ...]
    equation_names: tuple[str, ...]  # variables that occur in some non-constant equation


class _Fingerprint:
    """A structural hash computed bottom-up once per node (dataclass hashing of a shared DAG is exponential)."""

    def num(self, node: Num) -> int:
        return hash((("num", node.value), ()))

    def var(self, node: Var) -> int:
        return hash((("var", node.name), ()))

    def binop(self, node: BinOp, left: int, right: int) -> int:
        return hash((("bin", node.op), (left, right)))

    def neg(self, node: Neg, operand: int) -> int:
        return hash((("Neg",), (operand,)))

    def pow(self, node: Pow, base: int) -> int:
        return hash((("pow", node.exponent), (base,)))

    def call(self, node: Call, args: Sequence[int]) -> int:
        return hash((("call", node.function), tuple(args)))

    def opaque(self, node: Opaque, args: Sequence[int]) -> int:
        return hash((("opaque", node.name), tuple(args)))


def fingerprint(expr: Expr) -> int:
    return fold(expr, _Fingerprint())


def _difference(condition: Condition) -> Expr:
    return BinOp("-", condition.left, condition.right)


def searchable_problem(left: Expr, right: Expr, conditions: Sequence[Condition]) -> WitnessProblem | None:
    """The problem a witness search runs on, or None also when it cannot be built (an exponent or a
    constant the exact evaluator cannot handle): the search then finds nothing, it never fails."""
    try:
        return build_problem(left, right, conditions)
    except (ArithmeticError, ValueError, TypeError):
        return None


def build_problem(left: Expr, right: Expr, conditions: Sequence[Condition]) -> WitnessProblem | None:
    """The problem, or None when an opaque call is involved (no witness can be checked then)."""
    exprs = [left, right] + [e for c in conditions for e in (c.left, c.right)]
    if any(has_opaque(e) for e in exprs):
        return None
    names: set[str] = set()
    for e in exprs:
        names |= variables(e)
    rng = random.Random(12345)
    equations: list[Condition] = []
    extra: list[Condition] = []
    seen: set[tuple[int, int]] = set()
    for c in conditions:
        if c.relation != "==":
            continue
        key = (fingerprint(c.left), fingerprint(c.right))
        if key in seen or not (variables(c.left) | variables(c.right)):
            extra.append(c)  # a repeat or a constant equation would make the Jacobian singular
            continue
        seen.add(key)
        # a multiple of a kept equation vanishes exactly where that one does
        if any(proportional_mod_p(_difference(kept), _difference(c), rng) for kept in equations):
            extra.append(c)
            continue
        equations.append(c)
    equation_names: set[str] = set()
    for c in equations:
        equation_names |= variables(c.left) | variables(c.right)
    return WitnessProblem(left, right, tuple(equations), tuple(extra),
                          tuple(c for c in conditions if c.relation != "=="),
                          tuple(sorted(names)), tuple(sorted(equation_names)))
