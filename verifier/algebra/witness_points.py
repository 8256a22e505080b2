"""Candidate points for the witness search: small and random rationals, within the bounds the conditions set.

Deterministic for a given random generator: every combination of the simplest values first, then random
small values, then random fractions of growing size with varied signs and scales.
"""
from __future__ import annotations

import random
from dataclasses import dataclass
from fractions import Fraction
from itertools import islice, product
from typing import Callable, Iterator, Mapping

from verifier.algebra.evaluate import NotEvaluable, exact_value
from verifier.algebra.witness_problem import WitnessProblem
from verifier.model.expr import Var, variables

SMALL_VALUES = [Fraction(0), Fraction(1), Fraction(-1), Fraction(2), Fraction(-2), Fraction(1, 2), Fraction(3),
                Fraction(-1, 2), Fraction(1, 3), Fraction(-3), Fraction(3, 2), Fraction(5), Fraction(-2, 3),
                Fraction(7), Fraction(1, 5)]


def small_rational(rng: random.Random) -> Fraction:
    return rng.choice(SMALL_VALUES[1:])


def random_rational(rng: random.Random, size: int) -> Fraction:
    """A random fraction with numerator and denominator up to 10**size, times a random power of 10."""
    bound = 10**size
    value = Fraction(rng.randint(1, bound), rng.randint(1, bound))
    if rng.random() < 0.3:
        value *= Fraction(10) ** rng.randint(-3, 3)
    return -value if rng.random() < 0.5 else value


@dataclass(frozen=True)
class Bound:
    """Bounds on one variable read from conditions such as ``x > 0`` or ``1/2 <= x``."""

    low: Fraction | None = None
    low_strict: bool = True
    high: Fraction | None = None
    high_strict: bool = True

    def tightened(self, relation: str, value: Fraction) -> "Bound":
        """With ``variable RELATION value`` added (RELATION one of < <= > >=)."""
        strict = relation in ("<", ">")
        if relation in (">", ">="):
            if self.low is None or value > self.low or (value == self.low and strict):
                return Bound(value, strict, self.high, self.high_strict)
            return self
        if self.high is None or value < self.high or (value == self.high and strict):
            return Bound(self.low, self.low_strict, value, strict)
        return self

    def inside(self, raw: Fraction, rng: random.Random) -> Fraction:
        """A value within the bounds, built from ``raw`` (a random value of any sign)."""
        low, high = self.low, self.high
        if low is not None and high is not None:
            if low >= high:
                return raw  # contradictory bounds: nothing to aim at
            if not self.low_strict and rng.random() < 0.1:
                return low
            if not self.high_strict and rng.random() < 0.1:
                return high
            return low + (high - low) * Fraction(rng.randint(1, 99), 100)
        # offsets of several scales: bounds near a unit sphere leave little room
        offset = (abs(raw) if raw != 0 else Fraction(1)) / rng.choice((1, 1, 4, 16))
        if low is not None:
            return low if (not self.low_strict and rng.random() < 0.1) else low + offset
        if high is not None:
            return high if (not self.high_strict and rng.random() < 0.1) else high - offset
        return raw


_FLIPPED = {"<": ">", "<=": ">=", ">": "<", ">=": "<="}


def variable_bounds(problem: WitnessProblem) -> dict[str, Bound]:
    """Bounds on single variables from sign conditions against constants (``x > 1/2``, ``0 <= y``)."""
    bounds: dict[str, Bound] = {}
    relation: str
    for c in problem.others:
        if c.relation not in _FLIPPED:
            continue
        if isinstance(c.left, Var) and not variables(c.right):
            name, relation, other = c.left.name, c.relation, c.right
        elif isinstance(c.right, Var) and not variables(c.left):
            name, relation, other = c.right.name, _FLIPPED[c.relation], c.left
        else:
            continue
        try:
            value = exact_value(other, {})
        except (ArithmeticError, NotEvaluable):
            continue
        if value is None:
            continue
        bounds[name] = bounds.get(name, Bound()).tightened(relation, value)
    return bounds


def bounded_point(problem: WitnessProblem, bounds: Mapping[str, Bound], rng: random.Random,
                  raw: Callable[[], Fraction]) -> dict[str, Fraction]:
    return {name: bounds[name].inside(raw(), rng) if name in bounds else raw() for name in problem.names}


def rational_points(problem: WitnessProblem, rng: random.Random,
                    bounds: Mapping[str, Bound]) -> Iterator[dict[str, Fraction]]:
    names = problem.names
    n = len(names)
    if n == 0:
        yield {}
        return
    # (a) every combination of the simplest values first
    k = 2
    while (k + 1) ** n <= 256 and k < len(SMALL_VALUES):
        k += 1
    for combo in islice(product(SMALL_VALUES[:k], repeat=n), 256):
        yield dict(zip(names, combo))
    # then random small values, then random fractions of growing size with varied signs and scales;
    # every third point is all positive (sign hypotheses such as x > 0, y > 0 are common) and another
    # third keeps within the bounds that conditions such as x > 1/2 put on single variables
    for i in range(150):
        if i % 3 == 2:
            yield {name: abs(small_rational(rng)) for name in names}
        elif i % 3 == 1 and bounds:
            yield bounded_point(problem, bounds, rng, lambda: small_rational(rng))
        else:
            yield {name: rng.choice(SMALL_VALUES) for name in names}
    for size in range(1, 6):
        for i in range(40):
            if i % 3 == 1 and bounds:
                yield bounded_point(problem, bounds, rng, lambda: random_rational(rng, size))
                continue
            point = {name: random_rational(rng, size) for name in names}
            yield {name: abs(v) for name, v in point.items()} if i % 3 == 2 else point
