"""Defect D3 of the fuzzing: a condition ``v == c`` with c a negative number or a multiple of pi was not
substituted (only non-negative numbers were), so claims inside exp, sin and cos stayed inconclusive.

Reference values (common practice): sin(pi/2) = 1, cos(pi/2) = 0, sin(pi) = 0; mpmath confirms the
refuted ones differ.
"""
from __future__ import annotations

from pathlib import Path

import mpmath

CLAIMS = {
    "exp(y) == exp(-1) given y == -1": "proved",
    "sin(x) == 1 given x == pi/2": "proved",
    "sin(x) == 0 given x == pi": "proved",
    "x**2 == 2 given x == sqrt(2)": "proved",
    "cos(x) == 1 given x == pi/2": "refuted",
    "exp(y) == exp(1) given y == -1": "refuted",
}


def test_closed_constants_in_conditions_are_substituted_end_to_end(cli, tmp_path: Path) -> None:
    assert abs(mpmath.cos(mpmath.pi / 2) - 1) > 0.5 and abs(mpmath.exp(-1) - mpmath.exp(1)) > 1
    assert cli.verdicts(tmp_path, "angles.py", CLAIMS) == CLAIMS
