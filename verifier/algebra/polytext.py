"""Polynomials as text for reports and canonical keys for sharing auxiliary variables.

Printing is deterministic (largest term first in the ring's order) so that reports and certificates read
the same on every run.
"""
from __future__ import annotations

from fractions import Fraction

from sympy.polys.rings import PolyElement

from verifier.model.numbers import fraction_text  # re-exported


def parenthesized(text: str) -> str:
    """Parenthesize a printed sub-expression unless it is a single name or call."""
    simple = all(ch.isalnum() or ch in "._[]$'\"" for ch in text)
    if simple:
        return text
    if text.endswith(")") and _balanced_call(text):
        return text
    return f"({text})"


def _balanced_call(text: str) -> bool:
    head = text.split("(", 1)[0]
    if not head or not all(ch.isalnum() or ch in "._" for ch in head):
        return False
    depth = 0
    for i, ch in enumerate(text):
        if ch == "(":
            depth += 1
        elif ch == ")":
            depth -= 1
            if depth == 0 and i != len(text) - 1:
                return False
    return True



def format_poly(poly: PolyElement, names: dict[str, str] | None = None) -> str:
    """Deterministic text of a polynomial, largest term first; ``names`` renames ring symbols."""
    names = names or {}
    if not poly:
        return "0"
    ring = poly.ring
    symbols = [names.get(str(s), str(s)) for s in ring.symbols]
    parts: list[tuple[str, str]] = []
    for monom, coeff in sorted(poly.terms(), key=lambda t: ring.order(t[0]), reverse=True):
        value = Fraction(int(coeff.numerator), int(coeff.denominator))
        factors = []
        for sym, exp in zip(symbols, monom):
            if exp == 0:
                continue
            base = parenthesized(sym)
            factors.append(base if exp == 1 else f"{base}**{exp}")
        sign = "-" if value < 0 else "+"
        magnitude = abs(value)
        if not factors:
            body = fraction_text(magnitude)
        elif magnitude == 1:
            body = "*".join(factors)
        else:
            body = fraction_text(magnitude) + "*" + "*".join(factors)
        parts.append((sign, body))
    first_sign, first_body = parts[0]
    text = ("-" if first_sign == "-" else "") + first_body
    for sign, body in parts[1:]:
        text += f" {sign} {body}"
    return text


def poly_key(poly: PolyElement) -> tuple:
    """A ring-independent canonical key: terms as ((symbol, exponent), ...) with the coefficient."""
    symbols = [str(s) for s in poly.ring.symbols]
    items = []
    for monom, coeff in poly.terms():
        mono = tuple((symbols[i], e) for i, e in enumerate(monom) if e)
        items.append((mono, (int(coeff.numerator), int(coeff.denominator))))
    return tuple(sorted(items))
