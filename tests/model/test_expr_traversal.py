"""The one traversal of expression trees: fold (post-order), map_expr (bottom-up rebuild) and their helpers.

Expected orders are the textbook definitions of post-order and pre-order depth-first traversal (common
practice); the deep-tree cases go far beyond Python's default recursion limit of 1000 (documented in the
``sys.getrecursionlimit`` reference).
"""
from __future__ import annotations

import sys
from fractions import Fraction
from typing import Sequence

from verifier.model.expr import (
    PI,
    BinOp,
    Call,
    Expr,
    Neg,
    Num,
    Opaque,
    Pow,
    Var,
    children,
    fold,
    has_opaque,
    map_expr,
    postorder,
    preorder,
    substitute,
    variables,
)

x, y, z = Var("x"), Var("y"), Var("z")
one, two = Num(Fraction(1)), Num(Fraction(2))


class Spelling:
    """A fully parenthesized spelling: every node kind and every folded child shows in it."""

    def num(self, node: Num) -> str:
        return str(node.value)

    def var(self, node: Var) -> str:
        return node.name

    def binop(self, node: BinOp, left: str, right: str) -> str:
        return f"({left} {node.op} {right})"

    def neg(self, node: Neg, operand: str) -> str:
        return f"(-{operand})"

    def pow(self, node: Pow, base: str) -> str:
        return f"({base}**{node.exponent})"

    def call(self, node: Call, args: Sequence[str]) -> str:
        return f"{node.function}({', '.join(args)})"

    def opaque(self, node: Opaque, args: Sequence[str]) -> str:
        return f"<{node.name}>({', '.join(args)})"


class LeafCount:
    """The number of leaves of the tree the (possibly shared) expression stands for."""

    def __init__(self) -> None:
        self.calls = 0

    def _leaf(self, node: Expr) -> int:
        self.calls += 1
        return 1

    num = var = _leaf

    def binop(self, node: BinOp, left: int, right: int) -> int:
        self.calls += 1
        return left + right

    def neg(self, node: Neg, operand: int) -> int:
        self.calls += 1
        return operand

    def pow(self, node: Pow, base: int) -> int:
        self.calls += 1
        return base

    def call(self, node: Call, args: Sequence[int]) -> int:
        self.calls += 1
        return sum(args)

    def opaque(self, node: Opaque, args: Sequence[int]) -> int:
        self.calls += 1
        return sum(args) or 1


def test_fold_passes_every_kind_its_folded_children():
    tree = BinOp("+", Neg(Pow(x, Fraction(1, 2))), Call("hypot", (Opaque("f", (y,)), PI)))
    assert fold(tree, Spelling()) == "((-(x**1/2)) + hypot(<f>(y), <pi>()))"


def test_shared_nodes_are_folded_once():
    # a chain where each level uses the level below twice: 2**40 paths, 41 distinct nodes
    node: Expr = x
    for _ in range(40):
        node = BinOp("*", node, node)
    leaves = LeafCount()
    assert fold(node, leaves) == 2**40  # each product has twice the leaves of its factor
    assert leaves.calls == 41
    assert len(postorder(node)) == 41


def test_deep_trees_do_not_hit_the_recursion_limit():
    depth = 20 * sys.getrecursionlimit()
    node: Expr = x
    for index in range(depth):
        node = BinOp("+", node, Num(Fraction(index))) if index % 2 else Neg(node)
    assert variables(node) == {"x"}
    assert not has_opaque(node)
    assert fold(node, LeafCount()) == 1 + depth // 2  # x and one Num per BinOp
    assert len(postorder(node)) == depth + 1 + depth // 2  # the Neg/BinOp spine, x, and the Nums
    renamed = substitute(node, {"x": y})
    assert variables(renamed) == {"y"}


def test_postorder_and_preorder_follow_their_definitions():
    tree = BinOp("-", Call("fma", (x, y, z)), Neg(one))
    fma = tree.left
    assert postorder(tree) == [x, y, z, fma, one, tree.right, tree]
    assert list(preorder(tree)) == [tree, fma, x, y, z, tree.right, one]
    assert children(fma) == (x, y, z)
    assert children(tree.right) == (one,)
    assert children(x) == ()


def test_map_expr_rebuilds_bottom_up_and_keeps_what_it_does_not_change():
    kept = Call("sin", (z,))
    tree = BinOp("*", BinOp("+", x, y), kept)

    def double_numbers_and_rename(node: Expr) -> Expr:
        if isinstance(node, Var) and node.name == "x":
            return BinOp("+", two, y)  # not walked again: its 2 is not doubled and its y not renamed
        if isinstance(node, Var) and node.name == "y":
            return z
        return node

    result = map_expr(tree, double_numbers_and_rename)
    assert result == BinOp("*", BinOp("+", BinOp("+", two, y), z), kept)
    assert result.right is kept  # an unchanged sub-tree is the same object


def test_map_expr_sees_rebuilt_children():
    # constant folding of a sum: the change of a parent sees its already-folded children
    def fold_sums(node: Expr) -> Expr:
        if isinstance(node, BinOp) and node.op == "+" and isinstance(node.left, Num) and isinstance(node.right, Num):
            return Num(node.left.value + node.right.value)
        if isinstance(node, Var):
            return one
        return node

    assert map_expr(BinOp("+", BinOp("+", x, one), y), fold_sums) == Num(Fraction(3))


def test_substitute_replaces_all_at_once():
    tree = BinOp("-", x, y)
    assert substitute(tree, {"x": y, "y": x}) == BinOp("-", y, x)
    assert substitute(tree, {}) == tree


def test_variables_and_opaque_values():
    tree = BinOp("/", Call("log", (Var("q.w"),)), Opaque("g", (Var("v[0]"),)))
    assert variables(tree) == {"q.w", "v[0]"}
    assert has_opaque(tree)
    assert not has_opaque(BinOp("*", two, PI))  # pi is a constant with a known value
    assert has_opaque(Opaque("pi", (x,)))  # a call of something named pi is not the constant
