"""Proofs in steps (untrusted search): lemmas proved first, then the claim with them as equations.

Two sources of lemmas, each proved by a certificate the kernel re-checks (``LemmaChainCertificate``):
- real squares: an equation (or a Groebner basis element) that is a sum of squares ``sum(d*q**2)`` with
  every d > 0 (found by ``squares.sum_of_squares``, any even degree) makes every q vanish over the reals
  (``x**4 + y**4 == 0`` gives x**2 == 0 and y**2 == 0); with a positive constant square among them there
  is no real point at all (``x**4 + 1 == 0``, ``exp(x) == -2``: the lemma is 1 == 0);
- denesting: a root t of a radicand R that becomes a perfect square m**2 once each variable v with a root
  ``sqrt(v)`` is written as that root squared (``sqrt(a*b)`` is ``sqrt(a)*sqrt(b)``): the lemma t == m by
  the conjugate argument.
The claim itself is then an ideal (or radical) membership, or the conjugate argument, over the claim's
equations and the lemmas.
"""
from __future__ import annotations

from dataclasses import replace
from fractions import Fraction
from typing import Sequence

from sympy.polys.rings import PolyElement

from verifier.algebra.facts import nonnegative_symbols
from verifier.algebra.groebner import GroebnerResult, groebner_basis, membership_cofactors
from verifier.algebra.kernel.checkers import MAX_LEMMAS
from verifier.algebra.kernel.polynomial import fraction_text, poly_to_data, sign_pattern_ok
from verifier.algebra.sign_search import find_sign_proof
from verifier.algebra.squares import sum_of_squares
from verifier.algebra.translate import Generator, Translation
from verifier.model.certificate import (
    ConjugateCertificate,
    IdealCertificate,
    LemmaChainCertificate,
    LemmaProof,
    RealSquareCertificate,
)

_FINAL_POWERS = (1, 2, 3, 4)
_TERM_LIMIT = 60


def _with_lemmas(tr: Translation, targets: Sequence[PolyElement], difference: PolyElement | None = None
                 ) -> Translation:
    extra = tuple(Generator(t, "equation", f"{tr.printed(t)} == 0 (lemma)") for t in targets)
    return replace(tr, generators=tr.generators + extra,
                   difference=tr.difference if difference is None else difference)


def _padded(cofactors: Sequence[PolyElement], count: int, ring: object) -> tuple[PolyElement, ...]:
    zero = ring.zero  # type: ignore[attr-defined]
    return tuple(cofactors) + tuple(zero for _ in range(count - len(cofactors)))


def _weight(value: Fraction, ring: object) -> PolyElement:
    return ring(value.numerator) / value.denominator  # type: ignore[operator, no-any-return]


def _square_lemmas(tr: Translation, basis: GroebnerResult, deadline: float | None
                   ) -> list[tuple[PolyElement, RealSquareCertificate]]:
    """Lemmas q == 0 for the squares of equations that are sums of squares; [1 == 0] when one has no real
    point.  Each certificate is over the claim's generators followed by the lemmas before it."""
    ring = tr.ring
    names = tuple(str(s) for s in ring.symbols)
    positive = nonnegative_symbols(tr)
    positive_index = {names.index(n) for n in positive}
    candidates: list[PolyElement] = []
    for p in [g.poly for g in tr.generators if g.kind == "equation"] + list(basis.basis):
        if p and not p.is_ground and p not in candidates and -p not in candidates:
            candidates.append(p)
    lemmas: list[tuple[PolyElement, RealSquareCertificate]] = []
    base = tuple(poly_to_data(g.poly) for g in tr.generators)
    for p in candidates:
        for signed in (p, -p):
            if len(signed.terms()) > _TERM_LIMIT:
                continue
            squares = sum_of_squares(signed)
            positive_rest = None
            if squares is None:
                # a positive constant plus terms >= 0 by their signs (exp(x) + 2, sqrt(x) + 1)
                constant = signed.coeff(1)
                if constant > 0 and sign_pattern_ok(signed - constant, positive_index):
                    positive_rest = signed - constant
                else:
                    continue
            if positive_rest is not None or (squares and squares[-1][1] == ring.one):
                if positive_rest is not None:
                    c, rest, weighted = Fraction(int(constant.numerator), int(constant.denominator)), \
                        positive_rest, []
                else:
                    assert squares is not None
                    c = squares[-1][0]
                    weighted = [(w / c, q) for w, q in squares[:-1]]
                    rest = ring.zero
                remainder = sum((_weight(w, ring) * q**2 for w, q in weighted), ring.zero) + rest / \
                    _weight(c, ring)
                cofactors = membership_cofactors(ring.one + remainder, basis, deadline=deadline)
                if cofactors is None:
                    continue
                known = base + tuple(poly_to_data(t) for t, _ in lemmas)
                cert = RealSquareCertificate(
                    names, poly_to_data(ring.one), known,
                    tuple(poly_to_data(x) for x in _padded(cofactors, len(known), ring)),
                    poly_to_data(remainder), positive,
                    tuple((fraction_text(w), poly_to_data(q)) for w, q in weighted))
                return [(ring.one, cert)]  # nothing else is needed: no real point
            assert squares is not None
            for k, (d, q) in enumerate(squares):
                if q.is_ground or len(lemmas) >= MAX_LEMMAS - 1 or any(q == t or -q == t for t, _ in lemmas):
                    continue
                others = [(w / d, s) for j, (w, s) in enumerate(squares) if j != k]
                remainder = sum((_weight(w, ring) * s**2 for w, s in others), ring.zero)
                cofactors = membership_cofactors(q**2 + remainder, basis, deadline=deadline)
                if cofactors is None:
                    continue
                known = base + tuple(poly_to_data(t) for t, _ in lemmas)
                lemmas.append((q, RealSquareCertificate(
                    names, poly_to_data(q), known,
                    tuple(poly_to_data(x) for x in _padded(cofactors, len(known), ring)),
                    poly_to_data(remainder), (), tuple((fraction_text(w), poly_to_data(s)) for w, s in others))))
            break
    return lemmas


def _perfect_square_root(p: PolyElement) -> PolyElement | None:
    """m with m**2 == p, or None."""
    if not p:
        return None
    constant, factors = p.factor_list()
    c = Fraction(int(constant.numerator), int(constant.denominator))
    if c < 0 or any(e % 2 for _, e in factors):
        return None
    num, den = _integer_sqrt(c.numerator), _integer_sqrt(c.denominator)
    if num is None or den is None:
        return None
    root = p.ring(num) / den
    for factor, e in factors:
        root *= factor ** (e // 2)
    return root if root**2 == p else None


def _integer_sqrt(n: int) -> int | None:
    if n < 0:
        return None
    r = int(n**0.5)
    for candidate in (r - 1, r, r + 1):
        if candidate >= 0 and candidate * candidate == n:
            return candidate
    return None


def _denesting_lemmas(tr: Translation, basis: GroebnerResult, deadline: float | None
                      ) -> list[tuple[PolyElement, ConjugateCertificate]]:
    """Lemmas t == m for a root t whose radicand is m**2 once a variable v with a root r == sqrt(c*v) is
    written r**2/c; each proved by the conjugate argument over the claim's generators."""
    ring = tr.ring
    symbols = [str(s) for s in ring.symbols]
    roots: list[tuple[int, PolyElement]] = []  # (index of t, radicand)
    substitutions: list[tuple[int, PolyElement]] = []  # (index of v, r**2/c)
    for gen in tr.generators:
        if gen.kind != "radical" or gen.variable not in symbols:
            continue
        index = symbols.index(gen.variable)
        radicand = ring.gens[index] ** 2 - gen.poly
        if radicand.degree(index) > 0:
            continue
        roots.append((index, radicand))
        terms = radicand.terms()
        if len(terms) == 1 and sum(terms[0][0]) == 1 and terms[0][1] > 0:
            v = terms[0][0].index(1)
            substitutions.append((v, ring.gens[index] ** 2 / terms[0][1]))
    if not substitutions:
        return []
    lemmas: list[tuple[PolyElement, ConjugateCertificate]] = []
    for index, radicand in roots:
        rewritten = radicand
        for v, value in substitutions:
            if rewritten.degree(v) > 0 and value.degree(index) <= 0:
                rewritten = rewritten.compose(ring.gens[v], value)
        if rewritten == radicand:
            continue
        m = _perfect_square_root(rewritten)
        if m is None or m.degree(index) > 0:
            continue
        t = ring.gens[index]
        for target in (t - m, t + m):
            cert = find_sign_proof(_with_lemmas(tr, [], target), basis, deadline=deadline)
            if cert is not None:
                lemmas.append((target, _over(cert, [t for t, _ in lemmas])))
                break
        if len(lemmas) >= MAX_LEMMAS - 1:
            break
    return lemmas


def _over(cert: ConjugateCertificate, earlier: Sequence[PolyElement]) -> ConjugateCertificate:
    """``cert`` (over the claim's generators) over those followed by the earlier lemmas: zero cofactors."""
    if not earlier:
        return cert
    zeros: tuple = tuple(() for _ in earlier)
    return replace(cert, generators=cert.generators + tuple(poly_to_data(t) for t in earlier),
                   cofactors=cert.cofactors + zeros, form_cofactors=cert.form_cofactors + zeros,
                   nonnegative_cofactors=cert.nonnegative_cofactors + zeros)


def _final(tr: Translation, targets: Sequence[PolyElement], deadline: float | None) -> LemmaProof | None:
    """The claim from its equations and the lemmas: (radical) ideal membership, else the conjugate argument."""
    extended = _with_lemmas(tr, targets)
    generators = [g.poly for g in extended.generators]
    result = groebner_basis(generators, deadline=deadline)
    names = tuple(str(s) for s in tr.ring.symbols)
    f = tr.difference
    for k in _FINAL_POWERS:
        if k > 1 and len(f.terms()) > _TERM_LIMIT:
            break
        cofactors = membership_cofactors(f**k, result, deadline=deadline)
        if cofactors is not None:
            return IdealCertificate(names, poly_to_data(f), k, tuple(poly_to_data(g) for g in generators),
                                    tuple(poly_to_data(c) for c in cofactors))
    return find_sign_proof(extended, result, deadline=deadline)


def find_lemma_chain(tr: Translation, basis: GroebnerResult, *,
                     deadline: float | None) -> LemmaChainCertificate | None:
    """A proof of ``tr.difference == 0`` in steps, or None."""
    if not tr.difference:
        return None
    steps: list[tuple[PolyElement, LemmaProof]] = []
    steps += _square_lemmas(tr, basis, deadline)
    if not steps:
        steps += _denesting_lemmas(tr, basis, deadline)
    if not steps:
        return None
    final = _final(tr, [t for t, _ in steps], deadline)
    if final is None:
        return None
    names = tuple(str(s) for s in tr.ring.symbols)
    return LemmaChainCertificate(names, poly_to_data(tr.difference), tuple(poly_to_data(g.poly) for g in tr.generators),
                                 tuple(cert for _, cert in steps), final)


def chain_reason(chain: LemmaChainCertificate) -> str:
    """The report's reason for a proof in steps (also when it is read back from the cache)."""
    if chain_is_vacuous(chain):
        return ("the conditions have no real point (one of them is a sum of squares, or of terms that cannot "
                "be negative, plus a positive constant): proved vacuously")
    return (f"proved in steps: {len(chain.lemmas)} lemma(s) first (each factor of a sum of squares among the "
            "conditions vanishes over the reals; a nested root denests), then the claim from the conditions "
            "and the lemmas")


def chain_is_vacuous(chain: LemmaChainCertificate) -> bool:
    """The chain's one lemma is 1 == 0: the conditions have no real point."""
    return len(chain.lemmas) == 1 and chain.lemmas[0].target == (("1", tuple(0 for _ in chain.symbols)),)
