"""Exact sums of squares for polynomials of degree at most 2 (untrusted search; the kernel re-expands).

A polynomial p of degree <= 2 is ``m^T Q m`` for the monomials m = (1, x1, ..., xn) and one symmetric
rational matrix Q.  p >= 0 everywhere exactly when Q is positive semidefinite, and then the rational
LDL^T decomposition (Gaussian elimination on Q, symmetric pivots) writes p as ``sum(d_k * l_k**2)`` with
d_k > 0 and linear l_k, exactly.  A negative pivot, or a zero pivot with a non-zero row, means p is not
such a sum (for degree <= 2 that is also the end: p takes negative values).
"""
from __future__ import annotations

from fractions import Fraction

from sympy.polys.rings import PolyElement

MAX_VARIABLES = 12  # the matrix is (n + 1) x (n + 1); larger quadratics are left undecided


def quadratic_squares(p: PolyElement, constant_last: bool = False) -> list[tuple[Fraction, PolyElement]] | None:
    """``[(d, l), ...]`` with ``p == sum(d * l**2)``, every d > 0 and l linear, or None.

    ``constant_last``: the monomial 1 is eliminated last, so a final ``(c, 1)`` with c > 0 says p >= c > 0.
    """
    if not p or any(sum(monom) > 2 for monom in p.monoms()):
        return None
    ring = p.ring
    used = sorted({i for monom in p.monoms() for i, e in enumerate(monom) if e})
    if len(used) > MAX_VARIABLES:
        return None
    basis = [ring.gens[i] for i in used] + [ring.one] if constant_last else [ring.one] + [ring.gens[i] for i in used]
    size = len(basis)
    matrix = [[Fraction(0)] * size for _ in range(size)]
    position = {i: k + (0 if constant_last else 1) for k, i in enumerate(used)}
    one = size - 1 if constant_last else 0  # the row of the monomial 1
    for monom, coeff in p.terms():
        c = Fraction(int(coeff.numerator), int(coeff.denominator))
        factors = [position[i] for i, e in enumerate(monom) for _ in range(e)]
        a, b = (factors + [one, one])[:2]
        if a == b:
            matrix[a][a] += c
        else:
            matrix[a][b] += c / 2
            matrix[b][a] += c / 2
    squares: list[tuple[Fraction, PolyElement]] = []
    for k in range(size):
        pivot = matrix[k][k]
        if pivot < 0:
            return None
        if pivot == 0:
            if any(matrix[k][j] for j in range(k, size)):
                return None
            continue
        row = [matrix[k][j] / pivot for j in range(size)]
        linear = ring.zero
        for j in range(k, size):
            if row[j]:
                linear += ring(row[j].numerator) / row[j].denominator * basis[j]
        squares.append((pivot, linear))
        for i in range(k + 1, size):
            for j in range(k + 1, size):
                matrix[i][j] -= matrix[i][k] * row[j]
    return squares


MAX_GRAM = 36  # monomials in the Gram basis of a higher-degree sum of squares


def _ldl(matrix: list[list[Fraction]]) -> list[tuple[Fraction, list[Fraction]]] | None:
    """Rational LDL^T of a symmetric matrix: [(pivot, row)] with pivots > 0, or None when it is not PSD
    (a negative pivot, or a zero pivot with a non-zero row)."""
    size = len(matrix)
    work = [row[:] for row in matrix]
    out: list[tuple[Fraction, list[Fraction]]] = []
    for k in range(size):
        pivot = work[k][k]
        if pivot < 0:
            return None
        if pivot == 0:
            if any(work[k][j] for j in range(k, size)):
                return None
            continue
        row = [work[k][j] / pivot if j >= k else Fraction(0) for j in range(size)]
        out.append((pivot, row))
        for i in range(k + 1, size):
            if work[i][k]:
                factor = work[i][k]
                for j in range(k + 1, size):
                    work[i][j] -= factor * row[j]
    return out


def _gram_basis(p: PolyElement) -> list[tuple[int, ...]]:
    """Monomials m that can occur in a square of p's decomposition: 2*m within p's degree bounds per variable
    and in total (a coarse stand-in for half the Newton polytope), higher degrees first, 1 last."""
    monoms = p.monoms()
    width = len(monoms[0])
    high = [max(m[i] for m in monoms) for i in range(width)]
    low = [min(m[i] for m in monoms) for i in range(width)]
    top = max(sum(m) for m in monoms)
    bottom = min(sum(m) for m in monoms)
    if top % 2:
        return []
    ranges = [range((low[i] + 1) // 2, high[i] // 2 + 1) for i in range(width)]
    found: list[tuple[int, ...]] = [()]
    for r in ranges:
        found = [m + (e,) for m in found for e in r]
        if len(found) > 50 * MAX_GRAM:
            return []
    basis = [m for m in found if bottom <= 2 * sum(m) <= top]
    return sorted(basis, key=lambda m: (-sum(m), m))


def sum_of_squares(p: PolyElement) -> list[tuple[Fraction, PolyElement]] | None:
    """``[(d, q), ...]`` with ``p == sum(d * q**2)`` and every d > 0, for p of any even degree, or None.

    The Gram matrix is not unique beyond degree 2; each coefficient is placed on the diagonal, or split
    over the off-diagonal pairs, or over all pairs giving its monomial, and the first placement whose
    matrix has a rational LDL^T (positive semidefinite) wins.  A constant square comes last, so a final
    ``(c, 1)`` says p >= c.  The caller (and the kernel) re-expand the result."""
    if not p:
        return None
    return _gram_squares(p) or _completed_squares(p)


def _completed_squares(p: PolyElement, depth: int = 0) -> list[tuple[Fraction, PolyElement]] | None:
    """p == c*s**2 + rest with s the square root of p's leading part (term by term, as for a number), and
    rest a sum of squares of lower degree: ``(x - 1)**4 + (y - 1)**2`` expanded, whose Gram matrix the
    placements above miss."""
    if depth > 8 or not p:
        return None
    ring = p.ring
    lead, c = p.LM, p.LC
    if c <= 0 or any(e % 2 for e in lead):
        return None
    s = ring({tuple(e // 2 for e in lead): ring.domain.one})
    rest = p - s**2 * c
    top = s.LM
    weight = Fraction(int(c.numerator), int(c.denominator))
    for _ in range(64):
        if not rest:
            return [(weight, s)]
        if sum(rest.LM) < sum(lead) or max(sum(m) for m in rest.monoms()) < sum(lead):
            # stop here when what is left is a sum of squares of lower degree ((x**2 - y)**2 + (x - 1)**2)
            below = _gram_squares(rest) or _completed_squares(rest, depth + 1)
            if below is not None:
                return [(weight, s)] + below
        # else cancel the largest term of rest that 2*c*top divides with a quotient below every term of s
        smallest = min(s.monoms())
        term = None
        for monom, coeff in sorted(rest.terms(), reverse=True):
            if all(a >= b for a, b in zip(monom, top)):
                candidate = tuple(a - b for a, b in zip(monom, top))
                if candidate < smallest:
                    term = ring({candidate: coeff / (c * 2)})
                    break
        if term is None:
            return None
        s += term
        rest = p - s**2 * c
    return None


def _gram_squares(p: PolyElement) -> list[tuple[Fraction, PolyElement]] | None:
    ring = p.ring
    basis = _gram_basis(p)
    if not basis or len(basis) > MAX_GRAM:
        return None
    index = {m: k for k, m in enumerate(basis)}
    pairs: dict[tuple[int, ...], list[tuple[int, int]]] = {}
    for i, a in enumerate(basis):
        for j in range(i, len(basis)):
            e = tuple(x + y for x, y in zip(a, basis[j]))
            pairs.setdefault(e, []).append((i, j))
    terms = [(m, Fraction(int(c.numerator), int(c.denominator))) for m, c in p.terms()]
    if any(m not in pairs for m, _ in terms):
        return None
    for placement in ("diagonal", "off", "all"):
        matrix = [[Fraction(0)] * len(basis) for _ in basis]
        for m, c in terms:
            options = pairs[m]
            diagonal = [(i, j) for i, j in options if i == j]
            off = [(i, j) for i, j in options if i != j]
            chosen = (diagonal or off) if placement == "diagonal" else (off or diagonal) if placement == "off" \
                else options
            share = c / len(chosen)
            for i, j in chosen:
                if i == j:
                    matrix[i][i] += share
                else:
                    matrix[i][j] += share / 2
                    matrix[j][i] += share / 2
        factors = _ldl(matrix)
        if factors is None:
            continue
        out = []
        for pivot, row in factors:
            q = ring.zero
            for j, value in enumerate(row):
                if value:
                    q += ring({basis[j]: ring.domain.convert(value.numerator) / value.denominator})
            out.append((pivot, q))
        total = sum((ring(d.numerator) / d.denominator * q**2 for d, q in out), ring.zero)
        if total == p:
            return out
    return None
