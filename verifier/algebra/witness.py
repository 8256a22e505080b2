"""Counterexample search: candidate points, checked by verifier/algebra/witness_check.py.

The search tries small rationals, random rationals of varied signs and scales (within the bounds that
conditions such as ``x > 1/2`` set), exact solutions of equations affine in one variable, and Newton
solutions of the equations from random starts.  Deterministic for a given seed (up to the deadline).
A claim is refuted only with a witness returned from here, and only a checked witness is returned.
"""
from __future__ import annotations

import random
from fractions import Fraction
from itertools import islice
from typing import Iterator, Mapping, Sequence

import mpmath
from mpmath import mp, mpf

from verifier.model.limits import decision_clock
from verifier.algebra.evaluate import DomainError, NotEvaluable, exact_value, numeric_value
from verifier.algebra.modular import differs_mod_p  # noqa: F401  (re-exported: part of the witness API)
from verifier.algebra.newton import newton, scale
from verifier.algebra.witness_check import (  # noqa: F401  (check_witness, parse_value: re-exported)
    check_witness,
    exact_check,
    parse_value,
    witness_from,
)
from verifier.algebra.witness_points import (
    Bound,
    bounded_point,
    random_rational,
    rational_points,
    small_rational,
    variable_bounds,
)
from verifier.algebra.witness_problem import Real, WitnessProblem, searchable_problem
from verifier.model.claim import Condition
from verifier.model.expr import BinOp, Call, Expr, Neg, Num, Opaque, Pow, Var, fold, variables
from verifier.model.verdict import Witness

__all__ = ["check_witness", "differs_mod_p", "find_witness", "parse_value"]

_SEARCH_DIGITS = 30  # working precision of the search (the check refines at 60 and 120 digits)

Degree = int | None


class _DegreeIn:
    """The degree in one variable when the expression is polynomial in it (an upper bound), else None."""

    def __init__(self, name: str) -> None:
        self.name = name

    def num(self, node: Num) -> Degree:
        return 0

    def var(self, node: Var) -> Degree:
        return 1 if node.name == self.name else 0

    def neg(self, node: Neg, operand: Degree) -> Degree:
        return operand

    def binop(self, node: BinOp, left: Degree, right: Degree) -> Degree:
        if left is None or right is None:
            return None
        if node.op in ("+", "-"):
            return max(left, right)
        if node.op == "*":
            return left + right
        return left if right == 0 else None

    def pow(self, node: Pow, base: Degree) -> Degree:
        e = Fraction(node.exponent)
        if base == 0:
            return 0
        if base is None or e.denominator != 1 or e < 0:
            return None
        return base * int(e)

    def call(self, node: Call, args: Sequence[Degree]) -> Degree:
        if all(d == 0 for d in args):
            return 0
        if node.function == "fma":  # a*b + c
            a, b, c = args
            return None if a is None or b is None or c is None else max(a + b, c)
        return None

    def opaque(self, node: Opaque, args: Sequence[Degree]) -> Degree:
        return 0 if all(d == 0 for d in args) else None


def _degree(expr: Expr, name: str) -> Degree:
    return fold(expr, _DegreeIn(name))


def _choose_unknowns(problem: WitnessProblem, rng: random.Random) -> list[str] | None:
    """One distinct variable per equation, preferring variables of low degree (linear ones first)."""
    chosen: list[str] = []
    for c in problem.equations:
        candidates = sorted(variables(c.left) | variables(c.right))
        candidates = [v for v in candidates if v not in chosen]
        if not candidates:
            return None
        rng.shuffle(candidates)

        def rank(v: str) -> int:
            dl, dr = _degree(c.left, v), _degree(c.right, v)
            d = None if dl is None or dr is None else max(dl, dr)
            return 1000 if d is None else d

        candidates.sort(key=rank)
        chosen.append(candidates[0])
    return chosen


def _secant_root(c: Condition, point: Mapping[str, Fraction], name: str) -> Fraction | None:
    """The root in ``name`` of the equation if it is affine in it (one secant step through two rational
    points where it is defined and rational); otherwise some rational that the check will reject."""
    for t0, t1 in ((Fraction(0), Fraction(1)), (Fraction(1), Fraction(2)), (Fraction(-1), Fraction(3))):
        values = []
        try:
            for t in (t0, t1):
                trial = dict(point)
                trial[name] = t
                a, b = exact_value(c.left, trial), exact_value(c.right, trial)
                if a is None or b is None:
                    return None
                values.append(a - b)
        except ArithmeticError:
            continue
        if values[1] == values[0]:
            return None
        return t0 - values[0] * (t1 - t0) / (values[1] - values[0])
    return None


def _exact_solutions(problem: WitnessProblem, rng: random.Random, tries: int,
                     bounds: Mapping[str, Bound]) -> Iterator[dict[str, Fraction]]:
    """Equations affine in their chosen variable, solved exactly by secant steps (Gauss-Seidel rounds)."""
    for _ in range(tries):
        unknowns = _choose_unknowns(problem, rng)
        if unknowns is None:
            return
        point = bounded_point(problem, bounds, rng,
                              lambda: small_rational(rng) if rng.random() < 0.6 else random_rational(rng, 2))
        ok = True
        for _round in range(3):
            for c, name in zip(problem.equations, unknowns):
                root = _secant_root(c, point, name)
                if root is None:
                    ok = False
                    break
                point[name] = root
            if not ok:
                break
        if ok:
            yield point


def _numeric_solutions(problem: WitnessProblem, rng: random.Random, tries: int, deadline: float,
                       bounds: Mapping[str, Bound]) -> Iterator[dict[str, Real]]:
    """Equations solved by Newton's method at 50 digits from random starts: square systems in one chosen
    variable per equation (the others fixed at random rationals), and every other try minimum-norm steps
    on all the equations' variables.  A root that is a small fraction is offered exactly first."""
    for attempt in range(tries):
        if decision_clock() > deadline:
            return
        unknowns = _choose_unknowns(problem, rng)
        # fixed values mostly of size about 1, where equations such as unit norms have real solutions
        fixed = bounded_point(problem, bounds, rng,
                              lambda: small_rational(rng) / rng.choice((1, 2, 4, 8)) if rng.random() < 0.6
                              else random_rational(rng, 2))
        plans: list[list[str]] = []
        if unknowns is not None:
            plans.append(unknowns)
        if attempt % 2 == 1 or unknowns is None:
            plans.append(list(problem.equation_names))
        for plan in plans:
            start: dict[str, Real] = dict(fixed)
            for name in plan:
                raw = Fraction(rng.uniform(-3, 3) * 10 ** rng.randint(-1, 1)).limit_denominator(10**6)
                start[name] = bounds[name].inside(raw, rng) if name in bounds else raw
            root = newton(problem.equations, start, plan, _SEARCH_DIGITS, iterations=20, deadline=deadline)
            if root is None:
                continue
            candidate: dict[str, Real] = dict(fixed)
            candidate.update({name: root[name] for name in plan})
            rounded = dict(candidate)
            for name in plan:
                with mp.workdps(_SEARCH_DIGITS):
                    rounded[name] = Fraction(mpmath.nstr(root[name], _SEARCH_DIGITS, min_fixed=-60,
                                                         max_fixed=60)).limit_denominator(10**6)
            yield rounded
            yield candidate


def _plausible(problem: WitnessProblem, point: Mapping[str, Real]) -> bool:
    """A cheap screen at 30 digits before the full check."""
    prec = 30
    try:
        with mp.workdps(prec):
            for c in problem.equations:
                a = numeric_value(c.left, point, prec)
                b = numeric_value(c.right, point, prec)
                if abs(a - b) > mpf(10) ** -15 * scale(a, b):
                    return False
            for c in problem.others:
                a = numeric_value(c.left, point, prec)
                b = numeric_value(c.right, point, prec)
                d = a - b
                ok = {"!=": d != 0, "<": d < 0, "<=": d <= mpf(10) ** -20, ">": d > 0, ">=": d >= -mpf(10) ** -20}
                if not ok[c.relation]:
                    return False
            a = numeric_value(problem.left, point, prec)
            b = numeric_value(problem.right, point, prec)
            # a point solved at 30 digits is only that close to the equations: ask for more difference
            exact_point = all(isinstance(v, Fraction) for v in point.values())
            threshold = mpf(10) ** (-27 if exact_point else -20)
            return a != b and abs(a - b) > threshold * scale(a, b)
    except _SEARCH_FAILURES:
        return False


def _try(problem: WitnessProblem, point: Mapping[str, Real], deadline: float) -> Witness | None:
    if all(isinstance(v, Fraction) for v in point.values()):
        exact_point = {k: v for k, v in point.items() if isinstance(v, Fraction)}
        try:
            outcome, witness = exact_check(problem, exact_point)
        except (DomainError, ZeroDivisionError):
            return None
        if outcome == "witness":
            return witness
        if outcome == "fails":
            return None
    if not _plausible(problem, point):
        return None
    return witness_from(problem, point, deadline)


def _candidates(problem: WitnessProblem, rng: random.Random, deadline: float) -> Iterator[Mapping[str, Real]]:
    bounds = variable_bounds(problem)
    rational = rational_points(problem, rng, bounds)
    if problem.equations:
        # small rational points often satisfy simple equations exactly (s, c = 0, 1); then solve them
        yield from islice(rational, 300)
        yield from _exact_solutions(problem, rng, 40, bounds)
        yield from _numeric_solutions(problem, rng, 30, deadline, bounds)
    yield from rational


def find_witness(left: Expr, right: Expr, conditions: Sequence[Condition], *, deadline: float,
                 seed: int = 0) -> Witness | None:
    """A checked real point where every condition holds and ``left != right``, or None (none found before
    ``deadline`` (``decision_clock()``, CPU seconds), or an opaque call is involved)."""
    if decision_clock() > deadline:
        return None
    problem = searchable_problem(left, right, conditions)
    if problem is None:
        return None
    rng = random.Random(seed)
    candidates = _candidates(problem, rng, deadline)
    while decision_clock() <= deadline:
        try:
            point = next(candidates)
        except StopIteration:
            return None
        except _SEARCH_FAILURES:  # a generator that raised is finished
            return None
        try:
            witness = _try(problem, point, deadline)
        except _SEARCH_FAILURES:
            continue
        if witness is not None:
            return witness
    return None


# what may go wrong while evaluating at a candidate point (undefined there, an unknown node, mpmath gave up)
_SEARCH_FAILURES = (ArithmeticError, NotEvaluable, KeyError, ValueError, TypeError)
