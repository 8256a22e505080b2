"""The cheap counterexample search: the difference polynomial, evaluated modulo a prime, says where to look.

The translation has already expanded LEFT - RIGHT into a polynomial f.  When f involves only the claim's
own variables (no inverse, root or opaque stands in for part of it), f at a point is exactly LEFT - RIGHT
there wherever the claim is defined.  Equation conditions are accepted when each defines a variable
(``m1 == (a11 + a22)*(b11 + b22)``): the defined variables are computed exactly from the free ones.  The candidate points are the
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
from verifier.algebra.evaluate import DomainError, NotEvaluable, exact_value
from verifier.algebra.modular import PRIME
from verifier.algebra.witness_check import exact_check
from verifier.algebra.witness_points import rational_points, variable_bounds
from verifier.algebra.witness_problem import WitnessProblem, searchable_problem
from verifier.model.claim import Condition
from verifier.model.expr import Expr, Var, variables
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
    search does not apply (an auxiliary variable in ``difference``, an equation that is not a definition,
    an opaque call) or found nothing before ``deadline``."""
    if not difference:
        return None
    order = definitions(conditions)
    if order is None:
        return None
    problem = searchable_problem(left, right, conditions)
    if problem is None:
        return None
    terms = sparse_terms(difference, problem.names)
    if terms is None:
        return None
    rng = random.Random(seed)
    checks = 0
    for candidate in islice(rational_points(problem, rng, variable_bounds(problem)), _CANDIDATES):
        if decision_clock() > deadline or checks >= _EXACT_CHECKS:
            return None
        point = _defined(candidate, order) if order else candidate
        if point is None:
            continue
        residues = [_residue(point[name]) for name in problem.names]
        values = [r for r in residues if r is not None]
        if len(values) != len(residues) or not value_mod_p(terms, values):
            continue
        checks += 1
        witness = _checked(problem, point)
        if witness is not None:
            return witness
    return None


def definitions(conditions: Sequence[Condition]) -> list[tuple[str, Expr]] | None:
    """The equation conditions as definitions ``v == E`` (v a variable not in E, each defined once), in an
    order where every E uses only variables defined before it or free; None when some equation is not a
    definition or they are circular (the full search solves those)."""
    defined: dict[str, Expr] = {}
    for c in conditions:
        if c.relation != "==":
            continue
        if isinstance(c.left, Var) and c.left.name not in variables(c.right) and c.left.name not in defined:
            defined[c.left.name] = c.right
        elif isinstance(c.right, Var) and c.right.name not in variables(c.left) and c.right.name not in defined:
            defined[c.right.name] = c.left
        else:
            return None
    order: list[tuple[str, Expr]] = []
    done: set[str] = set()
    while len(order) < len(defined):
        ready = [name for name, e in defined.items()
                 if name not in done and not (variables(e) & (set(defined) - done))]
        if not ready:
            return None  # circular
        for name in sorted(ready):
            order.append((name, defined[name]))
            done.add(name)
    return order


def _defined(point: Mapping[str, Fraction], order: Sequence[tuple[str, Expr]]) -> dict[str, Fraction] | None:
    """The point with every defined variable set exactly from its definition (None where one is undefined)."""
    values = dict(point)
    for name, definition in order:
        try:
            value = exact_value(definition, values)
        except (DomainError, NotEvaluable, ArithmeticError, KeyError, ValueError, TypeError):
            return None
        if value is None:
            return None
        values[name] = value
    return values


def _checked(problem: WitnessProblem, point: Mapping[str, Fraction]) -> Witness | None:
    try:
        outcome, witness = exact_check(problem, point)
    except (DomainError, ZeroDivisionError, NotEvaluable, ArithmeticError, KeyError, ValueError, TypeError):
        return None
    return witness if outcome == "witness" else None
