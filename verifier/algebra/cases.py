"""min, max and copysign of a claim resolved by the obligation's own sign conditions.

Code that calls ``min``, ``max`` or ``copysign`` splits its path into pieces (verifier/claims/execute/
piecewise.py) with the comparison that selects each piece as a condition; a claim that calls the same
function keeps the table's opaque call.  Where a condition states that comparison (``a <= b``, ``b >= 0``)
the call has a known value there: ``min(a, b)`` is ``a``, ``copysign(x, b)`` is ``abs(x)``.  Replacing it is
sound because the two agree at every point where the conditions hold, which is all a proof speaks about.
"""
from __future__ import annotations

from dataclasses import replace
from fractions import Fraction

from verifier.algebra.witness_problem import fingerprint
from verifier.model.claim import Condition, Obligation
from verifier.model.expr import Call, Expr, Neg, Num, map_expr

_FLIPPED = {"<": ">", "<=": ">=", ">": "<", ">=": "<="}
_ZERO = Num(Fraction(0))


def _same(a: Expr, b: Expr) -> bool:
    # fingerprints first: comparing shared sub-trees field by field can take exponential time
    try:
        return a is b or (fingerprint(a) == fingerprint(b) and a == b)
    except RecursionError:
        return False


def _known_order(left: Expr, right: Expr, conditions: tuple[Condition, ...]) -> str | None:
    """"<=" when the conditions say left <= right (or <), ">=" when left >= right (or >), else None."""
    for c in conditions:
        if c.relation not in _FLIPPED:
            continue
        relation: str
        if _same(c.left, left) and _same(c.right, right):
            relation = c.relation
        elif _same(c.left, right) and _same(c.right, left):
            relation = _FLIPPED[c.relation]
        else:
            continue
        return "<=" if relation in ("<", "<=") else ">="
    return None


def resolve_by_cases(obligation: Obligation) -> Obligation:
    """The obligation with min/max/copysign calls replaced where a condition decides them."""
    conditions = obligation.conditions
    if not conditions:
        return obligation

    def resolve(node: Expr) -> Expr:
        if not isinstance(node, Call) or len(node.args) != 2 or node.function not in ("min", "max", "copysign"):
            return node
        a, b = node.args
        if node.function == "copysign":
            order = _known_order(b, _ZERO, conditions)
            if order is None:
                return node
            magnitude = Call("abs", (a,))
            return magnitude if order == ">=" else Neg(magnitude)
        order = _known_order(a, b, conditions)
        if order is None:
            return node
        return a if (order == "<=") == (node.function == "min") else b

    left, right = map_expr(obligation.left, resolve), map_expr(obligation.right, resolve)
    if left is obligation.left and right is obligation.right:
        return obligation
    return replace(obligation, left=left, right=right)
