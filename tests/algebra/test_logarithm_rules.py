"""Logarithm rules on their domains (issue 13): log of a positive constant, of exp, of quotients, powers
and roots of positive quantities, and exp of a logarithm, are proved; the same laws without the sign
hypotheses they need are not.

References: the laws log(a*b) = log(a) + log(b), log(a/b) = log(a) - log(b), log(a**k) = k*log(a) for
a, b > 0 and log(exp(t)) = t, exp(log(a)) = a are common practice (A&S 4.1.16-4.1.19, 4.2.1, from
memory).  Each claim is checked here with mpmath at a point of its domain (true ones agree to 40
digits, false ones differ), and the unproved ones at a point outside the positive hypotheses where
the law fails.
"""
from __future__ import annotations

from pathlib import Path

import mpmath
from mpmath import exp, log, mpf, sqrt

X, Y = mpf("0.7"), mpf("2.9")  # a point where every positive hypothesis holds

# claim text -> LEFT - RIGHT in mpmath at (x, y)
PROVED = {
    "log(4) == 2*log(2)": lambda x, y: log(4) - 2 * log(2),
    "log(6) == log(2) + log(3)": lambda x, y: log(6) - log(2) - log(3),
    "log(0.125) == -3*log(2)": lambda x, y: log(mpf("0.125")) + 3 * log(2),
    "log(exp(x)) == x": lambda x, y: log(exp(x)) - x,
    "log(exp(x/2)) == x/2": lambda x, y: log(exp(x / 2)) - x / 2,
    "log(exp(x)*exp(y)) == x + y": lambda x, y: log(exp(x) * exp(y)) - x - y,
    "log(x/y) == log(x) - log(y) given x > 0, y > 0": lambda x, y: log(x / y) - log(x) + log(y),
    "log(x*y) == log(x) + log(y) given x > 0, y > 0": lambda x, y: log(x * y) - log(x) - log(y),
    "log(1/x) == -log(x) given x > 0": lambda x, y: log(1 / x) + log(x),
    "log(x**3) == 3*log(x) given x > 0": lambda x, y: log(x**3) - 3 * log(x),
    "log(sqrt(x)) == log(x)/2 given x > 0": lambda x, y: log(sqrt(x)) - log(x) / 2,
    "log(x*exp(y)) == log(x) + y given x > 0": lambda x, y: log(x * exp(y)) - log(x) - y,
    "exp(log(x)) == x given x > 0": lambda x, y: exp(log(x)) - x,
    "exp(2*log(x) + y) == x**2*exp(y) given x > 0": lambda x, y: exp(2 * log(x) + y) - x**2 * exp(y),
    "exp(log(x)/2) == sqrt(x) given x > 0": lambda x, y: exp(log(x) / 2) - sqrt(x),
    # factors that are positive by their terms
    "log((x + 1)/(y + 2)) == log(x + 1) - log(y + 2) given x > 0, y > 0":
        lambda x, y: log((x + 1) / (y + 2)) - log(x + 1) + log(y + 2),
    "log((x**2 + 1)*(y**2 + 1)) == log(x**2 + 1) + log(y**2 + 1)":
        lambda x, y: log((x**2 + 1) * (y**2 + 1)) - log(x**2 + 1) - log(y**2 + 1),
    "log(2*x + 2) == log(2) + log(x + 1) given x > 0": lambda x, y: log(2 * x + 2) - log(2) - log(x + 1),
    "log(x**2 + 2*x + 1) == 2*log(x + 1) given x > 0": lambda x, y: log(x**2 + 2 * x + 1) - 2 * log(x + 1),
    "log(sqrt(x**2 + 1)) == log(x**2 + 1)/2": lambda x, y: log(sqrt(x**2 + 1)) - log(x**2 + 1) / 2,
}
REFUTED = {
    "log(4) == 3*log(2)": lambda x, y: log(4) - 3 * log(2),
    "log(exp(x)) == 2*x": lambda x, y: log(exp(x)) - 2 * x,
    "log(x + y) == log(x) + log(y) given x > 0, y > 0": lambda x, y: log(x + y) - log(x) - log(y),
    "log(x/y) == log(x) + log(y) given x > 0, y > 0": lambda x, y: log(x / y) - log(x) - log(y),
}
# true where both sides are defined with x, y > 0, but the left side is also defined where the right
# one is not: never proved without the hypotheses.  text -> (x, y, the left log's argument, the right
# logs' arguments) at a point where the left argument is positive and a right one negative
NOT_PROVED = {
    "log(x*y) == log(x) + log(y)": (-1, -1, lambda x, y: x * y, lambda x, y: (x, y)),
    "log(x/y) == log(x) - log(y)": (-1, -2, lambda x, y: x / y, lambda x, y: (x, y)),
    "log(x**2) == 2*log(x)": (-1, 0, lambda x, y: x**2, lambda x, y: (x,)),
    "log(x**2 + 2*x + 1) == 2*log(x + 1)": (-3, 0, lambda x, y: x**2 + 2 * x + 1, lambda x, y: (x + 1,)),
    "log((x - 1)*(x - 2)) == log(x - 1) + log(x - 2)":
        (0, 0, lambda x, y: (x - 1) * (x - 2), lambda x, y: (x - 1, x - 2)),
}


def test_logarithm_rules_end_to_end(cli, tmp_path: Path) -> None:
    with mpmath.workdps(50):
        for text, difference in (PROVED | REFUTED).items():
            assert (abs(difference(X, Y)) < mpf(10) ** -40) == (text in PROVED), text
    expected = {text: "proved" for text in PROVED} | {text: "refuted" for text in REFUTED}
    assert cli.verdicts(tmp_path, "logs.py", expected) == expected


def test_the_laws_are_not_proved_without_their_sign_hypotheses(cli, tmp_path: Path) -> None:
    for x, y, left_argument, right_arguments in NOT_PROVED.values():
        assert left_argument(mpf(x), mpf(y)) > 0 and min(right_arguments(mpf(x), mpf(y))) < 0
    verdicts = cli.verdicts(tmp_path, "logs.py", NOT_PROVED)
    assert set(verdicts) == set(NOT_PROVED)
    assert "proved" not in verdicts.values(), verdicts
