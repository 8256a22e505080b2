"""Angles for the translator: exact values at pi/n, the multiple-angle expansion, how a base angle prints."""
from __future__ import annotations

from fractions import Fraction
from typing import Iterator

from sympy.polys.rings import PolyElement

from verifier.algebra.polytext import parenthesized
from verifier.model.expr import Call, Expr, preorder
from verifier.model.functions import FUNCTIONS

# A common multiple at least this large becomes the base angle: sin(10000*x) is one atom, not a
# degree-10000 multiple-angle expansion; smaller multiples keep the expansion (sin(2*x) in sin(x), cos(x)).
MIN_ANGLE_STEP = 8
# A multiple left above this after the common step becomes a base angle of its own: sin(1001*x) beside
# sin(1000*x) (step 1) would be a degree-1001 expansion (15 s); as two atoms the claim is refuted at once.
MAX_ANGLE_MULTIPLE = 100

# A real number written as a rational combination of square roots of primes: ((coefficient, primes), ...)
# stands for sum(coefficient * prod(sqrt(p) for p in primes)); () is 0.
RootSum = tuple[tuple[Fraction, tuple[int, ...]], ...]

_HALF, _QUARTER = Fraction(1, 2), Fraction(1, 4)

# (cos(pi/n), sin(pi/n)) with their texts (common practice; A&S table 4.3.46, from memory; the tests
# check every entry against mpmath).  Giving the value itself, not only its square, pins the sign:
# sin(pi/4) is +sqrt(2)/2 with sqrt(2) the principal root, so sin(pi/4) == -sqrt(2)/2 does not follow.
PI_VALUES: dict[int, tuple[tuple[RootSum, str], tuple[RootSum, str]]] = {
    1: ((((Fraction(-1), ()),), "-1"), ((), "0")),
    2: (((), "0"), (((Fraction(1), ()),), "1")),
    3: ((((_HALF, ()),), "1/2"), (((_HALF, (3,)),), "sqrt(3)/2")),
    4: ((((_HALF, (2,)),), "sqrt(2)/2"), (((_HALF, (2,)),), "sqrt(2)/2")),
    6: ((((_HALF, (3,)),), "sqrt(3)/2"), (((_HALF, ()),), "1/2")),
    12: ((((_QUARTER, (2, 3)), (_QUARTER, (2,))), "(sqrt(6) + sqrt(2))/4"),
         (((_QUARTER, (2, 3)), (-_QUARTER, (2,))), "(sqrt(6) - sqrt(2))/4")),
}

_EIGHTH = Fraction(1, 8)

# Values that need a nested root: (cos(pi/n), sin(pi/n)), each either ("value", RootSum) or ("root",
# RootSum), the latter meaning the principal square root of that sum (sin(pi/8) = sqrt((2 - sqrt(2))/4)).
# Common practice (the regular pentagon and octagon; from memory, the tests check each against mpmath).
NESTED_PI_VALUES: dict[int, tuple[tuple[str, RootSum, str], tuple[str, RootSum, str]]] = {
    5: (("value", ((_QUARTER, ()), (_QUARTER, (5,))), "(1 + sqrt(5))/4"),
        ("root", ((Fraction(5, 8), ()), (-_EIGHTH, (5,))), "sqrt(10 - 2*sqrt(5))/4")),
    8: (("root", ((_HALF, ()), (_QUARTER, (2,))), "sqrt(2 + sqrt(2))/2"),
        ("root", ((_HALF, ()), (-_QUARTER, (2,))), "sqrt(2 - sqrt(2))/2")),
    10: (("root", ((Fraction(5, 8), ()), (_EIGHTH, (5,))), "sqrt(10 + 2*sqrt(5))/4"),
         ("value", ((-_QUARTER, ()), (_QUARTER, (5,))), "(sqrt(5) - 1)/4")),
}

# sin(2*pi/n) for the nested entries: products of two different roots (sin(pi/5)*sin(2*pi/5) = sqrt(5)/4)
# are only known through it.  Common practice, from memory; the tests check each against mpmath.
DOUBLE_ANGLE_VALUES: dict[int, tuple[str, RootSum, str]] = {
    5: ("root", ((Fraction(5, 8), ()), (_EIGHTH, (5,))), "sqrt(10 + 2*sqrt(5))/4"),
    8: ("value", ((_HALF, (2,)),), "sqrt(2)/2"),
    10: ("root", ((Fraction(5, 8), ()), (-_EIGHTH, (5,))), "sqrt(10 - 2*sqrt(5))/4"),
}


def pi_values(n: int) -> Iterator[tuple[str, str, RootSum, str]]:
    """(function, "value" or "root", sum, text) for the exact values of cos and sin at pi/n, if known."""
    for function, (value, text) in zip(("cos", "sin"), PI_VALUES.get(n, ())):
        yield function, "value", value, text
    for function, (shape, nested, text) in zip(("cos", "sin"), NESTED_PI_VALUES.get(n, ())):
        yield function, shape, nested, text
    if n in DOUBLE_ANGLE_VALUES:  # 2*sin*cos = sin(2*pi/n): ties two roots together with the sign known
        shape, double, text = DOUBLE_ANGLE_VALUES[n]
        yield "2*sin*cos", shape, double, text


def scaled(text: str, scale: int, step: int = 1) -> str:
    text = text if step == 1 else f"{step}*{parenthesized(text)}"
    return text if scale == 1 else f"{parenthesized(text)}/{scale}"


def multiple_angle(c: PolyElement, s: PolyElement, k: int, one: PolyElement) -> tuple[PolyElement, PolyElement]:
    """(cos(k*u), sin(k*u)) from c = cos(u), s = sin(u): the real and imaginary parts of (c + i*s)**k."""
    re, im = one, one * 0
    base_re, base_im = c, s
    while k:
        if k & 1:
            re, im = re * base_re - im * base_im, re * base_im + im * base_re
        k >>= 1
        if k:
            base_re, base_im = base_re**2 - base_im**2, 2 * base_re * base_im
    return re, im


def scaled_calls(expr: Expr) -> Iterator[Call]:
    """The calls whose argument is split into base directions with a common scale (sin, cos, tan, exp),
    outer calls first."""
    for node in preorder(expr):
        entry = FUNCTIONS.get(node.function) if isinstance(node, Call) else None
        if isinstance(node, Call) and entry is not None and entry.family in ("trigonometric", "exponential"):
            yield node


def has_scaled_call(expr: Expr) -> bool:
    return next(scaled_calls(expr), None) is not None
