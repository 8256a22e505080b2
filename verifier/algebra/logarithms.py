"""The logarithm rules of the translation, on their domains (issue 13).

``log(u)`` is one opaque variable per distinct argument, except where the laws hold because u is known
to be positive (common practice; A&S 4.1.16-4.1.19, from memory):
- u a positive constant: log(c) = sum(k*log(p)) over the prime factorization of c, so log(4) = 2*log(2);
- u == c * prod(v**k), every v known to be > 0: log(u) = log(c) + sum(k*log(v)), where log(v) is an atom
  for a variable with a hypothesis v > 0 (or v >= c > 0), log(exp(a)) = a, log(1/w) = -log(w) and
  log(sqrt(w)) = log(w)/2 when log(w) splits in turn (so w > 0);
- u == c * prod(F**k) over its irreducible factors, each such a monomial or > 0 by its terms (x + 1
  given x > 0, y**2 + 1): log(u) = log(c) + sum(k*log(F));
- exp(k*log(w)) = w**k for w a positive constant or a variable with a positive hypothesis, k an integer
  or a half-integer.
Without the sign hypotheses nothing splits: log(x*y) == log(x) + log(y) fails at x = y = -1.  The
functions take the ``Translator`` (``translator.py``) whose state they read and extend.
"""
from __future__ import annotations

from fractions import Fraction
from typing import TYPE_CHECKING

from sympy import factorint
from sympy.polys.rings import PolyElement

from verifier.algebra.polytext import poly_key
from verifier.algebra.radicands import FACTOR_LIMIT  # noqa: F401  (re-exported: one limit for both)

if TYPE_CHECKING:  # the translator calls these functions with itself: no import at run time
    from verifier.algebra.translator import Translator

_MAX_DEPTH = 8  # log(1/sqrt(1/x)) nests inverses and radicals; deeper nests stay atoms
_MAX_FACTORED_TERMS = 40  # log arguments with more terms are not factored
_MAX_EXPONENT = 4096  # exp(k*log(w)) = w**k only for |k| up to this (as powers)


def logarithm(t: Translator, u: PolyElement) -> PolyElement:
    """log(u) in the translator's ring: a sum of atoms when it splits, else one atom."""
    u = t.lift(u)
    if u.is_ground and u == 1:
        return t.const(0)
    split = _split(t, u, 0)
    return split if split is not None else log_atom(t, u)


def _split(t: Translator, u: PolyElement, depth: int) -> PolyElement | None:
    """log(u) as a sum when u == c * prod(v**k) with c > 0 and every v known to be > 0, or u == c *
    prod(F**k) with every irreducible factor F such a monomial or positive by its terms; else None."""
    if not u or depth > _MAX_DEPTH:
        return None
    if len(u.terms()) != 1:
        return _split_factors(t, u, depth)
    monom, coeff = u.terms()[0]
    constant = Fraction(int(coeff.numerator), int(coeff.denominator))
    if constant <= 0:
        return None
    result = _of_constant(t, constant)
    symbols = [str(x) for x in t.ring.symbols]
    for index, exponent in enumerate(monom):
        if not exponent:
            continue
        logarithm_of_v = _of_symbol(t, symbols[index], depth)  # may extend the ring: before lifting
        if logarithm_of_v is None:
            return None
        result = t.lift(result) + exponent * t.lift(logarithm_of_v)
    return t.lift(result)


def _split_factors(t: Translator, u: PolyElement, depth: int) -> PolyElement | None:
    """log(u) = log(c) + sum(k*log(F)) over the factorization u == c * prod(F**k), when c > 0 and each F
    is a monomial whose logarithm splits or is > 0 by its terms (``_positive_by_terms``)."""
    if len(u.terms()) > _MAX_FACTORED_TERMS:
        return None
    coeff, factors = u.factor_list()
    constant = Fraction(int(coeff.numerator), int(coeff.denominator))
    if constant <= 0 or (constant == 1 and len(factors) == 1 and factors[0][1] == 1):
        return None  # u < 0 somewhere, or u is irreducible: then log(u) is its own atom
    parts: list[tuple[PolyElement, int]] = []
    for factor, multiplicity in factors:
        factor = t.lift(factor)
        logarithm_of_f = _of_positive(t, factor, depth + 1)
        if logarithm_of_f is None:
            return None
        parts.append((logarithm_of_f, int(multiplicity)))
    result = _of_constant(t, constant)
    for logarithm_of_f, multiplicity in parts:
        result = t.lift(result) + multiplicity * t.lift(logarithm_of_f)
    return t.lift(result)


def _of_positive(t: Translator, w: PolyElement, depth: int) -> PolyElement | None:
    """log(w) when w is known to be > 0: split, or one atom when w is > 0 by its terms; else None."""
    if len(w.terms()) == 1 or not _positive_by_terms(t, w):
        return _split(t, w, depth)
    split = _split(t, w, depth)
    return split if split is not None else log_atom(t, w)


def _positive_by_terms(t: Translator, p: PolyElement) -> bool:
    """p > 0 wherever the translation's assumptions hold: every coefficient positive, a positive constant
    term, and odd powers only of symbols known to be >= 0 (positive variables, exp, square roots)."""
    symbols = [str(x) for x in t.ring.symbols]
    nonnegative = t.positive_variables | set(t.exp_exponent) | set(t.radicand_of)
    has_constant = False
    for monom, coeff in p.terms():
        if coeff <= 0:
            return False
        has_constant = has_constant or not any(monom)
        if any(e % 2 and symbols[i] not in nonnegative for i, e in enumerate(monom)):
            return False
    return has_constant


def _of_constant(t: Translator, value: Fraction) -> PolyElement:
    """log(value) for a rational value > 0: one atom per prime of its factorization."""
    if value == 1:
        return t.const(0)
    if max(value.numerator, value.denominator) > FACTOR_LIMIT:
        return log_atom(t, t.const(value))  # too large to factor: one atom of its own
    result = t.const(0)
    for part, sign in ((value.numerator, 1), (value.denominator, -1)):
        for prime, exponent in sorted(factorint(part).items()):
            atom = log_atom(t, t.const(int(prime)))
            result = t.lift(result) + sign * int(exponent) * t.lift(atom)
    return t.lift(result)


def _of_symbol(t: Translator, name: str, depth: int) -> PolyElement | None:
    """log(v) for one ring symbol v known to be > 0, or None."""
    if name in t.positive_variables:
        return log_atom(t, t.gen(name))
    if name in t.exp_exponent:
        return t.lift(t.exp_exponent[name])
    if name in t.inverse_of:
        inverted = _of_positive(t, t.inverse_of[name], depth + 1)
        return None if inverted is None else -t.lift(inverted)
    if name in t.radicand_of:
        radicand = _of_positive(t, t.radicand_of[name], depth + 1)
        return None if radicand is None else t.lift(radicand) * t.const(Fraction(1, 2))
    return None


def log_atom(t: Translator, u: PolyElement) -> PolyElement:
    """The opaque variable log(u); u > 0 joins the assumptions (and the sign hypotheses)."""
    u = t.lift(u)
    shown = t.printed(u)
    key = ("log", poly_key(u))
    if t.atom_name(key) is None:
        if not (u.is_ground and u.LC > 0):  # a positive constant needs no assumption
            t.assumed.append(f"{shown} > 0 (logarithm)")
        if not u.is_ground:
            t.domain_signs.append((u, True))
    atom = t.atom(key, "l", f"log({shown})", "log")
    name = t.atom_name(key)
    assert name is not None
    t.log_argument.setdefault(name, u)
    return atom


def without_logs(t: Translator, arg: PolyElement) -> tuple[PolyElement, list[tuple[PolyElement, Fraction]]]:
    """An exponent ``arg`` minus its terms k*log(w) with w known to be > 0 (a positive constant, a
    variable with a positive hypothesis) and k an integer or a half-integer; and those (w, k)."""
    arg = t.lift(arg)
    symbols = [str(x) for x in t.ring.symbols]
    rest, logs = arg, []
    for monom, coeff in arg.terms():
        if sum(monom) != 1:
            continue
        argument = t.log_argument.get(symbols[monom.index(1)])
        k = Fraction(int(coeff.numerator), int(coeff.denominator))
        if argument is None or k.denominator > 2 or abs(k) > _MAX_EXPONENT:
            continue
        argument = t.lift(argument)
        if _is_positive_variable(t, argument) or (argument.is_ground and argument.LC > 0):
            rest -= t.ring({monom: coeff})
            logs.append((argument, k))
    return rest, logs


def _is_positive_variable(t: Translator, p: PolyElement) -> bool:
    if len(p.terms()) != 1 or p.LC != 1 or sum(p.LM) != 1:
        return False
    return str(t.ring.symbols[p.LM.index(1)]) in t.positive_variables
