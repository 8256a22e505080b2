"""Integer kinds of the kernel IR: arithmetic the kernel languages do on integers, which is not real arithmetic.

A front end that knows an operation's operands are integers (declared ``int``/``integer``/``i32``, loop
counters, integer literals) lowers it to ``IntegerBinary``; a conversion of a real to an integer (a cast,
an initializer or assignment of an ``int`` local, a real passed to an ``int`` parameter) to ``ToInteger``.
A conversion of an integer to a real needs no node: an integer value is a real number.  Integer
parameters at the top level are variables (``k``): where a value is an integer is known from the code's
kinds, not from the value.

The executor folds both on integer constants exactly (C, C++, CUDA, Fortran, Rust and Julia's ``÷``
truncate a quotient toward zero: ``-7 / 2`` is ``-3``); on anything else the value is unknown with the
reason (``integer arithmetic may overflow``, ``integer division truncates``, ``conversion to an integer
truncates``), so a claim that uses it is inconclusive.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING

if TYPE_CHECKING:
    from verifier.model.ir import Expr


@dataclass(frozen=True)
class IntegerBinary:
    """``left op right`` on integers, ``op`` one of ``+ - * /`` (``/`` truncates toward zero)."""

    op: str
    left: "Expr"
    right: "Expr"
    line: int = 0
    column: int = 0


@dataclass(frozen=True)
class ToInteger:
    """``operand`` converted to an integer: an integer constant stays, anything else is unknown."""

    operand: "Expr"
    line: int = 0
    column: int = 0


__all__ = ["IntegerBinary", "ToInteger"]
