"""The fuzzer's ground truth: generated cases and an independent 50-digit mpmath oracle.

A ``Case`` is one generated claim: the text the tool reads, and beside it the same mathematics as sympy
expressions built by the generator (never parsed from the claim text), a way to sample real points where
the conditions hold, and the truth the generator meant.  The oracle evaluates those sympy expressions with
mpmath at 50 digits; it shares no code with the tool's evaluators.
"""
from __future__ import annotations

import random
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field
from fractions import Fraction
from functools import lru_cache

import mpmath
import sympy

DIGITS = 50
EQUATION_TOLERANCE = mpmath.mpf(10) ** -20  # relative residual of an equation at a decimal witness
DIFFERENCE_FLOOR = mpmath.mpf(10) ** -15  # relative difference below which the sides count as equal

# A sampler returns points (symbol name -> 50-digit value) where every condition of its case should hold;
# points where one fails or the sides are undefined are skipped.
Sampler = Callable[[random.Random], dict[str, mpmath.mpf]]


@dataclass(frozen=True)
class Condition:
    """``left RELATION right`` as sympy expressions; relation is one of == != < <= > >=."""

    left: sympy.Expr
    relation: str
    right: sympy.Expr


@dataclass(frozen=True)
class Case:
    """One generated claim and the generator's own model of it."""

    family: str
    text: str  # the claim as the tool reads it (after ``idealcheck:``), or a code snippet's claim
    left: sympy.Expr  # what the code or the left side computes
    right: sympy.Expr  # what the claim says
    conditions: tuple[Condition, ...]
    sampler: Sampler = field(compare=False)
    meant_true: bool  # the generator's intent: True by construction, False by perturbation
    # how a witness names each symbol (kernel fields, parameters); the default is the symbol's own name
    names: tuple[tuple[str, str], ...] = ()
    # piecewise kernels: (branch condition, value) pairs tried in order; overrides ``left`` at a witness
    branches: tuple[tuple[tuple[Condition, ...], sympy.Expr], ...] = ()
    # the generator built the conditions to have no real point (a sum of squares plus a positive constant,
    # exp or sqrt equal to a negative number): the claim is true vacuously, and sampling must find no point
    vacuous: bool = False


@lru_cache(maxsize=4096)
def _compiled(expr: sympy.Expr, names: tuple[str, ...]) -> Callable[..., object]:
    # lambdify of the generator's own sympy expression (not of claim text): mpmath functions, exact rationals
    return sympy.lambdify([sympy.Symbol(n) for n in names], expr, modules="mpmath")


def value(expr: sympy.Expr, point: Mapping[str, mpmath.mpf]) -> mpmath.mpf:
    """``expr`` at ``point`` with mpmath at 50 digits; ValueError when it is not a finite real number."""
    names = tuple(sorted(str(s) for s in expr.free_symbols))
    missing = [n for n in names if n not in point]
    if missing:
        raise ValueError(f"no value for {', '.join(missing)}")
    with mpmath.workdps(DIGITS):
        # the claim language's domain: every square root of a non-negative radicand (principal branch), every
        # logarithm of a positive argument; sqrt(x)*sqrt(y) at x, y < 0 is real in mpmath but outside it
        for inner, positive in _domain_arguments(expr):
            at = value(inner, point)
            if at < 0 or (positive and at == 0):
                raise ValueError(f"{inner} = {mpmath.nstr(at, 8)} is outside the domain")
        try:
            result = _compiled(expr, names)(*(point[n] for n in names))
        except (ZeroDivisionError, ValueError, OverflowError) as problem:
            raise ValueError(f"undefined: {problem}") from problem
        if isinstance(result, mpmath.mpc):
            if abs(result.imag) > EQUATION_TOLERANCE * max(1, abs(result.real)):
                raise ValueError("not real")
            result = result.real
        result = mpmath.mpf(result)
        if not mpmath.isfinite(result):
            raise ValueError("not finite")
        return result


@lru_cache(maxsize=4096)
def _domain_arguments(expr: sympy.Expr) -> tuple[tuple[sympy.Expr, bool], ...]:
    """(radicand, False) for each root (a power to a non-integer rational), (argument, True) for each log."""
    out: list[tuple[sympy.Expr, bool]] = []
    for power in expr.atoms(sympy.Pow):
        if power.exp.is_Rational and not power.exp.is_Integer and power.base.free_symbols:
            out.append((power.base, False))
    for log in expr.atoms(sympy.log):
        out.append((log.args[0], True))
    return tuple(out)


def _scale(a: mpmath.mpf, b: mpmath.mpf) -> mpmath.mpf:
    return max(mpmath.mpf(1), abs(a), abs(b))


def holds(condition: Condition, point: Mapping[str, mpmath.mpf]) -> bool:
    """Whether the condition holds at a point given to about 20 digits or more."""
    a, b = value(condition.left, point), value(condition.right, point)
    with mpmath.workdps(DIGITS):
        d = a - b
        tolerance = EQUATION_TOLERANCE * _scale(a, b)
        if condition.relation == "==":
            return abs(d) <= tolerance
        if condition.relation == "!=":
            return abs(d) > tolerance
        if condition.relation in (">", "<"):
            return (d if condition.relation == ">" else -d) > 0
        return (d if condition.relation == ">=" else -d) >= -tolerance


def code_value(case: Case, point: Mapping[str, mpmath.mpf]) -> mpmath.mpf:
    """The value the code (or the left side) has at ``point``, following the branches when there are any."""
    for guards, branch_value in case.branches:
        if all(holds(g, point) for g in guards):
            return value(branch_value, point)
    if case.branches:
        raise ValueError("no branch taken")
    return value(case.left, point)


def difference(case: Case, point: Mapping[str, mpmath.mpf]) -> tuple[mpmath.mpf, mpmath.mpf]:
    """(LEFT - RIGHT, the larger size of the two sides) at ``point``."""
    a, b = code_value(case, point), value(case.right, point)
    with mpmath.workdps(DIGITS):
        return a - b, _scale(a, b)


def differs(case: Case, point: Mapping[str, mpmath.mpf]) -> bool:
    d, size = difference(case, point)
    return abs(d) > DIFFERENCE_FLOOR * size


def as_mpf(point: Mapping[str, Fraction]) -> dict[str, mpmath.mpf]:
    with mpmath.workdps(DIGITS):
        return {k: mpmath.mpf(v.numerator) / v.denominator for k, v in point.items()}


def sampled_truth(case: Case, rng: random.Random, tries: int = 24, enough: int = 4) -> bool | None:
    """True when the sides agree at every sampled valid point, False when they differ at one, None when fewer
    than ``enough`` sampled points were usable (undefined, or off the conditions).  Points come from the
    case's own sampler."""
    usable = 0
    for _ in range(tries):
        point = case.sampler(rng)
        try:
            if not all(holds(c, point) for c in case.conditions):
                continue
            if differs(case, point):
                return False
        except ValueError:
            continue
        usable += 1
    if case.vacuous:
        # true by construction; a sampled point where the conditions hold would be a generator bug
        return True if usable == 0 else False
    return True if usable >= enough else None


def parse_witness_value(text: str) -> mpmath.mpf:
    """A witness coordinate as the JSON report writes it: an exact fraction ``p/q`` or a decimal."""
    with mpmath.workdps(DIGITS):
        if "/" in text:
            numerator, denominator = text.split("/")
            return mpmath.mpf(int(numerator)) / int(denominator)
        return mpmath.mpf(text)


def witness_problem(case: Case, values: Mapping[str, str]) -> str | None:
    """Why the reported witness does not refute the case by the oracle, or None when it does."""
    by_report_name = dict(case.names)
    point: dict[str, mpmath.mpf] = {}
    symbols = set(case.left.free_symbols | case.right.free_symbols)
    for c in case.conditions:
        symbols |= c.left.free_symbols | c.right.free_symbols
    for guards, v in case.branches:
        symbols |= v.free_symbols
        for g in guards:
            symbols |= g.left.free_symbols | g.right.free_symbols
    for symbol in symbols:
        name = by_report_name.get(str(symbol), str(symbol))
        if name not in values:
            continue  # a variable the witness leaves out must not matter; value() says so if it does
        try:
            point[str(symbol)] = parse_witness_value(values[name])
        except (ValueError, TypeError):
            return f"unreadable witness value {name} = {values[name]!r}"
    try:
        failed = [c for c in case.conditions if not holds(c, point)]
        if failed:
            c = failed[0]
            return f"condition {c.left} {c.relation} {c.right} fails at the witness"
        if not differs(case, point):
            return "the sides agree at the witness"
    except ValueError as problem:
        return f"the witness is not a valid real point: {problem}"
    return None


def uniform(rng: random.Random, low: int = -3, high: int = 3, denominator: int = 8) -> Fraction:
    """A random rational in [low, high] with a small denominator: exact, so sampling adds no rounding."""
    return Fraction(rng.randint(low * denominator, high * denominator), denominator)


def free_sampler(names: Sequence[str], positive: Sequence[str] = ()) -> Sampler:
    """Independent variables; those in ``positive`` are drawn from (0, 3]."""

    def sample(rng: random.Random) -> dict[str, mpmath.mpf]:
        return as_mpf({n: (Fraction(rng.randint(1, 24), 8) if n in positive else uniform(rng)) for n in names})

    return sample
