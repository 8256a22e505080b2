"""Defect D4 of the fuzzing: ``sin(10000*x) == sin(10000*x)`` ran out of time, because the multiple-angle
expansion of degree 10000 ran before anything else.  A large common multiple is now the base angle.

References (common practice): sin(2u) = 2 sin(u) cos(u), cos(2u) = 1 - 2 sin(u)**2, sin(u)**2 + cos(u)**2 = 1;
multiples of pi keep their exact values (sin(16*pi) = 0).  mpmath shows the refuted one differs.
"""
from __future__ import annotations

from pathlib import Path

import mpmath

CLAIMS = {
    "sin(10000*x) == sin(10000*x)": "proved",
    "sin(1000*x)**2 + cos(1000*x)**2 == 1": "proved",
    "sin(2000*x) == 2*sin(1000*x)*cos(1000*x)": "proved",
    "cos(24*x) == 1 - 2*sin(12*x)**2": "proved",
    "sin(16*pi) == 0": "proved",
    "sin(2000*x) == 2*sin(1000*x)": "refuted",
}


def test_large_multiples_of_an_angle_are_decided_end_to_end(cli, tmp_path: Path) -> None:
    x = mpmath.mpf("0.001")
    assert abs(mpmath.sin(2000 * x) - 2 * mpmath.sin(1000 * x)) > 0.1
    assert cli.verdicts(tmp_path, "waves.py", CLAIMS, "--timeout", "60") == CLAIMS
