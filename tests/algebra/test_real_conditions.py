"""Reasoning that holds only over the reals (issue 13): exp is one-to-one and increasing, the only zero of
sin and tan strictly inside (-pi, pi) is 0, c/P > 0 and P**k >= 0 (k odd) give the sign of P, the domains
of square roots, and conditions with no real point.  All of them facts of the trade (common practice);
each true claim is paired with a wrong variant that must not be proved, and the refuted ones are checked
against mpmath by the witness checker of the tool and here at the sample point."""
from __future__ import annotations

from pathlib import Path

import mpmath

PROVED = [
    "x == y given exp(x) == exp(y)",
    "x == 0 given exp(x) == 1",
    "x == 0 given sin(x) == 0, x > -1, x < 1",
    "x == 0 given tan(x) == 0, x >= -3, x <= 3",
    "sqrt(x**2) == x given 1/x > 0",
    "sqrt(x**2) == x given x**3 >= 0",
    "sqrt(x**2) == x given exp(x) >= 1",
    "sqrt(x**2) == x given exp(x) >= exp(0)",
    "sqrt(x - y) + sqrt(y - x) == 0",
    "x == 1 given sin(x) == 2",  # no real point: proved vacuously
    "x == 1 given cos(x) == -3",
    "a == b given a**2 + b**2 + 1 == 0",
]
REFUTED = [
    "x == y + 1 given exp(x) == exp(y)",
    "x == 0 given sin(x) == 0, x > -4, x < 4",  # x = pi
    "sqrt(x**2) == -x given 1/x > 0",
    "sqrt(x**2) == x given x**2 >= 0",
    "sqrt(x**2) == x given exp(x) <= 1",
    "sqrt(x - y) + sqrt(y - x) == 1",
]
NOT_PROVED = ["x == 1 given sin(x) == 1"]  # a real point exists (x = pi/2)


def test_the_wrong_variant_has_a_real_counterexample() -> None:
    with mpmath.workdps(30):
        assert abs(mpmath.sin(mpmath.pi)) < mpmath.mpf(10) ** -25 and mpmath.pi < 4  # x = pi for the sin claim
        assert mpmath.sin(mpmath.pi / 2) == 1


def test_real_consequences_end_to_end(cli, tmp_path: Path) -> None:
    expected = {text: "proved" for text in PROVED} | {text: "refuted" for text in REFUTED}
    got = cli.verdicts(tmp_path, "reals.py", expected | {text: "inconclusive" for text in NOT_PROVED})
    assert {t: v for t, v in got.items() if t in expected} == expected
    assert all(got[t] != "proved" for t in NOT_PROVED)
