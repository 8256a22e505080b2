"""Counterexample search and checking: a real point where every condition holds and the sides differ.

A claim is refuted only with a witness returned from here, so the check is strict:
- a rational point is checked in exact rational arithmetic whenever every value stays rational;
- otherwise with mpmath at two precisions (60 and 120 digits).  At each precision the equation conditions
  are refined by Newton steps on a maximal subset whose Jacobian has full row rank (a regular point, so a
  true solution lies right beside the printed one); the refinement must move the point by at most 1e-25
  (relative).  The equations left out (repeats, multiples, consequences of the others) must vanish up to
  rounding: a residual that is the same at both precisions is real and rejects the point.  Radicands must
  be >= 0 without any rounding allowance.  Strict inequalities, ``!=`` and the difference of the sides
  must exceed 1e-30 * max(1, |left|, |right|) and agree between the two precisions.
The search tries small rationals, random rationals of varied signs and scales (within the bounds that
conditions such as ``x > 1/2`` set), exact solutions of equations affine in one variable, and Newton
solutions of the equations from random starts.  Deterministic for a given seed (up to the deadline).
"""
from __future__ import annotations

import random
import re
import time
from dataclasses import dataclass
from fractions import Fraction
from itertools import islice, product
from typing import Callable, Iterator, Mapping, Sequence, Union

import mpmath
from mpmath import mp, mpf

from verifier.algebra.evaluate import (
    DomainError,
    NotEvaluable,
    children,
    exact_value,
    has_opaque,
    numeric_value,
    postorder,
    tiny,
    to_mpf,
    variables,
)
from verifier.model.claim import Condition
from verifier.model.expr import BinOp, Call, Expr, Neg, Num, Opaque, Pow, Var
from verifier.model.numbers import fraction_text as _fraction_text
from verifier.model.verdict import Witness

Real = Union[mpf, Fraction]

# ---------------------------------------------------------------- random evaluation modulo a prime

_PRIME = 2**61 - 1  # a Mersenne prime


class _ZeroDivisorModP(Exception):
    pass


class _Unsupported(Exception):
    pass


def _mod_value(expr: Expr, point: Mapping[str, int]) -> int:
    p = _PRIME
    results: dict[int, int] = {}
    for node in postorder(expr):
        if isinstance(node, Num):
            value = Fraction(node.value)
            if value.denominator % p == 0:
                raise _Unsupported()
            r = value.numerator % p * pow(value.denominator, -1, p) % p
        elif isinstance(node, Var):
            r = point[node.name]
        elif isinstance(node, Neg):
            r = -results[id(node.operand)] % p
        elif isinstance(node, BinOp):
            a, b = results[id(node.left)], results[id(node.right)]
            if node.op == "+":
                r = (a + b) % p
            elif node.op == "-":
                r = (a - b) % p
            elif node.op == "*":
                r = a * b % p
            elif node.op == "/":
                if b == 0:
                    raise _ZeroDivisorModP()
                r = a * pow(b, -1, p) % p
            else:
                raise _Unsupported()
        elif isinstance(node, Pow):
            exponent = Fraction(node.exponent)
            if exponent.denominator != 1:
                raise _Unsupported()
            base, k = results[id(node.base)], exponent.numerator
            if k < 0:
                if base == 0:
                    raise _ZeroDivisorModP()
                base, k = pow(base, -1, p), -k
            r = pow(base, k, p)
        elif isinstance(node, Call) and node.function == "fma":
            a, b, c = (results[id(x)] for x in node.args)
            r = (a * b + c) % p
        else:
            raise _Unsupported()
        results[id(node)] = r
    return results[id(expr)]


def differs_mod_p(left: Expr, right: Expr, *, seed: int = 0, trials: int = 3) -> bool | None:
    """True when the two rational expressions differ at a random point modulo 2**61-1 (so they differ
    as rational functions), False when they agree at ``trials`` points, None when an expression uses
    anything but + - * /, integer powers and fma, or no point with non-zero denominators was found."""
    rng = random.Random(seed)
    names = sorted(variables(left) | variables(right))
    agreed = 0
    attempts = 0
    while agreed < trials:
        attempts += 1
        if attempts > 4 * trials + 8:
            return None  # denominators keep vanishing (perhaps identically zero)
        point = {name: rng.randrange(1, _PRIME) for name in names}
        try:
            a = _mod_value(left, point)
            b = _mod_value(right, point)
        except _Unsupported:
            return None
        except _ZeroDivisorModP:
            continue
        if a != b:
            return True
        agreed += 1
    return False


# ---------------------------------------------------------------- problem data

_LOW, _HIGH = 60, 120  # the two precisions of the numeric check (decimal digits)
# "clearly different": |left - right| > this * max(1, |left|, |right|), with the same value at both precisions
# (equations hold to 1e-96 at the 120-digit check, so far smaller differences are already meaningful)
_MARGIN = mpf(10) ** -30
_CONSISTENT = mpf(10) ** -10  # relative agreement of a difference between the two precisions
_MAX_MOVE = mpf(10) ** -25  # how far (relative) the refinement may move a checked point
_RANK_TOLERANCE = mpf(10) ** -12  # smallest singular value of the Jacobian, relative to max(1, largest entry)
_VALUE_DIGITS = 40  # significant digits of an irrational witness value
_SIDE_DIGITS = 20  # significant digits of the printed sides
_SEARCH_DIGITS = 30  # working precision of the search (the check refines at 60 and 120 digits)


@dataclass(frozen=True)
class _Problem:
    left: Expr
    right: Expr
    equations: tuple[Condition, ...]  # the system that Newton refines: distinct and not proportional
    extra_equations: tuple[Condition, ...]  # repeats, multiples of a kept equation, constant equations
    others: tuple[Condition, ...]
    names: tuple[str, ...]
    equation_names: tuple[str, ...]  # variables that occur in some non-constant equation


def _proportional(first: Condition, second: Condition, rng: random.Random) -> bool:
    """True when second's difference is a constant multiple of first's as rational functions (tested at
    random points modulo 2**61-1): it then vanishes exactly wherever the first one does."""
    a_expr = BinOp("-", first.left, first.right)
    b_expr = BinOp("-", second.left, second.right)
    names = sorted(variables(a_expr) | variables(b_expr))
    ratio: int | None = None
    agreed = 0
    for _ in range(12):
        point = {name: rng.randrange(1, _PRIME) for name in names}
        try:
            a = _mod_value(a_expr, point)
            b = _mod_value(b_expr, point)
        except _Unsupported:
            return False
        except _ZeroDivisorModP:
            continue
        if a == 0:
            if b != 0:
                return False
            continue
        r = b * pow(a, -1, _PRIME) % _PRIME
        if ratio is None:
            ratio = r
        elif r != ratio:
            return False
        agreed += 1
        if agreed == 4:
            return True
    return False


def _fingerprint(expr: Expr) -> int:
    """A structural hash computed bottom-up once per node (dataclass hashing of a shared DAG is exponential)."""
    prints: dict[int, int] = {}
    for node in postorder(expr):
        kids = tuple(prints[id(child)] for child in children(node))
        if isinstance(node, Num):
            own: object = ("num", node.value)
        elif isinstance(node, Var):
            own = ("var", node.name)
        elif isinstance(node, BinOp):
            own = ("bin", node.op)
        elif isinstance(node, Pow):
            own = ("pow", node.exponent)
        elif isinstance(node, Call):
            own = ("call", node.function)
        elif isinstance(node, Opaque):
            own = ("opaque", node.name)
        else:
            own = (type(node).__name__,)
        prints[id(node)] = hash((own, kids))
    return prints[id(expr)]


def _problem(left: Expr, right: Expr, conditions: Sequence[Condition]) -> _Problem | None:
    exprs = [left, right] + [e for c in conditions for e in (c.left, c.right)]
    if any(has_opaque(e) for e in exprs):
        return None
    names: set[str] = set()
    for e in exprs:
        names |= variables(e)
    rng = random.Random(12345)
    equations: list[Condition] = []
    extra: list[Condition] = []
    seen: set[tuple[int, int]] = set()
    for c in conditions:
        if c.relation != "==":
            continue
        key = (_fingerprint(c.left), _fingerprint(c.right))
        if key in seen or not (variables(c.left) | variables(c.right)):
            extra.append(c)  # a repeat or a constant equation would make the Jacobian singular
            continue
        seen.add(key)
        if any(_proportional(kept, c, rng) for kept in equations):
            extra.append(c)
            continue
        equations.append(c)
    equation_names: set[str] = set()
    for c in equations:
        equation_names |= variables(c.left) | variables(c.right)
    return _Problem(left, right, tuple(equations), tuple(extra),
                    tuple(c for c in conditions if c.relation != "=="),
                    tuple(sorted(names)), tuple(sorted(equation_names)))


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


def _exact_check(problem: _Problem, point: Mapping[str, Fraction],
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
    if left is None or right is None:
        undecided = True
    if undecided or equations_fail:
        return "numeric", None
    if left == right:
        return "fails", None
    values = tuple((name, texts[name] if texts else _fraction_text(point[name])) for name in problem.names)
    return "witness", Witness(values, _exact_side_text(left), _exact_side_text(right), True)


def _exact_side_text(x: Fraction) -> str:
    """The exact value, or 20 significant digits when the fraction is too long to read."""
    text = _fraction_text(x)
    if len(text) <= 60:
        return text
    with mp.workdps(_SIDE_DIGITS + 10):
        return mpmath.nstr(to_mpf(x), _SIDE_DIGITS)


# ---------------------------------------------------------------- numeric check


def _scale(*xs: mpf) -> mpf:
    return max([mpf(1)] + [abs(x) for x in xs])


def _residuals(equations: Sequence[Condition], point: Mapping[str, Real], prec: int,
               strict: bool = False) -> list[tuple[mpf, mpf]]:
    """(left - right, size) for each equation."""
    out = []
    for c in equations:
        a = numeric_value(c.left, point, prec, strict_radicands=strict)
        b = numeric_value(c.right, point, prec, strict_radicands=strict)
        out.append((a - b, _scale(a, b)))
    return out


def _jacobian(equations: Sequence[Condition], point: dict[str, mpf], unknowns: Sequence[str],
              prec: int) -> mpmath.matrix:
    """Central differences with step 10**-(prec/3) (error ~ 10**-(2 prec/3), enough for Newton)."""
    jac = mpmath.matrix(len(equations), len(unknowns))
    for j, name in enumerate(unknowns):
        x = point[name]
        h = mpf(10) ** (-(prec // 3)) * _scale(x)
        plus = dict(point)
        plus[name] = x + h
        minus = dict(point)
        minus[name] = x - h
        rp = _residuals(equations, plus, prec)
        rm = _residuals(equations, minus, prec)
        for i in range(len(equations)):
            jac[i, j] = (rp[i][0] - rm[i][0]) / (2 * h)
    return jac


def _min_singular_ratio(jac: mpmath.matrix) -> mpf:
    """Smallest singular value over max(1, largest entry): 0 when the rows are dependent, tiny near a
    singular point such as x = 1e-70 of x**2 == 0 (where no true solution need lie next to the point)."""
    rows, cols = jac.rows, jac.cols
    if rows > cols:
        return mpf(0)
    largest = max(abs(jac[i, j]) for i in range(rows) for j in range(cols))
    if largest == 0:
        return mpf(0)
    largest = max(largest, mpf(1))
    singular = mpmath.svd_r(jac, compute_uv=False)
    return min(abs(singular[i]) for i in range(rows)) / largest


def _minimum_norm_step(jac: mpmath.matrix, f: mpmath.matrix) -> list[mpf]:
    """step = J^T (J J^T + lambda I)^-1 f: the minimum-norm Newton step, with a tiny damping lambda (relative
    10**-(dps/3)) so that dependent equations (a circle stated twice in different forms) do not make the
    linear system singular."""
    gram = jac * jac.T
    size = max([abs(gram[i, i]) for i in range(gram.rows)] + [mpf(0)])
    if size == 0:
        raise ZeroDivisionError("zero Jacobian")
    damping = size * mpf(10) ** (-(mp.dps // 3))
    for i in range(gram.rows):
        gram[i, i] += damping
    y = mpmath.lu_solve(gram, f)
    step = jac.T * y
    return [step[j] for j in range(jac.cols)]


def _newton(equations: Sequence[Condition], start: Mapping[str, Real], unknowns: Sequence[str], prec: int,
            iterations: int = 30, deadline: float | None = None, polish: int = 0) -> dict[str, mpf] | None:
    """Gauss-Newton steps (minimum norm) on ``unknowns`` until every residual is below 10**-(0.8 prec)
    relative to the size of its sides, then ``polish`` more steps; None when that does not happen.
    (A polishing step moves a point that was within the tolerance by the same tiny offset at every
    precision, so that such an offset cannot look like a real difference at both precisions.)"""
    with mp.workdps(prec + 10):
        point: dict[str, mpf] = {name: to_mpf(v) for name, v in start.items()}
        eps = tiny(prec)
        history: list[mpf] = []
        for _ in range(iterations + polish):
            if deadline is not None and time.monotonic() > deadline:
                return None
            try:
                res = _residuals(equations, point, prec)
                if all(abs(r) <= eps * s for r, s in res):
                    if polish == 0:
                        return point
                    polish -= 1
                else:
                    history.append(max(abs(r) / s for r, s in res))
                    if len(history) >= 7 and history[-1] > history[-4] / 2:
                        return None  # not converging (no real solution nearby, or a singular one)
                jac = _jacobian(equations, point, unknowns, prec)
                step = _minimum_norm_step(jac, mpmath.matrix([r for r, _ in res]))
            except (ArithmeticError, ValueError):  # undefined on the way, or mpmath gave up
                return None
            for j, name in enumerate(unknowns):
                point[name] = point[name] - step[j]
                if not mpmath.isfinite(point[name]) or abs(point[name]) > mpf(10) ** 12:
                    return None
        return None


def _independent_rows(jac: mpmath.matrix) -> list[int]:
    """A maximal set of rows of full rank, chosen greedily in order."""
    chosen: list[int] = []
    for i in range(jac.rows):
        trial = chosen + [i]
        sub = mpmath.matrix(len(trial), jac.cols)
        for r, row in enumerate(trial):
            for c in range(jac.cols):
                sub[r, c] = jac[row, c]
        if _min_singular_ratio(sub) >= _RANK_TOLERANCE:
            chosen = trial
    return chosen


def _refine(problem: _Problem, point: Mapping[str, Real], prec: int, deadline: float | None = None
            ) -> tuple[dict[str, Real], list[mpf]] | None:
    """Move the point onto the equations: Newton on a maximal set of equations whose Jacobian has full
    row rank (a regular point: a true solution lies within about residual/singular value), only over
    their variables.  The other equations must then hold to the precision; their residuals are returned
    so that the caller can reject residuals that are the same at both precisions (real, not rounding)."""
    equations = list(problem.equations)
    names = list(problem.equation_names)
    with mp.workdps(prec + 10):
        start = {name: to_mpf(v) for name, v in point.items()}
        rows = _independent_rows(_jacobian(equations, start, names, prec))
    system = [equations[i] for i in rows]
    dependent = [c for i, c in enumerate(equations) if i not in rows]
    unknowns = sorted(set().union(*(variables(c.left) | variables(c.right) for c in system))) if system else []
    current: dict[str, Real] = dict(point)
    if system:
        refined = _newton(system, point, unknowns, prec, polish=1, deadline=deadline)
        if refined is None:
            return None
        with mp.workdps(prec + 10):
            if _min_singular_ratio(_jacobian(system, refined, unknowns, prec)) < _RANK_TOLERANCE:
                return None
            for name in unknowns:
                begin = to_mpf(point[name])
                if abs(refined[name] - begin) > _MAX_MOVE * _scale(begin):
                    return None
        current.update({name: refined[name] for name in unknowns})
    eps = tiny(prec)
    with mp.workdps(prec):
        # every equation, now with every radicand >= 0 for real
        for residual, size in _residuals(system, current, prec, strict=True):
            if abs(residual) > eps * size:
                return None
        leftovers = []
        for residual, size in _residuals(dependent, current, prec, strict=True):
            if abs(residual) > eps * size:
                return None
            leftovers.append(residual)
    return current, leftovers


def _numeric_difference(a: mpf, b: mpf) -> tuple[mpf, mpf]:
    return a - b, _scale(a, b)


@dataclass
class _Pass:
    """What one precision saw: signed differences to compare across precisions, and the sides."""

    strict: list[mpf]  # strict inequalities and != (left - right), then the sides' difference last
    loose: list[mpf]  # non-strict inequalities (left - right, sign-normalized so that >= 0 is wanted)
    dependent: list[mpf]  # residuals of equations left out of the Newton system (must be rounding noise)
    left: mpf
    right: mpf


def _numeric_pass(problem: _Problem, point: Mapping[str, Real], prec: int,
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
        for residual, size in _residuals(problem.extra_equations, current, prec, strict=True):
            if abs(residual) > eps * size:
                return None
            result.dependent.append(residual)  # like a dependent equation: must be rounding noise only
        for c in problem.others:
            a = numeric_value(c.left, current, prec, strict_radicands=True)
            b = numeric_value(c.right, current, prec, strict_radicands=True)
            d, size = _numeric_difference(a, b)
            if c.relation in ("<=", ">="):
                signed = d if c.relation == ">=" else -d
                if signed < -eps * _scale(a, b):
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


def _verify(problem: _Problem, point: Mapping[str, Fraction], texts: Mapping[str, str],
            deadline: float | None = None) -> Witness | None:
    try:
        outcome, witness = _exact_check(problem, point, texts)
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
        ratio = _scale(high.left, high.right) / abs(high.left - high.right)
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
    problem = _problem(left, right, conditions)
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


def _witness_from(problem: _Problem, point: Mapping[str, Real], deadline: float | None = None) -> Witness | None:
    """Print a candidate (exact values as fractions, others with 40 digits) and check what is printed."""
    moving = [name for name in problem.equation_names if not isinstance(point[name], Fraction)]
    if problem.equations and moving:
        # the search works at 30 digits: polish its solution before printing 40 (exact values stay put)
        polished = _newton(problem.equations, point, moving, _LOW, deadline=deadline)
        if polished is None:
            return None
        point = {name: (polished[name] if name in moving else point[name]) for name in problem.names}
    texts: dict[str, str] = {}
    exact: dict[str, Fraction] = {}
    for name in problem.names:
        v = point[name]
        if isinstance(v, Fraction):
            texts[name] = _fraction_text(v)
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


# ---------------------------------------------------------------- the search

_SMALL = [Fraction(0), Fraction(1), Fraction(-1), Fraction(2), Fraction(-2), Fraction(1, 2), Fraction(3),
          Fraction(-1, 2), Fraction(1, 3), Fraction(-3), Fraction(3, 2), Fraction(5), Fraction(-2, 3),
          Fraction(7), Fraction(1, 5)]


def _small_rational(rng: random.Random) -> Fraction:
    return rng.choice(_SMALL[1:])


def _random_rational(rng: random.Random, size: int) -> Fraction:
    """A random fraction with numerator and denominator up to 10**size, times a random power of 10."""
    bound = 10**size
    value = Fraction(rng.randint(1, bound), rng.randint(1, bound))
    if rng.random() < 0.3:
        value *= Fraction(10) ** rng.randint(-3, 3)
    return -value if rng.random() < 0.5 else value


@dataclass(frozen=True)
class _Bound:
    """Bounds on one variable read from conditions such as ``x > 0`` or ``1/2 <= x``."""

    low: Fraction | None = None
    low_strict: bool = True
    high: Fraction | None = None
    high_strict: bool = True

    def tightened(self, relation: str, value: Fraction) -> "_Bound":
        """With ``variable RELATION value`` added (RELATION one of < <= > >=)."""
        strict = relation in ("<", ">")
        if relation in (">", ">="):
            if self.low is None or value > self.low or (value == self.low and strict):
                return _Bound(value, strict, self.high, self.high_strict)
            return self
        if self.high is None or value < self.high or (value == self.high and strict):
            return _Bound(self.low, self.low_strict, value, strict)
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


def _bounds(problem: _Problem) -> dict[str, _Bound]:
    bounds: dict[str, _Bound] = {}
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
        bounds[name] = bounds.get(name, _Bound()).tightened(relation, value)
    return bounds


def _bounded(problem: _Problem, bounds: Mapping[str, _Bound], rng: random.Random,
             raw: Callable[[], Fraction]) -> dict[str, Fraction]:
    return {name: bounds[name].inside(raw(), rng) if name in bounds else raw() for name in problem.names}


def _rational_points(problem: _Problem, rng: random.Random,
                     bounds: Mapping[str, _Bound]) -> Iterator[dict[str, Fraction]]:
    names = problem.names
    n = len(names)
    if n == 0:
        yield {}
        return
    # (a) every combination of the simplest values first
    k = 2
    while (k + 1) ** n <= 256 and k < len(_SMALL):
        k += 1
    for combo in islice(product(_SMALL[:k], repeat=n), 256):
        yield dict(zip(names, combo))
    # then random small values, then random fractions of growing size with varied signs and scales;
    # every third point is all positive (sign hypotheses such as x > 0, y > 0 are common) and another
    # third keeps within the bounds that conditions such as x > 1/2 put on single variables
    for i in range(150):
        if i % 3 == 2:
            yield {name: abs(_small_rational(rng)) for name in names}
        elif i % 3 == 1 and bounds:
            yield _bounded(problem, bounds, rng, lambda: _small_rational(rng))
        else:
            yield {name: rng.choice(_SMALL) for name in names}
    for size in range(1, 6):
        for i in range(40):
            if i % 3 == 1 and bounds:
                yield _bounded(problem, bounds, rng, lambda: _random_rational(rng, size))
                continue
            point = {name: _random_rational(rng, size) for name in names}
            yield {name: abs(v) for name, v in point.items()} if i % 3 == 2 else point


def _degree(expr: Expr, name: str) -> int | None:
    """The degree of ``expr`` in ``name`` when it is polynomial in it (an upper bound), else None."""
    degrees: dict[int, int | None] = {}
    for node in postorder(expr):
        if isinstance(node, Num):
            d: int | None = 0
        elif isinstance(node, Var):
            d = 1 if node.name == name else 0
        elif isinstance(node, Neg):
            d = degrees[id(node.operand)]
        elif isinstance(node, BinOp):
            a, b = degrees[id(node.left)], degrees[id(node.right)]
            if a is None or b is None:
                d = None
            elif node.op in ("+", "-"):
                d = max(a, b)
            elif node.op == "*":
                d = a + b
            else:
                d = a if b == 0 else None
        elif isinstance(node, Pow):
            base = degrees[id(node.base)]
            e = Fraction(node.exponent)
            if base == 0:
                d = 0
            elif base is None or e.denominator != 1 or e < 0:
                d = None
            else:
                d = base * int(e)
        else:
            d = 0 if all(degrees[id(a)] == 0 for a in node.args) else None
            if isinstance(node, Call) and node.function == "fma" and d is None:
                a, b, c = (degrees[id(x)] for x in node.args)
                d = None if None in (a, b, c) else max(a + b, c)  # type: ignore[operator]
        degrees[id(node)] = d
    return degrees[id(expr)]


def _choose_unknowns(problem: _Problem, rng: random.Random) -> list[str] | None:
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


def _exact_solutions(problem: _Problem, rng: random.Random, tries: int,
                     bounds: Mapping[str, _Bound]) -> Iterator[dict[str, Fraction]]:
    """Equations affine in their chosen variable, solved exactly by secant steps (Gauss-Seidel rounds)."""
    for _ in range(tries):
        unknowns = _choose_unknowns(problem, rng)
        if unknowns is None:
            return
        point = _bounded(problem, bounds, rng,
                         lambda: _small_rational(rng) if rng.random() < 0.6 else _random_rational(rng, 2))
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


def _numeric_solutions(problem: _Problem, rng: random.Random, tries: int, deadline: float,
                       bounds: Mapping[str, _Bound]) -> Iterator[dict[str, Real]]:
    """Equations solved by Newton's method at 50 digits from random starts: square systems in one chosen
    variable per equation (the others fixed at random rationals), and every other try minimum-norm steps
    on all the equations' variables.  A root that is a small fraction is offered exactly first."""
    for attempt in range(tries):
        if time.monotonic() > deadline:
            return
        unknowns = _choose_unknowns(problem, rng)
        # fixed values mostly of size about 1, where equations such as unit norms have real solutions
        fixed = _bounded(problem, bounds, rng,
                         lambda: _small_rational(rng) / rng.choice((1, 2, 4, 8)) if rng.random() < 0.6
                         else _random_rational(rng, 2))
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
            root = _newton(problem.equations, start, plan, _SEARCH_DIGITS, iterations=20, deadline=deadline)
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


def _plausible(problem: _Problem, point: Mapping[str, Real]) -> bool:
    """A cheap screen at 30 digits before the full check."""
    prec = 30
    try:
        with mp.workdps(prec):
            for c in problem.equations:
                a = numeric_value(c.left, point, prec)
                b = numeric_value(c.right, point, prec)
                if abs(a - b) > mpf(10) ** -15 * _scale(a, b):
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
            return a != b and abs(a - b) > threshold * _scale(a, b)
    except _SEARCH_FAILURES:
        return False


def _try(problem: _Problem, point: Mapping[str, Real], deadline: float) -> Witness | None:
    if all(isinstance(v, Fraction) for v in point.values()):
        exact_point = {k: v for k, v in point.items() if isinstance(v, Fraction)}
        try:
            outcome, witness = _exact_check(problem, exact_point)
        except (DomainError, ZeroDivisionError):
            return None
        if outcome == "witness":
            return witness
        if outcome == "fails":
            return None
    if not _plausible(problem, point):
        return None
    return _witness_from(problem, point, deadline)


def _candidates(problem: _Problem, rng: random.Random, deadline: float) -> Iterator[Mapping[str, Real]]:
    bounds = _bounds(problem)
    rational = _rational_points(problem, rng, bounds)
    if problem.equations:
        # small rational points often satisfy simple equations exactly (s, c = 0, 1); then solve them
        yield from islice(rational, 300)
        yield from _exact_solutions(problem, rng, 40, bounds)
        yield from _numeric_solutions(problem, rng, 30, deadline, bounds)
    yield from rational


def find_witness(left: Expr, right: Expr, conditions: Sequence[Condition], *, deadline: float,
                 seed: int = 0) -> Witness | None:
    """A checked real point where every condition holds and ``left != right``, or None (none found before
    ``deadline`` (time.monotonic()), or an opaque call is involved)."""
    if time.monotonic() > deadline:
        return None
    try:
        problem = _problem(left, right, conditions)
    except (ArithmeticError, ValueError, TypeError):
        return None
    if problem is None:
        return None
    rng = random.Random(seed)
    candidates = _candidates(problem, rng, deadline)
    while time.monotonic() <= deadline:
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
