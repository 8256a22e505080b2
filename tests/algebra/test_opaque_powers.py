"""Defect D5 of the fuzzing: ``8**(1/3) == 2``, ``x**1e400`` and ``2**x`` were `error` (text that cannot be
read) although the text is well formed.  They are opaque values now: identical sides are proved; a false claim
is refuted by a witness evaluated with the real power (mpmath's ``power``, independent of the tool); a true
claim the algebra cannot see is inconclusive, never refuted; nothing is an error.
"""
from __future__ import annotations

from pathlib import Path

CLAIMS = {
    "8**(1/3) == 2": "proved",  # a rational power of a constant is its exact value
    "27**(2/3)*x == 9*x": "proved",
    "8**(1/3) == 3": "refuted",
    "8**(1/3)*x == 3*x": "refuted",  # found by the fuzzer: was never refuted
    "x**1e400 == x**1e400": "proved",
    "2**x*3 == 3*2**x": "proved",
    "2**x == 3**x": "refuted",  # x = 1: 2 != 3
    "2**(x + 1) == 2*2**x + 1": "refuted",
    "2**x*2**x == 4**x": "inconclusive",  # true, beyond the algebra
    "(-8)**(1/3) == -2": "inconclusive",  # a fractional power of a negative base is undefined (as in Python)
    "2**(1/3)*3 == 3*2**(1/3)": "proved",  # irrational: stays an opaque value, identical ones cancel
}


def test_unrepresentable_powers_are_read_end_to_end(cli, tmp_path: Path) -> None:
    assert cli.verdicts(tmp_path, "growth.py", CLAIMS) == CLAIMS


def test_a_refuting_witness_agrees_with_mpmath(cli, tmp_path: Path) -> None:
    import json

    import mpmath

    (tmp_path / "growth.py").write_text("# idealcheck: 2**x == 3**x\n")
    claim = json.loads(cli("check", "--no-cache", "--format", "json", "growth.py", cwd=tmp_path).out)["claims"][0]
    x = mpmath.mpf(claim["witness"]["values"]["x"])
    assert mpmath.power(2, x) != mpmath.power(3, x)
    assert mpmath.almosteq(mpmath.mpf(claim["witness"]["left"]), mpmath.power(2, x))


def test_rational_powers_of_constants_agree_with_sympy() -> None:
    from fractions import Fraction

    import sympy

    from verifier.model.functions import rational_power

    for base in (Fraction(8), Fraction(27, 8), Fraction(2), Fraction(0), Fraction(10**30), Fraction(16),
                 Fraction(1, 4), Fraction(-8), Fraction(-27, 64)):
        for exponent in (Fraction(1, 3), Fraction(-2, 3), Fraction(1, 2), Fraction(3, 4), Fraction(2),
                         Fraction(-1), Fraction(5, 2)):
            value = rational_power(base, exponent)
            if base < 0 and exponent.denominator > 1 or base == 0 and exponent <= 0:
                assert value is None
                continue
            reference = sympy.Rational(base.numerator, base.denominator) ** sympy.Rational(
                exponent.numerator, exponent.denominator)
            if reference.is_rational:
                assert value == Fraction(int(reference.p), int(reference.q)), (base, exponent)
            else:
                assert value is None, (base, exponent)
