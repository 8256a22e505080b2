"""Exact numbers as text, one spelling for every layer: ``3``, ``-1/2`` (never a decimal, never rounded)."""
from __future__ import annotations

from fractions import Fraction


def fraction_text(value: Fraction) -> str:
    """``value`` as an integer or ``numerator/denominator`` in lowest terms, with the sign in front."""
    return str(value.numerator) if value.denominator == 1 else f"{value.numerator}/{value.denominator}"
