"""Obligations from compared values: one per scalar component and path, with labels that say which.

Shared by every front end's function and statement claims.
"""
from __future__ import annotations

from fractions import Fraction

from verifier.claims.execute import NoneValue, Seq, Value
from verifier.claims.execute.values import as_expr
from verifier.model.claim import Condition, Obligation
from verifier.model.expr import BinOp, Expr, Num

MAX_OBLIGATIONS = 2048  # more paths x components than this is inconclusive rather than slow


class ClaimProblem(Exception):
    """The claim cannot be checked: ``verdict`` (error | inconclusive) and the reason."""

    def __init__(self, verdict: str, message: str):
        super().__init__(message)
        self.verdict = verdict
        self.message = message


class ArityMismatch(ClaimProblem):
    """The compared results have different numbers of components (``counts``: left, right)."""

    def __init__(self, message: str, counts: tuple[int, int]):
        super().__init__("error", message)
        self.counts = counts


def contains_none(value: Value) -> bool:
    if isinstance(value, NoneValue):
        return True
    if isinstance(value, Seq):
        return any(contains_none(item) for item in value.items)
    return False


def arity(value: Value) -> int:
    return len(value.items) if isinstance(value, Seq) else 1


def components(left: Value, right: Value, left_name: str, right_name: str,
                prefix: str = "") -> list[tuple[Expr, Expr, str]]:
    """Pairs of scalar components to compare, with labels ("component 2", "component 1.3")."""
    if isinstance(left, Seq) or isinstance(right, Seq):
        if arity(left) != arity(right) or not (isinstance(left, Seq) and isinstance(right, Seq)):
            where = f" (component {prefix})" if prefix else ""
            raise ArityMismatch(f"{left_name} returns {count(left)}{where}, {right_name} "
                                f"{'returns' if right_name != 'the claim' else 'gives'} {count(right)}",
                                (arity(left), arity(right)))
        pairs: list[tuple[Expr, Expr, str]] = []
        for index, (a, b) in enumerate(zip(left.items, right.items), start=1):
            label = f"{prefix}.{index}" if prefix else str(index)
            pairs.extend(components(a, b, left_name, right_name, label))
        return pairs
    left_expr, right_expr = as_expr(left), as_expr(right)
    if left_expr is None or right_expr is None:
        raise ClaimProblem("inconclusive", f"a compared value is not a number ({type(left).__name__} against "
                                           f"{type(right).__name__})")
    return [(left_expr, right_expr, f"component {prefix}" if prefix else "")]


def path_components(left: Value, right: Value, left_name: str, right_name: str,
                    branch: tuple[Condition, ...]) -> list[tuple[Expr, Expr, str]]:
    """``components`` on one path; where the numbers of components differ on a path that branch conditions
    select, the one obligation that this path cannot be taken (the two counts must be equal: proved only
    when the conditions cannot all hold, refuted by a point that takes the path)."""
    impossible = "so this path must be impossible under the conditions"
    if branch and (contains_none(left) or contains_none(right)):
        who = left_name if contains_none(left) else right_name
        return [(_defined(1, left), _defined(0, right),
                 f"{who} returns None here, not a number, {impossible} (compared: 1 and 0)")]
    try:
        return components(left, right, left_name, right_name)
    except ArityMismatch as mismatch:
        if not branch:
            raise
        mine, theirs = mismatch.counts
        return [(_defined(mine, left), _defined(theirs, right),
                 f"{mismatch.message} here, {impossible} (compared: the two numbers of values)")]


def _defined(number: int, value: Value) -> Expr:
    """``number`` plus 0 times every component of ``value``: equal to ``number`` wherever the components
    are defined, and carrying their assumptions (non-zero denominators, radicands), since a result that
    divides by zero on the path is no result there."""
    parts = [e for e in (as_expr(v) for v in _scalars(value)) if e is not None]
    total: Expr = Num(Fraction(number))
    if parts:
        summed = parts[0]
        for part in parts[1:]:
            summed = BinOp("+", summed, part)
        total = BinOp("+", total, BinOp("*", Num(Fraction(0)), summed))
    return total


def _scalars(value: Value) -> list[Value]:
    if isinstance(value, Seq):
        return [leaf for item in value.items for leaf in _scalars(item)]
    return [value]


def count(value: Value) -> str:
    n = arity(value)
    return "1 value" if n == 1 else f"{n} values"


def path_label(conditions: tuple[Condition, ...]) -> str:
    if not conditions:
        return ""
    return "path where " + " and ".join(c.text for c in conditions)


def obligation(left: Expr, right: Expr, given: tuple[Condition, ...], branch: tuple[Condition, ...],
                component: str, notes: tuple[str, ...]) -> Obligation:
    label = ", ".join(part for part in (path_label(branch), component) if part)
    return Obligation(left, right, tuple(given) + tuple(branch), label, tuple(notes))


def unique(obligations: list[Obligation]) -> list[Obligation]:
    seen: set[tuple[Expr, Expr, tuple[Condition, ...]]] = set()
    out = []
    for ob in obligations:
        key = (ob.left, ob.right, ob.conditions)
        if key in seen:
            continue
        seen.add(key)
        out.append(ob)
    return out
