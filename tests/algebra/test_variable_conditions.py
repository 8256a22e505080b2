"""Conditions ``v == w`` between two variables: w stands for v wherever the conditions hold (common
practice: substitution of equals), so roots and functions of the two are the same value.  These were
inconclusive or failed their re-check (issue 13, D2 family)."""
from __future__ import annotations


def test_equal_variables_are_substituted(cli, tmp_path):
    claims = {
        "sqrt(x)**3 - 3*sqrt(x) == sqrt(u)**3 - 3*sqrt(u) given u == x": "proved",
        "sqrt(x)**2 + 2*sqrt(x) == sqrt(u)**2 + 2*sqrt(u) given u == x": "proved",
        "sin(u) + exp(u) == sin(x) + exp(x) given u == x": "proved",
        "a*b == c*c given a == c, b == c": "proved",
        "a + b == 2*c given a == b, b == c": "proved",
        "a + b == 3*c given a == b, b == c": "refuted",  # a = b = c = 1: 2 != 3
        "sqrt(x) == sqrt(u) + 1 given u == x": "refuted",
        "x == y given x == z, y == w": "refuted",  # two separate classes: x = z = 0, y = w = 1
    }
    assert cli.verdicts(tmp_path, "equal.py", claims) == claims
