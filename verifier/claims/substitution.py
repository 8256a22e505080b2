"""Claim text in a path: the claim's variable spellings (``x``, ``q.w``, ``v[0]``) replaced by their values.

Shared by every front end's function and statement claims; ``constant`` gives a module-level constant
the claim names (None when there is none).
"""
from __future__ import annotations

import re
from collections.abc import Callable, Sequence

from verifier.claims.execute import Seq, State, Unknown, Value
from verifier.claims.execute.values import Record, as_expr
from verifier.claims.obligations import ClaimProblem
from verifier.model.claim import Condition
from verifier.model.expr import BinOp, Call, Expr, Neg, Num, Opaque, Pow, Var, fold

ConstantLookup = Callable[[str], "Value | None"]


_SPELLING = re.compile(r"[A-Za-z_][A-Za-z_0-9]*")
_ACCESSOR = re.compile(r"\.([A-Za-z_][A-Za-z_0-9]*)|\[(-?[0-9]+)\]|\[([^\]]*)\]")


def resolve_spelling(name: str, state: State, constant: ConstantLookup) -> Value:
    """The value a claim's variable spelling (``x``, ``q.w``, ``v[0]``) has in ``state``."""
    head = _SPELLING.match(name)
    if head is None:
        return Var(name)
    base_name = head.group(0)
    value = state.get(base_name)
    if value is None:
        value = constant(base_name)
        if value is None:
            return Var(name)  # a free variable (or a constant the code cannot follow either)
    position = head.end()
    spelled = base_name
    while position < len(name):
        match = _ACCESSOR.match(name, position)
        if match is None:
            return Unknown(f"cannot read the name {name}")
        position = match.end()
        spelled += match.group(0)
        if isinstance(value, Unknown):
            return value
        if match.group(2) is not None and isinstance(value, Seq):
            index = int(match.group(2))
            if not -len(value.items) <= index < len(value.items):
                return Unknown(f"{spelled} is out of range")
            value = value.items[index]
            continue
        suffix = match.group(0) if match.group(2) is None else f"[{int(match.group(2))}]"
        component = _component(value, suffix)
        if component is None:
            return Unknown(f"{spelled} is not a variable at this point")
        value = component
    return value


def _component(value: Value, suffix: str) -> Value | None:
    """A field or element (``suffix`` is ``.w`` or ``[0]``) of a value the code keeps whole; None if none."""
    if isinstance(value, Var):
        return Var(value.name + suffix)
    if isinstance(value, Opaque):
        return Opaque(value.name + suffix, value.args)
    if isinstance(value, Record) and value.cls is not None and suffix.startswith("."):
        held = value.get(suffix[1:])  # an attribute of the claim's `self`, as the code builds it
        if held is not None:
            return held
        return Var(value.label + suffix) if value.label else None
    return None


def substitute(expr: Expr, state: State, constant: ConstantLookup) -> Value:
    """``expr`` (claim text) with the parameters and locals replaced by their values in ``state``."""
    return fold(expr, _Substitution(state, constant))


class _Substitution:
    """The fold behind ``substitute`` (a loop, not recursion: claims may be 5,000-term sums)."""

    def __init__(self, state: State, constant: ConstantLookup) -> None:
        self.state = state
        self.constant = constant

    def num(self, node: Num) -> Value:
        return node

    def var(self, node: Var) -> Value:
        return resolve_spelling(node.name, self.state, self.constant)

    def binop(self, node: BinOp, left: Value, right: Value) -> Value:
        left_expr, right_expr = as_expr(left), as_expr(right)
        if left_expr is None:
            return _not_number(left)
        if right_expr is None:
            return _not_number(right)
        return BinOp(node.op, left_expr, right_expr)

    def neg(self, node: Neg, operand: Value) -> Value:
        inner = as_expr(operand)
        return Neg(inner) if inner is not None else _not_number(operand)

    def pow(self, node: Pow, base: Value) -> Value:
        base_expr = as_expr(base)
        return Pow(base_expr, node.exponent) if base_expr is not None else _not_number(base)

    def call(self, node: Call, args: Sequence[Value]) -> Value:
        exprs = _numbers(args)
        return Call(node.function, exprs) if isinstance(exprs, tuple) else exprs

    def opaque(self, node: Opaque, args: Sequence[Value]) -> Value:
        exprs = _numbers(args)
        return Opaque(node.name, exprs) if isinstance(exprs, tuple) else exprs


def _numbers(values: Sequence[Value]) -> tuple[Expr, ...] | Unknown:
    """The arguments as expressions, or the reason the first that is not a number is not one."""
    out: list[Expr] = []
    for value in values:
        value_expr = as_expr(value)
        if value_expr is None:
            return _not_number(value)
        out.append(value_expr)
    return tuple(out)


def _not_number(value: Value) -> Unknown:
    if isinstance(value, Unknown):
        return value
    return Unknown("the claim uses a tuple, list or None inside arithmetic")


def substitute_condition(condition: Condition, state: State, constant: ConstantLookup) -> Condition:
    left = substitute(condition.left, state, constant)
    right = substitute(condition.right, state, constant)
    left_expr, right_expr = as_expr(left), as_expr(right)
    for side, side_expr in ((left, left_expr), (right, right_expr)):
        if side_expr is None:
            reason = side.reason if isinstance(side, Unknown) else "not a number"
            raise ClaimProblem("inconclusive", f"the condition {condition.text} cannot be followed: {reason}")
    assert left_expr is not None and right_expr is not None
    if left_expr == condition.left and right_expr == condition.right:
        return condition
    return Condition(condition.relation, left_expr, right_expr, condition.text, condition.origin)
