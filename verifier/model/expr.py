"""Expression trees of the claim language: plain frozen data, never a sympy object, never evaluated.

The claims layer builds them, the algebra layer translates them into polynomials, and the evaluators
compute their values at points.
"""
from __future__ import annotations

from dataclasses import dataclass
from fractions import Fraction
from typing import Literal, Union


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
