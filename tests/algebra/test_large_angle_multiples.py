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


# Found by the fuzzer (tests/fuzz_expressions.py, family large_angle): multiples with no large common step
# (10001 and 10000 have gcd 1) still expanded to degree 10001, so sin(1001*x) == sin(1000*x) took 15 s and
# the 10000 pair ran out of time.  Past 100 a multiple is a base angle of its own.
COPRIME_CLAIMS = {
    "y + sin(10001*x) == y + sin(10000*x)": "refuted",
    "sin(1001*x) == sin(1000*x)": "refuted",
    "sin(10001*x)**2 + cos(10001*x)**2 == 1": "proved",
    "sin(2*x)*cos(1001*x)**2 == sin(2*x) - sin(2*x)*sin(1001*x)**2": "proved",
    "sin(1001*x) == sin(1001*x + 2*pi)": "proved",
    "sin(33*x) == sin(32*x)": "refuted",  # below the cap: the expansion still runs
}


def test_large_coprime_multiples_are_atoms_of_their_own(cli, tmp_path: Path) -> None:
    x = mpmath.mpf(1)
    assert abs(mpmath.sin(10001 * x) - mpmath.sin(10000 * x)) > 0.1
    assert abs(mpmath.sin(1001 * x) - mpmath.sin(1000 * x)) > 0.05
    assert abs(mpmath.sin(33 * x) - mpmath.sin(32 * x)) > 0.1
    # the default time limit (10 s): a decision, not a timeout
    assert cli.verdicts(tmp_path, "waves.py", COPRIME_CLAIMS) == COPRIME_CLAIMS
