"""One checker per certificate class: expansion and exact rational arithmetic, nothing else.

Each checker re-verifies the identities its certificate states and returns the ``Premises`` the proof
rests on besides the claim's equations (symbols known to be >= 0, sign hypotheses); ``tie.py`` then
checks those against the claim.  A checker raises ``Rejected`` (or ValueError, TypeError ... on malformed
data); ``check`` turns every failure into None and never raises.  No checker computes a Groebner basis,
reduces modulo one or searches: the finders (``algebra/decide.py``, ``algebra/sign_search.py``) did that.
"""
from __future__ import annotations

from dataclasses import dataclass
from fractions import Fraction
from typing import Any, Callable

from sympy.polys.rings import PolyElement

from verifier.algebra.kernel.polynomial import (
    MAX_POWER,
    certificate_ring,
    combination,
    data_to_poly,
    polys,
    rational,
    sign_pattern_ok,
    strict_fraction,
    symbol_indices,
)
from verifier.model.certificate import (
    Certificate,
    ConjugateCertificate,
    IdealCertificate,
    LemmaChainCertificate,
    PolyData,
    RealSquareCertificate,
    ShiftContradictionCertificate,
    SignContradictionCertificate,
)


class Rejected(ValueError):
    """The certificate does not prove what it says."""


@dataclass(frozen=True)
class Premises:
    """What a checked proof assumes of the claim beyond ``target == 0`` wherever ``generators == 0``."""

    nonnegative_symbols: tuple[str, ...] = ()  # ring symbols taken to be >= 0
    # sign hypotheses used: (S, True) means S > 0 is needed, (S, False) that S >= 0 is enough
    hypotheses: tuple[tuple[PolyData, bool], ...] = ()


def _require(condition: bool, why: str) -> None:
    if not condition:
        raise Rejected(why)


def _strictness(value: Any) -> bool:
    _require(isinstance(value, bool), "a strictness flag is a boolean")
    return bool(value)


def check_ideal(cert: IdealCertificate) -> Premises:
    """target**power == sum(cofactors[i] * generators[i])."""
    power = cert.power
    _require(isinstance(power, int) and not isinstance(power, bool) and 1 <= power <= MAX_POWER, "bad power")
    ring = certificate_ring(cert.symbols)
    target = data_to_poly(cert.target, ring)
    total = combination(polys(cert.cofactors, ring), polys(cert.generators, ring), ring)
    _require(target**power == total, "the identity does not expand")
    return Premises()


def _without(p: PolyElement, index: int) -> PolyElement:
    """p with the exponent of generator ``index`` set to 0 in every term (p must be linear in it)."""
    ring = p.ring
    terms = {monom[:index] + (0,) + monom[index + 1:]: coeff for monom, coeff in p.terms()}
    return ring(terms) if terms else ring.zero


def strictly_positive_symbols(generators: list[PolyElement], positive: set[int]) -> set[int]:
    """Symbols r >= 0 with r**2 - c among the generators for a constant c > 0: then r > 0 (sqrt(2))."""
    found = set()
    for g in generators:
        for index in positive:
            rest = g - g.ring.gens[index] ** 2
            if rest.is_ground and rest and rest.LC < 0:
                found.add(index)
    return found


def positive_factor_ok(factor: PolyElement, generators: list[PolyElement], positive: set[int]) -> bool:
    """M > 0 wherever the generators vanish and the ``positive`` symbols are >= 0: every term is >= 0 (its
    sign pattern) and one is > 0 (a positive constant, or a product of strictly positive roots)."""
    if not sign_pattern_ok(factor, positive):
        return False
    strict = strictly_positive_symbols(generators, positive)
    return any(all(i in strict for i, e in enumerate(monom) if e) for monom, _ in factor.terms())


def check_conjugate(cert: ConjugateCertificate) -> Premises:
    """(0) target - form is in the ideal; (1) target*multiplier is in the ideal, hence form*multiplier
    too; (2) form + multiplier == 2*A*root and form - multiplier == 2*B with A, B free of root; (3)
    -A*B*M - P - sum(lam*S) is in the ideal, lam >= 0, P has a nonnegative sign pattern and M one with a
    positive constant term (so M > 0; M = 1 when absent).  Then -A*B >= 0, which with (A*root)**2 == B**2 and root >= 0 leaves only A*root == -B, i.e. form == 0,
    and so target == 0."""
    symbols = cert.symbols
    ring = certificate_ring(symbols)
    positive = symbol_indices(cert.nonnegative_symbols, symbols)
    _require(isinstance(cert.root, str) and cert.root in cert.nonnegative_symbols, "the root is not >= 0")
    index = list(symbols).index(cert.root)
    target = data_to_poly(cert.target, ring)
    form = data_to_poly(cert.form, ring)
    multiplier = data_to_poly(cert.multiplier, ring)
    generators = polys(cert.generators, ring)
    _require(target - form == combination(polys(cert.form_cofactors, ring), generators, ring),
             "target - form is not in the ideal")
    _require(target * multiplier == combination(polys(cert.cofactors, ring), generators, ring),
             "target * multiplier is not in the ideal")
    twice_b = form - multiplier
    twice_ar = form + multiplier
    _require(twice_b.degree(index) <= 0, "B depends on the root")
    _require(all(monom[index] == 1 for monom, _ in twice_ar.terms()), "A*root is not linear in the root")
    a = _without(twice_ar, index) * rational(Fraction(1, 2))
    b = twice_b * rational(Fraction(1, 2))
    p = data_to_poly(cert.nonnegative, ring)
    _require(isinstance(cert.positive_factor, tuple), "the factor M is polynomial data")
    factor = data_to_poly(cert.positive_factor, ring) if cert.positive_factor else ring.one
    if _strictness(cert.factor_may_vanish):
        # value*M >= 0, M >= 0 and value + M >= 0 give value >= 0 (M > 0, or M == 0 and value >= -M == 0)
        _require(bool(cert.positive_factor) and sign_pattern_ok(factor, positive), "the factor M may be negative")
        _require(sign_pattern_ok(-a * b + factor, positive), "-A*B + M may be negative")
    else:
        _require(positive_factor_ok(factor, generators, positive), "the factor M may be zero or negative")
    rest = -a * b * factor - p
    _require(isinstance(cert.hypotheses, tuple), "the hypotheses are a tuple")
    used = []
    for hypothesis_data, weight_text in cert.hypotheses:
        weight = strict_fraction(weight_text)
        _require(weight >= 0, "a negative weight")
        rest -= data_to_poly(hypothesis_data, ring) * rational(weight)
        used.append((hypothesis_data, False))
    _require(rest == combination(polys(cert.nonnegative_cofactors, ring), generators, ring),
             "-A*B*M - P - sum(lam*S) is not in the ideal")
    _require(sign_pattern_ok(p, positive), "P may be negative")
    return Premises(cert.nonnegative_symbols, tuple(used))


def check_real_square(cert: RealSquareCertificate) -> Premises:
    """target**2 + remainder is in the ideal and the remainder has a nonnegative sign pattern."""
    ring = certificate_ring(cert.symbols)
    positive = symbol_indices(cert.nonnegative_symbols, cert.symbols)
    target = data_to_poly(cert.target, ring)
    remainder = data_to_poly(cert.remainder, ring)
    total = combination(polys(cert.cofactors, ring), polys(cert.generators, ring), ring)
    _require(target**2 + remainder == total, "target**2 + remainder is not in the ideal")
    rest = remainder
    for weight_text, square in cert.squares:
        weight = strict_fraction(weight_text)
        _require(weight >= 0, "a square with a negative weight")
        rest -= rational(weight) * data_to_poly(square, ring) ** 2
    _require(sign_pattern_ok(rest, positive), "the remainder may be negative")
    return Premises(cert.nonnegative_symbols)


def contradicts(first_strict: bool, second_strict: bool, ratio: Fraction, constant: Fraction) -> bool:
    """first >= 0, second >= 0 (> 0 when strict), first == ratio*second + constant: impossible?"""
    if ratio > 0:
        return False
    if constant < 0:
        return True
    return constant == 0 and (first_strict or (ratio < 0 and second_strict))


def check_sign_contradiction(cert: SignContradictionCertificate) -> Premises:
    """first - ratio*second - constant is in the ideal, and ``contradicts`` holds for the two signs."""
    first_strict, second_strict = _strictness(cert.first_strict), _strictness(cert.second_strict)
    ratio, constant = strict_fraction(cert.ratio), strict_fraction(cert.constant)
    ring = certificate_ring(cert.symbols)
    data_to_poly(cert.target, ring)  # unused by a vacuous proof, but it must be well-formed for the tie
    first = data_to_poly(cert.first, ring)
    second = data_to_poly(cert.second, ring)
    if not second:
        _require(ratio == 0 and not second_strict, "an absent second hypothesis with a weight or a sign")
    _require(contradicts(first_strict, second_strict, ratio, constant), "the signs are compatible")
    total = combination(polys(cert.cofactors, ring), polys(cert.generators, ring), ring)
    _require(first - second * rational(ratio) - rational(constant) == total, "the relation is not in the ideal")
    used = ((cert.first, first_strict),) + (((cert.second, second_strict),) if second else ())
    return Premises((), used)


def shifted_negation(other: PolyElement, index: int, shift: Fraction) -> PolyElement:
    """-other with the generator ``index`` replaced by itself + shift (it then stands for t = v - shift)."""
    ring = other.ring
    v = ring.gens[index]
    return -other.compose(v, v + rational(shift))


def shift_contradicts(q: PolyElement, index: int, bound_strict: bool, other_strict: bool,
                      positive_index: set[int]) -> bool:
    """q == -other(t + shift) >= 0 for t >= 0: does it contradict other >= 0 (or > 0)?"""
    if not sign_pattern_ok(q, positive_index | {index}):
        return False
    if other_strict:
        return True
    for monom, coeff in q.terms():
        if coeff > 0 and sum(monom) == 0:
            return True
        if coeff > 0 and bound_strict and monom[index] > 0 and sum(monom) == monom[index]:
            return True
    return False


def check_shift_contradiction(cert: ShiftContradictionCertificate) -> Premises:
    """bound == variable - shift, and -other(variable = t + shift) contradicts other's sign for t >= 0."""
    bound_strict, other_strict = _strictness(cert.bound_strict), _strictness(cert.other_strict)
    symbols = cert.symbols
    ring = certificate_ring(symbols)
    positive = symbol_indices(cert.nonnegative_symbols, symbols)
    _require(isinstance(cert.variable, str) and cert.variable in symbols, "the variable is not in the ring")
    _require(cert.variable not in cert.nonnegative_symbols, "the shifted variable keeps no sign of its own")
    index = list(symbols).index(cert.variable)
    data_to_poly(cert.target, ring)  # unused by a vacuous proof, but they must be well-formed for the tie
    polys(cert.generators, ring)
    shift = strict_fraction(cert.shift)
    _require(data_to_poly(cert.bound, ring) == ring.gens[index] - rational(shift), "the bound is not v - shift")
    q = shifted_negation(data_to_poly(cert.other, ring), index, shift)
    _require(shift_contradicts(q, index, bound_strict, other_strict, positive), "the signs are compatible")
    return Premises(cert.nonnegative_symbols, ((cert.bound, bound_strict), (cert.other, other_strict)))


MAX_LEMMAS = 16


def check_lemma_chain(cert: LemmaChainCertificate) -> Premises:
    """Each step is a valid certificate of a lemma kind over the same ring whose generators are the claim's
    followed by the targets of the steps before it; the last step's target is the claim's.  By induction
    every lemma target vanishes wherever the claim's conditions (and the steps' premises) hold."""
    _require(isinstance(cert.lemmas, tuple) and 1 <= len(cert.lemmas) <= MAX_LEMMAS, "bad number of lemmas")
    known = tuple(cert.generators)
    certificate_ring(cert.symbols)
    nonnegative: list[str] = []
    hypotheses: list[tuple[PolyData, bool]] = []
    for step in cert.lemmas + (cert.final,):
        _require(type(step) in _LEMMA_KINDS, "a step of a kind a chain may not use")
        _require(step.symbols == cert.symbols and step.generators == known, "a step over other equations")
        premises = _LEMMA_KINDS[type(step)](step)
        nonnegative += premises.nonnegative_symbols
        hypotheses += premises.hypotheses
        known = known + (step.target,)
    _require(cert.final.target == cert.target, "the last step proves something else")
    return Premises(tuple(dict.fromkeys(nonnegative)), tuple(dict.fromkeys(hypotheses)))


_LEMMA_KINDS: dict[type, Callable[[Any], Premises]] = {
    IdealCertificate: check_ideal,
    ConjugateCertificate: check_conjugate,
    RealSquareCertificate: check_real_square,
}

# The one table of proof kinds: a new certificate class gets its checker here.
CHECKERS: dict[type, Callable[[Any], Premises]] = {
    IdealCertificate: check_ideal,
    ConjugateCertificate: check_conjugate,
    RealSquareCertificate: check_real_square,
    SignContradictionCertificate: check_sign_contradiction,
    ShiftContradictionCertificate: check_shift_contradiction,
    LemmaChainCertificate: check_lemma_chain,
}


def check(cert: Certificate) -> Premises | None:
    """The premises of ``cert`` if it re-checks, else None; never raises on malformed data."""
    checker = CHECKERS.get(type(cert))
    if checker is None:
        return None
    try:
        return checker(cert)
    except (ValueError, TypeError, AttributeError, IndexError, ZeroDivisionError, OverflowError, MemoryError,
            RecursionError):
        return None


def is_valid(cert: Certificate) -> bool:
    """True when ``cert`` re-checks (whatever claim it belongs to: see ``tie.certificate_fits``)."""
    return check(cert) is not None
