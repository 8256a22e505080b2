"""Buchberger's algorithm with cofactor tracking, reduced Groebner bases and multivariate division.

Works on ``sympy.polys.rings`` polynomials over QQ in whatever monomial order the
ring has.  Internally a polynomial is a list of ``(monomial, coefficient)`` terms sorted by the ring's
order, largest first; reductions run on a dict of coefficients plus a heap of monomials, so finding the
next leading term costs O(log n) instead of a scan of the whole polynomial.

Cofactors are tracked lazily: every polynomial the algorithm creates records a *recipe*, i.e. how it is a
combination of earlier polynomials (an S-polynomial's two monomial multipliers and the quotients of its
reduction).  Only the recipes reachable from the final reduced basis are expanded into cofactor vectors
over the input generators, once, at the end.  Polynomials that are discarded cost nothing extra.
"""
from __future__ import annotations

import heapq
import time
from dataclasses import dataclass
from math import gcd, lcm
from operator import add, ge, sub
from typing import Any, Callable, Sequence

from sympy.polys.rings import PolyElement, PolyRing

Monom = tuple[int, ...]
Term = tuple[Monom, Any]
Terms = list[Term]  # sorted by the ring's monomial order, largest first
# A recipe: the polynomial equals sum(multiplier * source).  A source >= 0 is an earlier polynomial of the
# run; a source < 0 is the input generator number ~source.  Multipliers are {monomial: coefficient}.
Recipe = list[tuple[int, dict[Monom, Any]]]

_DEADLINE_STRIDE = 64  # reduction steps between two clock reads


class GroebnerTimeout(Exception):
    """The computation passed its deadline (a ``time.monotonic()`` value)."""


@dataclass(frozen=True)
class GroebnerResult:
    """A reduced Groebner basis and, when tracked, how each element combines the input generators.

    ``basis[i] == sum(cofactors[i][j] * generators[j] for j)`` exactly, where ``generators`` is the
    sequence given to :func:`groebner_basis` (zero generators included, with zero cofactors).
    """

    basis: tuple[PolyElement, ...]
    cofactors: tuple[tuple[PolyElement, ...], ...] | None
    generator_count: int = 0  # len(generators), so membership can answer even for an empty basis


# --------------------------------------------------------------------------------------------- order keys


def _negate_key(key: Any) -> Any:
    if isinstance(key, tuple):
        return tuple(_negate_key(part) for part in key)
    return -key


def _heap_key_function(ring: PolyRing) -> Callable[[Monom], Any]:
    """A key whose ascending order is the ring's monomial order descending (for a min-heap)."""
    alias = getattr(ring.order, "alias", None)
    if alias == "grevlex":
        # grevlex key is (deg, reversed(-m)); its negation is (-deg, reversed(m)).
        return lambda m: (-sum(m), m[::-1])
    if alias == "lex":
        return lambda m: tuple([-e for e in m])
    if alias == "grlex":
        return lambda m: (-sum(m), tuple([-e for e in m]))
    order = ring.order
    return lambda m: _negate_key(order(m))


class _Context:
    """Per-computation state shared by the reductions: order keys (memoised), field, deadline."""

    __slots__ = ("ring", "keyf", "cache", "zero", "one", "deadline")

    def __init__(self, ring: PolyRing, deadline: float | None) -> None:
        self.ring = ring
        self.keyf = _heap_key_function(ring)
        self.cache: dict[Monom, Any] = {}
        self.zero = ring.domain.zero
        self.one = ring.domain.one
        self.deadline = deadline

    def check_deadline(self) -> None:
        if self.deadline is not None and time.monotonic() > self.deadline:
            raise GroebnerTimeout("Groebner basis computation passed its deadline")

    def sorted_terms(self, poly: dict[Monom, Any]) -> Terms:
        cache = self.cache
        keyf = self.keyf

        def key(term: Term) -> Any:
            k = cache.get(term[0])
            if k is None:
                k = cache[term[0]] = keyf(term[0])
            return k

        return sorted(poly.items(), key=key)


class _Reducer:
    """A divisor: leading monomial and coefficient, total degree of the lead, and the tail terms."""

    __slots__ = ("lm", "lc", "deg", "tail", "monic")

    def __init__(self, terms: Terms, one: Any) -> None:
        self.lm, self.lc = terms[0]
        self.deg = sum(self.lm)
        self.tail = terms[1:]
        self.monic = self.lc == one


def _divide(
    ctx: _Context,
    poly: dict[Monom, Any] | Terms,
    reducers: Sequence[_Reducer],
    quotients: list[dict[Monom, Any]] | None,
) -> Terms:
    """Full division of ``poly`` by ``reducers`` (first divisor in list order wins).

    Returns the remainder as sorted terms; adds quotient terms into ``quotients[i]`` when given, so that
    ``poly == sum(quotients[i] * reducers[i]) + remainder``.
    """
    coeffs: dict[Monom, Any] = dict(poly)
    cache = ctx.cache
    keyf = ctx.keyf
    heap = []
    for m in coeffs:
        k = cache.get(m)
        if k is None:
            k = cache[m] = keyf(m)
        heap.append((k, m))
    heapq.heapify(heap)
    heappop = heapq.heappop
    heappush = heapq.heappush
    remainder: Terms = []
    lead_info = [(r.lm, r.deg, r) for r in reducers]
    steps = 0
    deadline = ctx.deadline
    while heap:
        m = heappop(heap)[1]
        c = coeffs.pop(m, None)
        if c is None:  # cancelled earlier, or a duplicate heap entry
            continue
        dm = sum(m)
        for index, (lm, deg, red) in enumerate(lead_info):
            if deg <= dm and all(map(ge, m, lm)):
                break
        else:
            remainder.append((m, c))
            continue
        q = c if red.monic else c / red.lc
        qm = tuple(map(sub, m, lm))
        if quotients is not None:
            qd = quotients[index]
            old = qd.get(qm)
            if old is None:
                qd[qm] = q
            else:
                new = old + q
                if new:
                    qd[qm] = new
                else:
                    del qd[qm]
        for tm, tc in red.tail:
            nm = tuple(map(add, qm, tm))
            old = coeffs.get(nm)
            if old is None:
                coeffs[nm] = -q * tc
                k = cache.get(nm)
                if k is None:
                    k = cache[nm] = keyf(nm)
                heappush(heap, (k, nm))
            else:
                new = old - q * tc
                if new:
                    coeffs[nm] = new
                else:
                    del coeffs[nm]
        steps += 1
        if deadline is not None and steps % _DEADLINE_STRIDE == 0 and time.monotonic() > deadline:
            raise GroebnerTimeout("Groebner basis computation passed its deadline")
    return remainder


# ------------------------------------------------------------------------------------------- Buchberger


def _lcm(a: Monom, b: Monom) -> Monom:
    return tuple(map(max, a, b))


def _divides(a: Monom, b: Monom) -> bool:
    return all(map(ge, b, a))


def _coprime(a: Monom, b: Monom) -> bool:
    return not any(x and y for x, y in zip(a, b))


class _Pair:
    __slots__ = ("i", "j", "lcm", "key")

    def __init__(self, i: int, j: int, lcm: Monom, key: Any) -> None:
        self.i, self.j, self.lcm, self.key = i, j, lcm, key


class _Run:
    """One Buchberger computation: the polynomials created so far, their recipes and the pair set."""

    def __init__(self, ctx: _Context, track: bool) -> None:
        self.ctx = ctx
        self.track = track
        self.terms: list[Terms] = []  # every polynomial created (monic)
        self.sugar: list[int] = []
        self.recipes: list[Recipe] = []
        self.active: list[int] = []  # current basis: leading monomials pairwise non-divisible
        self.pairs: list[_Pair] = []

    # -- polynomials

    def add_poly(self, remainder: Terms, sugar: int, recipe: Recipe) -> int:
        """Store ``remainder`` made monic; ``recipe`` describes ``remainder`` itself."""
        lc = remainder[0][1]
        if lc != self.ctx.one:
            inv = self.ctx.one / lc
            remainder = [(m, c * inv) for m, c in remainder]
            if self.track:
                recipe = [(src, {m: c * inv for m, c in mult.items()}) for src, mult in recipe]
        self.terms.append(remainder)
        self.sugar.append(sugar)
        self.recipes.append(recipe if self.track else [])
        return len(self.terms) - 1

    def reduce_into(self, poly: dict[Monom, Any], base_recipe: Recipe) -> tuple[Terms, Recipe]:
        # smallest leading monomial first: divides most often and keeps quotients small
        order = self.ctx.ring.order
        active = sorted(self.active, key=lambda k: order(self.terms[k][0][0]))
        reducers = [self.reducer(k) for k in active]
        quotients: list[dict[Monom, Any]] | None = [{} for _ in active] if self.track else None
        remainder = _divide(self.ctx, poly, reducers, quotients)
        recipe = list(base_recipe)
        if quotients is not None:
            for k, q in zip(active, quotients):
                if q:
                    recipe.append((k, {m: -c for m, c in q.items()}))
        return remainder, recipe

    def reducer(self, k: int) -> _Reducer:
        return _Reducer(self.terms[k], self.ctx.one)

    # -- pairs (Gebauer-Moeller update, after Becker and Weispfenning, "Groebner Bases", 1993, UPDATE)

    def update(self, h: int) -> None:
        lm = [t[0][0] for t in self.terms]
        lmh = lm[h]
        candidates = [(g, _lcm(lmh, lm[g])) for g in self.active]
        kept: list[tuple[int, Monom]] = []
        while candidates:
            g1, l1 = candidates.pop()
            if _coprime(lmh, lm[g1]) or not (
                any(_divides(l2, l1) for _, l2 in candidates) or any(_divides(l2, l1) for _, l2 in kept)
            ):
                kept.append((g1, l1))
        new_pairs = [(g, l) for g, l in kept if not _coprime(lmh, lm[g])]
        survivors = []
        for pair in self.pairs:
            if (
                _divides(lmh, pair.lcm)
                and _lcm(lm[pair.i], lmh) != pair.lcm
                and _lcm(lmh, lm[pair.j]) != pair.lcm
            ):
                continue
            survivors.append(pair)
        order = self.ctx.ring.order  # normal strategy tie-break: smallest lcm first
        for g, l in new_pairs:
            sugar = max(
                self.sugar[h] + sum(l) - sum(lmh),
                self.sugar[g] + sum(l) - sum(lm[g]),
            )
            # Normal strategy; sugar only orders pairs with equal lcm.  Sugar first was tried and
            # measured far slower on lex (katsura-3 lex did not finish in a minute).
            survivors.append(_Pair(g, h, l, (order(l), sugar)))
        self.pairs = survivors
        self.active = [g for g in self.active if not _divides(lmh, lm[g])] + [h]

    def next_pair(self) -> _Pair:
        best = min(range(len(self.pairs)), key=lambda n: self.pairs[n].key)
        return self.pairs.pop(best)

    def spoly(self, pair: _Pair) -> tuple[dict[Monom, Any], Recipe, int]:
        ti, tj = self.terms[pair.i], self.terms[pair.j]
        ui = tuple(map(sub, pair.lcm, ti[0][0]))
        uj = tuple(map(sub, pair.lcm, tj[0][0]))
        poly: dict[Monom, Any] = {}
        for m, c in ti[1:]:
            poly[tuple(map(add, ui, m))] = c
        for m, c in tj[1:]:
            nm = tuple(map(add, uj, m))
            old = poly.get(nm)
            if old is None:
                poly[nm] = -c
            else:
                new = old - c
                if new:
                    poly[nm] = new
                else:
                    del poly[nm]
        one = self.ctx.one
        recipe: Recipe = [(pair.i, {ui: one}), (pair.j, {uj: -one})] if self.track else []
        sugar = max(self.sugar[pair.i] + sum(ui), self.sugar[pair.j] + sum(uj))
        return poly, recipe, sugar


def groebner_basis(
    generators: Sequence[PolyElement],
    *,
    track_cofactors: bool = True,
    deadline: float | None = None,
) -> GroebnerResult:
    """The reduced Groebner basis of the ideal of ``generators`` (all in one ring over QQ).

    Buchberger's algorithm with the Gebauer-Moeller criteria and the normal selection strategy (the
    pair with the smallest lcm in the ring's order first, sugar breaking ties).  The basis is monic, inter-reduced and sorted by leading
    monomial, largest first.  With ``track_cofactors`` every basis element comes with its cofactors over
    ``generators``.  Raises :class:`GroebnerTimeout` once ``time.monotonic()`` passes ``deadline``.
    """
    gens = list(generators)
    if not gens:
        return GroebnerResult((), () if track_cofactors else None, 0)
    ring: PolyRing = gens[0].ring
    for g in gens:
        if g.ring != ring:
            raise ValueError("all generators must belong to the same polynomial ring")
    if not ring.domain.is_QQ:  # cofactor expansion relies on numerator/denominator of rationals
        raise ValueError(f"Groebner bases here are over QQ, got coefficients in {ring.domain}")
    ctx = _Context(ring, deadline)
    ctx.check_deadline()
    run = _Run(ctx, track_cofactors)
    zero_monom = ring.zero_monom

    # Feed the generators smallest leading monomial first, each reduced by the basis so far.
    order = ring.order
    inputs = sorted(
        (index for index, g in enumerate(gens) if g),
        key=lambda index: order(gens[index].leading_expv()),
    )
    unit: int | None = None
    for index in inputs:
        ctx.check_deadline()
        g = gens[index]
        recipe: Recipe = [(~index, {zero_monom: ctx.one})] if track_cofactors else []
        remainder, recipe = run.reduce_into(dict(g), recipe)
        if not remainder:
            continue
        h = run.add_poly(remainder, max(map(sum, g)), recipe)  # sugar: total degree
        if remainder[0][0] == zero_monom:
            unit = h
            break
        run.update(h)

    while unit is None and run.pairs:
        ctx.check_deadline()
        pair = run.next_pair()
        poly, recipe, sugar = run.spoly(pair)
        remainder, recipe = run.reduce_into(poly, recipe)
        if not remainder:
            continue
        h = run.add_poly(remainder, sugar, recipe)
        if remainder[0][0] == zero_monom:
            unit = h
            break
        run.update(h)

    if unit is not None:
        final = [unit]
    elif not run.active:  # every generator was zero
        final = []
    else:
        final = _interreduce(run)
    basis = tuple(ring.dtype(dict(run.terms[k])) for k in final)
    if not track_cofactors:
        return GroebnerResult(basis, None, len(gens))
    cofactors = _expand_cofactors(run, final, len(gens))
    return GroebnerResult(basis, cofactors, len(gens))


def _interreduce(run: _Run) -> list[int]:
    """Reduce the tail of every element of the (minimal) active basis; return them sorted, largest first."""
    ctx = run.ctx
    active = list(run.active)
    final: list[int] = []
    for k in active:
        ctx.check_deadline()
        others = [g for g in active if g != k]
        terms = run.terms[k]
        reducers = [run.reducer(g) for g in others]
        quotients: list[dict[Monom, Any]] | None = [{} for _ in others] if run.track else None
        tail = _divide(ctx, terms[1:], reducers, quotients)
        if quotients is not None and not any(quotients):
            final.append(k)
            continue
        if quotients is None and tail == terms[1:]:
            final.append(k)
            continue
        recipe: Recipe = []
        if run.track and quotients is not None:
            recipe = [(k, {ctx.ring.zero_monom: ctx.one})]
            for g, q in zip(others, quotients):
                if q:
                    recipe.append((g, {m: -c for m, c in q.items()}))
        final.append(run.add_poly([terms[0]] + tail, run.sugar[k], recipe))
    order = ctx.ring.order
    final.sort(key=lambda k: order(run.terms[k][0][0]), reverse=True)
    return final


def _integer_form(poly: dict[Monom, Any]) -> tuple[dict[Monom, int], int]:
    """``poly`` as (integer polynomial, positive denominator)."""
    den = 1
    for c in poly.values():
        den = lcm(den, int(c.denominator))
    return {m: int(c.numerator) * (den // int(c.denominator)) for m, c in poly.items()}, den


def _add_scaled_product(
    acc: dict[Monom, int], left: dict[Monom, int], scale: int, right: dict[Monom, int], ctx: _Context
) -> None:
    """acc += scale * left * right over the integers, in place."""
    get = acc.get
    deadline = ctx.deadline
    for row, (lm, lc) in enumerate(left.items()):
        if deadline is not None and row % 16 == 15 and time.monotonic() > deadline:
            raise GroebnerTimeout("Groebner basis computation passed its deadline")
        lc *= scale
        for rm, rc in right.items():
            m = tuple(map(add, lm, rm))
            new = get(m, 0) + lc * rc
            if new:
                acc[m] = new
            else:
                del acc[m]


def _expand_cofactors(run: _Run, final: list[int], count: int) -> tuple[tuple[PolyElement, ...], ...]:
    """Expand the recipes reachable from ``final`` into cofactor vectors over the input generators.

    Vectors are kept as (integer polynomials, one common denominator): products of Python integers are
    several times cheaper than products of rationals, and cofactors can have thousands of terms.
    """
    ctx = run.ctx
    needed: set[int] = set()
    stack = list(final)
    while stack:
        k = stack.pop()
        if k in needed:
            continue
        needed.add(k)
        stack.extend(src for src, _ in run.recipes[k] if src >= 0 and src not in needed)
    zero_monom = ctx.ring.zero_monom
    unit = {zero_monom: 1}
    vectors: dict[int, tuple[list[dict[Monom, int]], int]] = {}
    for k in sorted(needed):  # a recipe only refers to earlier polynomials
        ctx.check_deadline()
        parts = []
        common = 1
        for src, mult in run.recipes[k]:
            numerators, den = _integer_form(mult)
            if src >= 0:
                den *= vectors[src][1]
            common = lcm(common, den)
            parts.append((src, numerators, den))
        acc: list[dict[Monom, int]] = [{} for _ in range(count)]
        for src, numerators, den in parts:
            scale = common // den
            if src < 0:
                _add_scaled_product(acc[~src], numerators, scale, unit, ctx)
            else:
                for j, part in enumerate(vectors[src][0]):
                    if part:
                        _add_scaled_product(acc[j], numerators, scale, part, ctx)
        divisor = common
        for part in acc:
            for value in part.values():
                divisor = gcd(divisor, value)
                if divisor == 1:
                    break
            if divisor == 1:
                break
        if divisor != 1:
            acc = [{m: v // divisor for m, v in part.items()} for part in acc]
        vectors[k] = (acc, common // divisor)
    ring = ctx.ring
    domain = ring.domain
    result = []
    for k in final:
        acc, den = vectors[k]
        result.append(tuple(ring.dtype({m: domain(v, den) for m, v in part.items()}) for part in acc))
    return tuple(result)


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
    ctx = _Context(ring, deadline)
    ctx.check_deadline()
    positions = [i for i, b in enumerate(basis) if b]
    reducers = [_Reducer(ctx.sorted_terms(basis[i]), ctx.one) for i in positions]
    quotients: list[dict[Monom, Any]] = [{} for _ in positions]
    remainder = _divide(ctx, dict(f), reducers, quotients)
    result = [ring.zero for _ in basis]
    for i, q in zip(positions, quotients):
        result[i] = ring.dtype(q)
    return tuple(result), ring.dtype(dict(remainder))


def membership_cofactors(
    f: PolyElement,
    result: GroebnerResult,
    *,
    deadline: float | None = None,
) -> tuple[PolyElement, ...] | None:
    """Cofactors ``c`` with ``f == sum(c[j] * generators[j])`` if ``f`` is in the ideal, else None.

    ``result`` must come from :func:`groebner_basis` with cofactor tracking on; ``generators`` are the ones
    given there.
    """
    if result.cofactors is None:
        raise ValueError("membership_cofactors needs a GroebnerResult computed with track_cofactors=True")
    ring: PolyRing = f.ring
    count = result.generator_count
    if not result.basis:
        return None if f else tuple(ring.zero for _ in range(count))
    quotients, remainder = reduce(f, result.basis, deadline=deadline)
    if remainder:
        return None
    ctx = _Context(ring, deadline)
    # Integer arithmetic with one common denominator, as in _expand_cofactors.
    products = []
    common = 1
    for q, row in zip(quotients, result.cofactors):
        if not q:
            continue
        ctx.check_deadline()
        q_int, q_den = _integer_form(q)
        for j, part in enumerate(row):
            if part:
                part_int, part_den = _integer_form(part)
                common = lcm(common, q_den * part_den)
                products.append((j, q_int, part_int, q_den * part_den))
    acc: list[dict[Monom, int]] = [{} for _ in range(count)]
    for j, q_int, part_int, den in products:
        _add_scaled_product(acc[j], q_int, common // den, part_int, ctx)
    domain = ring.domain
    return tuple(ring.dtype({m: domain(v, common) for m, v in part.items()}) for part in acc)
