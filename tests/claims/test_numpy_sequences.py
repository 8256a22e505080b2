"""numpy on whole sequence parameters, end to end through the command line (fixtures/py_numpy).

The claims are the textbook formulas of the vector operations (dot product, Euclidean norm, cross
product, outer product, quaternion conjugate, composition of plane rotations by the angle-addition
formulas: common practice); every ``*_slip`` function is its helper with one wrong line.
"""
from __future__ import annotations

import json
import shutil
from pathlib import Path

from tests.conftest import Cli
from verifier.claims.execute.sequences import spelled_shapes, stated_lengths

CORPUS = Path(__file__).resolve().parents[2] / "fixtures" / "py_numpy"


def _verdicts(cli: Cli, folder: Path) -> dict[str, dict[str, object]]:
    result = cli("check", "--no-cache", "--format", "json", ".", cwd=folder)
    claims = json.loads(result.out)["claims"]
    lines = {c["line"]: c for c in claims}
    by_function: dict[str, dict[str, object]] = {}
    for path in sorted(folder.glob("*.py")):
        text = path.read_text().splitlines()
        for number, line in enumerate(text, start=1):
            if number in lines:
                following = next(t for t in text[number:] if t.startswith("def "))
                by_function[following[4:following.index("(")]] = lines[number]
    return by_function


def test_every_helper_proved_and_every_slip_refuted(cli: Cli, tmp_path: Path) -> None:
    shutil.copytree(CORPUS, tmp_path / "corpus")
    verdicts = _verdicts(cli, tmp_path / "corpus")
    assert len(verdicts) == 34
    for name, claim in verdicts.items():
        expected = "refuted" if name.endswith("_slip") else "proved"
        assert claim["verdict"] == expected, (name, claim["reason"])
        if expected == "refuted":
            assert claim["witness"] is not None or "component" in json.dumps(claim), name


def test_assumed_length_is_reported(cli: Cli, tmp_path: Path) -> None:
    shutil.copytree(CORPUS, tmp_path / "corpus")
    result = cli("check", "--no-cache", "hovercraft.py", cwd=tmp_path / "corpus")
    assert "p is taken as an array of length 4 (from the condition)" in result.out
    assert "p is taken as an array of length 4 (the shortest the claim and the code index)" in result.out


def test_unsupported_array_constructs_are_inconclusive_with_their_line(cli: Cli, tmp_path: Path) -> None:
    (tmp_path / "odd.py").write_text(
        "import numpy as np\n"
        "\n"
        "# idealcheck: returns v[0] + v[1]\n"
        "def truncated(v):\n"
        "    return np.sum(np.asarray(v, dtype=int))\n"  # line 5: int truncates, the keyword is not dropped
        "\n"
        "# idealcheck: returns m[0][0]\n"
        "def inverse_corner(m):\n"
        "    return np.linalg.inv(m)[0][0]\n"  # line 9: not followed
        "\n"
        "# idealcheck: returns v[0]\n"
        "def shifted(v):\n"
        "    w = np.zeros(2)\n"
        "    w[0:1] = (v[0], v[1])\n"  # line 14: two values into a slice of one
        "    return w[0]\n")
    result = cli("check", "--no-cache", "--format", "json", "odd.py", cwd=tmp_path)
    claims = {c["line"]: c for c in json.loads(result.out)["claims"]}
    assert claims[3]["verdict"] == "inconclusive" and "line 5" in claims[3]["reason"]
    assert claims[7]["verdict"] == "inconclusive" and "line 9" in claims[7]["reason"]
    assert claims[11]["verdict"] == "inconclusive" and "line 14" in claims[11]["reason"]


def test_shapes_from_spellings_and_stated_lengths() -> None:
    assert spelled_shapes(["q[3]", "q[0]", "m[1][2]", "n[1, 0]", "x", "q.w"]) == {
        "q": (4,), "m": (2, 3), "n": (2, 1)}
    assert stated_lengths([("len(q)", 4), ("len(v)", None), ("x", 3)]) == {"q": 4}
