"""The kernel IR: scanned functions of any language as plain frozen data, for the one symbolic executor.

A front end (Python from libcst trees; C, C++, CUDA, Fortran, Julia, Rust from tree-sitter trees) lowers
each function to a ``Function`` of this module; ``verifier.claims.execute`` runs it symbolically, path by
path, and yields the returned value(s), the values left in out-parameters, or the value assigned at a
marked statement.  Nothing here is ever evaluated by Python: these are syntax trees of the scanned code.

Expressions are the claim language's nodes (``verifier.model.expr``: ``Num``, ``Var``, ``BinOp``, ``Neg``,
``Pow``, ``Call``, ``Opaque``; used here they are fixed values, e.g. ``Num`` for a literal, ``PI``) plus the
nodes below that carry a source position and that the executor resolves (names, operators that can fail,
element and field reads, calls, conditional expressions, sequences).  Every node has ``line`` and
``column`` (1-based; 0 when unknown) so that everything the executor does not follow is reported as
``inconclusive`` with the construct and its line.

How constructs of the front-end languages map onto the IR (the front end does the rewriting):

- C out-parameters ``*out = e`` and ``out[0] = e`` on a pointer parameter: ``Assign((ToOut("out"),), e)``
  with the parameter's kind ``ParameterKind.OUT`` (``INOUT`` when it is also read first); reading ``*out``
  is ``Name("out")``.  C++ reference parameters ``double& r`` (non-const) and Fortran ``intent(out)`` /
  ``intent(inout)`` dummy arguments are the same: ``ToOut`` on assignment, ``Name`` on reading.  The values
  left in out-parameters when a path ends are reported as that path's outputs.
- Fortran ``result(v)`` and assignments to the function name: ``v`` is a local; every ``return`` and the end
  of the body lower to ``Return(Name("v"))``.  Julia's implicit return and Rust's tail expression (the last
  expression of the body, or of each branch of a final ``if``) lower to ``Return(expr)``.
- Struct fields ``q.w`` / ``q->w`` / ``q%w``: reading is ``Field(Name("q"), "w")``; writing is
  ``ToField("q", "w")`` (nested ``q.a.b`` is ``ToField("q.a", "b")``).  A field that was never written
  reads as the variable ``q.w`` (the claim language spells it so).  Python ``obj.attr = v`` is
  ``ToField("obj", "attr")``: it changes an object of the project's classes.  Dict keys: ``ir_keys.py``.
- Arrays: reading ``v[i]`` is ``Element(Name("v"), (i,))``; ``a[i][j]`` and Fortran ``a(i, j)`` are
  ``Element(Element(a, (i,)), (j,))`` so that reads see ``ToElement`` writes (numpy ``a[i, j]`` is
  ``Element(a, (i, j))``).  Indices must evaluate
  to integer constants (literals, or loop counters of unrolled loops); an element never written reads as
  the variable ``v[0]``.  Writing is ``ToElement("v", (i,))`` (``a[i][j] = e`` is ``ToElement("a", (i, j))``
  - successive subscripts).  A local array declaration ``double v[3];`` is ``Assign((ToLocal("v"),),
  Sequence((Num(0),) * 3, SequenceKind.LIST))``; writing elements of an array parameter needs its kind
  ``ARRAY``, ``OUT`` or ``INOUT``.
- Compound assignments ``x += e`` (and ``-= *= /=``): ``Assign((ToLocal("x"),), Binary("+", Name("x"), e))``;
  ``x++`` / ``++x`` / ``x--`` as statements: the same with ``Num(1)``.  Used as a value they are
  ``Unsupported``.  ``a = b = e`` is one ``Assign`` with two targets; tuple unpacking is ``Unpack``.
- Ternaries ``c ? a : b`` / ``a if c else b`` / ``ifelse(c, a, b)`` (Julia) / ``merge(a, b, c)`` (Fortran):
  ``Conditional(c, a, b)``; the executor splits the path on ``c``.
- Multiple return values (Python/Julia/Rust tuples, C++ ``std::pair``/``std::tuple``/``{a, b}``):
  ``Return(Sequence((a, b)))``; a matrix is a ``Sequence`` of row ``Sequence``s.
- Counted loops ``for (int i = a; i < b; i += s)`` / ``do i = a, b, s`` / ``for i in a:b`` / ``for i in
  a..b``: ``CountedLoop("i", a, b', s, body)`` with an EXCLUSIVE stop (``i <= b`` and Fortran/Julia
  inclusive ranges lower with ``b' = b + 1``; a negative step counts down, stop still exclusive).  Bounds
  must evaluate to integer constants; the loop is unrolled up to the unroll limit.  Other loops
  (``while``, ``do-while``, loops with non-constant bounds after evaluation) are ``Unsupported``.
- Calls: ``Invoke(callee, arguments)``.  The executor asks the front end's scope what ``callee`` is: a
  function of the project (an IR ``Function``, inlined), a known math function (``sqrt``, ``hypot``,
  ``fma``, ``sin`` ... through the function table), a sequence function (``len``, ``sum``, ``range``), or
  anything else (an opaque value: the same arguments give the same value).  A call as a statement is
  ``Evaluate(Invoke(...))``.  ``abort()``, ``panic!``, ``error(...)``, ``stop`` end the path: ``Raise``.
- Anything a front end does not lower is ``Unsupported(construct, line)`` - usable as an expression (an
  unknown value; the claim is inconclusive only if the value is used), a statement (the path stops) or an
  assignment target (the path stops when it assigns).  Never drop a statement that may change a value.
"""
from __future__ import annotations

import enum
from dataclasses import dataclass
from fractions import Fraction
from typing import Union

from verifier.model.expr import BinOp, Call, Neg, Num, Opaque, Pow, Var
from verifier.model.ir_ints import IntegerBinary, ToInteger  # integer kinds of kernel code: see that module
from verifier.model.ir_places import AddressOf, Aggregate, Load, Place, Store  # kernel places: see that module
from verifier.model.ir_keys import Text

# ---------------------------------------------------------------- kinds


class ParameterKind(enum.Enum):
    """How a parameter passes its value."""

    VALUE = "value"  # a number (or a value the caller passes: tuple, list); a variable at the top level
    ARRAY = "array"  # an array/pointer whose elements the function may read (and write: see ToElement)
    STRUCT = "struct"  # a struct/record; its fields read as variables ``q.w``
    OUT = "out"  # written by the function (C ``*out``, C++ ``T&``, Fortran ``intent(out)``); a result
    INOUT = "inout"  # read and written (Fortran ``intent(inout)``, C pointer read before written)


class Binding(enum.Enum):
    """How a call's arguments reach a parameter (Python has them all; other languages are POSITIONAL)."""

    POSITIONAL = "positional"  # by position or by keyword
    POSITIONAL_ONLY = "positional_only"
    KEYWORD_ONLY = "keyword_only"
    VARIADIC = "variadic"  # ``*args``, C ``...``, Julia ``args...``: not followed
    VARIADIC_KEYWORD = "variadic_keyword"  # ``**kwargs``: not followed


class SequenceKind(enum.Enum):
    """What a sequence value is: the executor treats them differently."""

    TUPLE = "tuple"  # immutable, fixed length (multiple return values)
    LIST = "list"  # mutable: elements may be assigned, ``Append`` grows it; owned by the frame that made it
    ARRAY = "array"  # numpy-like: arithmetic is elementwise, scalars broadcast


class Star(enum.Enum):
    """How an argument is passed."""

    NONE = ""  # one value
    SEQUENCE = "*"  # ``*xs``: the items of a sequence value as positional arguments
    MAPPING = "**"  # ``**kw``: not followed


# ---------------------------------------------------------------- expressions


@dataclass(frozen=True)
class Name:
    """A name: a local or parameter when the path has bound it; otherwise the front end's scope says what it
    is (a module constant, an imported name, a global, or a free variable ``Var(name)``)."""

    name: str
    line: int = 0
    column: int = 0


@dataclass(frozen=True)
class NoValue:
    """Python's ``None`` (C ``void`` returns never produce a value; they lower to ``Return(None)``)."""

    line: int = 0
    column: int = 0


@dataclass(frozen=True)
class Binary:
    """``left op right``.

    ``op`` is one of ``+ - * / **`` (the claim language's arithmetic; ``**`` needs a constant exponent),
    or ``// % & | ^ << >> @`` (folded on integer constants; ``@`` is the matrix product of known shapes);
    anything else gives an unknown value.  Integer division of C/Fortran on integer operands is ``//``
    only when both are known integers; a front end that cannot tell lowers it to ``Unsupported``.
    """

    op: str
    left: "Expr"
    right: "Expr"
    line: int = 0
    column: int = 0


@dataclass(frozen=True)
class Unary:
    """``op operand`` with ``op`` one of ``-``, ``+``, ``~`` (integer constants only), ``not`` (in tests)."""

    op: str
    operand: "Expr"
    line: int = 0
    column: int = 0


@dataclass(frozen=True)
class Compare:
    """A comparison chain ``a < b <= c`` (``operands`` has one more item than ``operators``).

    Operators: ``== != < <= > >=`` (these become branch conditions), ``is`` / ``is not`` (with ``NoValue``
    only), ``in`` / ``not in`` (not followed).  As a value (not in a test) it is not followed.
    """

    operands: tuple["Expr", ...]
    operators: tuple[str, ...]
    line: int = 0
    column: int = 0


@dataclass(frozen=True)
class Logical:
    """``left and right`` / ``left or right`` (``&&``, ``||``, ``.and.``): short-circuit, in tests only."""

    op: str  # "and" | "or"
    left: "Expr"
    right: "Expr"
    line: int = 0
    column: int = 0


@dataclass(frozen=True)
class Conditional:
    """``then if test else orelse`` (C ``test ? then : orelse``): the path splits on ``test``."""

    test: "Expr"
    then: "Expr"
    orelse: "Expr"
    line: int = 0
    column: int = 0


@dataclass(frozen=True)
class Element:
    """``base[i]`` (one index) or ``base[i, j]`` (several indices in one subscript, numpy/Fortran style).

    Each index must evaluate to an integer constant.  A sequence gives its item; a variable ``v`` gives the
    variable ``v[i]`` (``v[i, j]``); an opaque value gives the opaque value ``f(..)[i]``.
    """

    base: "Expr"
    indices: tuple["Expr", ...]
    line: int = 0
    column: int = 0


@dataclass(frozen=True)
class Slice:
    """``base[lower:upper:step]`` of a sequence of known length (constant bounds; ``None`` = omitted)."""

    base: "Expr"
    lower: "Expr | None" = None
    upper: "Expr | None" = None
    step: "Expr | None" = None
    line: int = 0
    column: int = 0


@dataclass(frozen=True)
class Field:
    """``base.name`` (``q->w``, ``q%w``): a field written by ``ToField`` gives that value; a variable gives the
    variable ``q.w``; an opaque value gives the opaque ``f(..).w``.  The scope may first read it as a
    module member (``math.pi``, ``mod.CONSTANT``)."""

    base: "Expr"
    name: str
    line: int = 0
    column: int = 0


@dataclass(frozen=True)
class Sequence:
    """A tuple, list or array literal of known length (``(a, b)``, ``[a, b]``, ``{a, b}``, ``[a; b]``)."""

    items: tuple["Expr", ...]
    kind: SequenceKind = SequenceKind.TUPLE
    line: int = 0
    column: int = 0


@dataclass(frozen=True)
class Argument:
    """One argument of a call: a value, optionally by keyword or starred."""

    value: "Expr"
    keyword: str | None = None
    star: Star = Star.NONE


@dataclass(frozen=True)
class Invoke:
    """A call ``callee(arguments)``; ``spelling`` is the callee's source text (for messages).

    ``callee`` is usually a ``Name`` (``f``, ``sqrt``) or a ``Field`` chain (``np.sqrt``, ``obj.method``);
    the front end's scope resolves it (see ``verifier.claims.execute.scope``).
    """

    callee: "Expr"
    arguments: tuple[Argument, ...] = ()
    spelling: str = ""
    line: int = 0
    column: int = 0


@dataclass(frozen=True)
class Unsupported:
    """A construct the front end does not lower; ``construct`` names it (``the while loop``, ``a lambda``).

    The executor's reason reads ``{construct} at line {line} is not supported{detail}``.  As an expression
    it is an unknown value, as a statement it stops the path, as a target it stops the path on assignment.
    """

    construct: str
    line: int = 0
    column: int = 0
    detail: str = ""


Expr = Union[
    # claim-language nodes: fixed values
    Num, Var, BinOp, Neg, Pow, Call, Opaque,
    # IR nodes
    Name, NoValue, Binary, Unary, Compare, Logical, Conditional, Element, Slice, Field, Sequence, Invoke,
    Text, Unsupported, Load, AddressOf, Aggregate, IntegerBinary, ToInteger,
]

# ---------------------------------------------------------------- assignment targets


@dataclass(frozen=True)
class ToLocal:
    """Bind the local ``name`` (declaring and assigning are the same)."""

    name: str
    line: int = 0
    column: int = 0


@dataclass(frozen=True)
class ToElement:
    """``name[i] = v`` (``indices`` = successive subscripts: ``name[i][j] = v`` is ``(i, j)``).

    On a local list the element is replaced (the list must be the frame's own); on an ``ARRAY``/``OUT``/
    ``INOUT`` parameter the element ``name[i]`` is bound.  Indices must evaluate to integer constants.
    """

    name: str
    indices: tuple[Expr, ...]
    line: int = 0
    column: int = 0


@dataclass(frozen=True)
class ToField:
    """``base.field = v`` (``q->w``, ``q%w``); ``base`` may itself be dotted (``q.a`` for ``q.a.b``)."""

    base: str
    field: str
    line: int = 0
    column: int = 0


@dataclass(frozen=True)
class ToOut:
    """Store into the out-parameter ``name`` (C ``*name = v``, C++ reference, Fortran ``intent(out)``)."""

    name: str
    line: int = 0
    column: int = 0


@dataclass(frozen=True)
class Unpack:
    """``a, b = v``: ``v`` must be a sequence of that length (a variable ``v`` unpacks to ``v[0]``, ``v[1]``)."""

    items: tuple["Target", ...]
    line: int = 0
    column: int = 0


Target = Union[ToLocal, ToElement, ToField, ToOut, Unpack, Unsupported, Store]

# ---------------------------------------------------------------- statements


@dataclass(frozen=True)
class Assign:
    """Assign ``value`` to every target in turn (``a = b = v``).  A statement claim marks it by position."""

    targets: tuple[Target, ...]
    value: Expr
    line: int = 0
    column: int = 0


@dataclass(frozen=True)
class Append:
    """Append ``value`` to the local list ``name`` (``out.append(x)``, ``push_back``, ``push!``, ``push``).

    When ``name`` is not bound to a list of this frame, ``fallback`` runs instead (the front end's ordinary
    reading of the statement, e.g. ``Evaluate`` of the method call).
    """

    name: str
    value: Expr
    fallback: "Statement | None" = None
    line: int = 0
    column: int = 0


@dataclass(frozen=True)
class Evaluate:
    """An expression statement (a call for its effects).  A call that may change a list it is given, or a
    method call on a sequence, stops the path; its value is dropped."""

    value: Expr
    line: int = 0
    column: int = 0


@dataclass(frozen=True)
class If:
    """``if test: then else: orelse`` (``elif`` chains nest in ``orelse``)."""

    test: Expr
    then: tuple["Statement", ...]
    orelse: tuple["Statement", ...] = ()
    line: int = 0
    column: int = 0


@dataclass(frozen=True)
class ForEach:
    """``for target in iterable: body [else: orelse]``: ``iterable`` must be a sequence of known length
    (``range`` with constant arguments, a tuple, a list); unrolled.  ``end_line`` is the loop's last line."""

    target: Target
    iterable: Expr
    body: tuple["Statement", ...]
    orelse: tuple["Statement", ...] | None = None
    line: int = 0
    column: int = 0
    end_line: int = 0


@dataclass(frozen=True)
class CountedLoop:
    """``for counter in range(start, stop, step)``: integer bounds, ``stop`` EXCLUSIVE; unrolled."""

    counter: str
    start: Expr
    stop: Expr
    step: Expr = Num(Fraction(1))
    body: tuple["Statement", ...] = ()
    line: int = 0
    column: int = 0
    end_line: int = 0


@dataclass(frozen=True)
class Return:
    """Return ``value`` (``None``: no value, Python's ``None``); several values are a ``Sequence``."""

    value: Expr | None = None
    line: int = 0
    column: int = 0


@dataclass(frozen=True)
class Break:
    line: int = 0
    column: int = 0


@dataclass(frozen=True)
class Continue:
    line: int = 0
    column: int = 0


@dataclass(frozen=True)
class Raise:
    """The path ends without a value (``raise``, ``throw``, ``abort()``, ``panic!``, ``error()``, ``stop``)."""

    line: int = 0
    column: int = 0


Statement = Union[Assign, Append, Evaluate, If, ForEach, CountedLoop, Return, Break, Continue, Raise,
                  Unsupported]

# ---------------------------------------------------------------- functions


@dataclass(frozen=True)
class Parameter:
    name: str
    kind: ParameterKind = ParameterKind.VALUE
    binding: Binding = Binding.POSITIONAL
    default: Expr | None = None  # evaluated in the module's scope when the call omits the argument


@dataclass(frozen=True)
class Function:
    """One function of the scanned code.

    ``name`` is qualified the way messages and claims name it (``Class.method``, ``outer.<locals>.inner``);
    ``module`` is the path of its source file (relative, forward slashes), which the scope uses to resolve
    names and the executor records as a dependency.  ``owner`` is the class/struct/impl a method belongs
    to.  ``generator``: the body yields (Python generators); calling it is not followed.
    """

    name: str
    parameters: tuple[Parameter, ...]
    body: tuple[Statement, ...]
    module: str = ""
    line: int = 0
    column: int = 0
    owner: str | None = None
    generator: bool = False

    @property
    def key(self) -> tuple[str, str]:
        """Identifies the function across lowerings (recursion checks)."""
        return (self.module, self.name)

    def positional_names(self) -> list[str]:
        """The parameters a call may pass by position, in order."""
        return [p.name for p in self.parameters if p.binding in (Binding.POSITIONAL, Binding.POSITIONAL_ONLY)]


__all__ = [
    "ParameterKind", "Binding", "SequenceKind", "Star",
    "Name", "NoValue", "Binary", "Unary", "Compare", "Logical", "Conditional", "Element", "Slice", "Field",
    "Sequence", "Text", "Argument", "Invoke", "Unsupported", "Expr",
    "ToLocal", "ToElement", "ToField", "ToOut", "Unpack", "Target",
    "Assign", "Append", "Evaluate", "If", "ForEach", "CountedLoop", "Return", "Break", "Continue", "Raise",
    "Statement", "Parameter", "Function",
]
