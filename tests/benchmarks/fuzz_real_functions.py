"""Mutation run over the further real functions: does the tool refute every bug a spot-check finds?

Usage: python tests/benchmarks/fuzz_real_functions.py [--points N] [--seed S]

Each seed identity below is true (calculus identities and the definitions of Python's math functions,
common practice).  One-token mutations of it (an operator, a variable, a constant, a function swapped for
its neighbour) are judged by a spot-check: N random points in [-3, 3]^2, evaluated in IEEE double with
Python's math module through the tool's float evaluator, a mutant counting as a bug when some point where
the conditions hold has a relative difference above 1e-9.  The tool then decides each seed and each bug.
Printed: seeds proved / not proved / refuted (must be 0), bugs refuted / missed, with each miss.  Nothing is
asserted: it is a long run, not part of the test suite.
"""
from __future__ import annotations

import argparse
import random

from verifier import api
from verifier.algebra.evaluate import float_value
from verifier.claims.language import ClaimSyntaxError, parse_conditions, parse_expression

SEEDS = [
    ("atan(x + y) - atan(x)", "atan(x + y) - atan(x)", ""),
    ("asin(x/4) + acos(x/4)", "pi/2", ""),
    ("sinh(2*x)", "2*sinh(x)*cosh(x)", ""),
    ("tanh(x)*cosh(x)", "sinh(x)", ""),
    ("erf(x) + erfc(x)", "1", ""),
    ("log1p(expm1(x))", "x", ""),
    ("radians(degrees(x))", "x", ""),
    ("abs(x*y)", "abs(x)*abs(y)", ""),
    ("min(x, y)", "(x + y - abs(x - y))/2", ""),
    ("max(x, y)", "(x + y + abs(x - y))/2", ""),
    ("x - floor(x)", "x % 1", ""),
    ("floor(x/y)", "x // y", ""),
    ("copysign(x, y)*copysign(1, y)", "abs(x)", ""),
    ("cos(radians(x))**2 + sin(radians(x))**2", "1", ""),
    ("atan(1/x)", "pi/2 - atan(x)", "x > 0"),
    ("2*atan(x)", "atan2(2*x, 1 - x**2)", "x**2 < 1"),
    ("fmod(x, y)", "x - y*trunc(x/y)", ""),
    ("hypot(x, y)*cos(atan2(y, x))", "x", ""),
    ("ceil(x)", "-floor(-x)", ""),
    ("degrees(atan2(y, x))", "atan2(y, x)*180/pi", ""),
]

SWAPS = [("+", "-"), ("-", "+"), ("x", "y"), ("y", "x"), ("2", "3"), ("1", "2"), ("atan", "asin"),
         ("floor", "ceil"), ("sinh", "cosh"), ("cos", "sin"), ("min", "max"), ("abs(x", "(x"), ("/2", "/3"),
         ("erfc", "erf"), ("degrees", "radians")]

_RELATIONS = {"<": lambda a, b: a < b, ">": lambda a, b: a > b, "<=": lambda a, b: a <= b,
              ">=": lambda a, b: a >= b, "==": lambda a, b: abs(a - b) < 1e-12, "!=": lambda a, b: a != b}


def mutants(text: str) -> list[str]:
    found = []
    for old, new in SWAPS:
        at = text.find(old)
        if at >= 0:
            found.append(text[:at] + new + text[at + len(old):])
    return found


def spot_check_finds_a_difference(left: str, right: str, given: str, points: int, rng: random.Random) -> bool:
    sides = parse_expression(left), parse_expression(right)
    conditions = parse_conditions(given) if given else ()
    for _ in range(points):
        point = {"x": rng.uniform(-3, 3), "y": rng.uniform(-3, 3)}
        try:
            if not all(_RELATIONS[c.relation](float_value(c.left, point), float_value(c.right, point))
                       for c in conditions):
                continue
            a, b = (float_value(side, point) for side in sides)
        except (ArithmeticError, ValueError, KeyError):
            continue
        if abs(a - b) > 1e-9 * max(1.0, abs(a), abs(b)):
            return True
    return False


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("--points", type=int, default=200)
    parser.add_argument("--seed", type=int, default=1)
    options = parser.parse_args()
    rng = random.Random(options.seed)
    counts = {"seeds proved": 0, "seeds not proved": 0, "seeds refuted": 0, "bugs refuted": 0, "bugs missed": 0,
              "mutants a spot-check passes": 0}
    for left, right, given in SEEDS:
        conditions = [given] if given else []
        verdict = api.decide_claim(f"{left} == {right}", conditions=conditions).verdict
        key = {"proved": "seeds proved", "refuted": "seeds refuted"}.get(verdict, "seeds not proved")
        counts[key] += 1
        if verdict == "refuted":
            print(f"TRUE CLAIM REFUTED: {left} == {right} given {given}")
        pairs = [(m, right) for m in mutants(left)] + [(left, m) for m in mutants(right)]
        for mutant_left, mutant_right in pairs:
            try:
                is_bug = spot_check_finds_a_difference(mutant_left, mutant_right, given, options.points, rng)
            except ClaimSyntaxError:  # the swap broke a function name (expm1 -> eypm1)
                continue
            if not is_bug:
                counts["mutants a spot-check passes"] += 1
                continue
            result = api.decide_claim(f"{mutant_left} == {mutant_right}", conditions=conditions)
            if result.verdict == "refuted":
                counts["bugs refuted"] += 1
            else:
                counts["bugs missed"] += 1
                print(f"missed: {mutant_left} == {mutant_right} given {given}: {result.verdict}")
    for key, value in counts.items():
        print(f"{key}: {value}")


if __name__ == "__main__":
    main()
