"""Expression trees of the claim language: plain frozen data, never a sympy object, never evaluated.

The claims layer builds them, the algebra layer translates them into polynomials, and the evaluators
compute their values at points.  Every walk over a tree goes through ``fold`` (post-order, one method
per node kind receiving its children already folded) or ``map_expr`` (a bottom-up rebuild); ``preorder``
lists nodes parents first where the order of first visits matters.  All are iterative: symbolic
execution builds deep trees (unrolled loops) that share sub-trees (DAGs), so each distinct node object
is visited once and Python's recursion limit is never reached.
"""
from __future__ import annotations

from dataclasses import dataclass
from fractions import Fraction
from typing import Any, Callable, ClassVar, Iterator, Literal, Mapping, MutableMapping, Protocol, Sequence, TypeVar, Union

from verifier.model.functions import CONSTANTS, FUNCTIONS


class _Node:
    """Value semantics for expression nodes without recursion.

    The generated dataclass ``__eq__``, ``__hash__``, ``__repr__`` and the pickle protocol all recurse
    into children, which fails on the deep trees symbolic execution builds (20,000 chained additions).
    Here the hash is computed once, when a node is built, from its children's cached hashes; equality,
    the text and pickling walk the tree with explicit stacks.  Pickling writes the distinct nodes in
    post-order as flat records (sharing survives); the cached hash is never written, since string
    hashes differ between processes.
    """

    _SCALARS: ClassVar[tuple[str, ...]] = ()
    _hash: int

    def __post_init__(self) -> None:
        kids = children(self)  # type: ignore[arg-type]
        key = (type(self).__name__, self._scalar_values(), tuple(kid._hash for kid in kids))  # type: ignore[union-attr]
        object.__setattr__(self, "_hash", hash(key))

    def _scalar_values(self) -> tuple[Any, ...]:
        return tuple(getattr(self, name) for name in self._SCALARS)

    def __hash__(self) -> int:
        return self._hash

    def __eq__(self, other: object) -> bool:
        if self is other:
            return True
        if type(other) is not type(self):
            return NotImplemented
        return _same_tree(self, other)  # type: ignore[arg-type]

    def __ne__(self, other: object) -> bool:
        equal = self.__eq__(other)
        return equal if equal is NotImplemented else not equal

    def __reduce__(self) -> tuple[Any, ...]:
        return (_rebuild_tree, (_records(self),))  # type: ignore[arg-type]

    def __repr__(self) -> str:
        return _tree_repr(self)  # type: ignore[arg-type]


@dataclass(frozen=True, eq=False, repr=False)
class Num(_Node):
    """An exact rational constant (decimal literals keep their exact decimal value)."""

    value: Fraction

    _SCALARS = ("value",)


@dataclass(frozen=True, eq=False, repr=False)
class Var(_Node):
    """A real variable; dotted names and constant subscripts are plain names (``q.w``, ``v[0]``)."""

    name: str

    _SCALARS = ("name",)


BinaryOperator = Literal["+", "-", "*", "/"]


@dataclass(frozen=True, eq=False, repr=False)
class BinOp(_Node):
    op: BinaryOperator
    left: "Expr"
    right: "Expr"

    _SCALARS = ("op",)


@dataclass(frozen=True, eq=False, repr=False)
class Neg(_Node):
    operand: "Expr"


@dataclass(frozen=True, eq=False, repr=False)
class Pow(_Node):
    """``base ** exponent`` with a constant rational exponent.

    Integer exponents (negative ones mean division); a denominator of 2 means a square root
    (``x**0.5`` is ``sqrt(x)``, ``x**1.5`` is ``sqrt(x)**3``).  Other exponents are rejected by the parser.
    """

    base: "Expr"
    exponent: Fraction

    _SCALARS = ("exponent",)


# canonical name -> number of arguments: a view of the function table (verifier/model/functions.py)
KNOWN_FUNCTIONS: dict[str, int] = {name: entry.arity for name, entry in FUNCTIONS.items()}


@dataclass(frozen=True, eq=False, repr=False)
class Call(_Node):
    """A call of a function of the table ``FUNCTIONS`` (``pow`` is parsed into ``Pow``)."""

    function: str
    args: tuple["Expr", ...]

    _SCALARS = ("function",)


@dataclass(frozen=True, eq=False, repr=False)
class Opaque(_Node):
    """A value the tool cannot see into (an unresolved call in Python code), or a named constant.

    The same name applied to the same arguments is the same value; nothing else is known about it.
    A constant of the table ``CONSTANTS`` (pi) is an ``Opaque`` without arguments: the algebra treats it
    as an unknown, the evaluators know its value.
    """

    name: str
    args: tuple["Expr", ...]

    _SCALARS = ("name",)


Expr = Union[Num, Var, BinOp, Neg, Pow, Call, Opaque]


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


# The number pi: an opaque constant.  Proofs hold for every value of it; since no witness can be given in
# terms of an unknown constant, a claim whose difference depends on it is never refuted.
PI = Opaque("pi", ())


# The name of ``base ** exponent`` when the algebra cannot represent it (``2**x``, ``8**(1/3)``): opaque to
# the proofs, but the evaluators know its real value.  No scanned code can spell this name.
REAL_POWER = "**"


def is_constant(node: Opaque) -> bool:
    """True for a named constant of the table (pi), whose value the evaluators know."""
    return not node.args and node.name in CONSTANTS


# ---------------------------------------------------------------- the traversal

T = TypeVar("T")


class ExprFold(Protocol[T]):
    """One method per node kind; each receives the node and its children's results, already folded."""

    def num(self, node: Num) -> T: ...

    def var(self, node: Var) -> T: ...

    def binop(self, node: BinOp, left: T, right: T) -> T: ...

    def neg(self, node: Neg, operand: T) -> T: ...

    def pow(self, node: Pow, base: T) -> T: ...

    def call(self, node: Call, args: Sequence[T]) -> T: ...

    def opaque(self, node: Opaque, args: Sequence[T]) -> T: ...


def _same_tree(first: Expr, second: Expr) -> bool:
    """Structural equality of two trees, walked with a stack (pairs already compared are skipped)."""
    stack = [(first, second)]
    compared: set[tuple[int, int]] = set()
    while stack:
        left, right = stack.pop()
        if left is right or (id(left), id(right)) in compared:
            continue
        if (type(left) is not type(right) or left._hash != right._hash
                or left._scalar_values() != right._scalar_values()):
            return False
        mine, theirs = children(left), children(right)
        if len(mine) != len(theirs):
            return False
        compared.add((id(left), id(right)))
        stack.extend(zip(mine, theirs))
    return True


# A pickled tree: its distinct nodes in post-order, each (class name, scalar fields, indices of children).
_Record = tuple[str, tuple[Any, ...], tuple[int, ...]]


def _records(expr: Expr) -> tuple[_Record, ...]:
    index: dict[int, int] = {}
    out: list[_Record] = []
    for node in postorder(expr):
        index[id(node)] = len(out)
        out.append((type(node).__name__, node._scalar_values(), tuple(index[id(kid)] for kid in children(node))))
    return tuple(out)


def _rebuild_tree(records: Sequence[_Record]) -> Expr:
    built: list[Expr] = []
    for kind, scalars, kids in records:
        parts = [built[at] for at in kids]
        built.append(_BUILDERS[kind](scalars, parts))
    return built[-1]


_BUILDERS: dict[str, Callable[[tuple[Any, ...], list[Any]], Expr]] = {
    "Num": lambda scalars, _kids: Num(*scalars),
    "Var": lambda scalars, _kids: Var(*scalars),
    "BinOp": lambda scalars, kids: BinOp(scalars[0], kids[0], kids[1]),
    "Neg": lambda _scalars, kids: Neg(kids[0]),
    "Pow": lambda scalars, kids: Pow(kids[0], scalars[0]),
    "Call": lambda scalars, kids: Call(scalars[0], tuple(kids)),
    "Opaque": lambda scalars, kids: Opaque(scalars[0], tuple(kids)),
}


def _tree_repr(expr: Expr) -> str:
    """The dataclass-style text (``BinOp(op='+', left=Var(name='x'), ...)``), built bottom-up."""
    shown: dict[int, str] = {}
    for node in postorder(expr):
        values: list[str] = []
        for field in node.__dataclass_fields__:
            value = getattr(node, field)
            if isinstance(value, _Node):
                values.append(f"{field}={shown[id(value)]}")
            elif isinstance(value, tuple):
                items = [shown[id(item)] for item in value]
                values.append(f"{field}=({', '.join(items)}{',' if len(items) == 1 else ''})")
            else:
                values.append(f"{field}={value!r}")
        shown[id(node)] = f"{type(node).__name__}({', '.join(values)})"
    return shown[id(expr)]


def _apply(folder: ExprFold[T], node: Expr, folded: Mapping[int, T]) -> T:
    """``node`` folded, its children's results looked up by identity in ``folded``."""
    if isinstance(node, Num):
        return folder.num(node)
    if isinstance(node, Var):
        return folder.var(node)
    if isinstance(node, BinOp):
        return folder.binop(node, folded[id(node.left)], folded[id(node.right)])
    if isinstance(node, Neg):
        return folder.neg(node, folded[id(node.operand)])
    if isinstance(node, Pow):
        return folder.pow(node, folded[id(node.base)])
    if isinstance(node, Call):
        return folder.call(node, [folded[id(arg)] for arg in node.args])
    if isinstance(node, Opaque):
        return folder.opaque(node, [folded[id(arg)] for arg in node.args])
    raise TypeError(f"not an expression: {node!r}")


def fold(expr: Expr, folder: ExprFold[T], memo: MutableMapping[Expr, T] | None = None) -> T:
    """``expr`` folded bottom-up: children first (left to right), then the node with their results.

    Each distinct node object is folded once.  With ``memo`` (kept by the caller across folds) nodes are
    also told apart by value: an equal sub-tree met again, in this fold or a later one, is not folded
    again.  (Hashing by value costs a walk of the sub-tree; identity is the cheap default.)
    """
    # every node folded or found in this fold, by identity; the stack holds (node, children done)
    results: dict[int, T] = {}
    stack: list[tuple[Expr, bool]] = [(expr, False)]
    while stack:
        node, expanded = stack.pop()
        if expanded:
            value = _apply(folder, node, results)
            results[id(node)] = value
            if memo is not None:
                memo[node] = value
            continue
        if id(node) in results:
            continue
        if memo is not None and node in memo:
            results[id(node)] = memo[node]
            continue
        stack.append((node, True))
        for child in reversed(children(node)):
            stack.append((child, False))
    return results[id(expr)]


class _Rebuild:
    """The fold behind ``map_expr``: a node whose children changed is rebuilt, then ``change`` applies."""

    def __init__(self, change: Callable[[Expr], Expr]) -> None:
        self.change = change

    def num(self, node: Num) -> Expr:
        return self.change(node)

    def var(self, node: Var) -> Expr:
        return self.change(node)

    def binop(self, node: BinOp, left: Expr, right: Expr) -> Expr:
        same = left is node.left and right is node.right
        return self.change(node if same else BinOp(node.op, left, right))

    def neg(self, node: Neg, operand: Expr) -> Expr:
        return self.change(node if operand is node.operand else Neg(operand))

    def pow(self, node: Pow, base: Expr) -> Expr:
        return self.change(node if base is node.base else Pow(base, node.exponent))

    def call(self, node: Call, args: Sequence[Expr]) -> Expr:
        same = all(new is old for new, old in zip(args, node.args))
        return self.change(node if same else Call(node.function, tuple(args)))

    def opaque(self, node: Opaque, args: Sequence[Expr]) -> Expr:
        same = all(new is old for new, old in zip(args, node.args))
        return self.change(node if same else Opaque(node.name, tuple(args)))


def map_expr(expr: Expr, change: Callable[[Expr], Expr]) -> Expr:
    """``expr`` rebuilt bottom-up with ``change`` applied to every node (its children already changed).

    What ``change`` returns is not walked again; unchanged sub-trees are kept (sharing survives).
    """
    return fold(expr, _Rebuild(change))


class _Collect:
    """The fold behind ``postorder``: it only records the order in which nodes are folded."""

    def __init__(self) -> None:
        self.order: list[Expr] = []

    def _record(self, node: Expr, *_folded: object) -> None:
        self.order.append(node)

    num = var = binop = neg = pow = call = opaque = _record


def postorder(expr: Expr) -> list[Expr]:
    """Distinct node objects (by identity) in post-order: children before parents."""
    collect = _Collect()
    fold(expr, collect)
    return collect.order


def preorder(expr: Expr) -> Iterator[Expr]:
    """Distinct node objects (by identity) in pre-order: a node before its children, left to right."""
    seen: set[int] = set()
    stack = [expr]
    while stack:
        node = stack.pop()
        if id(node) in seen:
            continue
        seen.add(id(node))
        yield node
        stack.extend(reversed(children(node)))


def variables(expr: Expr) -> set[str]:
    return {node.name for node in postorder(expr) if isinstance(node, Var)}


def has_opaque(expr: Expr) -> bool:
    """True when the expression has a value the tool cannot compute (pi is computable)."""
    return any(isinstance(node, Opaque) and not is_constant(node) and node.name != REAL_POWER
               for node in postorder(expr))


def substitute(expr: Expr, mapping: Mapping[str, Expr]) -> Expr:
    """``expr`` with the variables named in ``mapping`` replaced, all at once."""
    if not mapping:
        return expr
    return map_expr(expr, lambda node: mapping.get(node.name, node) if isinstance(node, Var) else node)
