"""End to end: the Larkspur kernel fixtures (C, C++, CUDA, Fortran, Julia, Rust) through `idealcheck check`.

Every function and statement claim of fixtures/kernels_lang has an expected verdict below, with the outside
fact that makes it true or false.  "wrong" claims are one-line bugs: never proved.
"""
from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[3]
PACKAGE = ROOT / "fixtures" / "kernels_lang" / "larkspur"

# (file, anchor, verdict): "@NAME" is the claim above the definition of NAME; otherwise a piece of the code
# line that carries a trailing claim.
EXPECTED: list[tuple[str, str, str]] = [
    # sums of squares by counted loops (definition); the short loop misses v[2]
    ("attitude.c", "@lk_norm2", "proved"),
    ("attitude.c", "@lk_norm2_short", "refuted"),
    # Hamilton product components (Hamilton's rules i^2 = j^2 = k^2 = ijk = -1, common practice)
    ("attitude.c", "p->w = ", "proved"),
    ("attitude.c", "p->x = ", "proved"),
    ("attitude.c", "p->y = ", "proved"),
    ("attitude.c", "p->z = ", "proved"),
    ("attitude.c", "*out = q->w", "refuted"),
    # Euler's four-square identity |ab|^2 = |a|^2 |b|^2 (common practice)
    ("attitude.c", "@lk_product_norm2", "proved"),
    ("attitude.c", "@lk_self_product", "proved"),
    # Horner's rule (common practice)
    ("attitude.c", "@lk_baro_poly", "proved"),
    ("attitude.c", "@lk_baro_poly_reversed", "refuted"),
    # Gauss's three-multiplication complex product (Knuth, TAOCP vol. 2, 4.6.4, from memory)
    ("attitude.c", "@lk_cmul3", "proved"),
    ("attitude.c", "*re = k1 - k3; //", "proved"),
    ("attitude.c", "*im = k1 + k2; //", "proved"),
    ("attitude.c", "@lk_cmul3_wrong", "refuted"),
    ("attitude.c", "out[0] = ", "proved"),
    ("attitude.c", "out[1] = ", "proved"),
    # Vieta's formulas: product c/a, sum -b/a
    ("attitude.c", "@lk_root_product", "proved"),
    ("attitude.c", "@lk_root_sum", "refuted"),
    ("attitude.c", "@lk_hypot_squared", "proved"),
    ("attitude.c", "@lk_abs_like", "proved"),
    ("attitude.c", "@lk_steps", "proved"),
    ("broken.c", "@square", "error"),
    ("integers.c", "@half_up", "inconclusive"),
    ("integers.c", "@doubled", "inconclusive"),
    ("integers.c", "@three_x", "proved"),  # C: 7 / 2 == 3 (integer division truncates)
    ("unsupported.c", "@drain", "inconclusive"),
    ("unsupported.c", "@pair_sum", "inconclusive"),
    ("unsupported.c", "@through_library", "inconclusive"),
    ("unsupported.c", "@thread_index", "inconclusive"),
    # dot and cross products; Lagrange's identity |a x b|^2 = |a|^2|b|^2 - (a.b)^2 (common practice)
    ("geometry.cpp", "@dot", "proved"),
    ("geometry.cpp", "c.x = ", "proved"),
    ("geometry.cpp", "c.y = ", "proved"),
    ("geometry.cpp", "c.z = ", "proved"),
    ("geometry.cpp", "@cross_norm2", "proved"),
    ("geometry.cpp", "@triple_self", "refuted"),  # a . (a x b) = 0
    ("geometry.cpp", "@range2", "proved"),  # hypot(x, y) = sqrt(x^2 + y^2) (definition)
    ("geometry.cpp", "@midpoint", "proved"),
    ("geometry.cpp", "half = (a + b) * kHalf;", "refuted"),
    ("geometry.cpp", "@sum_squares", "proved"),
    ("geometry.cpp", "@rotated_length2", "proved"),  # rotations keep length on c^2 + s^2 = 1
    ("rotate.cu", "@dot3", "proved"),
    ("rotate.cu", "@length3", "proved"),
    # q (0, v) q* = v + 2w (u x v) + 2 u x (u x v) for |q| = 1 (common practice); scaled by |q|^2 otherwise
    ("rotate.cu", "@rotate_fast", "proved"),
    ("rotate.cu", "@rotate_fast_any", "refuted"),
    ("rotate.cu", "@horner3", "proved"),
    ("rotate.cu", "@horner3_short", "refuted"),
    # cos 2t = 1 - 2 sin^2 t, cos(a + b) = cos a cos b - sin a sin b (Abramowitz & Stegun 4.3.17, 4.3.25)
    ("tides.f90", "@cos_double", "proved"),
    ("tides.f90", "@cos_sum", "refuted"),
    ("tides.f90", "@square_of_sum", "proved"),
    ("tides.f90", "@horner_cubic", "proved"),
    ("tides.f90", "@cmul3", "proved"),
    ("tides.f90", "re = k1 - k3  !", "proved"),
    ("tides.f90", "im = k1 + k2  !", "proved"),
    ("tides.f90", "@cmul3_wrong", "refuted"),
    ("tides.f90", "@norm3", "proved"),
    ("tides.f90", "m%x = ", "proved"),
    ("tides.f90", "m%y = ", "proved"),
    ("tides.f90", "@product_modulus2", "proved"),  # |zw|^2 = |z|^2 |w|^2
    ("tides.f90", "@branch_square", "proved"),
    ("tides.f90", "@scaled", "refuted"),  # 1.0e-3 is 1/1000
    ("filters.jl", "@sq_minus_one", "proved"),
    ("filters.jl", "@sq_plus", "refuted"),
    ("filters.jl", "@energy", "proved"),
    ("filters.jl", "@cmul3", "proved"),
    ("filters.jl", "@modulus2", "proved"),
    ("filters.jl", "m = GAIN", "proved"),
    ("filters.jl", "d = (a - b) * GAIN", "refuted"),
    ("filters.jl", "@square_paths", "proved"),
    ("filters.jl", "@rotated_length2", "proved"),
    ("filters.jl", "@cmul_ref", "proved"),
    ("filters.jl", "@cmul_bad", "refuted"),
    ("guidance.rs", "@norm2", "proved"),
    ("guidance.rs", "@length2", "proved"),
    ("guidance.rs", "@shape", "proved"),
    ("guidance.rs", "@shape_inclusive", "refuted"),
    ("guidance.rs", "@cross", "proved"),
    ("guidance.rs", "@cross_dot_first", "proved"),  # a . (a x b) = 0
    ("guidance.rs", "let half_gap", "proved"),
    ("guidance.rs", "@cmul", "proved"),
    ("guidance.rs", "@unit_product_norm", "refuted"),  # holds only on the unit circle
    ("guidance.rs", "@cmul_checked", "proved"),
]
WRONG_FILES_MARK = "wrong"


def _is_definition(line: str, name: str) -> bool:
    stripped = line.strip()
    if stripped.startswith(("//", "/*", "*", "!", "#")) or "idealcheck:" in line:
        return False
    return f" {name}(" in f" {stripped}" or f"{name}(" in stripped.split("=")[0]


def claim_line(file: str, anchor: str) -> int:
    lines = (PACKAGE / file).read_text().splitlines()
    if anchor.startswith("@"):
        name = anchor[1:]
        for index, line in enumerate(lines):
            if _is_definition(line, name) and not line.strip().startswith(("return", "call ")) and \
                    ("fn " in line or "function" in line or "(" in line.split(name)[0] + "(" and
                     not line.startswith(" " * 8)):
                above = index - 1
                while above >= 0 and "idealcheck:" not in lines[above] and lines[above].strip().startswith(
                        ("//", "/*", "*", "!", "#", "@", "template", "[[")):
                    above -= 1
                if above >= 0 and "idealcheck:" in lines[above]:
                    return above + 1
        raise AssertionError((file, anchor))
    matches = [i for i, line in enumerate(lines) if anchor in line and "idealcheck:" in line]
    assert len(matches) == 1, (file, anchor, matches)
    return matches[0] + 1


@pytest.fixture(scope="module")
def report() -> dict:
    command = [sys.executable, "-m", "verifier", "check", "fixtures/kernels_lang",
               "--config", "fixtures/kernels_lang/pyproject.toml", "--format", "json", "--no-cache",
               "--timeout", "60"]
    done = subprocess.run(command, cwd=ROOT, capture_output=True, text=True, timeout=600)
    assert done.returncode == 1, done.stderr  # some claims are deliberately wrong
    return json.loads(done.stdout)


def _by_place(report: dict) -> dict[tuple[str, int], dict]:
    return {(c["path"], c["line"]): c for c in report["claims"]}


def test_every_tied_claim_has_an_expectation(report):
    expected = {(f"fixtures/kernels_lang/larkspur/{f}", claim_line(f, a)) for f, a, _ in EXPECTED}
    tied = {(c["path"], c["line"]) for c in report["claims"] if c["kind"] in ("function", "statement")}
    assert tied == expected


@pytest.mark.parametrize("file, anchor, verdict", EXPECTED, ids=[f"{f}:{a}" for f, a, _ in EXPECTED])
def test_fixture_verdicts(report, file, anchor, verdict):
    line = claim_line(file, anchor)
    claim = _by_place(report)[(f"fixtures/kernels_lang/larkspur/{file}", line)]
    lines = (PACKAGE / file).read_text().splitlines()
    if any(WRONG_FILES_MARK in lines[i].lower() for i in range(max(0, line - 3), line)):
        assert claim["verdict"] != "proved", claim  # soundness first
    assert claim["verdict"] == verdict, claim
    if verdict == "refuted":
        assert claim["witness"] is not None
    if verdict == "inconclusive":
        assert "line " in claim["reason"] or "calls the tool cannot see into" in claim["reason"], claim
    if verdict == "error":
        assert "broken.c" in claim["reason"] and "line 5" in claim["reason"], claim
