"""Sampled floating-point accuracy of the two sides of a proved identity.

Both sides are evaluated in IEEE double arithmetic in exactly the order the expression tree gives (the
order the source writes it: ``a + b + c`` is ``(a + b) + c``; pi is the double ``math.pi``) and exactly (rationals, or mpmath at high
precision when a step is irrational) at the same double inputs.  The error of a side at a point is
``|computed - exact| / ulp(exact rounded to double)``.  Points are drawn uniformly from per-variable ranges
with a seeded generator; equation conditions are met by solving for some variables with mpmath, and the
other conditions by rejection.  This is a sampled estimate, not a bound.
"""
from __future__ import annotations

import math
import random
import statistics
from fractions import Fraction
from typing import TYPE_CHECKING, Any, Mapping, Sequence

import mpmath
from mpmath import mp, mpf

from verifier.algebra.evaluate import (
    DomainError,
    NotEvaluable,
    exact_value,
    float_value,
    has_opaque,
    numeric_value,
    variables,
)
from verifier.model.accuracy import (
    AccuracyEstimate,
    AccuracySettings,
    SideAccuracy,
)
from verifier.model.claim import Condition, Obligation
from verifier.model.expr import Expr
from verifier.model.verdict import Verdict

if TYPE_CHECKING:  # a type only: sampling in workers imports the runner when it is asked for
    from verifier.pipeline.runner import RunOptions

EXACT_DIGITS = 60  # decimal digits of the reference value when it is irrational
_ATTEMPTS_PER_SAMPLE = 20
_NEWTON_STEPS = 60


class NotMeasurable(Exception):
    """The obligation cannot be sampled (opaque calls, no point satisfying the conditions, ...)."""


# ---------------------------------------------------------------- exact evaluation and ulps


def reference_value(expr: Expr, values: Mapping[str, float]) -> mpf:
    """The exact value of ``expr`` at the double inputs, as an mpf with ``EXACT_DIGITS`` digits."""
    point = {name: Fraction(v) for name, v in values.items()}
    exact = exact_value(expr, point)
    with mp.workdps(EXACT_DIGITS):
        if exact is not None:
            return mpf(exact.numerator) / exact.denominator
        return numeric_value(expr, point, EXACT_DIGITS)


def ulp_error(computed: float, exact: mpf) -> float:
    """``|computed - exact|`` in units in the last place of ``exact`` rounded to double."""
    with mp.workdps(EXACT_DIGITS):
        if not math.isfinite(computed):
            return math.inf
        rounded = float(exact)
        unit = math.ulp(rounded) if math.isfinite(rounded) else math.ulp(math.copysign(1.7976931348623157e308, rounded))
        return float(abs(mpf(computed) - exact) / mpf(unit))


# ---------------------------------------------------------------- sampling points that satisfy the conditions


def _condition_holds(condition: Condition, point: Mapping[str, float]) -> bool:
    """Exact check (at the double inputs) of a != or sign condition; equations are handled by solving."""
    left = reference_value(condition.left, point)
    right = reference_value(condition.right, point)
    with mp.workdps(EXACT_DIGITS):
        d = left - right
        r = condition.relation
        if r == "!=":
            return d != 0
        if r == "<":
            return d < 0
        if r == "<=":
            return d <= 0
        if r == ">":
            return d > 0
        if r == ">=":
            return d >= 0
    return True


def _plan_equations(equations: Sequence[Condition], names: Sequence[str]) -> list[str]:
    """One distinct variable per equation to solve for (later variables first: they are usually derived)."""
    chosen: list[str] = []
    for condition in equations:
        candidates = sorted(variables(condition.left) | variables(condition.right), key=names.index, reverse=True)
        pick = next((v for v in candidates if v not in chosen), None)
        if pick is None:
            raise NotMeasurable(f"cannot choose a variable to solve the condition {condition.text} for")
        chosen.append(pick)
    return chosen


def _linear_solve(matrix: list[list[float]], rhs: list[float]) -> list[float] | None:
    """Gaussian elimination with partial pivoting; None when the matrix is (numerically) singular."""
    n = len(rhs)
    a = [row[:] + [b] for row, b in zip(matrix, rhs)]
    for col in range(n):
        pivot = max(range(col, n), key=lambda r: abs(a[r][col]))
        if abs(a[pivot][col]) < 1e-300:
            return None
        a[col], a[pivot] = a[pivot], a[col]
        for r in range(col + 1, n):
            factor = a[r][col] / a[col][col]
            for k in range(col, n + 1):
                a[r][k] -= factor * a[col][k]
    x = [0.0] * n
    for r in range(n - 1, -1, -1):
        x[r] = (a[r][n] - sum(a[r][k] * x[k] for k in range(r + 1, n))) / a[r][r]
    return x


def _solve(equations: Sequence[Condition], unknowns: Sequence[str], point: dict[str, float], rng: random.Random,
           settings: AccuracySettings) -> bool:
    """Complete ``point`` with values of ``unknowns`` that satisfy ``equations``.

    Damped Newton's method in double arithmetic with a finite-difference Jacobian: the point is rounded to
    doubles anyway, so solving more precisely would buy nothing.
    """
    if not equations:
        return True

    def residuals(xs: list[float]) -> tuple[list[float], list[float]]:
        values = dict(point)
        values.update(zip(unknowns, xs))
        out, scales = [], []
        for c in equations:
            left, right = float_value(c.left, values), float_value(c.right, values)
            out.append(left - right)
            scales.append(max(1.0, abs(left), abs(right)))
        if not all(math.isfinite(v) for v in out):
            raise OverflowError("non-finite residual")
        return out, scales

    xs = [rng.uniform(*settings.range_of(u)) for u in unknowns]
    try:
        r, scales = residuals(xs)
        for _ in range(_NEWTON_STEPS):
            if all(abs(v) <= 1e-13 * sc for v, sc in zip(r, scales)):
                break
            jacobian_columns = []
            for j in range(len(xs)):
                h = 1e-7 * max(1.0, abs(xs[j]))
                shifted = xs[:]
                shifted[j] += h
                jacobian_columns.append([(a - b) / h for a, b in zip(residuals(shifted)[0], r)])
            matrix = [[jacobian_columns[j][i] for j in range(len(xs))] for i in range(len(r))]
            step = _linear_solve(matrix, [-v for v in r])
            if step is None:
                return False
            norm = sum(v * v for v in r)
            damping = 1.0
            for _ in range(20):
                trial = [x + damping * d for x, d in zip(xs, step)]
                try:
                    trial_r, trial_scales = residuals(trial)
                except (ValueError, ZeroDivisionError, OverflowError, ArithmeticError):
                    trial_r = None
                if trial_r is not None and sum(v * v for v in trial_r) < norm:
                    xs, r, scales = trial, trial_r, trial_scales
                    break
                damping /= 2
            else:
                return False
        else:
            return False
    except (ValueError, ZeroDivisionError, OverflowError, ArithmeticError, NotEvaluable):
        return False
    if not all(math.isfinite(x) for x in xs):
        return False
    point.update(zip(unknowns, xs))
    return True


def _sample_point(
    names: Sequence[str], equations: Sequence[Condition], unknowns: Sequence[str], others: Sequence[Condition],
    rng: random.Random, settings: AccuracySettings,
) -> dict[str, float] | None:
    free = [n for n in names if n not in unknowns]
    point = {n: rng.uniform(*settings.range_of(n)) for n in free}
    solved = _solve(equations, unknowns, point, rng, settings)
    # an equation often has real solutions only near the middle of the ranges (a unit sphere inside
    # [-10, 10]): draw the free variables again from ranges shrunk towards their midpoints
    involved = set().union(*(variables(c.left) | variables(c.right) for c in equations)) if equations else set()
    shrink = 1.0
    while not solved and equations and shrink > 1e-3:
        shrink /= 4
        for n in free:
            if n not in involved:
                continue
            low, high = settings.range_of(n)
            middle, half = (low + high) / 2, (high - low) / 2 * shrink
            point[n] = rng.uniform(middle - half, middle + half)
        solved = _solve(equations, unknowns, point, rng, settings)
    if not solved:
        return None
    try:
        for condition in others:
            if not _condition_holds(condition, point):
                return None
    except (DomainError, ZeroDivisionError, ArithmeticError, ValueError):
        return None
    return point


# ---------------------------------------------------------------- the estimate


def _summary(errors: list[tuple[float, dict[str, float], float, mpf]], non_finite: int, names: Sequence[str]) -> SideAccuracy:
    worst = max(errors, key=lambda e: e[0])
    with mp.workdps(EXACT_DIGITS):
        exact_text = mpmath.nstr(worst[3], 17)
    return SideAccuracy(
        median_ulps=float(statistics.median(e[0] for e in errors)),
        worst_ulps=worst[0],
        worst_point=tuple((n, worst[1][n]) for n in names if n in worst[1]),
        worst_computed=worst[2],
        worst_exact=exact_text,
        non_finite=non_finite,
    )


def _side_error(expr: Expr, point: Mapping[str, float]) -> tuple[float, float, mpf] | None:
    """(ulp error, computed, exact) or None when the exact value is undefined at the point."""
    try:
        exact = reference_value(expr, point)
    except (DomainError, ZeroDivisionError, ArithmeticError, ValueError):
        return None
    try:
        computed = float_value(expr, point)
    except (ZeroDivisionError, OverflowError, ValueError, ArithmeticError):
        computed = math.nan
    return ulp_error(computed, exact), computed, exact


def estimate_accuracy(obligation: Obligation, settings: AccuracySettings = AccuracySettings()) -> AccuracyEstimate:
    """Sample ``settings.samples`` points satisfying the obligation's conditions and compare both sides."""
    label = obligation.label
    exprs = [obligation.left, obligation.right] + [e for c in obligation.conditions for e in (c.left, c.right)]
    if any(has_opaque(e) for e in exprs):
        return AccuracyEstimate(label, 0, 0, None, None, None, problem="the claim calls functions the tool cannot evaluate")
    names = sorted(set().union(*(variables(e) for e in exprs)))
    equations = [c for c in obligation.conditions if c.relation == "=="]
    others = [c for c in obligation.conditions if c.relation != "=="]
    try:
        unknowns = _plan_equations(equations, names)
    except NotMeasurable as exc:
        return AccuracyEstimate(label, 0, 0, None, None, None, problem=str(exc))
    rng = random.Random(settings.seed)
    left_errors: list[tuple[float, dict[str, float], float, mpf]] = []
    right_errors: list[tuple[float, dict[str, float], float, mpf]] = []
    non_finite = [0, 0]
    rejected = 0
    attempts = 0
    used = 0
    while used < settings.samples and attempts < settings.samples * _ATTEMPTS_PER_SAMPLE:
        attempts += 1
        point = _sample_point(names, equations, unknowns, others, rng, settings)
        if point is None:
            rejected += 1
            continue
        left = _side_error(obligation.left, point)
        right = _side_error(obligation.right, point)
        if left is None or right is None:
            rejected += 1
            continue
        used += 1
        for side, (error, computed, exact), errors in ((0, left, left_errors), (1, right, right_errors)):
            if math.isinf(error):
                non_finite[side] += 1
            errors.append((error, point, computed, exact))
    if not used:
        return AccuracyEstimate(label, 0, rejected, None, None, None, tuple(unknowns),
                                problem="no sampled point satisfied every condition and domain rule")
    left_summary = _summary(left_errors, non_finite[0], names)
    right_summary = _summary(right_errors, non_finite[1], names)
    return AccuracyEstimate(label, used, rejected, left_summary, right_summary,
                            _more_accurate(left_summary, right_summary), tuple(unknowns))


def _more_accurate(left: SideAccuracy, right: SideAccuracy) -> str | None:
    """The side with the smaller median error; the worst error breaks a tie."""
    for a, b in ((left.median_ulps, right.median_ulps), (left.worst_ulps, right.worst_ulps)):
        if a < b:
            return "left"
        if b < a:
            return "right"
    return None


def estimate_verdicts(
    verdicts: Sequence[Verdict], settings: AccuracySettings, options: RunOptions | None = None
) -> list[tuple[str, list[AccuracyEstimate]]]:
    """(heading, estimates) for every proved verdict, one estimate per obligation (a refuted or open
    claim has no identity whose rounding is worth measuring).

    With ``options`` each estimate is sampled in a worker under the claim's time and memory limits, so a
    huge sample count cannot hold up the run.
    """
    proved = [v for v in verdicts if v.verdict == "proved"]
    obligations = [ob for v in proved for ob in v.claim.obligations]
    if options is None:
        estimates = [estimate_accuracy(ob, settings) for ob in obligations]
    else:
        from verifier.pipeline.runner import run_limited

        def stopped(args: tuple[Any, ...], why: str) -> AccuracyEstimate:
            return AccuracyEstimate(args[0].label, 0, 0, None, None, None, problem=f"sampling stopped: {why}")

        estimates = run_limited("verifier.features.accuracy:estimate_accuracy",
                                [(ob, settings) for ob in obligations], options, stopped)
    items: list[tuple[str, list[AccuracyEstimate]]] = []
    position = 0
    for verdict in proved:
        count = len(verdict.claim.obligations)
        items.append((f"{verdict.claim.location}: {verdict.claim.text}", estimates[position:position + count]))
        position += count
    return items
