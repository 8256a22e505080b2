"""Multivariate division over QQ on plain term lists: the inner loop shared by the Groebner modules.

A polynomial is a list of ``(monomial, coefficient)`` terms sorted by the monomial order, largest first.
Reductions run on a dict of coefficients plus a heap of monomials, so finding the next leading term costs
O(log n) instead of a scan of the whole polynomial.
"""
from __future__ import annotations

import heapq
from operator import add, ge, sub
from verifier.model.limits import decision_clock
from typing import Any, Callable, Sequence

Monom = tuple[int, ...]
Term = tuple[Monom, Any]
Terms = list[Term]  # sorted by the monomial order, largest first

DEADLINE_STRIDE = 64  # reduction steps between two clock reads
SUPPORTED_ORDERS = ("grevlex", "lex", "grlex")


class GroebnerTimeout(Exception):
    """The computation passed its deadline (a ``decision_clock()`` value: CPU seconds)."""


def order_alias(order: Any) -> str:
    """The name of a sympy monomial order this engine supports; ValueError for any other order."""
    alias = getattr(order, "alias", None)
    if alias not in SUPPORTED_ORDERS:
        raise ValueError(f"Groebner bases here support the orders {SUPPORTED_ORDERS}, got {order}")
    return alias


def _negate_key(key: Any) -> Any:
    if isinstance(key, tuple):
        return tuple(_negate_key(part) for part in key)
    return -key


def heap_key_function(order: Any) -> Callable[[Monom], Any]:
    """A key whose ascending order is the monomial order descending (for a min-heap); ``order`` is a
    sympy monomial order or the name of one."""
    alias = order if isinstance(order, str) else getattr(order, "alias", None)
    if alias not in SUPPORTED_ORDERS:
        return lambda m: _negate_key(order(m))
    if alias == "grevlex":
        # sympy's grevlex key is (deg, reversed(-m)); its negation is (-deg, reversed(m)).
        return lambda m: (-sum(m), m[::-1])
    if alias == "lex":
        return lambda m: tuple([-e for e in m])
    return lambda m: (-sum(m), tuple([-e for e in m]))


def ascending_key_function(alias: str) -> Callable[[Monom], Any]:
    """A key whose ascending order is the monomial order ascending."""
    if alias == "grevlex":
        return lambda m: (sum(m), tuple([-e for e in reversed(m)]))
    if alias == "lex":
        return lambda m: m
    return lambda m: (sum(m), m)


class Context:
    """Per-computation state shared by the reductions: order keys (memoised), field, deadline."""

    __slots__ = ("keyf", "cache", "zero", "one", "domain", "deadline")

    def __init__(self, order: Any, domain: Any, deadline: float | None) -> None:
        self.keyf = heap_key_function(order)
        self.cache: dict[Monom, Any] = {}
        self.domain = domain
        self.zero = domain.zero
        self.one = domain.one
        self.deadline = deadline

    def check_deadline(self) -> None:
        if self.deadline is not None and decision_clock() > self.deadline:
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


class Reducer:
    """A divisor: leading monomial and coefficient, total degree of the lead, and the tail terms."""

    __slots__ = ("lm", "lc", "deg", "tail", "monic")

    def __init__(self, terms: Terms, one: Any) -> None:
        self.lm, self.lc = terms[0]
        self.deg = sum(self.lm)
        self.tail = terms[1:]
        self.monic = self.lc == one


def divide(
    ctx: Context,
    poly: dict[Monom, Any] | Terms,
    reducers: Sequence[Reducer],
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
        if deadline is not None and steps % DEADLINE_STRIDE == 0 and decision_clock() > deadline:
            raise GroebnerTimeout("Groebner basis computation passed its deadline")
    return remainder
