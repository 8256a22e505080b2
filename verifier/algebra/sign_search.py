"""The search for real (sign) proofs, untrusted: each finder returns a certificate the kernel re-checks.

Ideal membership works over the complex numbers and cannot tell ``sqrt(u)`` from ``-sqrt(u)``, so claims
such as ``sqrt(x**2) == x given x >= 0`` or ``sqrt(x)*sqrt(y) == sqrt(x*y)`` are out of its reach.  The
conjugate argument: write the difference as ``f = A*r + B`` with r a principal square root (r >= 0) and
A, B free of r (modulo r**2 - radicand when f has higher powers of r; the certificate then states this
linear form and the cofactors of f minus it).  If
  (1) ``f * (A*r - B)`` lies in the ideal of the conditions, then ``(A*r)**2 == B**2`` wherever they hold;
  (2) ``-A*B`` is congruent modulo the ideal to a polynomial P whose terms all have positive coefficients
      and whose odd powers are of quantities known to be >= 0 (principal roots, exponentials, variables
      with a sign hypothesis), then ``-A*B >= 0`` wherever the conditions hold.
Then ``A*r == B != 0`` is impossible (r >= 0 would give A*B > 0), so ``A*r == -B``, i.e. ``f == 0``.
Besides it: contradictory sign hypotheses (directly, or after shifting a variable by its lower bound)
and a real sum of squares.  The certificate classes are in ``model/certificate.py``, their checkers in
``kernel/checkers.py``; nothing here decides that a claim is proved.
"""
from __future__ import annotations

from fractions import Fraction
from typing import Iterator, Sequence

from sympy.polys.rings import PolyElement

from verifier.algebra.facts import nonnegative_symbols
from verifier.algebra.groebner import GroebnerResult, membership_cofactors, reduce
from verifier.algebra.kernel.checkers import (
    contradicts,
    positive_factor_ok,
    shift_contradicts,
    shifted_negation,
)
from verifier.algebra.kernel.polynomial import fraction_text, poly_to_data, sign_pattern_ok
from verifier.algebra.squares import quadratic_squares
from verifier.algebra.translate import Translation
from verifier.model.certificate import (
    PolyData,
    ConjugateCertificate,
    RealSquareCertificate,
    ShiftContradictionCertificate,
    SignContradictionCertificate,
)


def _split_linear(f: PolyElement, index: int,
                  radicand: PolyElement) -> tuple[PolyElement, PolyElement, PolyElement]:
    """(A, B, Q) with f == A*r + B + Q*(r**2 - radicand) and A, B free of r (r is generator ``index``).

    Each term rest*r**e becomes rest*r**(e % 2)*radicand**k (k = e // 2); what it leaves is
    rest*r**(e % 2)*(r**(2k) - radicand**k) = rest*r**(e % 2)*(r**2 - radicand)*sum(r**(2j)*radicand**(k-1-j)).
    """
    ring = f.ring
    r = ring.gens[index]
    a, b, q = ring.zero, ring.zero, ring.zero
    for monom, coeff in f.terms():
        e = monom[index]
        rest = ring({monom[:index] + (0,) + monom[index + 1:]: coeff})
        k = e // 2
        odd = r if e % 2 else ring.one
        part = rest * radicand**k
        if e % 2:
            a += part
        else:
            b += part
        if k:
            q += rest * odd * sum((r ** (2 * j) * radicand ** (k - 1 - j) for j in range(k)), ring.zero)
    return a, b, q


def _split_plain(f: PolyElement, index: int) -> tuple[PolyElement, PolyElement] | None:
    """f == A*v + B with A, B free of v, when f has degree 1 in v."""
    if f.degree(index) != 1:
        return None
    ring = f.ring
    a, b = ring.zero, ring.zero
    for monom, coeff in f.terms():
        rest = ring({monom[:index] + (0,) + monom[index + 1:]: coeff})
        if monom[index]:
            a += rest
        else:
            b += rest
    return a, b


def _root_candidates(tr: Translation, positive: Sequence[str]
                     ) -> Iterator[tuple[int, PolyElement, PolyElement, tuple[PolyElement, ...]]]:
    """(index, A, B, C) for every nonnegative symbol v with f == A*v + B + sum(C_i*g_i): for a radical v
    the powers v**k (k >= 2) are reduced by its generator v**2 - radicand, and C (the cofactors of
    f - (A*v + B)) is that quotient at the generator's place; for another symbol f is linear in v, C zero."""
    f = tr.difference
    symbols = [str(x) for x in tr.ring.symbols]
    zero = tuple(tr.ring.zero for _ in tr.generators)
    radicands: dict[int, tuple[int, PolyElement]] = {}
    for position, gen in enumerate(tr.generators):
        if gen.kind == "radical" and gen.variable in symbols:
            index = symbols.index(gen.variable)
            radicand = tr.ring.gens[index] ** 2 - gen.poly
            if radicand.degree(index) <= 0:
                radicands[index] = (position, radicand)
    for name in positive:
        index = symbols.index(name)
        if f.degree(index) <= 0:
            continue
        if index in radicands:
            position, radicand = radicands[index]
            a, b, quotient = _split_linear(f, index, radicand)
            yield index, a, b, zero[:position] + (quotient,) + zero[position + 1:]
        else:
            split = _split_plain(f, index)
            if split is not None:
                yield index, split[0], split[1], zero


def _nonnegative_form(value: PolyElement, tr: Translation, basis: GroebnerResult, positive_index: set[int],
                      deadline: float | None
                      ) -> tuple[PolyElement, list[tuple[PolyElement, object]], PolyElement, bool] | None:
    """(P, [(S, lam)], M, vanishing) with value*M == P + sum(lam*S) modulo the ideal, P of a nonnegative
    sign pattern, S sign hypotheses (S >= 0), lam > 0 and M > 0 (``positive_factor_ok``; usually 1), or, when
    ``vanishing``, M >= 0 with value + M >= 0 by their sign patterns; or None."""
    ring = value.ring
    found = _pattern_form(value, tr, basis, positive_index, deadline)
    if found is not None:
        return found[0], found[1], ring.one, False
    _, p = reduce(value, basis.basis, deadline=deadline) if basis.basis else ((), value)
    # p == a*s + b for a nonnegative root s: the conjugate M = +-(a*s - b) makes p*M == a**2*s**2 - b**2,
    # free of s once s**2 is reduced (sqrt(2) - 1 >= 0: (sqrt(2) - 1)*(sqrt(2) + 1) == 1)
    for index in sorted(positive_index):
        split = _split_plain(p, index) if p.degree(index) == 1 else None
        if split is None:
            continue
        a, b = split
        for factor in (a * ring.gens[index] - b, b - a * ring.gens[index]):
            if positive_factor_ok(factor, [g.poly for g in tr.generators], positive_index):
                vanishing = False
            elif sign_pattern_ok(factor, positive_index) and sign_pattern_ok(value + factor, positive_index):
                vanishing = True
            else:
                continue
            found = _pattern_form(p * factor, tr, basis, positive_index, deadline)
            if found is not None:
                return found[0], found[1], factor, vanishing
    return None


def _pattern_form(value: PolyElement, tr: Translation, basis: GroebnerResult, positive_index: set[int],
                  deadline: float | None) -> tuple[PolyElement, list[tuple[PolyElement, object]]] | None:
    """(P, [(S, lam)]) with value == P + sum(lam*S) modulo the ideal, P of a nonnegative sign pattern."""
    _, p = reduce(value, basis.basis, deadline=deadline) if basis.basis else ((), value)
    if sign_pattern_ok(p, positive_index):
        return p, []
    for hypothesis, _strict in tr.signs:
        _, h = reduce(hypothesis, basis.basis, deadline=deadline) if basis.basis else ((), hypothesis)
        if not h or not p:
            continue
        # the weight that cancels one term of p, its leading one first (x - (x - y**2) == y**2)
        ratios: list[object] = []
        for monom, coeff in [(p.LM, p.LC)] + list(p.terms()):
            other = h.get(monom)
            if other and coeff / other > 0 and coeff / other not in ratios:
                ratios.append(coeff / other)
        for lam in ratios:
            rest = p - h * lam
            if sign_pattern_ok(rest, positive_index):
                return rest, [(hypothesis, lam)]
    return None


def _fraction(value: object) -> Fraction:
    return Fraction(int(value.numerator), int(value.denominator))  # type: ignore[attr-defined]


def _claim_part(tr: Translation) -> tuple[tuple[str, ...], PolyData, tuple[PolyData, ...]]:
    """(symbols, target, generators) of the certificate of ``tr``: what ties it to the claim."""
    return (tuple(str(s) for s in tr.ring.symbols), poly_to_data(tr.difference),
            tuple(poly_to_data(g.poly) for g in tr.generators))


def find_sign_proof(tr: Translation, basis: GroebnerResult, *,
                    deadline: float | None) -> ConjugateCertificate | None:
    """A certificate of the conjugate argument for ``tr.difference``, or None."""
    f = tr.difference
    ring = tr.ring
    symbols = [str(s) for s in ring.symbols]
    positive = nonnegative_symbols(tr)
    positive_index = {symbols.index(n) for n in positive}
    for index, a, b, form_cofactors in _root_candidates(tr, positive):
        if not a or not b:
            continue
        r = ring.gens[index]
        # the certificate states the form linear in r besides f: its checker reads A and B off
        # form +- multiplier, which for f itself fails when f has r**2, r**3 ... (fuzzing defect D2)
        form = a * r + b
        multiplier = a * r - b
        cofactors = membership_cofactors(f * multiplier, basis, deadline=deadline)
        if cofactors is None:
            continue
        nonnegative = _nonnegative_form(-a * b, tr, basis, positive_index, deadline)
        if nonnegative is None:
            continue
        p, hypotheses, factor, vanishing = nonnegative
        combination = -a * b * factor - p - sum((h * lam for h, lam in hypotheses), ring.zero)
        p_cofactors = membership_cofactors(combination, basis, deadline=deadline) if combination else \
            tuple(ring.zero for _ in tr.generators)
        if p_cofactors is None:
            continue
        names, target, generators = _claim_part(tr)
        return ConjugateCertificate(
            names, target, generators, tuple(poly_to_data(c) for c in cofactors),
            root=symbols[index],
            multiplier=poly_to_data(multiplier),
            nonnegative=poly_to_data(p),
            nonnegative_cofactors=tuple(poly_to_data(c) for c in p_cofactors),
            nonnegative_symbols=positive,
            form=poly_to_data(form),
            form_cofactors=tuple(poly_to_data(c) for c in form_cofactors),
            hypotheses=tuple((poly_to_data(h), fraction_text(_fraction(lam))) for h, lam in hypotheses),
            positive_factor=() if factor == ring.one else poly_to_data(factor),
            factor_may_vanish=vanishing,
        )
    return None


def find_sign_contradiction(tr: Translation, basis: GroebnerResult | None, *,
                            deadline: float | None) -> SignContradictionCertificate | None:
    """A certificate that the sign hypotheses cannot hold together (for example a branch ``a <= b``
    under ``given a > b``), or None.  Each hypothesis is P > 0 or P >= 0; modulo the ideal, either one P
    is a constant of the wrong sign, or P1 == ratio*P2 with ratio < 0 and one of them strict."""
    if not tr.signs:
        return None
    ring = tr.ring

    def normal(p: PolyElement) -> PolyElement:
        if basis is None or not basis.basis:
            return p
        return reduce(p, basis.basis, deadline=deadline)[1]

    def cofactors_of(p: PolyElement) -> tuple | None:
        if not p:
            return tuple(ring.zero for _ in tr.generators)
        if basis is None:
            return None
        found = membership_cofactors(p, basis, deadline=deadline)
        return None if found is None else tuple(found)

    normals = [normal(p) for p, _ in tr.signs]
    for i, (p1, strict1) in enumerate(tr.signs):
        n1 = normals[i]
        options: list[tuple[PolyElement, bool, Fraction, Fraction]] = []
        if n1.is_ground:
            constant = _fraction(n1.LC) if n1 else Fraction(0)
            options.append((ring.zero, False, Fraction(0), constant))
        for j, (p2, strict2) in enumerate(tr.signs):
            n2 = normals[j]
            if j == i or not n1 or not n2 or n1.is_ground:
                continue
            ratio = _fraction(n1.LC) / _fraction(n2.LC)
            rest = n1 - n2 * ring.domain.convert(ratio.numerator) / ratio.denominator
            if ratio < 0 and rest.is_ground:
                # x - 2 > 0 and 1 - x > 0: x - 2 == -(1 - x) - 1
                options.append((p2, strict2, ratio, _fraction(rest.LC) if rest else Fraction(0)))
        for p2, strict2, ratio, constant in options:
            if not contradicts(strict1, strict2, ratio, constant):
                continue
            combination = p1 - p2 * ring.domain.convert(ratio.numerator) / ratio.denominator - constant
            cofactors = cofactors_of(combination)
            if cofactors is None:
                continue
            names, target, generators = _claim_part(tr)
            return SignContradictionCertificate(
                names, target, generators, tuple(poly_to_data(c) for c in cofactors),
                first=poly_to_data(p1), first_strict=strict1,
                second=poly_to_data(p2) if p2 else (), second_strict=strict2 if p2 else False,
                ratio=fraction_text(ratio), constant=fraction_text(constant),
            )
    return None


# multiples c of a quadratic equation g tried in P = c*g - f**2: if some c works, every larger one does
# (g itself is then a sum of squares), so powers of two up to 2**20 cover the scales that occur
_SCALES = tuple(sign * 2**k for k in range(21) for sign in (1, -1))


def _degree(p: PolyElement) -> int:
    return max((sum(monom) for monom in p.monoms()), default=0)


def _positive_factor_squares(tr: Translation, f: PolyElement) -> list[tuple[Fraction, PolyElement]] | None:
    """An equation g == f*q with q == sum(d*l**2) + c, c > 0 (x**3 == 8 is (x - 2)*((x + 1)**2 + 3)): then
    f**2 + sum((d/c)*(f*l)**2) == f*g/c lies in the ideal, so f == 0 over the reals."""
    for g in tr.generators:
        if g.kind != "equation" or not f or _degree(g.poly) > _degree(f) + 2:
            continue
        quotients, rest = g.poly.div([f])
        if rest or not quotients[0]:
            continue
        for q in (quotients[0], -quotients[0]):
            found = quadratic_squares(q, constant_last=True)
            if found is None or not found or found[-1][1] != f.ring.one or found[-1][0] <= 0:
                continue
            constant = found[-1][0]
            return [(weight / constant, f * linear) for weight, linear in found[:-1]]
    return None


def _positive_basis_squares(basis: GroebnerResult, f: PolyElement) -> list[tuple[Fraction, PolyElement]] | None:
    """A basis element b == sum(d*l**2) + c with c > 0 has no real zero (sin(x) == 2 leaves cos(x)**2 + 3):
    then f**2 + sum((d/c)*(f*l)**2) == f**2*b/c lies in the ideal, so the claim holds vacuously."""
    for b in basis.basis:
        for q in (b, -b):
            found = quadratic_squares(q, constant_last=True)
            if found and found[-1][1] == f.ring.one and found[-1][0] > 0:
                constant = found[-1][0]
                return [(weight / constant, f * linear) for weight, linear in found[:-1]]
    return None


def find_real_square(tr: Translation, basis: GroebnerResult, *,
                     deadline: float | None) -> RealSquareCertificate | None:
    """f**2 + P in the ideal with P >= 0 by its sign pattern: then f**2 == -P <= 0, so f == 0 over the
    reals (x == 0 given x**2 + y**2 == 0)."""
    if not basis.basis:
        return None
    f = tr.difference
    symbols = [str(x) for x in tr.ring.symbols]
    positive = nonnegative_symbols(tr)
    _, remainder = reduce(f**2, basis.basis, deadline=deadline)
    p = -remainder
    squares: list[tuple[Fraction, PolyElement]] = []
    if not sign_pattern_ok(p, {symbols.index(n) for n in positive}):
        found = None
        # P = -(normal form of f**2), else P = c*g - f**2 for a quadratic equation g: an exact sum of
        # squares ((y + 2*z)**2 and the like), found by rational LDL^T
        for candidate in [p] + [c * g.poly - f**2 for g in tr.generators if g.kind == "equation"
                                for c in _SCALES if _degree(g.poly) <= 2 >= _degree(f) * 2]:
            found = quadratic_squares(candidate)
            if found is not None:
                p = candidate
                break
        if found is None:
            found = _positive_factor_squares(tr, f) or _positive_basis_squares(basis, f)
            if found is None:
                return None
            p = sum((f.ring(w.numerator) / w.denominator * q**2 for w, q in found), f.ring.zero)
        squares = found
    cofactors = membership_cofactors(f**2 + p, basis, deadline=deadline)
    if cofactors is None:
        return None
    names, target, generators = _claim_part(tr)
    return RealSquareCertificate(names, target, generators,
                                 tuple(poly_to_data(c) for c in cofactors), poly_to_data(p), positive,
                                 tuple((fraction_text(w), poly_to_data(q)) for w, q in squares))


def find_shift_contradiction(tr: Translation) -> ShiftContradictionCertificate | None:
    """Sign hypotheses that contradict once a variable is shifted by its lower bound (see
    ``ShiftContradictionCertificate``); the variable must not occur in any other nonnegative symbol's role."""
    symbols = [str(x) for x in tr.ring.symbols]
    positive = nonnegative_symbols(tr)
    for bound, bound_strict in tr.signs:
        terms = bound.terms()
        linear = [(m, c) for m, c in terms if sum(m) == 1]
        if len(linear) != 1 or linear[0][1] != 1 or any(sum(m) > 1 for m, _ in terms):
            continue
        index = linear[0][0].index(1)
        shift = -_fraction(bound.coeff(1)) if len(terms) == 2 else Fraction(0)
        if symbols[index] in positive and shift < 0:
            continue  # the shift would lose the known sign of the variable itself
        positive_index = {symbols.index(n) for n in positive if n != symbols[index]}
        for other, other_strict in tr.signs:
            if other == bound or other.degree(index) <= 0:
                continue
            q = shifted_negation(other, index, shift)
            if shift_contradicts(q, index, bound_strict, other_strict, positive_index):
                names, target, generators = _claim_part(tr)
                return ShiftContradictionCertificate(
                    names, target, generators,
                    bound=poly_to_data(bound), bound_strict=bound_strict, variable=symbols[index],
                    shift=fraction_text(shift), other=poly_to_data(other), other_strict=other_strict,
                    nonnegative_symbols=tuple(n for n in positive if n != symbols[index]),
                )
    return None
