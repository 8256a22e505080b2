"""Real sums of squares of degree 2: ``x == -z given x**2 + 2*x*z + y**2 + 4*y*z + 5*z**2 == 0`` holds
because the condition is (x + z)**2 + (y + 2*z)**2 == 0 (common practice: a sum of real squares is zero
only when every square is).  The decomposition is exact (rational LDL^T) and the kernel re-expands it;
the decompositions are checked against sympy's ``expand``."""
from __future__ import annotations

import dataclasses
import random

import sympy
from sympy import QQ, symbols
from sympy.polys.orderings import grevlex
from sympy.polys.rings import ring

from verifier.algebra.kernel.checkers import Rejected, check_real_square
from verifier.algebra.squares import quadratic_squares


def test_sums_of_squares_decide_the_claims(cli, tmp_path):
    claims = {
        "x == -z given x**2 + 2*x*z + y**2 + 4*y*z + 5*z**2 == 0": "proved",
        "y == -2*z given x**2 + 2*x*z + y**2 + 4*y*z + 5*z**2 == 0": "proved",  # P = g - f**2 = (x + z)**2
        "x == 1 given x**2 + y**2 - 2*x + 1 == 0": "proved",
        # conditions with no real point (issue 13's empty real conditions): true vacuously over the reals
        "a == b given a**2 + b**2 + 1 == 0": "proved",
        "x == 5 given x**2 + 1 == 0": "proved",
        # a real root of a factor whose cofactor is positive: x**3 - 8 == (x - 2)*((x + 1)**2 + 3)
        "x == 2 given x**3 == 8": "proved",
        "x == 1 given x**3 - 2*x**2 + 2*x - 1 == 0": "proved",  # (x - 1)*(x**2 - x + 1)
        "x + y == 2 given (x + y - 2)*(x**2 + y**2 + 1) == 0": "proved",
        "x == 1 given x**3 - x == 0": "not proved",  # x = 0 and x = -1 are real roots too
        "a + b == 2 given 2*a**2 + 2*b**2 - 4*a - 4*b + 4 == 0": "proved",  # (a - 1)**2 + (b - 1)**2 == 0
        # false: x = -1, y = -2, z = 1 satisfies the condition (1 - 2 + 4 - 8 + 5 == 0) and x != z
        "x == z given x**2 + 2*x*z + y**2 + 4*y*z + 5*z**2 == 0": "not proved",
    }
    verdicts = cli.verdicts(tmp_path, "sos.py", claims)
    for text, expected in claims.items():
        assert (verdicts[text] != "proved") if expected == "not proved" else (verdicts[text] == expected), text


def test_an_indefinite_quadratic_is_not_a_sum_of_squares():
    R, x, y = ring("x,y", QQ, grevlex)
    assert quadratic_squares(x**2 - y**2) is None
    assert quadratic_squares(x * y) is None
    assert quadratic_squares(x**3 + y**2) is None


def test_the_decomposition_expands_back_exactly():
    R, x, y, z = ring("x,y,z", QQ, grevlex)
    X, Y, Z = symbols("x y z")
    rng = random.Random(5)
    for _ in range(40):
        total, reference = R.zero, 0
        for _ in range(rng.randint(1, 3)):
            a, b, c, d = (QQ(rng.randint(-3, 3), rng.randint(1, 3)) for _ in range(4))
            w = QQ(rng.randint(1, 4))
            total += w * (a * x + b * y + c * z + d) ** 2
            reference += sympy.Rational(int(w.numerator), int(w.denominator)) * (
                sympy.Rational(int(a.numerator), int(a.denominator)) * X
                + sympy.Rational(int(b.numerator), int(b.denominator)) * Y
                + sympy.Rational(int(c.numerator), int(c.denominator)) * Z
                + sympy.Rational(int(d.numerator), int(d.denominator))) ** 2
        found = quadratic_squares(total)
        if not total:
            continue
        assert found is not None
        assert all(weight > 0 for weight, _ in found)
        rebuilt = sum((sympy.Rational(w.numerator, w.denominator) * sympy.sympify(str(q.as_expr())) ** 2
                       for w, q in found), sympy.Integer(0))
        assert sympy.expand(rebuilt - reference) == 0


def test_the_kernel_rejects_a_negative_weight_or_squares_that_miss():
    from verifier.algebra.decide import decide
    from verifier.claims import extract

    claim = extract("sos.py", "# idealcheck: x == -z given x**2 + 2*x*z + y**2 + 4*y*z + 5*z**2 == 0\n")[0]
    certificate = decide(claim).obligations[0].certificate
    assert certificate is not None and certificate.squares
    check_real_square(certificate)
    weight, square = certificate.squares[0]
    for bad in (((("-" + weight), square),) + certificate.squares[1:], certificate.squares[1:]):
        try:
            check_real_square(dataclasses.replace(certificate, squares=bad))
        except Rejected:
            continue
        raise AssertionError(f"accepted {bad}")
