"""Ideal membership with the denominators cleared first: a fast path past the inverse variables.

Each division adds an inverse variable d with the generator ``g = d*u - 1``.  A Groebner basis of all
generators together is often far more work than needed (every d is one more variable).  Instead, with
K = the degree of f in d, write f = sum_k b_k d**k and replace it by F = sum_k b_k u**(K - k): then

    f == F * d**K + c * g,   c = -sum_k b_k d**k (1 + u d + ... + (u d)**(K - k - 1)),

because d**k - u**(K-k) d**K = d**k (1 - (u d)**(K-k)).  Doing this for every inverse variable leaves a
polynomial F free of them; if F lies in the ideal J of the other generators, its cofactors times the
product of the d**K, together with the c's, are a certificate for f.  (F in J is sufficient; when J is a
prime ideal not containing the denominators it is also necessary, and otherwise the full computation in
``decide.py`` still runs.)
"""
from __future__ import annotations

from typing import Sequence

from sympy.polys.rings import PolyElement

from verifier.algebra.groebner import groebner_basis, membership_cofactors
from verifier.algebra.translate import Translation


def inverse_pairs(tr: Translation) -> list[tuple[int, int, PolyElement]]:
    """(generator index, index of d, u) for every generator d*u - 1 of an inverse variable d."""
    symbols = [str(s) for s in tr.ring.symbols]
    pairs = []
    for position, gen in enumerate(tr.generators):
        if gen.kind != "inverse" or gen.variable not in symbols:
            continue
        index = symbols.index(gen.variable)
        quotient, remainder = (gen.poly + 1).div([tr.ring.gens[index]])
        if not remainder and quotient[0].degree(index) == 0:
            pairs.append((position, index, quotient[0]))
    return pairs


def _split_powers(f: PolyElement, index: int) -> dict[int, PolyElement]:
    """f as {k: b_k} with f == sum b_k * x**k, x the generator ``index``, b_k free of x."""
    ring = f.ring
    parts: dict[int, PolyElement] = {}
    for monom, coeff in f.terms():
        k = monom[index]
        rest = monom[:index] + (0,) + monom[index + 1:]
        parts[k] = parts.get(k, ring.zero) + ring({rest: coeff})
    return parts


def cleared_membership(tr: Translation, *, deadline: float | None) -> tuple[PolyElement, ...] | None:
    """Cofactors (aligned with ``tr.generators``) showing ``tr.difference`` in the ideal, found by
    clearing denominators first; None when this path does not find them."""
    pairs = inverse_pairs(tr)
    if not pairs:
        return None
    # A denominator may contain inverse variables created before it (1/(1 - tan(a)*tan(b)) contains
    # 1/cos(a)), never later ones: clearing the latest first leaves only earlier ones to clear.
    pairs.reverse()
    for n, (_, _, u) in enumerate(pairs):
        if any(u.degree(index) > 0 for _, index, _ in pairs[: n + 1]):
            return None
    ring = tr.ring
    cofactors = [ring.zero for _ in tr.generators]
    current = tr.difference
    scale = ring.one  # f == current * scale + sum(cofactors * generators) at every step
    for position, index, u in pairs:
        if not current:
            break  # everything cleared already: (b/a)*(1/b) == 1/a
        parts = _split_powers(current, index)
        top = max(parts)
        if top == 0:
            continue
        d = ring.gens[index]
        ud = u * d
        cleared = ring.zero
        c = ring.zero
        for k, b in parts.items():
            cleared += b * u ** (top - k)
            geometric = ring.zero
            power = ring.one
            for _ in range(top - k):
                geometric += power
                power *= ud
            c -= b * d**k * geometric
        # current == cleared * d**top + c * g
        cofactors[position] += c * scale
        scale *= d**top
        current = cleared
    others = [i for i, g in enumerate(tr.generators) if i not in {p for p, _, _ in pairs}]
    if not current:
        return tuple(cofactors)
    if not others:
        return None
    basis = groebner_basis([tr.generators[i].poly for i in others], deadline=deadline)
    inner = membership_cofactors(current, basis, deadline=deadline)
    if inner is None:
        return None
    for i, e in zip(others, inner):
        cofactors[i] += e * scale
    return tuple(cofactors)


__all__: Sequence[str] = ("cleared_membership", "inverse_pairs")
