"""The lowered form of a kernel function: what every language front end produces (plain frozen data).

It holds what the claims need from C, C++, CUDA, Fortran, Julia and Rust code: typed parameters (values,
pointers and references, arrays, structs, Fortran ``intent(out)``), locals, assignments to names,
elements, fields and through pointers, if/else with conditions, counted loops, calls, returns.  Every
node carries its source line so that an unsupported construct is reported where it is.
"""
from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field, replace
from fractions import Fraction
from typing import Literal, Union

ScalarKind = Literal["real", "int", "bool", "unknown"]


# ---------------------------------------------------------------- expressions


@dataclass(frozen=True)
class Lit:
    value: Fraction
    kind: ScalarKind  # "int" for integer literals (they fold exactly), "real" otherwise


@dataclass(frozen=True)
class Name:
    name: str
    line: int = 0


@dataclass(frozen=True)
class Field:
    base: "Node"
    name: str
    line: int = 0


@dataclass(frozen=True)
class Index:
    base: "Node"
    index: "Node"
    line: int = 0


@dataclass(frozen=True)
class Deref:
    """``*p`` (C, CUDA, Rust)."""

    operand: "Node"
    line: int = 0


@dataclass(frozen=True)
class AddressOf:
    """``&x`` in a call: the callee writes into ``x``."""

    operand: "Node"
    line: int = 0


BinaryOp = Literal["+", "-", "*", "/", "idiv", "pow"]


@dataclass(frozen=True)
class Binary:
    op: BinaryOp
    left: "Node"
    right: "Node"
    line: int = 0


@dataclass(frozen=True)
class Negate:
    operand: "Node"
    line: int = 0


Comparison = Literal["==", "!=", "<", "<=", ">", ">="]


@dataclass(frozen=True)
class Compare:
    op: Comparison
    left: "Node"
    right: "Node"
    line: int = 0
    text: str = ""  # as written, for the path labels of the report


@dataclass(frozen=True)
class Logic:
    op: Literal["and", "or", "not"]
    operands: tuple["Node", ...]
    line: int = 0


@dataclass(frozen=True)
class Choose:
    """``c ? a : b``, ``if c { a } else { b }`` as an expression."""

    condition: "Node"
    then: "Node"
    otherwise: "Node"
    line: int = 0


@dataclass(frozen=True)
class MathCall:
    """A known math function by its canonical name (sqrt, hypot, fma, sin, cos, tan, exp, log, abs, ...)."""

    function: str
    args: tuple["Node", ...]
    line: int = 0


@dataclass(frozen=True)
class UserCall:
    """A call of a function the front end may find in this or another scanned file (inlined)."""

    name: str
    args: tuple["Node", ...]
    line: int = 0


@dataclass(frozen=True)
class Cast:
    kind: ScalarKind
    operand: "Node"
    line: int = 0


@dataclass(frozen=True)
class Aggregate:
    """An array or tuple literal (``{1.0, 2.0}``, ``[a, b]``, ``(a, b)``) or a struct literal with fields."""

    items: tuple["Node", ...]
    fields: tuple[str, ...] = ()  # struct literal: the field of each item; empty for arrays and tuples
    line: int = 0


@dataclass(frozen=True)
class Unsupported:
    """A construct the front end does not follow; using its value makes the claim inconclusive."""

    construct: str
    line: int


Node = Union[Lit, Name, Field, Index, Deref, AddressOf, Binary, Negate, Compare, Logic, Choose, MathCall,
             UserCall, Cast, Aggregate, Unsupported]


# ---------------------------------------------------------------- statements


@dataclass(frozen=True)
class Declare:
    """A local: its kind, its fixed array size (0 for a scalar or struct) and its initial value."""

    name: str
    kind: ScalarKind
    size: int = 0
    init: Node | None = None
    line: int = 0
    struct: str | None = None  # the struct type name, if any
    site: int = -1  # start byte of the statement a trailing claim may sit on; -1 when none


@dataclass(frozen=True)
class Assign:
    target: Node  # Name, Field, Index or Deref
    value: Node
    line: int = 0
    site: int = -1  # start byte of the statement a trailing claim may sit on; -1 when none


@dataclass(frozen=True)
class Destructure:
    """``a, b = f(...)`` / ``let (a, b) = ...``."""

    targets: tuple[str, ...]
    value: Node
    line: int = 0
    site: int = -1


@dataclass(frozen=True)
class If:
    condition: Node
    then: tuple["Statement", ...]
    otherwise: tuple["Statement", ...]
    line: int = 0


@dataclass(frozen=True)
class For:
    """``for var = start; var <= stop (or < stop); var += step``: bounds must evaluate to integers."""

    var: str
    start: Node
    stop: Node
    step: Node
    inclusive: bool
    body: tuple["Statement", ...]
    line: int = 0


@dataclass(frozen=True)
class Return:
    value: Node | None  # None: a void return (the out-parameters are the results)
    line: int = 0
    site: int = -1


@dataclass(frozen=True)
class Evaluate:
    """An expression statement kept for its effects (a call of a subroutine or void function)."""

    value: Node
    line: int = 0


@dataclass(frozen=True)
class Stop:
    """A statement the front end does not follow: paths reaching it are inconclusive."""

    construct: str
    line: int


Statement = Union[Declare, Assign, Destructure, If, For, Return, Evaluate, Stop]


# ---------------------------------------------------------------- functions


ParamMode = Literal["value", "pointer", "reference", "out", "inout"]


@dataclass(frozen=True)
class Param:
    name: str
    kind: ScalarKind
    mode: ParamMode = "value"
    size: int = 0  # fixed array size, 0 for a scalar or struct
    struct: str | None = None
    const: bool = False
    out_only: bool = False  # written, never read: a result, not an argument of `same as`


@dataclass(frozen=True)
class Function:
    name: str
    params: tuple[Param, ...]
    body: tuple[Statement, ...]
    returns_value: bool  # False: void / subroutine (results are the out-parameters)
    result_name: str | None = None  # Fortran: the variable holding the result
    result_kind: ScalarKind = "real"
    line: int = 0
    path: str = ""
    language: str = ""
    structs: dict[str, tuple[str, ...]] = field(default_factory=dict, compare=False, hash=False)
    index_base: int = 0  # 0 in C-like languages and Rust, 1 in Fortran and Julia


def _nodes(value: object) -> list:
    if isinstance(value, tuple):
        return [v for v in value if hasattr(v, "__dataclass_fields__")]
    return [value] if hasattr(value, "__dataclass_fields__") else []


def read_names(statements: tuple[Statement, ...]) -> set[str]:
    """Names whose value the statements read (assignment targets and bare call arguments excluded)."""
    found: set[str] = set()

    def expression(node: object, as_argument: bool = False) -> None:
        if isinstance(node, Name):
            if not as_argument:
                found.add(node.name)
            return
        if isinstance(node, UserCall):
            for arg in node.args:
                expression(arg, isinstance(arg, (Name, AddressOf)))
            return
        if isinstance(node, AddressOf) and as_argument:
            return
        for name in getattr(node, "__dataclass_fields__", {}):
            for child in _nodes(getattr(node, name)):
                expression(child)

    def target(node: object) -> None:
        if isinstance(node, (Field, Deref)):
            target(node.base if isinstance(node, Field) else node.operand)
        elif isinstance(node, Index):
            target(node.base)
            expression(node.index)

    def statement(item: object) -> None:
        if isinstance(item, Assign):
            target(item.target)
            expression(item.value)
            if isinstance(item.value, Binary) and item.value.left == item.target:
                pass  # a compound assignment reads its target: counted through the value
        elif isinstance(item, (If, For)):
            for name in ("condition", "start", "stop", "step"):
                if hasattr(item, name):
                    expression(getattr(item, name))
            for name in ("then", "otherwise", "body"):
                for child in getattr(item, name, ()):
                    statement(child)
        else:
            for name in ("init", "value"):
                if getattr(item, name, None) is not None:
                    expression(getattr(item, name))

    for item in statements:
        statement(item)
    return found


def _children(node: Node) -> list[tuple[str, int | None, Node]]:
    """(field, position in a tuple field or None, child) for every expression child of ``node``."""
    out: list[tuple[str, int | None, Node]] = []
    for name in getattr(node, "__dataclass_fields__", {}):
        value = getattr(node, name)
        if isinstance(value, tuple):
            out.extend((name, i, v) for i, v in enumerate(value) if hasattr(v, "__dataclass_fields__"))
        elif hasattr(value, "__dataclass_fields__"):
            out.append((name, None, value))
    return out


def first_hoistable(node: Node, resolve: Callable[[str], object]) -> Choose | UserCall | None:
    """The first call of a known function or conditional expression, arguments before the call itself."""
    if isinstance(node, Choose):  # its condition is always evaluated: what it needs comes first
        inner = first_hoistable(node.condition, resolve)
        return node if inner is None else inner
    for _, _, child in _children(node):
        found = first_hoistable(child, resolve)
        if found is not None:
            return found
    if isinstance(node, UserCall) and resolve(node.name) is not None:
        return node
    return None


def as_cases(node: Node) -> Node:
    """``node`` with ``abs``, ``min``, ``max`` and ``copysign`` written as conditional expressions, which the
    runner splits into paths (each piece its own obligation, as a branch is)."""
    changes: dict[str, object] = {}
    for name, position, child in _children(node):
        rewritten = as_cases(child)
        if rewritten is not child:
            _set_child(changes, node, name, position, rewritten)
    node = replace(node, **changes) if changes else node  # type: ignore[arg-type]
    if not isinstance(node, MathCall):
        return node
    args, line, zero = node.args, node.line, Lit(Fraction(0), "int")

    def magnitude(x: Node) -> Node:
        return Choose(Compare(">=", x, zero, line), x, Negate(x, line), line)

    if node.function == "abs" and len(args) == 1:
        return magnitude(args[0])
    if node.function == "copysign" and len(args) == 2:
        size = magnitude(args[0])
        return Choose(Compare(">=", args[1], zero, line), size, Negate(size, line), line)
    if node.function in ("min", "max") and len(args) >= 2:
        keeps: Comparison = "<=" if node.function == "min" else ">="
        found = args[0]
        for candidate in args[1:]:
            found = Choose(Compare(keeps, found, candidate, line), found, candidate, line)
        return found
    return node


def _set_child(changes: dict[str, object], node: Node, name: str, position: int | None, child: Node) -> None:
    if position is None:
        changes[name] = child
    else:
        items = list(changes.get(name, getattr(node, name)))  # type: ignore[call-overload]
        items[position] = child
        changes[name] = tuple(items)


def substitute_node(node: Node, old: Node, new: Node) -> Node:
    """``node`` with the subtree ``old`` (by identity) replaced by ``new``."""
    if node is old:
        return new
    changes: dict[str, object] = {}
    for name, position, child in _children(node):
        replaced = substitute_node(child, old, new)
        if replaced is not child:
            _set_child(changes, node, name, position, replaced)
    # the field names come from the node's own dataclass fields (_children), which the checker cannot follow
    return replace(node, **changes) if changes else node  # type: ignore[arg-type]


def with_expression(s: Statement, name: str, value: Node) -> Statement:
    """``s`` with its expression field ``name`` (init, value or condition) set to ``value``."""
    if isinstance(s, Declare) and name == "init":
        return replace(s, init=value)
    if isinstance(s, If) and name == "condition":
        return replace(s, condition=value)
    if isinstance(s, (Assign, Destructure, Return, Evaluate)) and name == "value":
        return replace(s, value=value)
    raise ValueError(f"{type(s).__name__} has no expression field {name!r}")
