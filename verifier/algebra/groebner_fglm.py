"""Change of order for zero-dimensional ideals: a reduced grevlex basis to the reduced lex basis (FGLM).

Faugere, Gianni, Lazard, Mora, "Efficient computation of zero-dimensional Groebner bases by change of
ordering", J. Symbolic Comput. 16, 1993.  The quotient ring modulo the grevlex basis is a finite-dimensional
vector space with the grevlex standard monomials as basis; monomials are visited in increasing lex order,
each one's normal form is tested for linear dependence on the normal forms of the lex standard monomials
found so far, and each dependence is a lex basis element.  Exact arithmetic over QQ throughout.
"""
from __future__ import annotations

import heapq
from typing import Any, Sequence

from verifier.algebra.groebner_division import Context, Monom, Reducer, Terms, divide

FGLM_DIMENSION_LIMIT = 3000  # quotient dimensions above this are left to a direct lex computation

Vector = dict[int, Any]  # coordinates over the grevlex standard monomials


def _is_zero_dimensional(leads: Sequence[Monom], nvars: int) -> bool:
    pure = set()
    for lm in leads:
        support = [i for i, e in enumerate(lm) if e]
        if len(support) == 1:
            pure.add(support[0])
    return len(pure) == nvars


def _standard_monomials(leads: Sequence[Monom], nvars: int, ctx: Context) -> list[Monom] | None:
    def standard(m: Monom) -> bool:
        return not any(all(a >= b for a, b in zip(m, lm)) for lm in leads)

    zero = (0,) * nvars
    if not standard(zero):
        return []
    seen = {zero}
    frontier = [zero]
    while frontier:
        ctx.check_deadline()
        nxt = []
        for m in frontier:
            for i in range(nvars):
                n = m[:i] + (m[i] + 1,) + m[i + 1:]
                if n not in seen and standard(n):
                    seen.add(n)
                    nxt.append(n)
        if len(seen) > FGLM_DIMENSION_LIMIT:
            return None
        frontier = nxt
    return sorted(seen)


class _NormalForms:
    """Normal forms modulo the grevlex basis, as coordinate vectors, memoised per monomial."""

    def __init__(self, basis: Sequence[Terms], standard: Sequence[Monom], ctx: Context) -> None:
        self.ctx = ctx
        self.reducers = [Reducer(b, ctx.one) for b in basis]
        self.index = {m: n for n, m in enumerate(standard)}
        self.cache: dict[Monom, Vector] = {}

    def of_monomial(self, m: Monom) -> Vector:
        vector = self.cache.get(m)
        if vector is None:
            if m in self.index:
                vector = {self.index[m]: self.ctx.one}
            else:
                remainder = divide(self.ctx, {m: self.ctx.one}, self.reducers, None)
                vector = {self.index[t]: c for t, c in remainder}
            self.cache[m] = vector
        return vector

    def times_variable(self, vector: Vector, variable: int, standard: Sequence[Monom]) -> Vector:
        result: Vector = {}
        for n, c in vector.items():
            m = standard[n]
            shifted = m[:variable] + (m[variable] + 1,) + m[variable + 1:]
            for k, d in self.of_monomial(shifted).items():
                new = result.get(k, self.ctx.zero) + c * d
                if new:
                    result[k] = new
                else:
                    result.pop(k, None)
        return result


def grevlex_to_lex(basis: Sequence[Terms], nvars: int, grevlex_ctx: Context) -> list[Terms] | None:
    """The reduced lex basis (largest leading monomial first) of the ideal whose reduced grevlex basis is
    ``basis``, or None when the ideal is not zero-dimensional or its quotient is too large."""
    leads = [b[0][0] for b in basis]
    if not _is_zero_dimensional(leads, nvars):
        return None
    standard = _standard_monomials(leads, nvars, grevlex_ctx)
    if standard is None:
        return None
    forms = _NormalForms(basis, standard, grevlex_ctx)
    zero, one = grevlex_ctx.zero, grevlex_ctx.one
    rows: list[tuple[int, Vector, dict[int, Any]]] = []  # pivot, row, row as combination of lex staircase
    staircase: list[Monom] = []
    staircase_vectors: list[Vector] = []
    lex_leads: list[Monom] = []
    result: list[Terms] = []
    start = (0,) * nvars
    candidates: list[tuple[Monom, int, int]] = [(start, -1, -1)]  # monomial, parent stair index, variable
    seen = {start}
    while candidates:
        grevlex_ctx.check_deadline()
        m, parent, variable = heapq.heappop(candidates)  # lex order is the tuple order
        if any(all(a >= b for a, b in zip(m, lm)) for lm in lex_leads):
            continue
        if parent < 0:
            vector = dict(forms.of_monomial(m))
        else:
            vector = forms.times_variable(staircase_vectors[parent], variable, standard)
        original = dict(vector)
        combination: dict[int, Any] = {}
        for pivot, row, row_combination in rows:
            c = vector.get(pivot)
            if c is None:
                continue
            for k, d in row.items():
                new = vector.get(k, zero) - c * d
                if new:
                    vector[k] = new
                else:
                    vector.pop(k, None)
            for k, d in row_combination.items():
                new = combination.get(k, zero) + c * d
                if new:
                    combination[k] = new
                else:
                    combination.pop(k, None)
        if not vector:  # m == sum(combination[k] * staircase[k]) modulo the ideal
            lex_leads.append(m)
            tail = sorted(((staircase[k], -c) for k, c in combination.items()), reverse=True)
            result.append([(m, one)] + tail)
            continue
        n = len(staircase)
        staircase.append(m)
        staircase_vectors.append(original)
        pivot = min(vector)
        inv = one / vector[pivot]
        row_combination = {k: -c * inv for k, c in combination.items()}
        row_combination[n] = inv
        rows.append((pivot, {k: c * inv for k, c in vector.items()}, row_combination))
        for i in range(nvars):
            nxt = m[:i] + (m[i] + 1,) + m[i + 1:]
            if nxt not in seen:
                seen.add(nxt)
                heapq.heappush(candidates, (nxt, n, i))
    result.sort(key=lambda terms: terms[0][0], reverse=True)
    return result
