"""The one table of functions and constants of the claim language, and their meaning in each back end.

For each function: its canonical name, its number of arguments, how a claim may spell it (bare, or after
``math.``, ``np.`` or ``numpy.``) and what it computes in each evaluator:
- exact: in rationals; raises ``NotRational`` where the value is irrational (or not known to be rational);
- high precision: with mpmath at the working precision, ``HighPrecision`` handing over the context and
  saying what counts as 0;
- IEEE double: with Python's math module (the operation a program performs);
- modular: modulo a prime, where the function is a polynomial (else ``None``: not evaluable mod p).
Every back end raises ``DomainError`` where the function is undefined: radicands are >= 0 (principal
square root), logarithm arguments > 0, and tan needs cos != 0; the domains and jumps of the further real
functions (atan, asin, floor, ``%`` ...) are described in verifier/model/real_functions.py.  The polynomial translation of each
function is in verifier/algebra/translator.py; ``family`` tells it which rule applies.
"""
from __future__ import annotations

import math
from fractions import Fraction
from types import MappingProxyType
from typing import TYPE_CHECKING, Callable, Mapping, Sequence

from verifier.model.function_types import (  # noqa: F401  (re-exported: the table's types)
    DomainError,
    Family,
    Function,
    HighPrecision,
    NotEvaluable,
    NotRational,
)
from verifier.model.real_functions import BARE_ONLY, REAL_ENTRIES, VARIADIC  # noqa: F401  (re-exported)

if TYPE_CHECKING:  # computed with the context in ``HighPrecision.mp``: no import of mpmath here
    from mpmath import mpf


# ---------------------------------------------------------------- shared pieces of the semantics


def rational_sqrt(value: Fraction) -> Fraction | None:
    """The rational square root of a non-negative rational, or None when it is irrational."""
    if value < 0:
        raise DomainError(f"square root of the negative number {value}")
    p, q = value.numerator, value.denominator
    rp, rq = math.isqrt(p), math.isqrt(q)
    if rp * rp == p and rq * rq == q:
        return Fraction(rp, rq)
    return None


def rational_power(base: Fraction, exponent: Fraction) -> Fraction | None:
    """``base ** exponent`` over the reals when it is rational (``8**(1/3)`` is 2), else None (also outside the
    domain: a non-positive power of 0, a fractional power of a negative number - undefined in Python and
    numpy too - or an exponent or base too large to bother)."""
    p, q = exponent.numerator, exponent.denominator
    if abs(p) > 1000 or q > 1000 or (base == 0 and p <= 0) or (base < 0 and q > 1):
        return None
    if q == 1:
        return base**p
    roots = []
    for part in (abs(base.numerator), base.denominator):
        if part.bit_length() > 256:
            return None
        root = round(math.exp(math.log(part) / q)) if part else 0
        for _ in range(64):  # Newton's step on integers: the float estimate is off for large parts
            better = ((q - 1) * root + part // root ** (q - 1)) // q if root else 0
            if abs(better - root) <= 1:
                break
            root = better
        exact = next((r for r in (root - 1, root, root + 1) if r >= 0 and r**q == part), None)
        if exact is None:
            return None
        roots.append(exact)
    return (Fraction(roots[0], roots[1]) * (-1 if base < 0 else 1)) ** p


def exact_sqrt(value: Fraction) -> Fraction:
    root = rational_sqrt(value)
    if root is None:
        raise NotRational()
    return root


def numeric_sqrt(x: mpf, at: HighPrecision) -> mpf:
    """The principal square root; a radicand within ``at.radicand_eps`` below 0 counts as 0."""
    if x < 0:
        if x < -at.radicand_eps or at.radicand_eps == 0:
            raise DomainError("square root of a negative number")
        return at.mp.mpf(0)
    return at.mp.sqrt(x)


def ieee_fma(a: float, b: float, c: float) -> float:
    fma = getattr(math, "fma", None)  # Python 3.13+
    if fma is not None:
        return fma(a, b, c)
    return float(Fraction(a) * Fraction(b) + Fraction(c))  # one rounding, like a hardware fma


def _known_at_zero(value_at_zero: int) -> Callable[[Sequence[Fraction]], Fraction]:
    """Exact semantics of a transcendental function: rational only at 0 (sin 0 = 0, cos 0 = exp 0 = 1)."""

    def exact(args: Sequence[Fraction]) -> Fraction:
        if args[0] == 0:
            return Fraction(value_at_zero)
        raise NotRational()

    return exact


def _exact_log(args: Sequence[Fraction]) -> Fraction:
    if args[0] <= 0:
        raise DomainError(f"logarithm of the non-positive number {args[0]}")
    if args[0] == 1:
        return Fraction(0)
    raise NotRational()


def _numeric_tan(args: Sequence[mpf], at: HighPrecision) -> mpf:
    c = at.mp.cos(args[0])
    if abs(c) <= at.eps:
        raise DomainError("tan where cos is 0")
    return at.mp.sin(args[0]) / c


def _numeric_exp(args: Sequence[mpf], at: HighPrecision) -> mpf:
    if args[0] > at.magnitude_limit / 2:
        raise DomainError("overflow in exp")
    return at.mp.exp(args[0])


def _numeric_log(args: Sequence[mpf], at: HighPrecision) -> mpf:
    if args[0] <= at.eps:
        raise DomainError("logarithm of a non-positive number")
    return at.mp.log(args[0])


def _not_rational(args: Sequence[Fraction]) -> Fraction:
    raise NotRational()


# ---------------------------------------------------------------- the table

_ENTRIES = (
    Function("sqrt", 1, "algebraic", "the principal square root",
             exact=lambda a: exact_sqrt(a[0]),
             high_precision=lambda a, at: numeric_sqrt(a[0], at),
             ieee=lambda a: math.sqrt(a[0])),
    Function("hypot", 2, "algebraic", "sqrt(a**2 + b**2)",
             exact=lambda a: exact_sqrt(a[0] ** 2 + a[1] ** 2),
             high_precision=lambda a, at: at.mp.sqrt(a[0] ** 2 + a[1] ** 2),
             ieee=lambda a: math.hypot(a[0], a[1])),
    Function("fma", 3, "algebraic", "a*b + c (rounded once in IEEE double)",
             exact=lambda a: a[0] * a[1] + a[2],
             high_precision=lambda a, at: a[0] * a[1] + a[2],
             ieee=lambda a: ieee_fma(a[0], a[1], a[2]),
             modular=lambda a, p: (a[0] * a[1] + a[2]) % p),
    Function("sin", 1, "trigonometric", "the sine",
             exact=_known_at_zero(0),
             high_precision=lambda a, at: at.mp.sin(a[0]),
             ieee=lambda a: math.sin(a[0])),
    Function("cos", 1, "trigonometric", "the cosine",
             exact=_known_at_zero(1),
             high_precision=lambda a, at: at.mp.cos(a[0]),
             ieee=lambda a: math.cos(a[0])),
    Function("tan", 1, "trigonometric", "sin/cos (cos != 0)",
             exact=_known_at_zero(0),
             high_precision=_numeric_tan,
             ieee=lambda a: math.tan(a[0])),
    Function("exp", 1, "exponential", "the exponential",
             exact=_known_at_zero(1),
             high_precision=_numeric_exp,
             ieee=lambda a: math.exp(a[0])),
    # to the algebra the logarithm is opaque: the same argument gives the same value
    Function("log", 1, "logarithm", "the natural logarithm (argument > 0)",
             exact=_exact_log,
             high_precision=_numeric_log,
             ieee=lambda a: math.log(a[0])),
) + REAL_ENTRIES  # atan ... copysign: verifier/model/real_functions.py

# canonical name -> entry, for the functions a claim may call
FUNCTIONS: Mapping[str, Function] = MappingProxyType({entry.name: entry for entry in _ENTRIES})

# named constants (in trees an Opaque without arguments; see verifier/model/expr.py)
CONSTANTS: Mapping[str, Function] = MappingProxyType({
    "pi": Function("pi", 0, "constant", "the number pi (an unknown constant to the algebra)",
                   exact=_not_rational,
                   high_precision=lambda a, at: +at.mp.pi,
                   ieee=lambda a: math.pi),
})

# ---------------------------------------------------------------- spellings in claims

# Prefixes that may stand before a function or constant name (``math.sqrt``, ``np.sqrt``, ``numpy.sqrt``).
MODULE_PREFIXES = ("math", "np", "numpy")
# ``pow(a, b)`` and ``power(a, b)`` (bare or prefixed) are parsed into a power node, not a call.
POWER = "pow"
POWER_ARITY = 2
# spelling after an optional prefix -> canonical name (a function of FUNCTIONS, or POWER)
CALL_SPELLINGS: Mapping[str, str] = MappingProxyType(
    {name: name for name in FUNCTIONS}
    | {spelling: entry.name for entry in FUNCTIONS.values() for spelling in entry.spellings}
    | {"pow": POWER, "power": POWER}
)
# constant spellings -> whether the bare name is accepted (``e`` only as ``math.e``, ``np.e``, ...):
# ``pi``; ``tau`` is 2*pi and ``e`` is exp(1)
CONSTANT_SPELLINGS: Mapping[str, bool] = MappingProxyType({"pi": True, "tau": True, "e": False})
# module constants a claim may not use (claims are about real numbers with rational constants)
REFUSED_CONSTANTS = ("inf", "nan")


def arity(canonical: str) -> int:
    """The number of arguments of a canonical name of ``CALL_SPELLINGS``."""
    return POWER_ARITY if canonical == POWER else FUNCTIONS[canonical].arity


def known_names() -> str:
    """The callable names for messages (each spelling once; ``power`` is the numpy spelling of ``pow``)."""
    return ", ".join(sorted(set(CALL_SPELLINGS) - {"power"}))
