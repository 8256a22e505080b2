"""Sign reasoning for principal square roots: the conjugate argument, with a checkable certificate.

Ideal membership works over the complex numbers and cannot tell ``sqrt(u)`` from ``-sqrt(u)``, so claims
such as ``sqrt(x**2) == x given x >= 0`` or ``sqrt(x)*sqrt(y) == sqrt(x*y)`` are out of its reach.  The
argument used here: write the difference as ``f = A*r + B`` with r a principal square root (r >= 0) and
A, B free of r.  If
  (1) ``f * (A*r - B)`` lies in the ideal of the conditions, then ``(A*r)**2 == B**2`` wherever they hold;
  (2) ``-A*B`` is congruent modulo the ideal to a polynomial P whose terms all have positive coefficients
      and whose odd powers are of quantities known to be >= 0 (principal roots, exponentials, variables
      with a sign hypothesis), then ``-A*B >= 0`` wherever the conditions hold.
Then ``A*r == B != 0`` is impossible (r >= 0 would give A*B > 0), so ``A*r == -B``, i.e. ``f == 0``.
The certificate records (1) and (2) as cofactor identities; ``check_sign_certificate`` re-checks both by
plain expansion and re-checks the sign pattern of P.
"""
from __future__ import annotations

from fractions import Fraction
from typing import Sequence

from sympy import QQ
from sympy.polys.rings import PolyElement

from verifier.algebra.clearing import inverse_pairs
from verifier.algebra.groebner import GroebnerResult, membership_cofactors, reduce
from verifier.algebra.kernel.certificate import (
    certificate_ring,
    check_certificate,
    data_to_poly,
    make_certificate,
    poly_to_data,
)
from verifier.algebra.translate import Translation
from verifier.model.certificate import (
    Certificate,
    RealSquare,
    ShiftContradiction,
    SignArgument,
    SignContradiction,
)
from verifier.model.numbers import fraction_text as _fraction_text


def nonnegative_symbols(tr: Translation) -> tuple[str, ...]:
    """Ring symbols known to be >= 0 wherever the obligation's assumptions hold: principal square roots,
    exponentials, variables with a hypothesis ``v > c`` or ``v >= c`` (c >= 0), and inverses of
    quantities that are themselves >= 0 (then > 0, since they are not zero)."""
    names = {a.name for a in tr.aux if a.kind in ("radical", "exp", "exp_inverse")}
    symbols = [str(x) for x in tr.ring.symbols]
    for hypothesis, _strict in tr.signs:
        # a*v - c >= 0 (or > 0) with a > 0 and c >= 0 makes v >= 0: hypotheses and square-root domains
        variable = _bounded_variable(hypothesis)
        if variable is not None:
            names.add(symbols[variable])
    inverses = [(symbols[index], u) for _, index, u in inverse_pairs(tr)]
    changed = True
    while changed:  # an inverse of an inverse of something >= 0 is >= 0 too
        changed = False
        for name, inverted in inverses:
            if name not in names and _sign_pattern_ok(inverted, {symbols.index(n) for n in names}):
                names.add(name)
                changed = True
    return tuple(sorted(names))


def _bounded_variable(p: PolyElement) -> int | None:
    """The index of v when p == a*v - c with a > 0 and c >= 0, else None."""
    linear = None
    for monom, coeff in p.terms():
        degree = sum(monom)
        if degree == 1 and coeff > 0 and linear is None:
            linear = monom.index(1)
        elif degree == 0 and coeff <= 0:
            continue
        else:
            return None
    return linear


def _split_linear(f: PolyElement, index: int, radicand: PolyElement) -> tuple[PolyElement, PolyElement]:
    """f == A*r + B modulo r**2 - radicand, with A and B free of r (r is generator ``index``)."""
    ring = f.ring
    a, b = ring.zero, ring.zero
    for monom, coeff in f.terms():
        e = monom[index]
        rest = ring({monom[:index] + (0,) + monom[index + 1:]: coeff})
        part = rest * radicand ** (e // 2)
        if e % 2:
            a += part
        else:
            b += part
    return a, b


def _sign_pattern_ok(p: PolyElement, nonnegative: set[int]) -> bool:
    for monom, coeff in p.terms():
        if coeff <= 0:
            return False
        if any(e % 2 and i not in nonnegative for i, e in enumerate(monom)):
            return False
    return True


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


def _root_candidates(tr: Translation, positive: Sequence[str]):
    """(index, A, B) for every nonnegative symbol v with f == A*v + B (radicals after v**2 -> radicand)."""
    f = tr.difference
    symbols = [str(x) for x in tr.ring.symbols]
    radicands: dict[int, PolyElement] = {}
    for gen in tr.generators:
        if gen.kind == "radical" and gen.variable in symbols:
            index = symbols.index(gen.variable)
            radicand = tr.ring.gens[index] ** 2 - gen.poly
            if radicand.degree(index) <= 0:
                radicands[index] = radicand
    for name in positive:
        index = symbols.index(name)
        if f.degree(index) <= 0:
            continue
        if index in radicands:
            yield index, *_split_linear(f, index, radicands[index])
        else:
            split = _split_plain(f, index)
            if split is not None:
                yield index, *split


def _nonnegative_form(value: PolyElement, tr: Translation, basis: GroebnerResult, positive_index: set[int],
                      deadline: float | None):
    """(P, [(S, lam)]) with value == P + sum(lam*S) modulo the ideal, P of a nonnegative sign pattern,
    S sign hypotheses (S >= 0) and lam > 0; or None."""
    _, p = reduce(value, basis.basis, deadline=deadline) if basis.basis else ((), value)
    if _sign_pattern_ok(p, positive_index):
        return p, []
    for hypothesis, _strict in tr.signs:
        _, h = reduce(hypothesis, basis.basis, deadline=deadline) if basis.basis else ((), hypothesis)
        if not h or not p:
            continue
        lam = p.LC / h.LC if p.LM == h.LM else None
        if lam is None or lam <= 0:
            continue
        rest = p - h * lam
        if _sign_pattern_ok(rest, positive_index):
            return rest, [(hypothesis, lam)]
    return None


def find_sign_proof(tr: Translation, basis: GroebnerResult, *, deadline: float | None) -> Certificate | None:
    """A certificate of the conjugate argument for ``tr.difference``, or None."""
    f = tr.difference
    ring = tr.ring
    symbols = [str(s) for s in ring.symbols]
    positive = nonnegative_symbols(tr)
    positive_index = {symbols.index(n) for n in positive}
    generators = tuple(g.poly for g in tr.generators)
    for index, a, b in _root_candidates(tr, positive):
        if not a or not b:
            continue
        r = ring.gens[index]
        multiplier = a * r - b
        cofactors = membership_cofactors(f * multiplier, basis, deadline=deadline)
        if cofactors is None:
            continue
        form = _nonnegative_form(-a * b, tr, basis, positive_index, deadline)
        if form is None:
            continue
        p, hypotheses = form
        combination = -a * b - p - sum((h * lam for h, lam in hypotheses), ring.zero)
        p_cofactors = membership_cofactors(combination, basis, deadline=deadline) if combination else \
            tuple(ring.zero for _ in generators)
        if p_cofactors is None:
            continue
        base = make_certificate(tuple(symbols), f, 1, generators, tuple(cofactors))
        argument = SignArgument(
            root=symbols[index],
            multiplier=poly_to_data(multiplier),
            nonnegative=poly_to_data(p),
            nonnegative_cofactors=tuple(poly_to_data(c) for c in p_cofactors),
            nonnegative_symbols=positive,
            hypotheses=tuple((poly_to_data(h), _fraction_text(_fraction(lam))) for h, lam in hypotheses),
        )
        return Certificate(base.symbols, base.target, 1, base.generators, base.cofactors, argument)
    return None


def check_sign_certificate(cert: Certificate) -> bool:
    """Re-check a conjugate-argument certificate by plain expansion; never raises on malformed data."""
    arg = cert.sign
    if arg is None or cert.power != 1:
        return False
    try:
        if arg.root not in cert.symbols or arg.root not in arg.nonnegative_symbols:
            return False
        if any(s not in cert.symbols for s in arg.nonnegative_symbols):
            return False
        ring = certificate_ring(cert.symbols)
        target = data_to_poly(cert.target, ring)
        multiplier = data_to_poly(arg.multiplier, ring)
        generators = [data_to_poly(g, ring) for g in cert.generators]
        cofactors = [data_to_poly(c, ring) for c in cert.cofactors]
        p = data_to_poly(arg.nonnegative, ring)
        p_cofactors = [data_to_poly(c, ring) for c in arg.nonnegative_cofactors]
        if len(generators) != len(cofactors) or len(generators) != len(p_cofactors):
            return False
        index = list(cert.symbols).index(arg.root)
        r = ring.gens[index]
        # (1) target * multiplier is in the ideal
        if target * multiplier != sum((c * g for c, g in zip(cofactors, generators)), ring.zero):
            return False
        # target = A*r + B and multiplier = A*r - B with A, B free of r
        twice_b = target - multiplier
        twice_ar = target + multiplier
        if twice_b.degree(index) > 0:
            return False
        quotient, remainder = twice_ar.div([r])
        if remainder or quotient[0].degree(index) > 0:
            return False
        a, b = quotient[0] * QQ(1, 2), twice_b * QQ(1, 2)
        # (2) -A*B - P - sum(lam*S) is in the ideal, lam >= 0, and P has the right sign pattern
        combination = -a * b - p
        for hypothesis, lam_text in arg.hypotheses:
            lam = _strict_fraction(lam_text)
            if lam < 0:
                return False
            combination -= data_to_poly(hypothesis, ring) * QQ(lam.numerator, lam.denominator)
        if combination != sum((c * g for c, g in zip(p_cofactors, generators)), ring.zero):
            return False
        positive_index = {list(cert.symbols).index(s) for s in arg.nonnegative_symbols}
        return _sign_pattern_ok(p, positive_index)
    except (ValueError, TypeError, ZeroDivisionError, IndexError):
        return False


def _fraction(value) -> Fraction:
    return Fraction(int(value.numerator), int(value.denominator))


def find_sign_contradiction(tr: Translation, basis: GroebnerResult | None, *,
                            deadline: float | None) -> Certificate | None:
    """A certificate that the sign hypotheses cannot hold together (for example a branch ``a <= b``
    under ``given a > b``), or None.  Each hypothesis is P > 0 or P >= 0; modulo the ideal, either one P
    is a constant of the wrong sign, or P1 == ratio*P2 with ratio < 0 and one of them strict."""
    if not tr.signs:
        return None
    generators = tuple(g.poly for g in tr.generators)
    ring = tr.ring

    def normal(p: PolyElement) -> PolyElement:
        if basis is None or not basis.basis:
            return p
        return reduce(p, basis.basis, deadline=deadline)[1]

    def cofactors_of(p: PolyElement) -> tuple | None:
        if not p:
            return tuple(ring.zero for _ in generators)
        if basis is None:
            return None
        return membership_cofactors(p, basis, deadline=deadline)

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
            if not _contradicts(strict1, strict2, ratio, constant):
                continue
            combination = p1 - p2 * ring.domain.convert(ratio.numerator) / ratio.denominator - constant
            cofactors = cofactors_of(combination)
            if cofactors is None:
                continue
            contradiction = SignContradiction(
                first=poly_to_data(p1), first_strict=strict1,
                second=poly_to_data(p2) if p2 else (), second_strict=strict2 if p2 else False,
                ratio=_fraction_text(ratio), constant=_fraction_text(constant),
            )
            base = make_certificate(tuple(str(s) for s in ring.symbols), tr.difference, 1, generators,
                                    tuple(cofactors))
            return Certificate(base.symbols, base.target, 1, base.generators, base.cofactors,
                               contradiction=contradiction)
    return None


def _contradicts(strict1: bool, strict2: bool, ratio: Fraction, constant: Fraction) -> bool:
    """first >= 0, second >= 0, first == ratio*second + constant, ratio <= 0: impossible?"""
    if ratio > 0:
        return False
    if constant < 0:
        return True
    return constant == 0 and (strict1 or (ratio < 0 and strict2))


def check_contradiction_certificate(cert: Certificate) -> bool:
    arg = cert.contradiction
    if arg is None or cert.sign is not None:
        return False
    try:
        ratio, constant = Fraction(_strict_fraction(arg.ratio)), Fraction(_strict_fraction(arg.constant))
        if not arg.second and (ratio != 0 or arg.second_strict):
            return False
        if not _contradicts(arg.first_strict, arg.second_strict, ratio, constant):
            return False
        ring = certificate_ring(cert.symbols)
        first = data_to_poly(arg.first, ring)
        second = data_to_poly(arg.second, ring) if arg.second else ring.zero
        generators = [data_to_poly(g, ring) for g in cert.generators]
        cofactors = [data_to_poly(c, ring) for c in cert.cofactors]
        if len(generators) != len(cofactors):
            return False
        combination = first - second * QQ(ratio.numerator, ratio.denominator) - QQ(constant.numerator,
                                                                                  constant.denominator)
        return combination == sum((c * g for c, g in zip(cofactors, generators)), ring.zero)
    except (ValueError, TypeError, ZeroDivisionError, IndexError):
        return False


def _strict_fraction(text: str) -> Fraction:
    import re

    if not isinstance(text, str) or not re.fullmatch(r"-?\d{1,200}(/[1-9]\d{0,199})?", text):
        raise ValueError(f"not a fraction: {text!r}")
    return Fraction(text)


def find_real_square(tr: Translation, basis: GroebnerResult, *, deadline: float | None) -> Certificate | None:
    """f**2 + P in the ideal with P >= 0 by its sign pattern: then f**2 == -P <= 0, so f == 0 over the
    reals (x == 0 given x**2 + y**2 == 0)."""
    if not basis.basis:
        return None
    f = tr.difference
    ring = tr.ring
    symbols = [str(x) for x in ring.symbols]
    positive = nonnegative_symbols(tr)
    _, remainder = reduce(f**2, basis.basis, deadline=deadline)
    p = -remainder
    if not _sign_pattern_ok(p, {symbols.index(n) for n in positive}):
        return None
    cofactors = membership_cofactors(f**2 + p, basis, deadline=deadline)
    if cofactors is None:
        return None
    generators = tuple(g.poly for g in tr.generators)
    base = make_certificate(tuple(symbols), f, 2, generators, tuple(cofactors))
    return Certificate(base.symbols, base.target, 2, base.generators, base.cofactors,
                       real_square=RealSquare(poly_to_data(p), positive))


def check_real_square_certificate(cert: Certificate) -> bool:
    arg = cert.real_square
    if arg is None or cert.power != 2 or cert.sign is not None or cert.contradiction is not None:
        return False
    try:
        if any(s not in cert.symbols for s in arg.nonnegative_symbols):
            return False
        ring = certificate_ring(cert.symbols)
        target = data_to_poly(cert.target, ring)
        p = data_to_poly(arg.remainder, ring)
        generators = [data_to_poly(g, ring) for g in cert.generators]
        cofactors = [data_to_poly(c, ring) for c in cert.cofactors]
        if len(generators) != len(cofactors):
            return False
        if target**2 + p != sum((c * g for c, g in zip(cofactors, generators)), ring.zero):
            return False
        return _sign_pattern_ok(p, {list(cert.symbols).index(s) for s in arg.nonnegative_symbols})
    except (ValueError, TypeError, ZeroDivisionError, IndexError):
        return False


def _shifted_negation(other: PolyElement, index: int, shift: Fraction) -> PolyElement:
    """-other with the generator ``index`` replaced by itself + shift (it then stands for t = v - shift)."""
    ring = other.ring
    v = ring.gens[index]
    return -other.compose(v, v + ring.domain.convert(shift.numerator) / shift.denominator)


def _shift_contradicts(q: PolyElement, index: int, bound_strict: bool, other_strict: bool,
                       positive_index: set[int]) -> bool:
    if not _sign_pattern_ok(q, positive_index | {index}):
        return False
    if other_strict:
        return True
    for monom, coeff in q.terms():
        if coeff > 0 and sum(monom) == 0:
            return True
        if coeff > 0 and bound_strict and monom[index] > 0 and sum(monom) == monom[index]:
            return True
    return False


def find_shift_contradiction(tr: Translation) -> Certificate | None:
    """Sign hypotheses that contradict once a variable is shifted by its lower bound (see
    ``ShiftContradiction``); the variable must not occur in any other nonnegative symbol's role."""
    ring = tr.ring
    symbols = [str(x) for x in ring.symbols]
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
            q = _shifted_negation(other, index, shift)
            if _shift_contradicts(q, index, bound_strict, other_strict, positive_index):
                contradiction = ShiftContradiction(
                    bound=poly_to_data(bound), bound_strict=bound_strict, variable=symbols[index],
                    shift=_fraction_text(shift), other=poly_to_data(other), other_strict=other_strict,
                    nonnegative_symbols=tuple(n for n in positive if n != symbols[index]),
                )
                generators = tuple(g.poly for g in tr.generators)
                base = make_certificate(tuple(symbols), tr.difference, 1, generators,
                                        tuple(ring.zero for _ in generators))
                return Certificate(base.symbols, base.target, 1, base.generators, base.cofactors,
                                   shift_contradiction=contradiction)
    return None


def check_shift_contradiction_certificate(cert: Certificate) -> bool:
    arg = cert.shift_contradiction
    if arg is None or cert.sign is not None or cert.contradiction is not None or cert.real_square is not None:
        return False
    try:
        if arg.variable not in cert.symbols or arg.variable in arg.nonnegative_symbols:
            return False
        if any(s not in cert.symbols for s in arg.nonnegative_symbols):
            return False
        ring = certificate_ring(cert.symbols)
        index = list(cert.symbols).index(arg.variable)
        shift = _strict_fraction(arg.shift)
        bound = data_to_poly(arg.bound, ring)
        expected_bound = ring.gens[index] - QQ(shift.numerator, shift.denominator)
        if bound != expected_bound:
            return False
        other = data_to_poly(arg.other, ring)
        q = _shifted_negation(other, index, shift)
        positive_index = {list(cert.symbols).index(s) for s in arg.nonnegative_symbols}
        return _shift_contradicts(q, index, arg.bound_strict, arg.other_strict, positive_index)
    except (ValueError, TypeError, ZeroDivisionError, IndexError):
        return False


def certificate_is_valid(cert: Certificate) -> bool:
    """The right re-check for each kind of certificate."""
    if cert.shift_contradiction is not None:
        return check_shift_contradiction_certificate(cert)
    if cert.real_square is not None:
        return check_real_square_certificate(cert)
    if cert.contradiction is not None:
        return check_contradiction_certificate(cert)
    if cert.sign is not None:
        return check_sign_certificate(cert)
    return check_certificate(cert)


__all__: Sequence[str] = ("find_sign_proof", "check_sign_certificate", "certificate_is_valid",
                          "nonnegative_symbols")
