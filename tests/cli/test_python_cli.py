"""End to end: the Kestrel kernel fixtures through `idealcheck check --format json`.

Every function and statement claim in fixtures/kernels has an expected verdict below, with the outside
fact that makes it true or false named beside it.  The run must never prove a deliberately wrong claim.
"""
from __future__ import annotations

import json
from pathlib import Path
from typing import TYPE_CHECKING

import pytest

if TYPE_CHECKING:
    from conftest import Cli

ROOT = Path(__file__).resolve().parents[2]
KERNELS = ROOT / "fixtures" / "kernels"
PACKAGE = KERNELS / "kestrel"

# (file, anchor, verdict): the anchor is "def NAME" for the claim above that def, or a piece of the
# statement line that carries a trailing claim.
EXPECTED: list[tuple[str, str, str]] = [
    # Horner's rule (common practice): ((3t - 2)t + 5)t + 7 = 3t^3 - 2t^2 + 5t + 7
    ("calibrate.py", "def baro_correction", "proved"),
    ("calibrate.py", "def horner4", "proved"),
    ("calibrate.py", "def horner4_short", "refuted"),  # one coefficient short: degree 3, not 4
    ("calibrate.py", "corrected *= GAIN", "proved"),
    ("calibrate.py", "total = total + corrected", "proved"),
    ("calibrate.py", "return total", "proved"),
    # Chebyshev T4 = 8x^4 - 8x^2 + 1 (Abramowitz & Stegun, Handbook of Mathematical Functions, 1964, Table 22.3)
    ("calibrate.py", "def chebyshev_t4", "proved"),
    ("calibrate.py", "def squared_distance", "proved"),  # hypot(a, b)**2 = a**2 + b**2 (definition)
    # double-angle formulas cos 2t = cos^2 t - sin^2 t, sin 2t = 2 sin t cos t (common practice)
    ("calibrate.py", "def heading_doubled", "proved"),
    # Gauss's three-multiplication complex product (Knuth, TAOCP vol. 2, section 4.6.4, from memory)
    ("dsp.py", "def cmul3", "proved"),
    ("dsp.py", "def cmul3_wrong", "refuted"),  # real part becomes a*c + b*d
    ("dsp.py", "y = e * e * (3 - 2 * e)", "proved"),  # smoothstep expansion (common practice)
    ("dsp.py", "def power_of_product", "proved"),
    ("dsp.py", "return num / den", "proved"),  # multiply numerator and denominator by z**-2
    ("mistakes.py", "def pair_again", "error"),  # not directly above the def (blank line)
    ("mistakes.py", "def cross_of_two", "error"),  # arity 2 vs 6
    ("mistakes.py", "def pair_three", "error"),  # 2 values vs 3
    ("mistakes.py", "def lonely", "error"),  # no such function
    ("mistakes.py", "if a > 0:", "error"),  # a statement claim on an `if`
    # series combination 1/k = 1/k1 + 1/k2 (common practice); the total == 0 path is vacuous
    ("mixer.py", "def combined_stiffness", "proved"),
    # thick-lens / two-lens combination 1/f = 1/f1 + 1/f2 - d/(f1 f2) (Hecht, Optics, 4th ed., 2002, eq. 5.35
    # for thin lenses in air, from memory)
    ("mixer.py", "def lens_power", "proved"),
    ("mixer.py", "def lens_power_wrong", "refuted"),
    ("mixer.py", "def normalized", "proved"),
    ("mixer.py", "back = thrust - front", "proved"),
    # (a + b)(a - b) = a^2 - b^2 (common practice); the a <= b path contradicts `given a > b`, which takes
    # sign reasoning (the decision procedure's sign argument)
    ("mixer.py", "def clipped_difference", "proved"),
    # Quaternion rotation: q (0, v) q* equals R(q) v for |q| = 1 (Shoemake, "Animating rotation with
    # quaternion curves", SIGGRAPH 1985; the matrix from memory), and v + 2w(u x v) + 2u x (u x v)
    # (common practice); without |q| = 1 the sandwich product also scales by |q|^2.
    ("rotate.py", "def rotate_matrix", "proved"),
    ("rotate.py", "def rotate_cross", "proved"),
    ("rotate.py", "def rotate_cross_any_norm", "refuted"),
    # columns of a rotation matrix are orthonormal (common practice), only for a unit quaternion
    ("rotate.py", "c01 = ", "proved"),
    ("rotate.py", "n0 = ", "proved"),
    ("rotate.py", "n1 = ", "refuted"),
    # |q v q*| = |q|^2 |v| (norm multiplicativity of quaternions, common practice)
    ("rotate.py", "length2 = ", "proved"),
    ("unsupported.py", "def clamp_unit", "proved"),  # min/max/abs/comparison values split the path
    ("unsupported.py", "def newton_sqrt", "inconclusive"),
    ("unsupported.py", "def magnitude_squared", "proved"),  # min/max/abs/comparison values split the path
    ("unsupported.py", "def energy", "inconclusive"),
    ("unsupported.py", "def wrapped", "inconclusive"),
    ("unsupported.py", "def long_sum", "inconclusive"),
    ("unsupported.py", "def cube", "inconclusive"),
    ("unsupported.py", "def half_index", "refuted"),  # // is a function of the table: 1 // 2 == 0
    ("unsupported.py", "y = x * x", "proved"),  # the while loop comes after the claimed statement
    ("unsupported.py", "def flag_product", "proved"),  # min/max/abs/comparison values split the path
    ("unsupported.py", "def step", "refuted"),  # floor is a function of the table: floor(1/2) + 1 != 3/2
    # cross product components (common practice)
    ("vec.py", "def cross", "proved"),
    ("vec.py", "def cross_flipped", "refuted"),
]

WRONG = {("unsupported.py", "def half_index"), ("unsupported.py", "def step"),
         ("calibrate.py", "def horner4_short"), ("dsp.py", "def cmul3_wrong"), ("mixer.py", "def lens_power_wrong"),
         ("rotate.py", "def rotate_cross_any_norm"), ("rotate.py", "n1 = "), ("vec.py", "def cross_flipped")}


def claim_line(file: str, anchor: str) -> int:
    lines = (PACKAGE / file).read_text().splitlines()
    if anchor.startswith("def "):
        name = anchor[4:]
        index = next(i for i, line in enumerate(lines) if line.startswith(f"def {name}("))
        while "idealcheck:" not in lines[index]:
            index -= 1
        return index + 1
    matches = [i for i, line in enumerate(lines) if anchor in line and "idealcheck:" in line]
    assert len(matches) == 1, (file, anchor)
    return matches[0] + 1


@pytest.fixture(scope="module")
def report(cli: Cli) -> dict:
    done = cli("check", "fixtures/kernels", "--config", "fixtures/kernels/pyproject.toml", "--format", "json",
               "--no-cache", "--timeout", "60", cwd=ROOT, fresh_process=True)
    assert done.code == 1, done.err  # some claims are deliberately wrong
    return json.loads(done.out)


def by_place(report: dict) -> dict[tuple[str, int], dict]:
    found = {}
    for claim in report["claims"]:
        found[(claim["path"], claim["line"])] = claim
    return found


def test_every_fixture_claim_is_reported_once(report):
    places = by_place(report)
    expected = {(f"fixtures/kernels/kestrel/{file}", claim_line(file, anchor)) for file, anchor, _ in EXPECTED}
    python_claims = {place for place in places if place[0].endswith(".py")}
    assert python_claims == expected


@pytest.mark.parametrize("file, anchor, verdict", EXPECTED, ids=[f"{f}:{a}" for f, a, _ in EXPECTED])
def test_fixture_verdicts(report, file, anchor, verdict):
    claim = by_place(report)[(f"fixtures/kernels/kestrel/{file}", claim_line(file, anchor))]
    if (file, anchor) in WRONG:
        assert claim["verdict"] != "proved", claim  # soundness first
    assert claim["verdict"] == verdict, claim
    assert claim["kind"] == ("function" if anchor.startswith("def ") else "statement")
    if verdict == "refuted":
        assert claim["witness"] is not None and claim["counter_normal_form"]
    if verdict == "inconclusive" and file == "unsupported.py":
        assert "line " in claim["reason"]
        assert "not supported" in claim["reason"] or "limit" in claim["reason"]


def test_failures_name_the_component_or_path(report):
    places = by_place(report)

    def reason(file: str, anchor: str) -> str:
        return places[(f"fixtures/kernels/kestrel/{file}", claim_line(file, anchor))]["reason"]

    assert reason("dsp.py", "def cmul3_wrong").startswith("component 1")
    assert reason("vec.py", "def cross_flipped").startswith("component 2")
    assert reason("mixer.py", "def lens_power_wrong").startswith("path where d != 0")
    assert "returns 2 values" in reason("mistakes.py", "def pair_three")
    assert "while loop at line 14" in reason("unsupported.py", "def newton_sqrt")
    assert "vacuously" in reason("mixer.py", "def combined_stiffness")
