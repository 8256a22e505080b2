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

from sympy.polys.rings import PolyElement

from verifier.algebra.certificate import check_certificate, data_to_poly, make_certificate, poly_to_data
from verifier.algebra.groebner import GroebnerResult, membership_cofactors, reduce
from verifier.algebra.translate import Translation
from verifier.algebra.verdict import Certificate, SignArgument
from verifier.claims.model import Num, Var


def nonnegative_symbols(tr: Translation) -> tuple[str, ...]:
    """Ring symbols known to be >= 0 wherever the obligation's assumptions hold."""
    names = [a.name for a in tr.aux if a.kind in ("radical", "exp", "exp_inverse")]
    for cond in tr.sign_conditions:
        var, bound, relation = _variable_bound(cond)
        if var is not None and bound is not None and bound >= 0 and relation in (">", ">="):
            names.append(var)
    return tuple(sorted(set(names)))


def _variable_bound(cond) -> tuple[str | None, Fraction | None, str]:
    """``v >= c`` / ``v > c`` (or the mirrored forms) -> (v, c, ">=" / ">")."""
    mirror = {"<": ">", "<=": ">=", ">": "<", ">=": "<="}
    left, right, relation = cond.left, cond.right, cond.relation
    if isinstance(right, Var) and isinstance(left, Num):
        left, right, relation = right, left, mirror[relation]
    if isinstance(left, Var) and isinstance(right, Num):
        return left.name, right.value, relation
    return None, None, relation


def _split_linear(f: PolyElement, index: int, radicand: PolyElement) -> tuple[PolyElement, PolyElement]:
    """f == A*r + B modulo r**2 - radicand, with A and B free of r (r is generator ``index``)."""
    ring = f.ring
    r = ring.gens[index]
    a, b = ring.zero, ring.zero
    for monom, coeff in f.terms():
        e = monom[index]
        rest = ring({monom[:index] + (0,) + monom[index + 1:]: coeff})
        part = rest * radicand ** (e // 2)
        if e % 2:
            a += part
        else:
            b += part
    del r
    return a, b


def _sign_pattern_ok(p: PolyElement, nonnegative: set[int]) -> bool:
    for monom, coeff in p.terms():
        if coeff <= 0:
            return False
        if any(e % 2 and i not in nonnegative for i, e in enumerate(monom)):
            return False
    return True


def find_sign_proof(tr: Translation, basis: GroebnerResult, *, deadline: float | None) -> Certificate | None:
    """A certificate of the conjugate argument for ``tr.difference``, or None."""
    f = tr.difference
    ring = tr.ring
    symbols = [str(s) for s in ring.symbols]
    positive = nonnegative_symbols(tr)
    positive_index = {symbols.index(n) for n in positive}
    generators = tuple(g.poly for g in tr.generators)
    for gen in tr.generators:
        if gen.kind != "radical":
            continue
        # the generator is r**2 - u; find r as the variable whose square leads it
        candidates = [i for i, n in enumerate(symbols) if n.startswith("$r") and gen.poly.degree(i) == 2]
        for index in candidates:
            r = ring.gens[index]
            radicand = r**2 - gen.poly
            if radicand.degree(index) > 0:
                continue
            if f.degree(index) <= 0:
                continue
            a, b = _split_linear(f, index, radicand)
            if not a or not b:
                continue
            multiplier = a * r - b
            cofactors = membership_cofactors(f * multiplier, basis, deadline=deadline)
            if cofactors is None:
                continue
            _, p = reduce(-a * b, basis.basis, deadline=deadline)
            if not _sign_pattern_ok(p, positive_index):
                continue
            p_cofactors = membership_cofactors(-a * b - p, basis, deadline=deadline)
            if p_cofactors is None:
                continue
            base = make_certificate(tuple(symbols), f, 1, generators, tuple(cofactors))
            argument = SignArgument(
                root=symbols[index],
                multiplier=poly_to_data(multiplier),
                nonnegative=poly_to_data(p),
                nonnegative_cofactors=tuple(poly_to_data(c) for c in p_cofactors),
                nonnegative_symbols=positive,
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
        from sympy import QQ, Symbol
        from sympy.polys.orderings import grevlex
        from sympy.polys.rings import PolyRing

        ring = PolyRing([Symbol(s) for s in cert.symbols], QQ, grevlex)
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
        # (2) -A*B - P is in the ideal and P has the right sign pattern
        if -a * b - p != sum((c * g for c, g in zip(p_cofactors, generators)), ring.zero):
            return False
        positive_index = {list(cert.symbols).index(s) for s in arg.nonnegative_symbols}
        return _sign_pattern_ok(p, positive_index)
    except (ValueError, TypeError, ZeroDivisionError, IndexError):
        return False


def certificate_is_valid(cert: Certificate) -> bool:
    """The right re-check for either kind of certificate."""
    if cert.sign is not None:
        return check_sign_certificate(cert)
    return check_certificate(cert)


__all__: Sequence[str] = ("find_sign_proof", "check_sign_certificate", "certificate_is_valid",
                          "nonnegative_symbols")
