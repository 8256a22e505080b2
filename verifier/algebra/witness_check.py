"""Checking a witness: a real point where every condition holds and the sides of the claim differ.

A claim is refuted only with a witness that passed this check, so it is strict:
- a rational point is checked in exact rational arithmetic whenever every value stays rational;
- otherwise with mpmath at two precisions (60 and 120 digits).  At each precision the equation conditions
  are refined by Newton steps on a maximal subset whose Jacobian has full row rank (a regular point, so a
  true solution lies right beside the printed one); the refinement must move the point by at most 1e-25
  (relative).  The equations left out (repeats, multiples, consequences of the others) must vanish up to
  rounding: a residual that is the same at both precisions is real and rejects the point.  Radicands must
  be >= 0 without any rounding allowance.  Strict inequalities, ``!=`` and the difference of the sides
  must exceed 1e-30 * max(1, |left|, |right|) and agree between the two precisions.
Witness values given as text are read as integers, ``p/q`` or decimals, never evaluated as code.
"""
from __future__ import annotations

import re
from dataclasses import dataclass
from fractions import Fraction
from typing import Mapping, Sequence

import mpmath
from mpmath import mp, mpf

from verifier.algebra.evaluate import NotEvaluable, exact_value, numeric_value, tiny, to_mpf
from verifier.algebra.newton import (
    RANK_TOLERANCE,
    independent_rows,
    jacobian,
    min_singular_ratio,
    newton,
    residuals,
    scale,
)
from verifier.algebra.witness_problem import Real, WitnessProblem, build_problem
from verifier.model.claim import Condition
from verifier.model.expr import Expr, variables
from verifier.model.verdict import Witness
from verifier.model.numbers import fraction_text  # re-exported

_LOW, _HIGH = 60, 120  # the two precisions of the numeric check (decimal digits)
# "clearly different": |left - right| > this * max(1, |left|, |right|), with the same value at both precisions
# (equations hold to 1e-96 at the 120-digit check, so far smaller differences are already meaningful)
_MARGIN = mpf(10) ** -30
_CONSISTENT = mpf(10) ** -10  # relative agreement of a difference between the two precisions
_MAX_MOVE = mpf(10) ** -25  # how far (relative) the refinement may move a checked point
_VALUE_DIGITS = 40  # significant digits of an irrational witness value
_SIDE_DIGITS = 20  # significant digits of the printed sides


# ---------------------------------------------------------------- exact check


def _holds_exactly(relation: str, a: Fraction, b: Fraction) -> bool:
    return {
        "==": a == b,
        "!=": a != b,
        "<": a < b,
        "<=": a <= b,
        ">": a > b,
        ">=": a >= b,
    }[relation]


def exact_check(problem: WitnessProblem, point: Mapping[str, Fraction],
               texts: Mapping[str, str] | None = None) -> tuple[str, Witness | None]:
    """("witness", w) / ("fails", None) / ("numeric", None) when exact arithmetic cannot decide.
    ``texts`` are the values as given (a decimal stays a decimal in the witness)."""
    undecided = False
    equations_fail = False
    for c in problem.equations + problem.extra_equations + problem.others:
        a = exact_value(c.left, point)
        b = exact_value(c.right, point)
        if a is None or b is None:
            undecided = True
            continue
        if not _holds_exactly(c.relation, a, b):
            if c.relation != "==":
                return "fails", None
            equations_fail = True  # a decimal point may lie next to a true solution: refine numerically
    left = exact_value(problem.left, point)
    right = exact_value(problem.right, point)
    if undecided or equations_fail or left is None or right is None:
        return "numeric", None
    if left == right:
        return "fails", None
    values = tuple((name, texts[name] if texts else fraction_text(point[name])) for name in problem.names)
    return "witness", Witness(values, _exact_side_text(left), _exact_side_text(right), True)


def _exact_side_text(x: Fraction) -> str:
    """The exact value, or 20 significant digits when the fraction is too long to read."""
    text = fraction_text(x)
    if len(text) <= 60:
        return text
    with mp.workdps(_SIDE_DIGITS + 10):
        return mpmath.nstr(to_mpf(x), _SIDE_DIGITS)



# ---------------------------------------------------------------- numeric check


def _refine(problem: WitnessProblem, point: Mapping[str, Real], prec: int, deadline: float | None = None
            ) -> tuple[dict[str, Real], list[mpf]] | None:
    """Move the point onto the equations: Newton on a maximal set of equations whose Jacobian has full
    row rank (a regular point: a true solution lies within about residual/singular value), only over
    their variables.  The other equations must then hold to the precision; their residuals are returned
    so that the caller can reject residuals that are the same at both precisions (real, not rounding)."""
    equations = list(problem.equations)
    names = list(problem.equation_names)
    with mp.workdps(prec + 10):
        start = {name: to_mpf(v) for name, v in point.items()}
        rows = independent_rows(jacobian(equations, start, names, prec))
    system = [equations[i] for i in rows]
    dependent = [c for i, c in enumerate(equations) if i not in rows]
    unknowns = sorted(set().union(*(variables(c.left) | variables(c.right) for c in system))) if system else []
    current: dict[str, Real] = dict(point)
    if system:
        refined = newton(system, point, unknowns, prec, polish=1, deadline=deadline)
        if refined is None:
            return None
        with mp.workdps(prec + 10):
            if min_singular_ratio(jacobian(system, refined, unknowns, prec)) < RANK_TOLERANCE:
                return None
            for name in unknowns:
                begin = to_mpf(point[name])
                if abs(refined[name] - begin) > _MAX_MOVE * scale(begin):
                    return None
        current.update({name: refined[name] for name in unknowns})
    eps = tiny(prec)
    with mp.workdps(prec):
        # every equation, now with every radicand >= 0 for real
        for residual, size in residuals(system, current, prec, strict=True):
            if abs(residual) > eps * size:
                return None
        leftovers = []
        for residual, size in residuals(dependent, current, prec, strict=True):
            if abs(residual) > eps * size:
                return None
            leftovers.append(residual)
    return current, leftovers


def _numeric_difference(a: mpf, b: mpf) -> tuple[mpf, mpf]:
    return a - b, scale(a, b)


@dataclass
class _Pass:
    """What one precision saw: signed differences to compare across precisions, and the sides."""

    strict: list[mpf]  # strict inequalities and != (left - right), then the sides' difference last
    loose: list[mpf]  # non-strict inequalities (left - right, sign-normalized so that >= 0 is wanted)
    dependent: list[mpf]  # residuals of equations left out of the Newton system (must be rounding noise)
    left: mpf
    right: mpf


def _numeric_pass(problem: WitnessProblem, point: Mapping[str, Real], prec: int,
                  deadline: float | None = None) -> _Pass | None:
    """At one precision: refine onto the equations, check them and the conditions, return the differences
    (to be compared across precisions) and the sides."""
    current: Mapping[str, Real] = point
    dependent: list[mpf] = []
    if problem.equations:
        refined = _refine(problem, point, prec, deadline)
        if refined is None:
            return None
        current, dependent = refined
    eps = tiny(prec)
    result = _Pass([], [], dependent, mpf(0), mpf(0))
    with mp.workdps(prec):
        for residual, size in residuals(problem.extra_equations, current, prec, strict=True):
            if abs(residual) > eps * size:
                return None
            result.dependent.append(residual)  # like a dependent equation: must be rounding noise only
        for c in problem.others:
            a = numeric_value(c.left, current, prec, strict_radicands=True)
            b = numeric_value(c.right, current, prec, strict_radicands=True)
            d, size = _numeric_difference(a, b)
            if c.relation in ("<=", ">="):
                signed = d if c.relation == ">=" else -d
                if signed < -eps * scale(a, b):
                    return None
                result.loose.append(signed)
                continue
            signed = {"!=": abs(d), ">": d, "<": -d}[c.relation]
            if signed <= _MARGIN * size or signed <= 0:
                return None
            result.strict.append(d)
        left = numeric_value(problem.left, current, prec, strict_radicands=True)
        right = numeric_value(problem.right, current, prec, strict_radicands=True)
        d, size = _numeric_difference(left, right)
        if d == 0 or abs(d) <= _MARGIN * size:
            return None
        result.strict.append(d)
        result.left, result.right = left, right
    return result


def _consistent(low: mpf, high: mpf) -> bool:
    with mp.workdps(_HIGH):
        return low != 0 and high != 0 and abs(low - high) <= _CONSISTENT * abs(high)


def _verify(problem: WitnessProblem, point: Mapping[str, Fraction], texts: Mapping[str, str],
            deadline: float | None = None) -> Witness | None:
    try:
        outcome, witness = exact_check(problem, point, texts)
        if outcome == "witness":
            return witness
        if outcome == "fails":
            return None
        low = _numeric_pass(problem, point, _LOW, deadline)
        if low is None:
            return None
        high = _numeric_pass(problem, point, _HIGH, deadline)
        if high is None:
            return None
    except (ArithmeticError, NotEvaluable, KeyError, ValueError, TypeError):
        # undefined at the point, or numerically unusable (mpmath gave up): not a witness
        return None
    if not all(_consistent(a, b) for a, b in zip(low.strict, high.strict)):
        return None
    # a non-strict condition may be 0 up to rounding, but not negative by the same amount at both precisions
    if any(b < 0 and _consistent(a, b) for a, b in zip(low.loose, high.loose)):
        return None
    # an equation left out as dependent must vanish up to rounding: a residual that is the same at both
    # precisions is real (x = 1e-70 does not solve x**2 == 0)
    if len(low.dependent) != len(high.dependent):
        return None
    if any(b != 0 and _consistent(a, b) for a, b in zip(low.dependent, high.dependent)):
        return None
    values = tuple((name, texts[name]) for name in problem.names)
    with mp.workdps(_HIGH):
        # enough digits for the difference to show (20 at least)
        ratio = scale(high.left, high.right) / abs(high.left - high.right)
        digits = min(_HIGH - 10, max(_SIDE_DIGITS, int(mpmath.log10(ratio)) + 6))
        left_text = _side_text(high.left, digits)
        right_text = _side_text(high.right, digits)
    return Witness(values, left_text, right_text, False)


def _side_text(x: mpf, digits: int = _SIDE_DIGITS) -> str:
    text = mpmath.nstr(x, digits)
    return text[:-2] if text.endswith(".0") else text


# ---------------------------------------------------------------- parsing witness values

_INTEGER = re.compile(r"[+-]?[0-9]{1,400}")
_RATIO = re.compile(r"([+-]?[0-9]{1,400})/([0-9]{1,400})")
_DECIMAL = re.compile(r"([+-]?)([0-9]{0,400})\.?([0-9]{0,400})(?:[eE]([+-]?[0-9]{1,4}))?")


def parse_value(text: str) -> Fraction | None:
    """An integer, "p/q" or a decimal (optionally with an exponent) as an exact Fraction; None otherwise."""
    text = text.strip()
    if not text or len(text) > 900:
        return None
    if _INTEGER.fullmatch(text):
        return Fraction(int(text))
    m = _RATIO.fullmatch(text)
    if m:
        denominator = int(m.group(2))
        if denominator == 0:
            return None
        return Fraction(int(m.group(1)), denominator)
    m = _DECIMAL.fullmatch(text)
    if m and (m.group(2) or m.group(3)):
        exponent = int(m.group(4) or 0)
        if abs(exponent) > 400:
            return None
        digits = (m.group(2) or "") + (m.group(3) or "")
        value = Fraction(int(digits)) / 10 ** len(m.group(3) or "")
        value *= Fraction(10) ** exponent
        return -value if m.group(1) == "-" else value
    return None


def check_witness(left: Expr, right: Expr, conditions: Sequence[Condition],
                  values: Mapping[str, str]) -> Witness | None:
    """Re-check a witness given as text (integers, "p/q" or decimals; nothing is evaluated as code).
    Returns the checked Witness, or None when it is malformed, incomplete or does not refute the claim."""
    problem = build_problem(left, right, conditions)
    if problem is None or set(values) != set(problem.names):
        return None
    point: dict[str, Fraction] = {}
    texts: dict[str, str] = {}
    for name in problem.names:
        text = values[name]
        if not isinstance(text, str):
            return None
        parsed = parse_value(text)
        if parsed is None:
            return None
        point[name] = parsed
        texts[name] = text.strip()
    return _verify(problem, point, texts)


def witness_from(problem: WitnessProblem, point: Mapping[str, Real], deadline: float | None = None) -> Witness | None:
    """Print a candidate (exact values as fractions, others with 40 digits) and check what is printed."""
    moving = [name for name in problem.equation_names if not isinstance(point[name], Fraction)]
    if problem.equations and moving:
        # the search works at 30 digits: polish its solution before printing 40 (exact values stay put)
        polished = newton(problem.equations, point, moving, _LOW, deadline=deadline)
        if polished is None:
            return None
        point = {name: (polished[name] if name in moving else point[name]) for name in problem.names}
    texts: dict[str, str] = {}
    exact: dict[str, Fraction] = {}
    for name in problem.names:
        v = point[name]
        if isinstance(v, Fraction):
            texts[name] = fraction_text(v)
            exact[name] = v
        else:
            with mp.workdps(_VALUE_DIGITS + 10):
                text = mpmath.nstr(v, _VALUE_DIGITS, strip_zeros=True, min_fixed=-6, max_fixed=12)
            parsed = parse_value(text)
            if parsed is None:
                return None
            texts[name] = text
            exact[name] = parsed
    return _verify(problem, exact, texts, deadline)


