"""Exact signed values of sine and cosine at pi/n (issue 13): the translation pins sin(pi/4) to
sqrt(2)/2 with sqrt(2) the principal root, not only sin(pi/4)**2 to 1/2, so the sign is known.

References: the values at pi/n for n = 1, 2, 3, 4, 6, 12 are common practice (A&S table 4.3.46, from
memory); every entry of the table, and each claim below, is checked against mpmath at 50 digits here.
"""
from __future__ import annotations

from fractions import Fraction
from pathlib import Path

import mpmath
import pytest
from mpmath import cos, pi, sin, sqrt, tan

from verifier.algebra.angles import DOUBLE_ANGLE_VALUES, NESTED_PI_VALUES, PI_VALUES, RootSum

# claim text -> LEFT - RIGHT in mpmath at x
PROVED = {
    "sin(pi/4) == sqrt(2)/2": lambda x: sin(pi / 4) - sqrt(2) / 2,
    "sin(pi/3) == sqrt(3)/2": lambda x: sin(pi / 3) - sqrt(3) / 2,
    "tan(pi/3) == sqrt(3)": lambda x: tan(pi / 3) - sqrt(3),
    "cos(pi/6) == sqrt(3)/2": lambda x: cos(pi / 6) - sqrt(3) / 2,
    "sin(x + pi/3) == sin(x)/2 + sqrt(3)*cos(x)/2": lambda x: sin(x + pi / 3) - sin(x) / 2 - sqrt(3) * cos(x) / 2,
    "sin(x + pi/4) == (sin(x) + cos(x))*sqrt(2)/2": lambda x: sin(x + pi / 4) - (sin(x) + cos(x)) * sqrt(2) / 2,
    "sin(5*pi/4) == -sqrt(2)/2": lambda x: sin(5 * pi / 4) + sqrt(2) / 2,
    # pi/3 and pi/4 together: the base angle is pi/12
    "sin(pi/3 + pi/4) == (sqrt(6) + sqrt(2))/4": lambda x: sin(pi / 3 + pi / 4) - (sqrt(6) + sqrt(2)) / 4,
    "cos(pi/12) == (sqrt(6) + sqrt(2))/4": lambda x: cos(pi / 12) - (sqrt(6) + sqrt(2)) / 4,
    "tan(pi/6) == sqrt(3)/3": lambda x: tan(pi / 6) - sqrt(3) / 3,
    # nested roots at pi/5, pi/8, pi/10 (NESTED_PI_VALUES)
    "cos(pi/5) == (1 + sqrt(5))/4": lambda x: cos(pi / 5) - (1 + sqrt(5)) / 4,
    "sin(pi/5) == sqrt(10 - 2*sqrt(5))/4": lambda x: sin(pi / 5) - sqrt(10 - 2 * sqrt(5)) / 4,
    "cos(pi/8) == sqrt(2 + sqrt(2))/2": lambda x: cos(pi / 8) - sqrt(2 + sqrt(2)) / 2,
    "sin(pi/8)**2 == (2 - sqrt(2))/4": lambda x: sin(pi / 8) ** 2 - (2 - sqrt(2)) / 4,
    "sin(pi/10) == (sqrt(5) - 1)/4": lambda x: sin(pi / 10) - (sqrt(5) - 1) / 4,
    "cos(2*pi/5) == (sqrt(5) - 1)/4": lambda x: cos(2 * pi / 5) - (sqrt(5) - 1) / 4,
    "cos(11*pi/8) == -sqrt(1/2 - sqrt(2)/4)": lambda x: cos(11 * pi / 8) + sqrt(mpmath.mpf(1) / 2 - sqrt(2) / 4),
    "sin(x + 8*pi/5) == (sqrt(5) - 1)*sin(x)/4 - sqrt(sqrt(5)/8 + 5/8)*cos(x)":
        lambda x: sin(x + 8 * pi / 5) - (sqrt(5) - 1) * sin(x) / 4 + sqrt(sqrt(5) / 8 + mpmath.mpf(5) / 8) * cos(x),
    "sin(x + pi/5) == sin(x)*(1 + sqrt(5))/4 + cos(x)*sqrt(10 - 2*sqrt(5))/4":
        lambda x: sin(x + pi / 5) - sin(x) * (1 + sqrt(5)) / 4 - cos(x) * sqrt(10 - 2 * sqrt(5)) / 4,
}
REFUTED = {
    "sin(pi/4) == -sqrt(2)/2": lambda x: sin(pi / 4) + sqrt(2) / 2,  # the right magnitude, the wrong sign
    "sin(pi/3) == sqrt(2)/2": lambda x: sin(pi / 3) - sqrt(2) / 2,
    "sin(3*pi/4) == -sqrt(2)/2": lambda x: sin(3 * pi / 4) + sqrt(2) / 2,
    "tan(pi/3) == -sqrt(3)": lambda x: tan(pi / 3) + sqrt(3),
    "cos(pi/12) == (sqrt(6) - sqrt(2))/4": lambda x: cos(pi / 12) - (sqrt(6) - sqrt(2)) / 4,  # sin(pi/12)
    "sin(x + pi/3) == sin(x)/2 - sqrt(3)*cos(x)/2": lambda x: sin(x + pi / 3) - sin(x) / 2 + sqrt(3) * cos(x) / 2,
    "cos(pi/5) == (1 - sqrt(5))/4": lambda x: cos(pi / 5) - (1 - sqrt(5)) / 4,
    "cos(pi/8) == -sqrt(2 + sqrt(2))/2": lambda x: cos(pi / 8) + sqrt(2 + sqrt(2)) / 2,  # the wrong sign
    "sin(pi/10) == (sqrt(5) + 1)/4": lambda x: sin(pi / 10) - (sqrt(5) + 1) / 4,
    "sin(pi/5) == sqrt(10 + 2*sqrt(5))/4": lambda x: sin(pi / 5) - sqrt(10 + 2 * sqrt(5)) / 4,  # cos(pi/10)
}


def _value(root_sum: RootSum) -> mpmath.mpf:
    return sum((mpmath.mpf(c.numerator) / c.denominator * mpmath.fprod([mpmath.sqrt(p) for p in primes])
                for c, primes in root_sum), mpmath.mpf(0))


@pytest.mark.parametrize("n", sorted(PI_VALUES))
def test_the_table_agrees_with_mpmath(n: int) -> None:
    (cos_value, _), (sin_value, _) = PI_VALUES[n]
    with mpmath.workdps(50):
        assert abs(_value(cos_value) - mpmath.cos(mpmath.pi / n)) < mpmath.mpf(10) ** -45
        assert abs(_value(sin_value) - mpmath.sin(mpmath.pi / n)) < mpmath.mpf(10) ** -45
    for root_sum in (cos_value, sin_value):  # only primes under the roots: they share the claim's sqrt(p)
        assert all(isinstance(c, Fraction) and all(p in (2, 3) for p in primes) for c, primes in root_sum)


@pytest.mark.parametrize("n", sorted(NESTED_PI_VALUES))
def test_the_nested_table_agrees_with_mpmath(n: int) -> None:
    with mpmath.workdps(50):
        for (shape, root_sum, _), exact in zip(NESTED_PI_VALUES[n], (mpmath.cos(mpmath.pi / n),
                                                                      mpmath.sin(mpmath.pi / n))):
            value = _value(root_sum) if shape == "value" else mpmath.sqrt(_value(root_sum))
            assert shape in ("value", "root") and abs(value - exact) < mpmath.mpf(10) ** -45
        shape, root_sum, _ = DOUBLE_ANGLE_VALUES[n]
        value = _value(root_sum) if shape == "value" else mpmath.sqrt(_value(root_sum))
        assert abs(value - mpmath.sin(2 * mpmath.pi / n)) < mpmath.mpf(10) ** -45


def test_exact_values_at_pi_over_n_end_to_end(cli, tmp_path: Path) -> None:
    with mpmath.workdps(50):
        for text, difference in (PROVED | REFUTED).items():
            assert (abs(difference(mpmath.mpf("0.3"))) < mpmath.mpf(10) ** -40) == (text in PROVED), text
    expected = {text: "proved" for text in PROVED} | {text: "refuted" for text in REFUTED}
    assert cli.verdicts(tmp_path, "angles.py", expected) == expected
