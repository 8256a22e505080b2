"""Defect D1 of the fuzzing: a zeroth power of zero was an internal error instead of 1.

Convention (common practice, and Python's): ``x**0 == 1`` for every x, ``0**0`` included; sympy's
``Integer(0)**0`` is 1 as well, which the check below uses as the outside reference.
"""
from __future__ import annotations

from pathlib import Path

import sympy

CLAIMS = {
    "x**0 == 1 given x == 0": "proved",
    "0**0 == 1": "proved",
    "(x - x)**0 + x == x + 1": "proved",
    "y*x**0 == y given x == 0": "proved",
    "0**0 == 2": "refuted",
}


def test_zeroth_power_of_zero_is_one_end_to_end(cli, tmp_path: Path) -> None:
    assert sympy.Integer(0) ** 0 == 1  # the reference convention
    assert cli.verdicts(tmp_path, "powers.py", CLAIMS) == CLAIMS
