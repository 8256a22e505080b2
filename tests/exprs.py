"""Test helper: Python-syntax text -> claim expression trees (whitelisted ast nodes only, no eval).

The project's claim-language parser lives in the claims layer; tests of the algebra, the features and
the reports build their trees with this small stand-in so that they do not depend on it.  A decimal
literal stands for its exact decimal value, as in the claim language (``0.1`` is 1/10, and
``3.14159265358979323846`` keeps all its digits rather than those of the nearest double).
"""
from __future__ import annotations

import ast
from fractions import Fraction

from verifier.model.expr import BinOp, Call, Expr, Neg, Num, Pow, Var
from verifier.model.claim import Condition

_OPS = {ast.Add: "+", ast.Sub: "-", ast.Mult: "*", ast.Div: "/"}
_RELATIONS = {ast.Eq: "==", ast.NotEq: "!=", ast.Lt: "<", ast.LtE: "<=", ast.Gt: ">", ast.GtE: ">="}


def _build(node: ast.AST, source: str) -> Expr:
    if isinstance(node, ast.Constant) and isinstance(node.value, (int, float)):
        # the literal's exact decimal value, not the nearest double
        return Num(Fraction(ast.get_source_segment(source, node) or str(node.value)))
    if isinstance(node, ast.Name):
        return Var(node.id)
    if isinstance(node, ast.UnaryOp) and isinstance(node.op, ast.USub):
        return Neg(_build(node.operand, source))
    if isinstance(node, ast.BinOp) and isinstance(node.op, ast.Pow):
        exponent = _build(node.right, source)
        if isinstance(exponent, Neg) and isinstance(exponent.operand, Num):
            return Pow(_build(node.left, source), -exponent.operand.value)
        assert isinstance(exponent, Num)
        return Pow(_build(node.left, source), exponent.value)
    if isinstance(node, ast.BinOp) and type(node.op) in _OPS:
        return BinOp(_OPS[type(node.op)], _build(node.left, source), _build(node.right, source))  # type: ignore[arg-type]
    if isinstance(node, ast.Call) and isinstance(node.func, ast.Name):
        return Call(node.func.id, tuple(_build(a, source) for a in node.args))
    raise ValueError(f"unsupported syntax {ast.dump(node)}")


def expr(text: str) -> Expr:
    return _build(ast.parse(text, mode="eval").body, text)


def cond(text: str) -> Condition:
    tree = ast.parse(text, mode="eval").body
    assert isinstance(tree, ast.Compare) and len(tree.ops) == 1
    relation = _RELATIONS[type(tree.ops[0])]
    return Condition(relation, _build(tree.left, text), _build(tree.comparators[0], text), text)  # type: ignore[arg-type]
