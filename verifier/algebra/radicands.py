"""Square roots of rational constants for the translator: one radical per prime of the square-free part."""
from __future__ import annotations

from fractions import Fraction

from sympy import factorint

FACTOR_LIMIT = 10**12  # constants (radicands, log arguments) beyond this are not factored


def split_constant_radicand(value: Fraction) -> tuple[Fraction, list[int]] | None:
    """sqrt(value) == outside * prod(sqrt(p) for p in primes), value > 0 rational, primes distinct."""
    numerator = value.numerator * value.denominator  # sqrt(n/d) = sqrt(n*d)/d
    if value <= 0 or numerator > FACTOR_LIMIT:
        return None
    outside = Fraction(1, value.denominator)
    primes = []
    for prime, exponent in sorted(factorint(numerator).items()):
        outside *= prime ** (exponent // 2)
        if exponent % 2:
            primes.append(int(prime))
    if len(primes) <= 1 and outside == 1:
        return None  # already a single prime radical: nothing to split
    return outside, primes
