"""The meaning of the real functions beyond roots, sin/cos/tan, exp and log: rows of the function table.

Inverse trigonometric and hyperbolic functions, erf, log1p and expm1, angle units, abs/min/max, rounding
and remainders, each exact (in rationals, where the value is known to be rational), with mpmath at high
precision and in IEEE double (as Python's math module computes it).  What keeps a witness sound
(verifier/algebra/witness_check.py evaluates with these):
- domains: asin and acos need |u| <= 1, acosh u >= 1, atanh |u| < 1, log1p u > -1, atan2 not (0, 0), a
  remainder or floor division a non-zero divisor; everywhere else they raise ``DomainError``;
- jumps: floor, ceil, trunc, ``%``, ``//`` and fmod jump where their argument (or quotient) is an integer,
  copysign where its second argument is 0, atan2 across the negative x axis.  A witness must not depend
  on the side of a jump that rounding puts it on, so the mpmath back end refuses an argument within
  ``eps`` (relative) of a jump, and the exact back end refuses the points where the value depends on the
  sign of a zero (copysign(a, 0), atan2(0, x) with x < 0: IEEE gives different values for +0 and -0).
  abs, min and max are continuous, so a rounding error moves their value as little as it moves the
  argument: no margin is needed there.
"""
from __future__ import annotations

import math
from fractions import Fraction
from typing import TYPE_CHECKING, Callable, Sequence

from verifier.model.function_types import DomainError, Function, HighPrecision, NotRational

if TYPE_CHECKING:  # computed with the context in ``HighPrecision.mp``: no import of mpmath here
    from mpmath import mpf
    from mpmath.ctx_mp import MPContext

ExactRule = Callable[[Sequence[Fraction]], Fraction]
NumericRule = Callable[[Sequence["mpf"], HighPrecision], "mpf"]
# which function of the mpmath context computes a row (``lambda mp: mp.atan``)
Pick = Callable[["MPContext"], Callable[["mpf"], "mpf"]]


# ---------------------------------------------------------------- exact values


def _rational_at(argument: int, value: int, domain: Callable[[Fraction], bool] = lambda u: True,
                 what: str = "") -> ExactRule:
    """A transcendental function: rational only at one argument (atan 0 = 0, acos 1 = 0, cosh 0 = 1)."""

    def exact(args: Sequence[Fraction]) -> Fraction:
        if not domain(args[0]):
            raise DomainError(f"{what} of {args[0]}, outside its domain")
        if args[0] == argument:
            return Fraction(value)
        raise NotRational()

    return exact


def _exact_atan2(args: Sequence[Fraction]) -> Fraction:
    y, x = args
    if y == 0 and x == 0:
        raise DomainError("atan2(0, 0)")
    if y == 0 and x < 0:
        raise DomainError("atan2(0, x) with x < 0 depends on the sign of the zero")
    if y == 0:
        return Fraction(0)
    raise NotRational()


def _exact_quotient(args: Sequence[Fraction], what: str,
                    rounding: Callable[[Fraction], int]) -> tuple[Fraction, Fraction, int]:
    """(a, b, a/b rounded) for ``%``, ``//`` and ``fmod``; a zero divisor is outside the domain."""
    a, b = args
    if b == 0:
        raise DomainError(f"{what} with divisor 0")
    return a, b, rounding(a / b)


def _exact_mod(args: Sequence[Fraction]) -> Fraction:
    a, b, quotient = _exact_quotient(args, "%", math.floor)
    return a - b * quotient


def _exact_floordiv(args: Sequence[Fraction]) -> Fraction:
    return Fraction(_exact_quotient(args, "//", math.floor)[2])


def _exact_fmod(args: Sequence[Fraction]) -> Fraction:
    a, b, quotient = _exact_quotient(args, "fmod", math.trunc)
    return a - b * quotient


def _exact_copysign(args: Sequence[Fraction]) -> Fraction:
    a, b = args
    if b == 0:
        raise DomainError("copysign(a, 0) depends on the sign of the zero")
    return abs(a) if b > 0 else -abs(a)


# ---------------------------------------------------------------- high-precision values


def _away_from_integer(q: mpf, at: HighPrecision, what: str) -> None:
    """Refuse a value within rounding (``eps``, relative) of an integer, where ``what`` jumps."""
    if abs(q - at.mp.nint(q)) <= at.eps * max(1, abs(q)):
        raise DomainError(f"{what} at (or within rounding of) a jump")


def _numeric_divisor(b: mpf, at: HighPrecision, what: str) -> None:
    if abs(b) <= at.eps:
        raise DomainError(f"{what} with a divisor indistinguishable from 0")


def _numeric_round(kind: str) -> NumericRule:
    def value(args: Sequence[mpf], at: HighPrecision) -> mpf:
        u = args[0]
        _away_from_integer(u, at, kind)
        if kind == "floor" or (kind == "trunc" and u >= 0):
            return at.mp.floor(u)
        return at.mp.ceil(u)

    return value


def _numeric_quotient(kind: str) -> NumericRule:
    """``a % b`` (sign of b, as in Python), ``a // b`` and fmod (sign of a, as in C)."""

    def value(args: Sequence[mpf], at: HighPrecision) -> mpf:
        a, b = args
        _numeric_divisor(b, at, kind)
        q = a / b
        _away_from_integer(q, at, kind)
        whole = at.mp.floor(q) if kind != "fmod" or q >= 0 else at.mp.ceil(q)
        return whole if kind == "//" else a - b * whole

    return value


def _numeric_copysign(args: Sequence[mpf], at: HighPrecision) -> mpf:
    a, b = args
    if abs(b) <= at.eps:
        raise DomainError("copysign with a sign argument indistinguishable from 0")
    return abs(a) if b > 0 else -abs(a)


def _numeric_atan2(args: Sequence[mpf], at: HighPrecision) -> mpf:
    y, x = args
    if abs(y) <= at.eps and x <= at.eps:
        raise DomainError("atan2 at (or within rounding of) the origin or its jump on the negative x axis")
    return at.mp.atan2(y, x)


def _within(u: mpf, low: int, high: int | None, at: HighPrecision, what: str) -> mpf:
    """u clamped to [low, high] when it is outside by rounding noise only (as radicands are); else an error."""
    if u < low:
        if u < low - at.radicand_eps or at.radicand_eps == 0:
            raise DomainError(f"{what} of a number below {low}")
        return at.mp.mpf(low)
    if high is not None and u > high:
        if u > high + at.radicand_eps or at.radicand_eps == 0:
            raise DomainError(f"{what} of a number above {high}")
        return at.mp.mpf(high)
    return u


def _numeric_atanh(args: Sequence[mpf], at: HighPrecision) -> mpf:
    if 1 - abs(args[0]) <= at.eps:
        raise DomainError("atanh of a number not strictly between -1 and 1")
    return at.mp.atanh(args[0])


def _numeric_log1p(args: Sequence[mpf], at: HighPrecision) -> mpf:
    if 1 + args[0] <= at.eps:
        raise DomainError("log1p of a number not above -1")
    return at.mp.log1p(args[0])


def _bounded_exponent(rule: Pick, both_signs: bool) -> NumericRule:
    """sinh, cosh, expm1: the exponential's overflow rule."""

    def value(args: Sequence[mpf], at: HighPrecision) -> mpf:
        u = abs(args[0]) if both_signs else args[0]
        if u > at.magnitude_limit / 2:
            raise DomainError("overflow in an exponential")
        return rule(at.mp)(args[0])

    return value


def _ieee_round(rule: Callable[[float], int]) -> Callable[[Sequence[float]], float]:
    return lambda a: float(rule(a[0]))


def _pi_over_180(at: HighPrecision) -> mpf:
    return at.mp.pi / 180


def _one(rule: Pick) -> NumericRule:
    return lambda a, at: rule(at.mp)(a[0])


# ---------------------------------------------------------------- the rows

_UNIT_INTERVAL = (lambda u: -1 <= u <= 1)

REAL_ENTRIES: tuple[Function, ...] = (
    # inverse trigonometric: opaque to the algebra
    Function("atan", 1, "opaque", "the arctangent (principal value in (-pi/2, pi/2))",
             exact=_rational_at(0, 0), high_precision=_one(lambda mp: mp.atan), ieee=lambda a: math.atan(a[0]),
             spellings=("arctan",)),
    Function("atan2", 2, "opaque", "the angle of the point (x, y) as atan2(y, x), in (-pi, pi]; not at (0, 0)",
             exact=_exact_atan2, high_precision=_numeric_atan2, ieee=lambda a: math.atan2(a[0], a[1]),
             spellings=("arctan2",)),
    Function("asin", 1, "opaque", "the arcsine (argument in [-1, 1])",
             exact=_rational_at(0, 0, _UNIT_INTERVAL, "asin"),
             high_precision=lambda a, at: at.mp.asin(_within(a[0], -1, 1, at, "asin")),
             ieee=lambda a: math.asin(a[0]), spellings=("arcsin",)),
    Function("acos", 1, "opaque", "the arccosine (argument in [-1, 1])",
             exact=_rational_at(1, 0, _UNIT_INTERVAL, "acos"),
             high_precision=lambda a, at: at.mp.acos(_within(a[0], -1, 1, at, "acos")),
             ieee=lambda a: math.acos(a[0]), spellings=("arccos",)),
    # hyperbolic: in terms of exp to the algebra; inverse hyperbolic: opaque
    Function("sinh", 1, "exponential", "(exp(u) - exp(-u))/2",
             exact=_rational_at(0, 0), high_precision=_bounded_exponent(lambda mp: mp.sinh, True),
             ieee=lambda a: math.sinh(a[0])),
    Function("cosh", 1, "exponential", "(exp(u) + exp(-u))/2",
             exact=_rational_at(0, 1), high_precision=_bounded_exponent(lambda mp: mp.cosh, True),
             ieee=lambda a: math.cosh(a[0])),
    Function("tanh", 1, "exponential", "sinh(u)/cosh(u)",
             exact=_rational_at(0, 0), high_precision=_one(lambda mp: mp.tanh), ieee=lambda a: math.tanh(a[0])),
    Function("asinh", 1, "opaque", "the inverse hyperbolic sine",
             exact=_rational_at(0, 0), high_precision=_one(lambda mp: mp.asinh), ieee=lambda a: math.asinh(a[0]),
             spellings=("arcsinh",)),
    Function("acosh", 1, "opaque", "the inverse hyperbolic cosine (argument >= 1)",
             exact=_rational_at(1, 0, lambda u: u >= 1, "acosh"),
             high_precision=lambda a, at: at.mp.acosh(_within(a[0], 1, None, at, "acosh")),
             ieee=lambda a: math.acosh(a[0]), spellings=("arccosh",)),
    Function("atanh", 1, "opaque", "the inverse hyperbolic tangent (argument in (-1, 1))",
             exact=_rational_at(0, 0, lambda u: -1 < u < 1, "atanh"), high_precision=_numeric_atanh,
             ieee=lambda a: math.atanh(a[0]), spellings=("arctanh",)),
    Function("erf", 1, "opaque", "the error function",
             exact=_rational_at(0, 0), high_precision=_one(lambda mp: mp.erf), ieee=lambda a: math.erf(a[0])),
    Function("erfc", 1, "opaque", "1 - erf(u)",
             exact=_rational_at(0, 1), high_precision=_one(lambda mp: mp.erfc), ieee=lambda a: math.erfc(a[0])),
    # accurate near 0, exactly log(1 + u) and exp(u) - 1 to the algebra
    Function("log1p", 1, "logarithm", "log(1 + u) (u > -1)",
             exact=_rational_at(0, 0, lambda u: u > -1, "log1p"), high_precision=_numeric_log1p,
             ieee=lambda a: math.log1p(a[0])),
    Function("expm1", 1, "exponential", "exp(u) - 1",
             exact=_rational_at(0, 0), high_precision=_bounded_exponent(lambda mp: mp.expm1, False),
             ieee=lambda a: math.expm1(a[0])),
    # angle units, in terms of pi to the algebra
    Function("radians", 1, "algebraic", "u*pi/180",
             exact=_rational_at(0, 0), high_precision=lambda a, at: a[0] * _pi_over_180(at),
             ieee=lambda a: math.radians(a[0]), spellings=("deg2rad",)),
    Function("degrees", 1, "algebraic", "u*180/pi",
             exact=_rational_at(0, 0), high_precision=lambda a, at: a[0] / _pi_over_180(at),
             ieee=lambda a: math.degrees(a[0]), spellings=("rad2deg",)),
    # abs is sqrt(u**2) to the algebra; min, max, rounding and remainders are opaque
    Function("abs", 1, "algebraic", "the absolute value",
             exact=lambda a: abs(a[0]), high_precision=lambda a, at: abs(a[0]), ieee=lambda a: math.fabs(a[0]),
             spellings=("fabs", "absolute")),
    Function("min", 2, "opaque", "the smaller argument",
             exact=lambda a: min(a[0], a[1]), high_precision=lambda a, at: min(a[0], a[1]),
             ieee=lambda a: min(a[0], a[1]), spellings=("minimum", "fmin")),
    Function("max", 2, "opaque", "the larger argument",
             exact=lambda a: max(a[0], a[1]), high_precision=lambda a, at: max(a[0], a[1]),
             ieee=lambda a: max(a[0], a[1]), spellings=("maximum", "fmax")),
    Function("floor", 1, "opaque", "the largest integer <= u",
             exact=lambda a: Fraction(math.floor(a[0])), high_precision=_numeric_round("floor"),
             ieee=_ieee_round(math.floor)),
    Function("ceil", 1, "opaque", "the smallest integer >= u",
             exact=lambda a: Fraction(math.ceil(a[0])), high_precision=_numeric_round("ceil"),
             ieee=_ieee_round(math.ceil)),
    Function("trunc", 1, "opaque", "u rounded toward 0",
             exact=lambda a: Fraction(math.trunc(a[0])), high_precision=_numeric_round("trunc"),
             ieee=_ieee_round(math.trunc)),
    Function("mod", 2, "opaque", "a % b = a - b*floor(a/b), the sign of b (b != 0)",
             exact=_exact_mod, high_precision=_numeric_quotient("%"), ieee=lambda a: a[0] % a[1]),
    Function("floordiv", 2, "opaque", "a // b = floor(a/b) (b != 0)",
             exact=_exact_floordiv, high_precision=_numeric_quotient("//"), ieee=lambda a: a[0] // a[1],
             spellings=("floor_divide",)),
    Function("fmod", 2, "opaque", "a - b*trunc(a/b), the sign of a (b != 0)",
             exact=_exact_fmod, high_precision=_numeric_quotient("fmod"), ieee=lambda a: math.fmod(a[0], a[1])),
    Function("copysign", 2, "opaque", "|a| with the sign of b (b != 0)",
             exact=_exact_copysign, high_precision=_numeric_copysign, ieee=lambda a: math.copysign(a[0], a[1])),
)

# ``min(a, b, c)`` is ``min(min(a, b), c)``
VARIADIC = frozenset({"min", "max"})
# spellings accepted only without a module prefix: ``np.min(a, b)`` is a reduction along the axis b
BARE_ONLY = frozenset({"min", "max"})
