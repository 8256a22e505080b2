"""Values of the symbolic executor: claim-language expressions, sequences of known length, None, unknowns."""
from __future__ import annotations

from dataclasses import dataclass
from typing import Union

from verifier.model.expr import BinOp, Call, Expr, Neg, Num, Opaque, Pow, Var
from verifier.model.ir import Function, SequenceKind

TUPLE, LIST, ARRAY = SequenceKind.TUPLE, SequenceKind.LIST, SequenceKind.ARRAY
MUTABLE = (LIST, ARRAY)


@dataclass(frozen=True)
class Unknown:
    """A value the executor does not model; ``reason`` names the construct and its line."""

    reason: str


@dataclass(frozen=True)
class Seq:
    """A tuple, list or array of known length.

    ``ident`` tells mutable sequences apart for in-place changes; ``owner`` is the frame that created a
    list (only it may change the list in place; -1 for module-level lists, which nobody may change).
    """

    items: tuple["Value", ...]
    kind: SequenceKind = SequenceKind.TUPLE
    ident: int = 0
    owner: int = 0


@dataclass(frozen=True)
class Record:
    """An object of a class of the scanned project (``cls`` = (module path, class name)) or, with ``cls``
    None, a dict with constant keys; ``fields`` are its attributes (keys) in the order they were set.

    ``ident`` tells objects apart (Python objects are shared by reference: every local holding the same
    ident sees a change); ``owner`` is the frame that created it; ``label`` names it in variables of
    attributes it does not hold (``self.x`` for the receiver of a claim on a method).
    """

    cls: tuple[str, str] | None
    fields: tuple[tuple[str, "Value"], ...]
    ident: int = 0
    owner: int = 0
    label: str = ""

    def get(self, name: str) -> "Value | None":
        return next((value for key, value in self.fields if key == name), None)

    def with_field(self, name: str, value: "Value") -> "Record":
        fields = tuple((k, v) for k, v in self.fields if k != name) + ((name, value),)
        return Record(self.cls, fields, self.ident, self.owner, self.label)

    @property
    def class_name(self) -> str:
        return self.cls[1] if self.cls is not None else "dict"


@dataclass(frozen=True)
class FunctionValue:
    """A function used as a value (a module function, a lambda): calling it inlines ``function``.

    A lambda sees the locals of the function that made it: ``captured`` are they, as they were when it was
    made, and ``frame`` that function's frame (0 for a module function, which captures nothing)."""

    function: Function
    captured: tuple[tuple[str, "Value"], ...] = ()
    frame: int = 0
    closure: bool = False  # a lambda: captures the locals where its value is taken


@dataclass(frozen=True)
class NoneValue:
    """No value (Python's None; a function that falls off its end)."""


NONE = NoneValue()
Key = Union[str, int]  # a field name or an index of a Compound


@dataclass(frozen=True)
class Compound:
    """A struct or fixed-size array of kernel code (``verifier.model.ir_places``): the components set so far;
    the others read as variables named after ``prefix`` (``q.w``, ``v[1]``), or are unset without one.
    ``fields`` (a struct's, in order) or ``size`` and ``base`` (an array's) give its components' order."""

    items: tuple[tuple[Key, "Value"], ...] = ()
    prefix: str | None = None
    fields: tuple[str, ...] = ()
    size: int = 0
    base: int = 0

    def keys(self) -> list[Key]:
        if self.fields:
            return list(self.fields)
        if self.size:
            return list(range(self.base, self.base + self.size))
        return [key for key, _ in self.items]


Value = Union[Num, Var, BinOp, Neg, Pow, Call, Opaque, Unknown, Seq, Record, FunctionValue, NoneValue, Compound]
EXPR_TYPES = (Num, Var, BinOp, Neg, Pow, Call, Opaque)


def is_expr(value: object) -> bool:
    """Whether ``value`` is a claim-language expression (a number, not a sequence, None or unknown)."""
    return isinstance(value, EXPR_TYPES)


def as_expr(value: Value) -> Expr | None:
    """``value`` as a claim-language expression, or None when it is not one (typed narrowing of is_expr)."""
    if isinstance(value, (Num, Var, BinOp, Neg, Pow, Call, Opaque)):
        return value
    return None


def first_unknown(value: Value) -> Unknown | None:
    """The first unknown inside ``value`` (itself, or an item of a sequence at any depth)."""
    if isinstance(value, Unknown):
        return value
    if isinstance(value, Seq):
        for item in value.items:
            found = first_unknown(item)
            if found is not None:
                return found
    return None


def is_int(value: object) -> bool:
    return isinstance(value, Num) and value.value.denominator == 1


def int_of(value: Value) -> int | None:
    """The integer a constant value holds, or None."""
    if isinstance(value, Num) and value.value.denominator == 1:
        return int(value.value)
    return None


def is_array(value: object) -> bool:
    return isinstance(value, Seq) and value.kind is ARRAY


def holds_object(value: Value, ident: int) -> bool:
    """Whether ``value`` holds the object or dict ``ident`` inside it (an item or an attribute, any depth)."""
    inner: tuple[Value, ...] = ()
    if isinstance(value, Seq):
        inner = value.items
    elif isinstance(value, Record):
        inner = tuple(v for _, v in value.fields)
    return any((isinstance(i, Record) and i.ident == ident) or holds_object(i, ident) for i in inner)


def contains_list(value: Value, ident: int) -> bool:
    """Whether ``value`` holds (at any depth) the mutable sequence ``ident``."""
    inner: tuple[Value, ...] = ()
    if isinstance(value, Seq):
        inner = value.items
    elif isinstance(value, Record):  # a list held by an object's attribute or a dict entry
        inner = tuple(v for _, v in value.fields)
    return any((isinstance(i, Seq) and i.kind in MUTABLE and i.ident == ident) or contains_list(i, ident)
               for i in inner)


class Stuck(Exception):
    """The current path cannot be followed (unsupported statement, limit, recursion ...)."""

    def __init__(self, reason: str):
        super().__init__(reason)
        self.reason = reason
