"""Two opposite non-strict bounds on the same quantity mean an equation (common practice: a <= b and
a >= b over the reals give a == b); the equation joins the ideal of the conditions."""
from __future__ import annotations

import json


def test_opposite_bounds_give_an_equation(cli, tmp_path):
    verdicts = cli.verdicts(tmp_path, "bounds.py", [
        "x == 1 given x >= 1, x <= 1",
        "x*y == y given x - 1 >= 0, 2 - 2*x >= 0",  # the second bound is -2 times the first
        "x == 2 given x >= 1, x <= 1",
        "x == 1 given x >= 1, x < 2",  # not two-sided: must not be proved
        "x == 1 given x > 1, x <= 1",  # contradictory: vacuously true
    ])
    assert verdicts == {
        "x == 1 given x >= 1, x <= 1": "proved",
        "x*y == y given x - 1 >= 0, 2 - 2*x >= 0": "proved",
        "x == 2 given x >= 1, x <= 1": "refuted",
        "x == 1 given x >= 1, x < 2": "refuted",
        "x == 1 given x > 1, x <= 1": "proved",
    }


def test_a_cached_proof_from_bounds_re_checks(cli, tmp_path):
    (tmp_path / "bounds.py").write_text("# idealcheck: x**2 == 1 given x >= 1, x <= 1\n")
    for _ in range(2):  # the second run reads the proof back from the cache, which re-checks it
        result = cli("check", "--format", "json", "bounds.py", cwd=tmp_path)
        assert [c["verdict"] for c in json.loads(result.out)["claims"]] == ["proved"]


def test_a_branch_bound_meets_the_opposite_bound_of_another_branch(cli, tmp_path):
    (tmp_path / "k.py").write_text(
        "# idealcheck: returns x*x given x != 0\n"
        "def signed_square(x):\n"
        "    s = (x > 0) - (x < 0)\n"
        "    return s * x * s * x\n")
    result = cli("check", "--no-cache", "--format", "json", "k.py", cwd=tmp_path)
    assert [c["verdict"] for c in json.loads(result.out)["claims"]] == ["proved"]
