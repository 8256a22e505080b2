"""What a front end tells the executor about names outside a function: callees and global values.

The executor binds parameters and locals itself; everything else (a module constant, an import, a
function of the project, a math function) belongs to the language, so each front end supplies a
``Scope``.  ``FlatScope`` serves languages with one flat namespace per file (C, Fortran, Julia, Rust).
"""
from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from typing import Protocol, Union

from verifier.claims.execute.state import State
from verifier.claims.execute.values import Value
from verifier.model import ir
from verifier.model.expr import Var

# ---------------------------------------------------------------- callees


@dataclass(frozen=True)
class InlineCallee:
    """A function of the project: inlined.  ``receiver`` names the local passed first (``self``)."""

    function: ir.Function
    receiver: str | None = None


@dataclass(frozen=True)
class MathCallee:
    """A known math function (``sqrt``, ``hypot``, ``sin`` ..., numpy's ``dot``, ``cross``, ``zeros`` ...)."""

    name: str


@dataclass(frozen=True)
class BuiltinCallee:
    """A language built-in on numbers and sequences (``len``, ``sum``, ``range``, ``zip``, ``float`` ...)."""

    name: str


@dataclass(frozen=True)
class MethodCallee:
    """``receiver.name(...)`` on a value: opaque in the receiver and the arguments."""

    receiver: ir.Expr
    name: str


@dataclass(frozen=True)
class OpaqueCallee:
    """Anything else: an opaque value named ``name`` (same arguments, same value) unless it is impure."""

    name: str


@dataclass(frozen=True)
class ConstructCallee:
    """A class of the project called to build an object: a fresh object of ``cls`` (module path, class
    name) passed as the receiver of ``init`` (its ``__init__``, or the one a dataclass generates; None when
    the class has neither), whose attributes afterwards are the object."""

    cls: tuple[str, str]
    init: ir.Function | None


@dataclass(frozen=True)
class UnknownCallee:
    """A callee that is not followed: the call's value is unknown for ``reason``."""

    reason: str


Callee = Union[InlineCallee, MathCallee, BuiltinCallee, MethodCallee, OpaqueCallee, ConstructCallee, UnknownCallee]


@dataclass(frozen=True)
class Member:
    """What ``obj.name`` is on an object of a class when the object holds no attribute ``name``.

    ``kind``: ``method`` (``function`` called with the object first), ``property`` (``function`` called
    with the object on reading), ``constant`` (a class-level value), ``unknown`` (``reason`` says why it
    is not followed)."""

    kind: str
    function: ir.Function | None = None
    value: Value | None = None
    reason: str = ""


# ---------------------------------------------------------------- the front end's side


class Host(Protocol):
    """What a scope may ask of the executor while it resolves a name."""

    def depend(self, path: str) -> None:
        """Record that the claim depends on the file ``path``."""

    def evaluate_detached(self, expr: ir.Expr, module: str) -> list[tuple[State, Value]]:
        """Every (path, value) of ``expr`` evaluated at module level of ``module`` (no locals)."""
        ...


IsBound = Callable[[str], bool]  # whether a name is a local or parameter bound on the current path


class Scope(Protocol):
    """A language with classes also offers ``class_member(host, cls, name, line) -> Member | None``: the
    member ``name`` of the class ``cls`` (module path, class name) that is not an attribute of the object
    itself, None when the class does not define it (optional: without it no object has members)."""

    def global_value(self, host: Host, module: str, name: str, line: int) -> Value:
        """The value of ``name`` used in ``module`` and not bound on the path."""
        ...

    def member_value(self, host: Host, module: str, node: ir.Field, is_bound: IsBound, line: int) -> Value | None:
        """``node`` read as a member of a module (``math.pi``, ``pkg.mod.CONSTANT``), or None when its base
        is not a module (then the executor reads the field of the base's value)."""
        ...

    def callee(self, host: Host, module: str, caller: ir.Function | None, node: ir.Expr, is_bound: IsBound,
               line: int) -> Callee:
        """What the call of ``node`` inside ``caller`` (None at module level) calls.  Names bound on the path
        are handled by the executor before it asks."""
        ...


MATH_NAMES = frozenset({"sqrt", "hypot", "fma", "sin", "cos", "tan", "exp", "log", "log10", "log2", "pow"})


@dataclass
class FlatScope:
    """One namespace of functions (by name) and the math functions; every other name is a free variable."""

    functions: Mapping[str, ir.Function] = field(default_factory=dict)
    math_names: frozenset[str] = MATH_NAMES

    def global_value(self, host: Host, module: str, name: str, line: int) -> Value:
        return Var(name)

    def member_value(self, host: Host, module: str, node: ir.Field, is_bound: IsBound, line: int) -> Value | None:
        return None

    def callee(self, host: Host, module: str, caller: ir.Function | None, node: ir.Expr, is_bound: IsBound,
               line: int) -> Callee:
        if isinstance(node, ir.Name):
            function = self.functions.get(node.name)
            if function is not None:
                return InlineCallee(function)
            if node.name in self.math_names:
                return MathCallee(node.name)
            return OpaqueCallee(node.name)
        if isinstance(node, ir.Field):
            return MethodCallee(node.base, node.name)
        return UnknownCallee(f"the call at line {line} is not supported")
