"""Functions defined by cases (``abs``, ``min``, ``max``, ``copysign``, ``sign``, ``clip``) as their pieces.

The executor splits the path on each piece's sign conditions, so every piece is its own obligation, as a
branch of an ``if`` is; the algebra then sees only polynomial values.  The pieces use exact real
semantics: ``copysign(x, y)`` with ``y == 0`` takes the sign of ``+0`` (a floating-point ``-0.0`` has no
exact counterpart; rounding and signed zeros are outside what a proof says).
"""
from __future__ import annotations

from fractions import Fraction

from verifier.model.expr import Expr, Neg, Num

Test = tuple[Expr, str, Expr]  # left, relation (== != < <= > >=), right
Piece = tuple[tuple[Test, ...], Expr]  # the tests that select the piece, and its value

ZERO = Num(Fraction(0))
MAX_OPERANDS = 4  # min/max of more operands would split into too many paths

ABSOLUTE = frozenset({"abs", "fabs", "absolute"})
MINIMUM = frozenset({"min", "fmin", "minimum"})
MAXIMUM = frozenset({"max", "fmax", "maximum"})
PIECEWISE = ABSOLUTE | MINIMUM | MAXIMUM | {"copysign", "sign", "clip"}


def pieces(name: str, args: list[Expr]) -> list[Piece] | None:
    """The pieces of ``name(*args)``, or None when ``name`` is not a function by cases of these arguments."""
    n = len(args)
    if name in ABSOLUTE and n == 1:
        return _absolute(args[0])
    if name in MINIMUM | MAXIMUM and 2 <= n <= MAX_OPERANDS:
        return _extreme(args, "<=" if name in MINIMUM else ">=")
    if name == "copysign" and n == 2:
        magnitude = _absolute(args[0])
        return ([(((args[1], ">=", ZERO),) + tests, value) for tests, value in magnitude]
                + [(((args[1], "<", ZERO),) + tests, _negate(value)) for tests, value in magnitude])
    if name == "sign" and n == 1:
        x = args[0]
        return [(((x, ">", ZERO),), Num(Fraction(1))), (((x, "==", ZERO),), ZERO),
                (((x, "<", ZERO),), Num(Fraction(-1)))]
    if name == "clip" and n == 3:  # numpy: minimum(maximum(x, lower), upper)
        return [(tests + more, value) for tests, low in _extreme(args[:2], ">=")
                for more, value in _extreme([low, args[2]], "<=")]
    return None


def _absolute(x: Expr) -> list[Piece]:
    return [(((x, ">=", ZERO),), x), (((x, "<", ZERO),), _negate(x))]


def _negate(x: Expr) -> Expr:
    return x.operand if isinstance(x, Neg) else Neg(x)


def _extreme(args: list[Expr], keeps: str) -> list[Piece]:
    """min (``keeps`` ``<=``) or max (``>=``) of ``args``: the running extreme against each next operand."""
    other = {"<=": ">", ">=": "<"}[keeps]
    found: list[Piece] = [((), args[0])]
    for candidate in args[1:]:
        found = [(tests + ((value, keeps, candidate),), value) for tests, value in found] + \
                [(tests + ((value, other, candidate),), candidate) for tests, value in found]
    return found
