"""Cost of the witness search, in units of one evaluation of the claim at 60 digits (measured in the same run).

Usage: python tests/benchmarks/bench_witness.py [--repeat N]

For each claim: the time find_witness takes (to its witness for a false claim, to the end of the search for a
true one) divided by the time of one mpmath evaluation of both sides at 60 digits, and differs_mod_p on huge
powers against one such evaluation.  Nothing is asserted; the ratios are printed.
"""
from __future__ import annotations

import argparse
import statistics
import time
from fractions import Fraction

from verifier.model.limits import decision_clock
from verifier.algebra.evaluate import numeric_value, variables
from verifier.algebra.witness import differs_mod_p, find_witness
from verifier.claims.language import parse_conditions, parse_expression

CLAIMS = [
    # (left, right, conditions) -- classic false rewrites, then true ones the search must exhaust
    ("(a + b)**2", "a**2 + b**2", ""),
    ("sin(2*t)", "sin(t)", ""),
    ("2*s*c", "s", "s**2 + c**2 == 1, s > 0.3, c > 0.1"),
    ("h**2", "(1 + c)/2", "s**2 + c**2 == 1, h**2 + k**2 == 1, s == 2*h*k, c == k**2 - h**2, h > 0.1, c > 0.2"),
    ("(a + b)**2", "a**2 + 2*a*b + b**2", ""),
    ("s**2", "1 - c**2", "s**2 + c**2 == 1"),
    ("h**2", "(1 - c)/2", "s**2 + c**2 == 1, h**2 + k**2 == 1, s == 2*h*k, c == k**2 - h**2"),
    ("x", "1", "x**2 + 1 == 0"),
]


def one_evaluation(left, right) -> float:
    point = {name: Fraction(3, 7) for name in sorted(variables(left) | variables(right))}
    runs = []
    for _ in range(20):
        start = time.perf_counter()
        numeric_value(left, point, 60)
        numeric_value(right, point, 60)
        runs.append(time.perf_counter() - start)
    return statistics.median(runs)


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("--repeat", type=int, default=3)
    args = parser.parse_args()
    print(f"{'claim':70} {'found':>6} {'ratio':>10}")
    for left_text, right_text, given in CLAIMS:
        left, right = parse_expression(left_text), parse_expression(right_text)
        conditions = parse_conditions(given) if given else ()
        baseline = one_evaluation(left, right)
        times = []
        found = None
        for _ in range(args.repeat):
            start = time.perf_counter()
            found = find_witness(left, right, conditions, deadline=decision_clock() + 30)
            times.append(time.perf_counter() - start)
        label = f"{left_text} == {right_text}" + (f" given {given}" if given else "")
        print(f"{label[:70]:70} {'yes' if found else 'no':>6} {statistics.median(times) / baseline:10.0f}")
    for power in (200, 1000):  # the claim parser refuses exponents above 1000
        left = parse_expression(f"(x + y)**{power}")
        right = parse_expression(f"(x**2 + 2*x*y + y**2)**{power // 2}")
        baseline = one_evaluation(left, right)
        start = time.perf_counter()
        differs_mod_p(left, right)
        ratio = (time.perf_counter() - start) / baseline
        print(f"{'differs_mod_p (x+y)**' + str(power):70} {'':>6} {ratio:10.2f}")


if __name__ == "__main__":
    main()
