"""abs, min, max, copysign, sign, clip and comparisons as values: the path splits on the sign conditions.

The identities are common practice (|x|**2 == x**2, max(a, b) == (a + b + |a - b|)/2, clamping is the
identity on the clamped interval); each has a one-line bug beside it that must be refuted.  The pieces
themselves are checked against Python's own ``abs``, ``min``, ``max`` and ``math.copysign``.
"""
from __future__ import annotations

import json
import math
import random
from fractions import Fraction

import pytest

from verifier.claims.execute.piecewise import pieces
from verifier.model.expr import Neg, Num

PYTHON_KERNELS = """\
import math
import numpy as np


# idealcheck: returns x**2
def magnitude_squared(x):
    return abs(x) * abs(x)


# idealcheck: returns x**3
def magnitude_squared_bug(x):
    return abs(x) * x * x


def larger(a, b):
    return max(a, b)


# idealcheck: same as larger
def larger_by_abs(a, b):
    return (a + b + math.fabs(a - b)) / 2


# idealcheck: same as larger
def larger_by_abs_bug(a, b):
    return (a + b - abs(a - b)) / 2


# idealcheck: returns t given t >= 0, t <= 1
def saturate(t):
    return min(max(t, 0.0), 1.0)


# idealcheck: returns t given t >= 0, t <= 2
def saturate_bug(t):
    return min(max(t, 0.0), 1.0)


# idealcheck: returns x*x
def copysign_square(x, y):
    return math.copysign(x, y) * math.copysign(x, y)


# idealcheck: returns x
def sign_times_magnitude(x):
    return np.sign(x) * abs(x)


# idealcheck: returns -x
def sign_times_magnitude_bug(x):
    return np.sign(x) * abs(x)


# idealcheck: returns x*y
def step_product(x, y):
    return x * y * (x > 0) + y * x * (x <= 0)


# idealcheck: returns x*y
def step_product_bug(x, y):
    return x * y * (x > 0) + y * (x <= 0)


# idealcheck: returns t given t >= 0, t <= 1
def clipped(t):
    return np.clip(t, 0.0, 1.0)
"""

C_KERNELS = """\
#include <math.h>

/* idealcheck: returns x*x */
double magnitude_squared(double x) { return fabs(x) * fabs(x); }

/* idealcheck: returns x*x*x */
double magnitude_squared_bug(double x) { return fabs(x) * x * x; }

/* idealcheck: returns a given a >= b */
double larger(double a, double b) { return 0.5 * (a + b + fabs(a - b)); }

/* idealcheck: returns x given x >= 0, x <= 1 */
double saturate(double x) { return fmin(fmax(x, 0.0), 1.0); }

/* idealcheck: returns x */
double saturate_bug(double x) { return fmin(fmax(x, -1.0), 1.0); }
"""

FORTRAN_KERNEL = """\
! idealcheck: returns x*x
function magnitude_squared(x) result(r)
  real(8), intent(in) :: x
  real(8) :: r
  r = abs(x) * sign(x, x)
end function magnitude_squared
"""

RUST_KERNEL = """\
// idealcheck: returns a given a >= b
fn larger(a: f64, b: f64) -> f64 {
    a.max(b)
}

// idealcheck: returns b given a >= b
fn larger_bug(a: f64, b: f64) -> f64 {
    a.max(b)
}
"""


@pytest.fixture(scope="module")
def python_verdicts(cli, tmp_path_factory):
    folder = tmp_path_factory.mktemp("piecewise")
    (folder / "kernels.py").write_text(PYTHON_KERNELS)
    result = cli("check", "--no-cache", "--format", "json", "kernels.py", cwd=folder)
    return _names(PYTHON_KERNELS, json.loads(result.out)["claims"])


def _names(source: str, claims: list[dict]) -> dict[str, str]:
    """Each claim's verdict by the name of the function it sits on (the next definition below it)."""
    lines = source.splitlines()
    found = {}
    for claim in claims:
        for text in lines[claim["line"]:]:
            words = text.replace("(", " ").split()
            if words and words[0] in ("def", "double", "function", "fn"):
                found[words[1]] = claim["verdict"]
                break
    return found


@pytest.mark.parametrize("function, verdict", [
    ("magnitude_squared", "proved"), ("magnitude_squared_bug", "refuted"),
    ("larger_by_abs", "proved"), ("larger_by_abs_bug", "refuted"),
    ("saturate", "proved"), ("saturate_bug", "refuted"),
    ("sign_times_magnitude", "proved"), ("sign_times_magnitude_bug", "refuted"),
    ("step_product", "proved"), ("step_product_bug", "refuted"),
    ("clipped", "proved"), ("copysign_square", "proved"),
])
def test_python_cases_split_the_path(python_verdicts, function, verdict):
    assert python_verdicts[function] == verdict


@pytest.mark.parametrize("name, source, expected", [
    ("cases.c", C_KERNELS, {"magnitude_squared": "proved", "magnitude_squared_bug": "refuted",
                            "larger": "proved", "saturate": "proved", "saturate_bug": "refuted"}),
    ("cases.f90", FORTRAN_KERNEL, {"magnitude_squared": "refuted"}),  # |x| * sign(x, x) is |x| * x
    ("cases.rs", RUST_KERNEL, {"larger": "proved", "larger_bug": "refuted"}),
])
def test_kernel_languages_split_the_path(cli, tmp_path, name, source, expected):
    (tmp_path / name).write_text(source)
    result = cli("check", "--no-cache", "--format", "json", name, cwd=tmp_path)
    assert _names(source, json.loads(result.out)["claims"]) == expected


def test_a_refuted_piece_names_its_path_and_a_witness(cli, tmp_path):
    (tmp_path / "k.py").write_text("# idealcheck: returns x\ndef clamp(x):\n    return max(-1.0, min(1.0, x))\n")
    result = cli("check", "--no-cache", "k.py", cwd=tmp_path)
    assert result.code == 1
    assert "refuted: returns x" in result.out and "path where" in result.out and "witness: x =" in result.out


@pytest.mark.parametrize("name, arity, reference", [
    ("abs", 1, lambda x: abs(x)),
    ("min", 2, lambda a, b: min(a, b)),
    ("max", 3, lambda a, b, c: max(a, b, c)),
    ("copysign", 2, lambda x, y: math.copysign(x, y)),
    ("sign", 1, lambda x: (x > 0) - (x < 0)),
    ("clip", 3, lambda x, lo, hi: min(max(x, lo), hi)),
])
def test_exactly_one_piece_holds_and_gives_pythons_value(name, arity, reference):
    rng = random.Random(7)
    holds = {"==": lambda a, b: a == b, "!=": lambda a, b: a != b, "<": lambda a, b: a < b,
             "<=": lambda a, b: a <= b, ">": lambda a, b: a > b, ">=": lambda a, b: a >= b}
    for _ in range(200):
        values = [Fraction(rng.choice([-3, -1, 0, 0, 1, 2, 5]), rng.choice([1, 2])) for _ in range(arity)]
        if name == "clip" and values[1] > values[2]:
            values[1], values[2] = values[2], values[1]
        found = pieces(name, [Num(v) for v in values])
        assert found is not None
        chosen = [value for tests, value in found
                  if all(holds[rel](_number(left), _number(right)) for left, rel, right in tests)]
        assert len(chosen) >= 1 and len({_number(v) for v in chosen}) == 1, (name, values)
        expected = reference(*[float(v) for v in values])
        if not (name == "copysign" and values[1] == 0):  # exact reals have no -0.0
            assert float(_number(chosen[0])) == expected


def _number(expr) -> Fraction:
    if isinstance(expr, Neg):
        return -_number(expr.operand)
    assert isinstance(expr, Num)
    return expr.value
