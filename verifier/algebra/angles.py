"""Angles for the translator: exact values at pi/n, the multiple-angle expansion, how a base angle prints."""
from __future__ import annotations

from sympy.polys.rings import PolyElement

from verifier.algebra.polytext import parenthesized

# A common multiple at least this large becomes the base angle: sin(10000*x) is one atom, not a
# degree-10000 multiple-angle expansion; smaller multiples keep the expansion (sin(2*x) in sin(x), cos(x)).
MIN_ANGLE_STEP = 8
# A multiple left above this after the common step becomes a base angle of its own: sin(1001*x) beside
# sin(1000*x) (step 1) would be a degree-1001 expansion (15 s); as two atoms the claim is refuted at once.
MAX_ANGLE_MULTIPLE = 100

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
