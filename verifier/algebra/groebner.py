"""Reduced Groebner bases over QQ, multivariate division and ideal membership with cofactors.

Works on ``sympy.polys.rings`` polynomials over QQ in grevlex, grlex or lex order.  The engine
(``groebner_flint``) is Buchberger's algorithm with the Gebauer-Moeller criteria and sugar selection, its
arithmetic in python-flint.  Lex bases of zero-dimensional ideals go through grevlex and a change of order
(``groebner_fglm``), which is much faster than Buchberger in lex.  Cofactors are never tracked during the
computation: they are lifted afterwards, only for what is asked (``groebner_lift``), e.g. for the one
difference a proof needs rather than for every basis element.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Protocol, Sequence

import flint
from sympy.polys.rings import PolyElement, PolyRing

from verifier.algebra.groebner_division import (
    Context,
    GroebnerTimeout,
    Monom,
    Reducer,
    divide,
    order_alias,
)
from verifier.algebra.groebner_fglm import grevlex_to_lex
from verifier.algebra.groebner_flint import buchberger, to_flint
from verifier.algebra.groebner_lift import TraceLift, Vector, rational_terms

__all__ = ["GroebnerResult", "GroebnerTimeout", "groebner_basis", "membership_cofactors", "reduce"]


class _Lift(Protocol):
    deadline: float | None

    def member(self, poly: dict[Monom, Any]) -> Vector | None: ...

    def element(self, position: int) -> Vector: ...

    def set_deadline(self, deadline: float | None) -> None: ...

    def expands_to(self, poly: dict[Monom, Any], vector: Vector) -> bool: ...


@dataclass(frozen=True)
class GroebnerResult:
    """A reduced Groebner basis; when ``tracked``, how each element combines the input generators.

    ``basis[i] == sum(cofactors[i][j] * generators[j] for j)`` exactly, where ``generators`` is the
    sequence given to :func:`groebner_basis` (zero generators included, with zero cofactors).  The
    cofactors are computed on first use (under the deadline given to :func:`groebner_basis`).
    """

    basis: tuple[PolyElement, ...]
    tracked: bool
    generator_count: int = 0  # len(generators), so membership can answer even for an empty basis
    lift: _Lift | None = field(default=None, compare=False, repr=False)
    ring: PolyRing | None = field(default=None, compare=False, repr=False)

    @property
    def cofactors(self) -> tuple[tuple[PolyElement, ...], ...] | None:
        if not self.tracked:
            return None
        if self.lift is None or self.ring is None:
            return ()
        ring = self.ring
        return tuple(_to_ring(self.lift.element(i), ring) for i in range(len(self.basis)))


def _to_ring(vector: Vector, ring: PolyRing) -> tuple[PolyElement, ...]:
    domain = ring.domain
    if domain.dtype is flint.fmpq:  # sympy runs on FLINT's rationals: no conversion per coefficient
        # PolyRing.dtype is set when the ring is built; sympy declares no type for it
        element = ring.dtype  # type: ignore[attr-defined]
        return tuple(element(zip([tuple(map(int, m)) for m in part.monoms()], part.coeffs())) for part in vector)
    return tuple(
        ring.from_dict({m: domain(int(c.numerator), int(c.denominator)) for m, c in part.to_dict().items()})
        for part in vector
    )


def groebner_basis(
    generators: Sequence[PolyElement],
    *,
    track_cofactors: bool = True,
    deadline: float | None = None,
) -> GroebnerResult:
    """The reduced Groebner basis of the ideal of ``generators`` (all in one ring over QQ).

    The basis is monic, inter-reduced and sorted by leading monomial, largest first.  With
    ``track_cofactors`` every basis element comes with its cofactors over ``generators`` (lifted on first
    use).  Raises :class:`GroebnerTimeout` once ``decision_clock()`` (CPU seconds) passes ``deadline``; the clock is
    read between two reductions, each of which runs in FLINT without interruption.
    """
    gens = list(generators)
    if not gens:
        return GroebnerResult((), track_cofactors, 0)
    ring: PolyRing = gens[0].ring
    for g in gens:
        if g.ring != ring:
            raise ValueError("all generators must belong to the same polynomial ring")
    if not ring.domain.is_QQ:  # the lift relies on numerator/denominator of rationals
        raise ValueError(f"Groebner bases here are over QQ, got coefficients in {ring.domain}")
    alias = order_alias(ring.order)
    ctx = Context(alias, ring.domain, deadline)
    ctx.check_deadline()
    dicts = [dict(g) for g in gens]
    if not any(dicts):
        return GroebnerResult((), track_cofactors, len(gens), None, ring if track_cofactors else None)
    if alias == "lex" and ring.ngens > 1:
        result = _lex_through_grevlex(dicts, ring, track_cofactors, deadline)
        if result is not None:
            return result
    trace = buchberger(dicts, ring.ngens, alias, deadline)
    basis = tuple(ring.from_dict(dict(rational_terms(p, ctx))) for p in trace.reduced)
    if not track_cofactors:
        return GroebnerResult(basis, False, len(gens))
    return GroebnerResult(basis, True, len(gens), TraceLift(trace, dicts, ctx), ring)


class _ThroughGrevlex:
    """Cofactors of a lex basis: each element is divided by the grevlex basis of the same ideal, whose
    cofactors are lifted from its own trace."""

    def __init__(self, lex_basis: Sequence[dict[Monom, Any]], grevlex: TraceLift,
                 grevlex_basis: Sequence[list], ctx: Context) -> None:
        self.deadline = ctx.deadline
        self.lex_basis = lex_basis
        self.grevlex = grevlex
        self.reducers = [Reducer(b, ctx.one) for b in grevlex_basis]
        self.ctx = ctx
        self.elements: dict[int, Vector] = {}

    def element(self, position: int) -> Vector:
        vector = self.elements.get(position)
        if vector is None:
            quotients: list[dict[Monom, Any]] = [{} for _ in self.reducers]
            if divide(self.ctx, self.lex_basis[position], self.reducers, quotients):
                raise RuntimeError("a lex basis element is not in the ideal of the grevlex basis")
            vector = self.elements[position] = self.grevlex.combine(quotients)
        return vector

    def member(self, poly: dict[Monom, Any]) -> Vector | None:
        return self.grevlex.member(poly)  # the same ideal: membership does not depend on the order

    def set_deadline(self, deadline: float | None) -> None:
        self.ctx.deadline = deadline
        self.grevlex.set_deadline(deadline)

    def expands_to(self, poly: dict[Monom, Any], vector: Vector) -> bool:
        return self.grevlex.expands_to(poly, vector)


def _lex_through_grevlex(dicts: list[dict[Monom, Any]], ring: PolyRing, track: bool,
                         deadline: float | None) -> GroebnerResult | None:
    trace = buchberger(dicts, ring.ngens, "grevlex", deadline)
    grevlex_ctx = Context("grevlex", ring.domain, deadline)
    grevlex_basis = [rational_terms(p, grevlex_ctx) for p in trace.reduced]
    lex_terms = grevlex_to_lex(grevlex_basis, ring.ngens, grevlex_ctx)
    if lex_terms is None:
        return None
    basis = tuple(ring.from_dict(dict(t)) for t in lex_terms)
    if not track:
        return GroebnerResult(basis, False, len(dicts))
    lift = _ThroughGrevlex([dict(t) for t in lex_terms], TraceLift(trace, dicts, grevlex_ctx), grevlex_basis,
                           grevlex_ctx)
    return GroebnerResult(basis, True, len(dicts), lift, ring)


# ------------------------------------------------------------------------------------ division, membership


def reduce(
    f: PolyElement,
    basis: Sequence[PolyElement],
    *,
    deadline: float | None = None,
) -> tuple[tuple[PolyElement, ...], PolyElement]:
    """Multivariate division of ``f`` by ``basis``: ``f == sum(q[i] * basis[i]) + r``.

    The remainder is a normal form: none of its terms is divisible by a leading monomial of ``basis``.
    Each leading term is divided by the first element of ``basis`` (in the given order) whose leading
    monomial divides it, so for a Groebner basis the remainder is the unique normal form.  Zero elements
    of ``basis`` are skipped (their quotient is zero).
    """
    ring: PolyRing = f.ring
    ctx = Context(ring.order, ring.domain, deadline)
    ctx.check_deadline()
    positions = [i for i, b in enumerate(basis) if b]
    reducers = [Reducer(ctx.sorted_terms(basis[i]), ctx.one) for i in positions]
    quotients: list[dict[Monom, Any]] = [{} for _ in positions]
    remainder = divide(ctx, dict(f), reducers, quotients)
    result = [ring.zero for _ in basis]
    for i, q in zip(positions, quotients):
        result[i] = ring.dtype(q)  # type: ignore[attr-defined]  # set at run time, undeclared in sympy
    return tuple(result), ring.dtype(dict(remainder))  # type: ignore[attr-defined]  # as above


def membership_cofactors(
    f: PolyElement,
    result: GroebnerResult,
    *,
    deadline: float | None = None,
) -> tuple[PolyElement, ...] | None:
    """Cofactors ``c`` with ``f == sum(c[j] * generators[j])`` if ``f`` is in the ideal, else None.

    ``result`` must come from :func:`groebner_basis` with cofactor tracking on; ``generators`` are the ones
    given there.  ``f`` is divided by the polynomials of the basis computation, shortest history first,
    and only the histories of the divisors used are lifted.
    """
    if not result.tracked:
        raise ValueError("membership_cofactors needs a GroebnerResult computed with track_cofactors=True")
    ring: PolyRing = f.ring
    count = result.generator_count
    if not result.basis or result.lift is None:
        return None if f else tuple(ring.zero for _ in range(count))
    lift = result.lift
    saved = lift.deadline
    lift.set_deadline(deadline)
    try:
        vector = lift.member(dict(f))
        if vector is None:
            return None
        # cheap in FLINT, and a wrong lift must never leave here as a certificate
        if not lift.expands_to(dict(f), vector):
            raise RuntimeError("lifted cofactors do not expand to the member")
    finally:
        lift.set_deadline(saved)
    return _to_ring(vector, ring)
