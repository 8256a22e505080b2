"""Defect D5 of the fuzzing: ``8**(1/3) == 2``, ``x**1e400`` and ``2**x`` were `error` (text that cannot be
read) although the text is well formed.  They are opaque values now: identical sides are proved, the rest
is inconclusive, never refuted without a witness and never an error.
"""
from __future__ import annotations

from pathlib import Path

CLAIMS = {
    "8**(1/3) == 2": "inconclusive",
    "x**1e400 == x**1e400": "proved",
    "2**x*3 == 3*2**x": "proved",
    "2**x == 3**x": "inconclusive",
}


def test_unrepresentable_powers_are_read_end_to_end(cli, tmp_path: Path) -> None:
    assert cli.verdicts(tmp_path, "growth.py", CLAIMS) == CLAIMS
