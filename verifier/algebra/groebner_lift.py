"""Cofactors on demand: how a basis element, or a member of the ideal, combines the input generators.

The basis is computed without cofactors (``groebner_flint``); its trace says, for every polynomial kept,
which S-pair or generator it came from and which divisors reduced it, in order.  When cofactors are
needed, only the polynomials they depend on are re-reduced over QQ with quotients (same divisors, same
order, so the same remainder up to a constant factor, which is checked), and the resulting recipes are
expanded into cofactor vectors with FLINT polynomial products.  S-pairs that reduced to zero, usually
most of them, are never redone.  A member of the ideal is divided by all recorded polynomials, those
with the shortest history first, rather than by the reduced basis, whose elements have the largest
cofactors of all.
"""
from __future__ import annotations

from operator import ge
from typing import Any, Sequence

import flint

from verifier.algebra.groebner_division import Context, Monom, Reducer, Terms, divide
from verifier.algebra.groebner_flint import TAIL_REDUCED, Trace, spoly_multipliers, to_flint

# A recipe: the polynomial equals sum(multiplier * source); source >= 0 is a recorded polynomial, source
# < 0 the input generator ~source.
Recipe = list[tuple[int, dict[Monom, Any]]]
Vector = list[Any]  # one fmpq_mpoly per input generator


def rational_terms(p: Any, ctx: Context) -> Terms:
    """A FLINT integer polynomial made monic over QQ, as sorted terms."""
    terms = list(p.terms())
    lc = int(terms[0][1])
    domain = ctx.domain
    return [(m, domain(int(c), lc)) for m, c in terms]


class TraceLift:
    """Cofactors over the input generators for the basis of a :class:`Trace`, computed lazily."""

    def __init__(self, trace: Trace, generators: Sequence[dict[Monom, Any]], ctx: Context) -> None:
        self.trace = trace
        self.generators = generators
        self.count = len(generators)
        self.ctx = ctx
        nvars = trace.ctx.nvars()
        self.qctx = flint.fmpq_mpoly_ctx.get(tuple(f"v{i}" for i in range(nvars)), trace.ctx.ordering())
        self.deadline = ctx.deadline  # the computation's own, restored after each membership lift
        self.terms: dict[int, Terms] = {}
        self.vectors: dict[int, Vector] = {}
        self.final_vectors: dict[int, Vector] = {}
        self.recipes: dict[int, Recipe] = {}
        self.final_recipes: dict[int, Recipe] = {}
        self.member_divisors: list[tuple[int, Reducer]] | None = None

    # -- recipes

    def _terms(self, k: int) -> Terms:
        terms = self.terms.get(k)
        if terms is None:
            terms = self.terms[k] = rational_terms(self.trace.polys[k], self.ctx)
        return terms

    def _reduce(self, poly: dict[Monom, Any] | Terms, divisors: Sequence[int], base: Recipe,
                expected: Terms) -> Recipe:
        """Divide ``poly`` (== combination ``base``) by ``divisors``; check the remainder is ``expected``
        up to a constant factor; return the recipe of ``expected``."""
        one = self.ctx.one
        reducers = [Reducer(self._terms(d), one) for d in divisors]
        quotients: list[dict[Monom, Any]] = [{} for _ in divisors]
        remainder = divide(self.ctx, poly, reducers, quotients)
        if not remainder or len(remainder) != len(expected):
            raise RuntimeError("redone reduction does not reproduce the recorded polynomial")
        inv = one / remainder[0][1]
        if any(m != em or c * inv != ec for (m, c), (em, ec) in zip(remainder, expected)):
            raise RuntimeError("redone reduction does not reproduce the recorded polynomial")
        recipe = [(src, {m: c * inv for m, c in mult.items()}) for src, mult in base]
        for d, q in zip(divisors, quotients):
            if q:
                recipe.append((d, {m: -c * inv for m, c in q.items()}))
        return recipe

    def _recipe(self, k: int) -> Recipe:
        trace = self.trace
        one = self.ctx.one
        i, j = trace.origins[k]
        if j == TAIL_REDUCED:
            poly: dict[Monom, Any] = dict(self._terms(i))
            base: Recipe = [(i, {(0,) * trace.ctx.nvars(): one})]
        elif j < 0:
            poly = dict(self.generators[i])
            base = [(~i, {(0,) * trace.ctx.nvars(): one})]
        else:
            ti, tj = self._terms(i), self._terms(j)
            ui, uj = spoly_multipliers(ti[0][0], tj[0][0])
            poly = {}
            for m, c in ti[1:]:
                poly[tuple(a + b for a, b in zip(ui, m))] = c
            for m, c in tj[1:]:
                nm = tuple(a + b for a, b in zip(uj, m))
                new = poly.get(nm, self.ctx.zero) - c
                if new:
                    poly[nm] = new
                else:
                    poly.pop(nm, None)
            base = [(i, {ui: one}), (j, {uj: -one})]
        return self._reduce(poly, trace.divisors[k], base, self._terms(k))

    def _final_recipe(self, position: int) -> Recipe:
        """The reduced basis element at ``position``: its recorded polynomial with the tail reduced by the
        other elements of the minimal basis (the reduced basis is unique, so the result must match)."""
        trace = self.trace
        k = trace.final[position]
        one_monom = (0,) * trace.ctx.nvars()
        recipe: Recipe = [(k, {one_monom: self.ctx.one})]
        if trace.unit:
            return recipe
        others = [g for g in trace.final if g != k]
        one = self.ctx.one
        reducers = [Reducer(self._terms(g), one) for g in others]
        quotients: list[dict[Monom, Any]] = [{} for _ in others]
        tail = divide(self.ctx, self._terms(k)[1:], reducers, quotients)
        if tail != rational_terms(trace.reduced[position], self.ctx)[1:]:
            raise RuntimeError("inter-reduction over QQ does not reproduce the reduced basis")
        for g, q in zip(others, quotients):
            if q:
                recipe.append((g, {m: -c for m, c in q.items()}))
        return recipe

    # -- expansion

    def poly(self, mult: dict[Monom, Any]) -> Any:
        return self.qctx.from_dict({m: flint.fmpq(int(c.numerator), int(c.denominator)) for m, c in mult.items()})

    def _expand(self, recipe: Recipe) -> Vector:
        vector = self.zero_vector()
        for src, mult in recipe:
            factor = self.poly(mult)
            if src < 0:
                vector[~src] += factor
            else:
                for n, part in enumerate(self._vector(src)):
                    if not part.is_zero():
                        vector[n] += factor * part
        return vector

    def _recipes_below(self, roots: Sequence[int]) -> list[int]:
        """Redo (once) the reductions of ``roots`` and of everything they depend on; return those indices."""
        reached: set[int] = set()
        stack = list(roots)
        while stack:  # iterative: no recursion limit on long chains
            n = stack.pop()
            if n in reached:
                continue
            reached.add(n)
            recipe = self.recipes.get(n)
            if recipe is None:
                self.ctx.check_deadline()
                recipe = self.recipes[n] = self._recipe(n)
            stack.extend(src for src, _ in recipe if src >= 0 and src not in reached)
        return sorted(reached)

    def _vector(self, k: int) -> Vector:
        if k not in self.vectors:
            for n in self._recipes_below([k]):  # a recipe only refers to earlier polynomials
                if n not in self.vectors:
                    self.ctx.check_deadline()
                    self.vectors[n] = self._expand(self.recipes[n])
        return self.vectors[k]

    def _final(self, position: int) -> Recipe:
        recipe = self.final_recipes.get(position)
        if recipe is None:
            recipe = self.final_recipes[position] = self._final_recipe(position)
        return recipe

    def element(self, position: int) -> Vector:
        """Cofactors of basis element ``position`` (monic) over the input generators."""
        vector = self.final_vectors.get(position)
        if vector is None:
            vector = self.final_vectors[position] = self._expand(self._final(position))
        return vector

    def combine(self, quotients: Sequence[dict[Monom, Any]]) -> Vector:
        """Cofactors of ``sum(quotients[i] * basis[i])``."""
        total = self.zero_vector()
        pending: dict[int, Any] = {}
        for position, q in enumerate(quotients):
            if q:
                factor = self.poly(q)
                for src, mult in self._final(position):
                    _push(total, pending, src, self.poly(mult) * factor)
        return self._accumulate(total, pending)

    def _accumulate(self, total: Vector, pending: dict[int, Any]) -> Vector:
        """Add to ``total`` the cofactors of ``sum(pending[k] * recorded polynomial k)``.

        Reverse accumulation: one multiplier per recorded polynomial, pushed from the latest down to the
        generators, instead of a whole cofactor vector per polynomial (measured about 2x faster on
        cyclic-6, whose basis cofactors have tens of thousands of terms).
        """
        for n in reversed(self._recipes_below(list(pending))):
            self.ctx.check_deadline()
            multiplier = pending.pop(n, None)
            if multiplier is None or multiplier.is_zero():
                continue
            for src, mult in self.recipes[n]:
                _push(total, pending, src, self.poly(mult) * multiplier)
        return total

    def _member_divisors(self) -> list[tuple[int, Reducer]]:
        """Divisors for a membership lift, most preferred first: the recorded polynomials by sugar (a low
        sugar means a short history to lift), dropping any whose leading monomial is a multiple of a
        preferred one's (it would never be chosen).  The input generators are recorded too, reduced by
        the ones before them; putting the generators as given first was measured no better on cyclic-6
        and worse on katsura-7 (1,218 cofactor terms for the benchmark member against 634)."""
        if self.member_divisors is None:
            polys, sugar = self.trace.polys, self.trace.sugar
            leads: list[Monom] = []
            chosen: list[int] = []
            for k in sorted(range(len(polys)), key=lambda k: (sugar[k], k)):
                lm = polys[k].monomial(0)  # pruned on leading monomials before any term is converted
                if not any(all(map(ge, lm, other)) for other in leads):
                    leads.append(lm)
                    chosen.append(k)
            one = self.ctx.one
            self.member_divisors = [(k, Reducer(self._terms(k), one)) for k in chosen]
        return self.member_divisors

    def _reduces_to_zero(self, poly: dict[Monom, Any]) -> bool:
        """Membership decided in FLINT by the reduced basis, before any division over QQ (most calls on
        non-members, e.g. the powers a radical test tries, end here)."""
        reduced = self.trace.reduced
        if not poly or not reduced:  # FLINT aborts the process on a zero divisor, so never pass one
            return not poly
        p = to_flint(poly, self.trace.ctx)
        return bool(p.reduction_primitive_part(flint.fmpz_mpoly_vec(reduced, self.trace.ctx)).is_zero())

    def member(self, poly: dict[Monom, Any]) -> Vector | None:
        """Cofactors of ``poly`` over the input generators if it lies in the ideal, else None.

        ``poly`` is divided by every recorded polynomial, preferring those with a short history.  They
        include a Groebner basis, so the remainder is zero exactly for members (a term left over is
        divisible by no leading monomial of the basis).  The basis elements themselves have large
        cofactors (cyclic-6: the lift of a small member through them has 90,000 terms, through the early
        polynomials of the computation 60), so they are used only where nothing cheaper divides.
        """
        self.ctx.check_deadline()
        if not self._reduces_to_zero(poly):
            return None
        divisors = self._member_divisors()
        quotients: list[dict[Monom, Any]] = [{} for _ in divisors]
        if divide(self.ctx, poly, [r for _, r in divisors], quotients):
            return None
        total = self.zero_vector()
        pending: dict[int, Any] = {}
        for (src, _), q in zip(divisors, quotients):
            if q:
                _push(total, pending, src, self.poly(q))
        return self._accumulate(total, pending)

    def zero_vector(self) -> Vector:
        return [self.qctx.from_dict({}) for _ in range(self.count)]

    def set_deadline(self, deadline: float | None) -> None:
        self.ctx.deadline = deadline

    def expands_to(self, poly: dict[Monom, Any], vector: Vector) -> bool:
        """Whether ``sum(vector[j] * generators[j]) == poly``, by expansion."""
        total = self.poly(poly)
        for part, generator in zip(vector, self.generators):
            if not part.is_zero():
                total -= part * self.poly(generator)
        return total.is_zero()


def _push(total: Vector, pending: dict[int, Any], src: int, value: Any) -> None:
    """Add ``value`` times ``src`` (a generator if negative, else a recorded polynomial) to an accumulation."""
    if src < 0:
        total[~src].iadd(value)
    elif src in pending:
        pending[src].iadd(value)
    else:
        pending[src] = value
