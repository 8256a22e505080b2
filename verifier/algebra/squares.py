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
