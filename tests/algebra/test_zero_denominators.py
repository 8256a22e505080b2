"""A claim that divides by a constant that is exactly 0 (cos(pi/2) == 0, sin(pi) == 0: common practice)
is not proved vacuously: nothing was given, so the claim is undefined everywhere and says nothing."""
from __future__ import annotations


def test_division_by_a_zero_constant_is_not_a_proof(cli, tmp_path):
    verdicts = cli.verdicts(tmp_path, "zero.py", [
        "tan(pi/2) == 5",
        "1/sin(pi) == 3",
        "1/(sin(x)**2 + cos(x)**2 - 1) == 0",
        "tan(pi/4) == 1",
        "1/x == 2 given x == 0",  # the given condition cannot hold with x != 0: vacuous, as documented
    ])
    assert verdicts == {
        "tan(pi/2) == 5": "inconclusive",
        "1/sin(pi) == 3": "inconclusive",
        "1/(sin(x)**2 + cos(x)**2 - 1) == 0": "inconclusive",
        "tan(pi/4) == 1": "proved",
        "1/x == 2 given x == 0": "proved",
    }


def test_the_reason_names_the_division_by_zero(cli, tmp_path):
    (tmp_path / "zero.py").write_text("# idealcheck: tan(pi/2) == 5\n")
    result = cli("check", "--no-cache", "zero.py", cwd=tmp_path)
    assert "division by zero" in result.out and result.code == 1
