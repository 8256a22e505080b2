"""The types of the function table (verifier/model/functions.py): its entries and what they raise.

Kept apart from the table so that the modules holding the semantics of groups of functions
(verifier/model/real_functions.py) can use them without importing the table itself.
"""
from __future__ import annotations

from dataclasses import dataclass
from fractions import Fraction
from typing import TYPE_CHECKING, Callable, Literal, Sequence

if TYPE_CHECKING:  # the table names mpmath's types; the evaluator hands it the context (see HighPrecision)
    from mpmath import mpf
    from mpmath.ctx_mp import MPContext


class DomainError(ArithmeticError):
    """The expression is undefined at the point (division by zero, negative radicand, ...)."""


class NotEvaluable(ValueError):
    """The expression contains a node that has no value (an opaque call)."""


class NotRational(Exception):
    """The exact value is irrational (or too large to compute): the exact back end gives up."""


@dataclass(frozen=True)
class HighPrecision:
    """What the mpmath back end needs besides the arguments.

    The table computes with the context it is handed (``mp.sin``, ``mp.mpf``), so that describing the
    functions imports no numeric library: only the evaluator loads mpmath, and a run without claims never
    does.
    """

    mp: MPContext  # mpmath's context at the working precision (``mpmath.mp`` inside ``workdps``)
    eps: mpf  # what counts as zero at the working precision
    radicand_eps: mpf  # how far below 0 a radicand may be and still count as 0 (rounding noise)
    magnitude_limit: int  # a value beyond 2**this is an overflow


# How the algebra translates a call (verifier/algebra/translator.py): ``opaque`` functions get one
# auxiliary variable per distinct argument (their exact meaning is known only to the evaluators)
Family = Literal["algebraic", "trigonometric", "exponential", "logarithm", "constant", "opaque"]


@dataclass(frozen=True)
class Function:
    """One entry of the table; ``arity`` 0 is a named constant."""

    name: str
    arity: int
    family: Family
    meaning: str
    exact: Callable[[Sequence[Fraction]], Fraction]
    high_precision: Callable[[Sequence[mpf], HighPrecision], mpf]
    ieee: Callable[[Sequence[float]], float]
    modular: Callable[[Sequence[int], int], int] | None = None
    spellings: tuple[str, ...] = ()  # further names a claim or code may use (``arctan``, ``fabs``)
