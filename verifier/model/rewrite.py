"""Rebuilding an expression tree: substitution of variables, shared by the claim parser and the algebra."""
from __future__ import annotations

from collections.abc import Mapping

from verifier.model.expr import BinOp, Call, Expr, Neg, Num, Opaque, Pow, Var


def substitute(expr: Expr, mapping: Mapping[str, Expr]) -> Expr:
    """``expr`` with the variables named in ``mapping`` replaced, all at once."""
    if isinstance(expr, Var):
        return mapping.get(expr.name, expr)
    if isinstance(expr, Num):
        return expr
    if isinstance(expr, Neg):
        return Neg(substitute(expr.operand, mapping))
    if isinstance(expr, BinOp):
        return BinOp(expr.op, substitute(expr.left, mapping), substitute(expr.right, mapping))
    if isinstance(expr, Pow):
        return Pow(substitute(expr.base, mapping), expr.exponent)
    if isinstance(expr, Call):
        return Call(expr.function, tuple(substitute(arg, mapping) for arg in expr.args))
    if isinstance(expr, Opaque):
        return Opaque(expr.name, tuple(substitute(arg, mapping) for arg in expr.args))
    raise TypeError(f"not an expression: {expr!r}")
