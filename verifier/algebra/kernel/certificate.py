"""Proof certificates as plain data, and their re-check by plain expansion.

A certificate says ``target**power == sum(cofactors[i] * generators[i])`` over QQ in ``symbols``.  Reading
one back never evaluates text: coefficients must match a strict fraction pattern and exponent vectors
must be tuples of non-negative integers of the right length.  ``check_certificate`` never raises on
malformed data; it answers False.
"""
from __future__ import annotations

import re
from fractions import Fraction
from typing import Any, Sequence

from sympy import QQ, Symbol
from sympy.polys.orderings import grevlex
from sympy.polys.rings import PolyElement, PolyRing

from verifier.model.certificate import Certificate, PolyData

_COEFFICIENT = re.compile(r"-?[0-9]{1,4000}(/[1-9][0-9]{0,3999})?")
_MAX_EXPONENT = 100_000  # bounds the work a hostile cache entry can ask for
_MAX_POWER = 64


def poly_to_data(p: PolyElement) -> PolyData:
    """A polynomial as sorted ((coefficient "p" or "p/q", exponents), ...) terms."""
    terms = []
    for monom, coeff in p.terms():
        n, d = int(coeff.numerator), int(coeff.denominator)
        text = str(n) if d == 1 else f"{n}/{d}"
        terms.append((text, tuple(int(e) for e in monom)))
    return tuple(sorted(terms, key=lambda t: t[1], reverse=True))


def _coefficient(text: Any) -> Fraction:
    if not isinstance(text, str) or not _COEFFICIENT.fullmatch(text):
        raise ValueError(f"malformed coefficient {text!r}")
    value = Fraction(text)
    if value == 0:
        raise ValueError("a zero coefficient is not a term")
    return value


def data_to_poly(data: Any, ring: PolyRing) -> PolyElement:
    """The polynomial of ``data`` in ``ring``; ValueError on anything malformed."""
    if not isinstance(data, tuple):
        raise ValueError("a polynomial is a tuple of terms")
    width = len(ring.symbols)
    terms: dict[tuple[int, ...], Any] = {}
    for term in data:
        if not isinstance(term, tuple) or len(term) != 2:
            raise ValueError("a term is (coefficient, exponents)")
        text, exponents = term
        if not isinstance(exponents, tuple) or len(exponents) != width:
            raise ValueError("exponent vector of the wrong length")
        for e in exponents:
            if not isinstance(e, int) or isinstance(e, bool) or e < 0 or e > _MAX_EXPONENT:
                raise ValueError(f"bad exponent {e!r}")
        if exponents in terms:
            raise ValueError("repeated monomial")
        value = _coefficient(text)
        terms[exponents] = QQ(value.numerator, value.denominator)
    return ring(terms) if terms else ring.zero


def make_certificate(symbols: Sequence[str], target: PolyElement, power: int,
                     generators: Sequence[PolyElement], cofactors: Sequence[PolyElement]) -> Certificate:
    """A certificate for ``target**power == sum(cofactors[i] * generators[i])``; power must be >= 1."""
    if int(power) < 1:
        raise ValueError("a certificate's power is at least 1")
    if len(generators) != len(cofactors):
        raise ValueError("one cofactor per generator")
    return Certificate(
        tuple(symbols),
        poly_to_data(target),
        int(power),
        tuple(poly_to_data(g) for g in generators),
        tuple(poly_to_data(c) for c in cofactors),
    )


def certificate_ring(symbols: Sequence[str]) -> PolyRing:
    """The ring over QQ in ``symbols`` (a tuple of distinct non-empty names; none is a constant claim)."""
    if not isinstance(symbols, (tuple, list)):
        raise ValueError("the symbols are a tuple of names")
    if any(not isinstance(s, str) or not s for s in symbols) or len(set(symbols)) != len(symbols):
        raise ValueError("bad symbol list")
    # Symbol(name) only stores the name: nothing is parsed or evaluated.
    return PolyRing([Symbol(s) for s in symbols], QQ, grevlex)


def check_certificate(cert: Certificate) -> bool:
    """Re-check ``target**power == sum(cofactors[i] * generators[i])`` by expansion alone."""
    try:
        if not isinstance(cert.power, int) or isinstance(cert.power, bool) or not 1 <= cert.power <= _MAX_POWER:
            return False
        if not isinstance(cert.generators, tuple) or not isinstance(cert.cofactors, tuple):
            return False
        if len(cert.generators) != len(cert.cofactors):
            return False
        ring = certificate_ring(cert.symbols)
        target = data_to_poly(cert.target, ring)
        total = ring.zero
        for generator, cofactor in zip(cert.generators, cert.cofactors):
            total += data_to_poly(cofactor, ring) * data_to_poly(generator, ring)
        return target**cert.power == total
    except (ValueError, TypeError, AttributeError, ZeroDivisionError, OverflowError, MemoryError, RecursionError):
        return False
