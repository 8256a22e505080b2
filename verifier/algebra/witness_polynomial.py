"""The cheap counterexample search: the difference polynomial, evaluated modulo a prime, says where to look.

The translation has already expanded LEFT - RIGHT into a polynomial f.  When f involves only the claim's
own variables (no inverse, root or opaque stands in for part of it) and no condition is an equation, f
at a point is exactly LEFT - RIGHT there wherever the claim is defined.  The candidate points are the
ones the full search tries first (``witness_points.rational_points``, same order, same seed); f is
evaluated at each modulo 2**61-1, one multiplication per factor of a term, instead of evaluating the
claim's expression tree in fractions.  A non-zero residue only says where to look: the point is then
checked exactly on the claim as written (``witness_check.exact_check``: conditions, domains, real
arithmetic), and only a point that passes that check is returned.  A residue of zero skips the point
(the difference may still be a non-zero multiple of the prime there: skipping loses nothing but time).
"""
from __future__ import annotations

import random
from fractions import Fraction
from itertools import islice
from typing import Mapping, Sequence

from sympy.polys.rings import PolyElement

from verifier.model.limits import decision_clock
from verifier.algebra.evaluate import DomainError, NotEvaluable
from verifier.algebra.modular import PRIME
from verifier.algebra.witness_check import exact_check
from verifier.algebra.witness_points import rational_points, variable_bounds
from verifier.algebra.witness_problem import WitnessProblem, build_problem
from verifier.model.claim import Condition
from verifier.model.expr import Expr
from verifier.model.verdict import Witness

_CANDIDATES = 2_000  # points screened at most (the full search's rational points are fewer)
_EXACT_CHECKS = 20  # exact checks at most (a point with a non-zero residue nearly always passes)

# a term: its coefficient modulo the prime and the (variable position, exponent) pairs of its monomial
_Term = tuple[int, tuple[tuple[int, int], ...]]


def _residue(value: Fraction) -> int | None:
    if value.denominator % PRIME == 0:
        return None
    return value.numerator % PRIME * pow(value.denominator, -1, PRIME) % PRIME


def sparse_terms(difference: PolyElement, names: Sequence[str]) -> list[_Term] | None:
    """The terms of ``difference`` over the positions of ``names``, or None when it involves any other ring
    variable (an auxiliary one) or a coefficient has no residue."""
    position = {name: index for index, name in enumerate(names)}
    symbols = [str(s) for s in difference.ring.symbols]
    terms: list[_Term] = []
    for monom, coefficient in difference.terms():
        factors = []
        for symbol, exponent in zip(symbols, monom):
            if exponent:
                if symbol not in position:
                    return None
                factors.append((position[symbol], int(exponent)))
        residue = _residue(Fraction(int(coefficient.numerator), int(coefficient.denominator)))
        if residue is None:
            return None
        terms.append((residue, tuple(factors)))
    return terms


def value_mod_p(terms: Sequence[_Term], values: Sequence[int]) -> int:
    total = 0
    for coefficient, factors in terms:
        product = coefficient
        for index, exponent in factors:
            base = values[index]
            product = product * (base if exponent == 1 else pow(base, exponent, PRIME)) % PRIME
            if not product:
                break
        total += product
    return total % PRIME


def polynomial_witness(left: Expr, right: Expr, conditions: Sequence[Condition], difference: PolyElement, *,
                       deadline: float, seed: int = 0) -> Witness | None:
    """A witness found with the difference polynomial, checked exactly on the claim; None when the cheap
    search does not apply (an auxiliary variable in ``difference``, an equation among the conditions, an
    opaque call) or found nothing before ``deadline``."""
    if not difference or any(c.relation == "==" for c in conditions):
        return None
    try:
        problem = build_problem(left, right, conditions)
    except (ArithmeticError, ValueError, TypeError):
        return None
    if problem is None or problem.equations or problem.extra_equations:
        return None
    terms = sparse_terms(difference, problem.names)
    if terms is None:
        return None
    rng = random.Random(seed)
    checks = 0
    for point in islice(rational_points(problem, rng, variable_bounds(problem)), _CANDIDATES):
        if decision_clock() > deadline or checks >= _EXACT_CHECKS:
            return None
        residues = [_residue(point[name]) for name in problem.names]
        values = [r for r in residues if r is not None]
        if len(values) != len(residues) or not value_mod_p(terms, values):
            continue
        checks += 1
        witness = _checked(problem, point)
        if witness is not None:
            return witness
    return None


def _checked(problem: WitnessProblem, point: Mapping[str, Fraction]) -> Witness | None:
    try:
        outcome, witness = exact_check(problem, point)
    except (DomainError, ZeroDivisionError, NotEvaluable, ArithmeticError, KeyError, ValueError, TypeError):
        return None
    return witness if outcome == "witness" else None
