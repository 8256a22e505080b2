"""Matrix and nested results end to end through `idealcheck check`: nested tuples and lists in `returns`
and `== EXPR` claims and in `same as` comparisons are compared componentwise, and the number of results
is checked only on the paths the conditions allow.

An invented module `plates.py` (a 2-D plate-stress toolkit) holds each construct twice: written right,
which must be proved, and with a one-line bug, which must be refuted.

References: the product of rotations is the rotation by the sum of the angles (common practice);
Strassen's seven-product 2x2 matrix product (V. Strassen, "Gaussian elimination is not optimal",
Numerische Mathematik 13, 1969; the formulas from memory, checked below with sympy's expand against the
definition of the product); the inverse of a 2x2 matrix is the adjugate over the determinant (common
practice).
"""
from __future__ import annotations

import json
from pathlib import Path

import pytest
import sympy

PLATES = '''\
import numpy as np
from math import cos, sin


# idealcheck: returns [[cos(a + b), -sin(a + b)], [sin(a + b), cos(a + b)]]
def turn_twice(a, b):
    first = [[cos(a), -sin(a)], [sin(a), cos(a)]]
    second = [[cos(b), -sin(b)], [sin(b), cos(b)]]
    out = [[0, 0], [0, 0]]
    for i in range(2):
        for j in range(2):
            out[i][j] = first[i][0] * second[0][j] + first[i][1] * second[1][j]
    return out


# idealcheck: returns [[cos(a + b), -sin(a + b)], [sin(a + b), cos(a + b)]]
def turn_twice_bug(a, b):
    first = [[cos(a), -sin(a)], [sin(a), cos(a)]]
    second = [[cos(b), sin(b)], [sin(b), cos(b)]]
    out = [[0, 0], [0, 0]]
    for i in range(2):
        for j in range(2):
            out[i][j] = first[i][0] * second[0][j] + first[i][1] * second[1][j]
    return out


def product(p, q, r, s, w, x, y, z):
    return ((p * w + q * y, p * x + q * z), (r * w + s * y, r * x + s * z))


# idealcheck: same as product
def product_seven(p, q, r, s, w, x, y, z):
    m1 = (p + s) * (w + z)
    m2 = (r + s) * w
    m3 = p * (x - z)
    m4 = s * (y - w)
    m5 = (p + q) * z
    m6 = (r - p) * (w + x)
    m7 = (q - s) * (y + z)
    return np.array([[m1 + m4 - m5 + m7, m3 + m5], [m2 + m4, m1 - m2 + m3 + m6]])


# idealcheck: same as product
def product_seven_bug(p, q, r, s, w, x, y, z):
    m1 = (p + s) * (w + z)
    m2 = (r + s) * w
    m3 = p * (x - z)
    m4 = s * (y - w)
    m5 = (p + q) * z
    m6 = (r - p) * (w + x)
    m7 = (q - s) * (y + z)
    return np.array([[m1 + m4 - m5 + m7, m3 + m5], [m2 + m4, m1 - m2 + m3 - m6]])


def undo(a, b, c, d):
    det = a * d - b * c
    inverse = ((d / det, -b / det), (-c / det, a / det))
    return ((a * inverse[0][0] + b * inverse[1][0], a * inverse[0][1] + b * inverse[1][1]),  # idealcheck: == (1, 0), (0, 1)
            (c * inverse[0][0] + d * inverse[1][0], c * inverse[0][1] + d * inverse[1][1]))


def undo_bug(a, b, c, d):
    det = a * d - b * c
    inverse = ((d / det, -b / det), (-c / det, a / det))
    return ((a * inverse[0][0] + b * inverse[1][0], a * inverse[0][1] + b * inverse[1][0]),  # idealcheck: == (1, 0), (0, 1)
            (c * inverse[0][0] + d * inverse[1][0], c * inverse[0][1] + d * inverse[1][1]))


# idealcheck: returns (sx + sy) / 2, (sx - sy) / 2 given plane == 0
def stress_split(sx, sy, plane):
    if plane != 0:
        return ((sx + sy) / 2, (sx - sy) / 2, plane)
    return ((sx + sy) / 2, (sx - sy) / 2)


# idealcheck: returns (sx + sy) / 2, (sx - sy) / 2 given plane >= 0
def stress_split_bug(sx, sy, plane):
    if plane > 0:
        return ((sx + sy) / 2, (sx - sy) / 2, plane)
    return ((sx + sy) / 2, (sx - sy) / 2)


def mean_pair(sx, sy, plane):
    if plane < 0:
        return (sx,)
    return ((sx + sy) / 2, (sx - sy) / 2)


# idealcheck: same as mean_pair given plane >= 0
def mean_pair_direct(sx, sy, plane):
    return (sx / 2 + sy / 2, sx / 2 - sy / 2)


# idealcheck: same as mean_pair given plane >= -1
def mean_pair_direct_bug(sx, sy, plane):
    return (sx / 2 + sy / 2, sx / 2 - sy / 2)


# idealcheck: returns load / area given area > 0
def pressure(load, area):
    if area <= 0:
        return None
    return load / area


# idealcheck: returns load / area given area > -1
def pressure_bug(load, area):
    if area <= 0:
        return None
    return load / area


# idealcheck: returns (a, b), (c)
def ragged(a, b, c, d):
    return ((a, b), (c, d))
'''

EXPECTED = {
    "def turn_twice(": "proved", "def turn_twice_bug(": "refuted",
    "def product_seven(": "proved", "def product_seven_bug(": "refuted",
    "return ((a * inverse[0][0] + b * inverse[1][0], a * inverse[0][1] + b * inverse[1][1])": "proved",
    "return ((a * inverse[0][0] + b * inverse[1][0], a * inverse[0][1] + b * inverse[1][0])": "refuted",
    "def stress_split(": "proved", "def stress_split_bug(": "refuted",
    "def mean_pair_direct(": "proved", "def mean_pair_direct_bug(": "refuted",
    "def pressure(": "proved", "def pressure_bug(": "refuted",
    "def ragged(": "error",
}


def _claim_line(anchor: str) -> int:
    lines = PLATES.splitlines()
    index = next(i for i, line in enumerate(lines) if anchor in line)
    if anchor.startswith("def "):
        while "idealcheck:" not in lines[index]:
            index -= 1
    return index + 1


@pytest.fixture(scope="module")
def claims(cli, tmp_path_factory: pytest.TempPathFactory) -> dict[int, dict]:
    root = tmp_path_factory.mktemp("nested")
    (root / "plates.py").write_text(PLATES)
    done = cli("check", "--no-cache", "--format", "json", "plates.py", cwd=root)
    return {claim["line"]: claim for claim in json.loads(done.out)["claims"]}


def test_the_references_hold() -> None:
    p, q, r, s, w, x, y, z = sympy.symbols("p q r s w x y z")
    m1, m2, m3 = (p + s) * (w + z), (r + s) * w, p * (x - z)
    m4, m5, m6, m7 = s * (y - w), (p + q) * z, (r - p) * (w + x), (q - s) * (y + z)
    seven = sympy.Matrix([[m1 + m4 - m5 + m7, m3 + m5], [m2 + m4, m1 - m2 + m3 + m6]])
    assert sympy.expand(seven - sympy.Matrix([[p, q], [r, s]]) * sympy.Matrix([[w, x], [y, z]])) == sympy.zeros(2)
    bug = seven.copy()
    bug[1, 1] = m1 - m2 + m3 - m6
    assert sympy.expand(bug - seven) != sympy.zeros(2)
    a, b = sympy.symbols("a b")
    rotation = lambda t: sympy.Matrix([[sympy.cos(t), -sympy.sin(t)], [sympy.sin(t), sympy.cos(t)]])  # noqa: E731
    assert sympy.simplify(rotation(a) * rotation(b) - rotation(a + b)) == sympy.zeros(2)


def test_nested_results_and_guarded_arity_end_to_end(claims: dict[int, dict]) -> None:
    verdicts = {anchor: claims[_claim_line(anchor)]["verdict"] for anchor in EXPECTED}
    assert verdicts == EXPECTED
    assert len(claims) == len(EXPECTED)


def test_a_guarded_arity_refutation_says_what_differs(claims: dict[int, dict]) -> None:
    refuted = claims[_claim_line("def stress_split_bug(")]
    # the witness takes the branch the `given` does not exclude, where three values come back
    assert refuted["witness"]["values"]["plane"] == "1" and (refuted["witness"]["left"], refuted["witness"]["right"]) == ("3", "2")
    assert "path where plane > 0, stress_split_bug returns 3 values, the claim gives 2 values here" in refuted["reason"]
    none_path = claims[_claim_line("def pressure_bug(")]
    assert "pressure_bug returns None here" in none_path["reason"]
    # without a branch the numbers of values must agree outright: an error naming the component
    ragged = claims[_claim_line("def ragged(")]
    assert ragged["reason"] == "ragged returns 2 values (component 2), the claim gives 1 value"
