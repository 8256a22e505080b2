"""Angles for the translator: exact values at pi/n, the multiple-angle expansion, how a base angle prints."""
from __future__ import annotations

from typing import Iterator

from sympy.polys.rings import PolyElement

from verifier.algebra.polytext import parenthesized
from verifier.model.expr import Call, Expr, preorder
from verifier.model.functions import FUNCTIONS

# A common multiple at least this large becomes the base angle: sin(10000*x) is one atom, not a
# degree-10000 multiple-angle expansion; smaller multiples keep the expansion (sin(2*x) in sin(x), cos(x)).
MIN_ANGLE_STEP = 8

PI_FRACTIONS = {
    1: ((lambda c, s: c + 1, "cos(X) == -1"), (lambda c, s: s, "sin(X) == 0")),
    2: ((lambda c, s: c, "cos(X) == 0"), (lambda c, s: s - 1, "sin(X) == 1")),
    3: ((lambda c, s: 2 * c - 1, "cos(X) == 1/2"), (lambda c, s: 4 * s**2 - 3, "sin(X)**2 == 3/4")),
    4: ((lambda c, s: 2 * c**2 - 1, "cos(X)**2 == 1/2"), (lambda c, s: s - c, "sin(X) == cos(X)")),
    6: ((lambda c, s: 4 * c**2 - 3, "cos(X)**2 == 3/4"), (lambda c, s: 2 * s - 1, "sin(X) == 1/2")),
}


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
