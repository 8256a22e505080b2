"""Certificate polynomials: strict reading of ``PolyData`` into sympy's ring over QQ, and writing back.

Reading never evaluates text: a coefficient must match a strict fraction pattern, an exponent vector must
be a tuple of non-negative integers of the ring's width, and a monomial may occur once.  Everything
malformed raises ValueError.  sympy is used only for its ring arithmetic (sparse dictionaries of
exponent tuples with exact rational coefficients): adding, multiplying and comparing, never a basis.
"""
from __future__ import annotations

import re
from fractions import Fraction
from typing import Any, Sequence

from sympy import QQ, Symbol
from sympy.polys.orderings import grevlex
from sympy.polys.rings import PolyElement, PolyRing

from verifier.model.certificate import PolyData
from verifier.model.numbers import fraction_text  # re-exported

_COEFFICIENT = re.compile(r"-?[0-9]{1,4000}(/[1-9][0-9]{0,3999})?")
_FRACTION = re.compile(r"-?[0-9]{1,200}(/[1-9][0-9]{0,199})?")  # a weight, ratio or shift; zero allowed
MAX_EXPONENT = 100_000  # bounds the work a hostile cache entry can ask for
MAX_POWER = 64


def poly_to_data(p: PolyElement) -> PolyData:
    """A polynomial as sorted ((coefficient "p" or "p/q", exponents), ...) terms."""
    terms = []
    for monom, coeff in p.terms():
        n, d = int(coeff.numerator), int(coeff.denominator)
        text = str(n) if d == 1 else f"{n}/{d}"
        terms.append((text, tuple(int(e) for e in monom)))
    return tuple(sorted(terms, key=lambda t: t[1], reverse=True))



def strict_fraction(text: Any) -> Fraction:
    """A weight, ratio or shift written as "p" or "p/q" (zero allowed); ValueError otherwise."""
    if not isinstance(text, str) or not _FRACTION.fullmatch(text):
        raise ValueError(f"not a fraction: {text!r}")
    return Fraction(text)


def rational(value: Fraction) -> Any:
    """``value`` as an element of the coefficient field QQ."""
    return QQ(value.numerator, value.denominator)


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
            if not isinstance(e, int) or isinstance(e, bool) or e < 0 or e > MAX_EXPONENT:
                raise ValueError(f"bad exponent {e!r}")
        if exponents in terms:
            raise ValueError("repeated monomial")
        terms[exponents] = rational(_coefficient(text))
    return ring(terms) if terms else ring.zero


def polys(data: Any, ring: PolyRing) -> list[PolyElement]:
    """A tuple of polynomials as data -> their list; ValueError when it is not a tuple."""
    if not isinstance(data, tuple):
        raise ValueError("a list of polynomials is a tuple")
    return [data_to_poly(p, ring) for p in data]


def certificate_ring(symbols: Sequence[str]) -> PolyRing:
    """The ring over QQ in ``symbols`` (a tuple of distinct non-empty names; none is a constant claim)."""
    if not isinstance(symbols, (tuple, list)):
        raise ValueError("the symbols are a tuple of names")
    if any(not isinstance(s, str) or not s for s in symbols) or len(set(symbols)) != len(symbols):
        raise ValueError("bad symbol list")
    # Symbol(name) only stores the name: nothing is parsed or evaluated.
    return PolyRing([Symbol(s) for s in symbols], QQ, grevlex)


def symbol_indices(names: Any, symbols: Sequence[str]) -> set[int]:
    """The ring positions of ``names`` (a tuple of ring symbols); ValueError for a name not in the ring."""
    if not isinstance(names, tuple) or any(n not in symbols for n in names):
        raise ValueError("a symbol outside the ring")
    return {list(symbols).index(n) for n in names}


def combination(cofactors: Sequence[PolyElement], generators: Sequence[PolyElement], ring: PolyRing) -> PolyElement:
    """sum(cofactors[i] * generators[i]), expanded; ValueError unless there is one cofactor per generator."""
    if len(cofactors) != len(generators):
        raise ValueError("one cofactor per generator")
    return sum((c * g for c, g in zip(cofactors, generators)), ring.zero)


def sign_pattern_ok(p: PolyElement, nonnegative: set[int]) -> bool:
    """Every term has a positive coefficient and odd exponents only at ``nonnegative`` positions: then p
    is >= 0 wherever those variables are (each term is a product of squares and nonnegative factors)."""
    for monom, coeff in p.terms():
        if coeff <= 0:
            return False
        if any(e % 2 and i not in nonnegative for i, e in enumerate(monom)):
            return False
    return True
