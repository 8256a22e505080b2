"""Plain data for claims: where a claim is, what it says, and under which conditions.

Everything here is a frozen dataclass.  Expressions are our own small tree (never a sympy object and
never evaluated): the claims layer builds them, the algebra layer translates them into polynomials and
the witness search evaluates them numerically.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from fractions import Fraction
from typing import Literal, Union


@dataclass(frozen=True)
class Location:
    """A place in a scanned file; ``path`` is relative to the working directory, line and column 1-based."""

    path: str
    line: int
    column: int

    def __str__(self) -> str:
        return f"{self.path}:{self.line}:{self.column}"


# ---------------------------------------------------------------- expressions


@dataclass(frozen=True)
class Num:
    """An exact rational constant (decimal literals keep their exact decimal value)."""

    value: Fraction


@dataclass(frozen=True)
class Var:
    """A real variable; dotted names and constant subscripts are plain names (``q.w``, ``v[0]``)."""

    name: str


BinaryOperator = Literal["+", "-", "*", "/"]


@dataclass(frozen=True)
class BinOp:
    op: BinaryOperator
    left: "Expr"
    right: "Expr"


@dataclass(frozen=True)
class Neg:
    operand: "Expr"


@dataclass(frozen=True)
class Pow:
    """``base ** exponent`` with a constant rational exponent.

    Integer exponents (negative ones mean division); a denominator of 2 means a square root
    (``x**0.5`` is ``sqrt(x)``, ``x**1.5`` is ``sqrt(x)**3``).  Other exponents are rejected by the parser.
    """

    base: "Expr"
    exponent: Fraction


KNOWN_FUNCTIONS: dict[str, int] = {
    # canonical name -> number of arguments
    "sqrt": 1,
    "hypot": 2,  # sqrt(a**2 + b**2)
    "fma": 3,  # a*b + c
    "sin": 1,
    "cos": 1,
    "tan": 1,
    "exp": 1,
    "log": 1,  # opaque: the same argument gives the same value
}


@dataclass(frozen=True)
class Call:
    """A call of one of ``KNOWN_FUNCTIONS`` (``pow`` is parsed into ``Pow``)."""

    function: str
    args: tuple["Expr", ...]


@dataclass(frozen=True)
class Opaque:
    """A value the tool cannot see into (an unresolved call in Python code).

    The same name applied to the same arguments is the same value; nothing else is known about it.
    """

    name: str
    args: tuple["Expr", ...]


Expr = Union[Num, Var, BinOp, Neg, Pow, Call, Opaque]

# The number pi: an opaque constant.  Proofs hold for every value of it; since no witness can be given in
# terms of an unknown constant, a claim whose difference depends on it is never refuted.
PI = Opaque("pi", ())


# ---------------------------------------------------------------- conditions and claims

Relation = Literal["==", "!=", "<", "<=", ">", ">="]


@dataclass(frozen=True)
class Condition:
    """``left RELATION right``.  ``==`` joins the ideal, ``!=`` the non-zero set, the rest are sign hypotheses."""

    relation: Relation
    left: Expr
    right: Expr
    text: str  # how it reads in the report, e.g. "x > 0" or "unit_quaternion: w**2 + ... == 1"
    origin: str = "given"  # "given", "named:NAME", "branch (line N)", "config"


@dataclass(frozen=True)
class NamedConditionSet:
    """A named set of conditions from ``[tool.idealcheck.conditions]`` (texts are parsed by the claims layer)."""

    name: str
    variables: tuple[str, ...]
    given: tuple[str, ...]


@dataclass(frozen=True)
class Obligation:
    """One equality to decide: ``left == right`` under ``conditions``.

    A claim usually has one; a function claim has one per returned component and control-flow path.
    ``label`` says which (empty for a lone obligation), e.g. "component 2" or "path where x > 0".
    """

    left: Expr
    right: Expr
    conditions: tuple[Condition, ...] = ()
    label: str = ""
    notes: tuple[str, ...] = ()  # facts the report should list for this obligation (opaque calls, ...)


ClaimKind = Literal["expression", "function", "statement"]


@dataclass(frozen=True)
class Problem:
    """Why a claim could not be turned into obligations; it becomes the claim's verdict directly."""

    verdict: Literal["error", "inconclusive"]
    message: str  # specific: what is wrong and where


@dataclass(frozen=True)
class Claim:
    id: str  # stable within a run: "path:line:col", with "#k" for the k-th link of a chain
    location: Location
    kind: ClaimKind
    text: str  # the claim text after "idealcheck:", continuation lines joined
    obligations: tuple[Obligation, ...] = ()
    problem: Problem | None = None  # set instead of obligations when the claim cannot be decided
    notes: tuple[str, ...] = ()  # claim-wide facts for the report (e.g. "inlined helpers.norm2 from geo/helpers.py")
    dependencies: tuple[str, ...] = field(default=())  # files (relative paths) the claim depends on, itself included


@dataclass(frozen=True)
class FileProblem:
    """A file that could not be read (binary, undecodable, unparsable Python ...)."""

    location: Location
    message: str


@dataclass(frozen=True)
class ExtractionContext:
    """What the claims layer needs besides the file itself."""

    named_conditions: tuple[NamedConditionSet, ...] = ()
    roots: tuple[str, ...] = (".",)  # scanned roots (relative paths), where Python imports are resolved
    unroll_limit: int = 256  # iterations of a `for ... in range(...)` loop unrolled at most
    inline_depth: int = 16  # nested inlined calls at most

    def named(self, name: str) -> NamedConditionSet | None:
        for item in self.named_conditions:
            if item.name == name:
                return item
        return None
