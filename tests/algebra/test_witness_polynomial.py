"""The cheap counterexample search: the difference polynomial screened modulo a prime, checked exactly.

Every witness is confirmed independently with mpmath (``mp_reference.confirm_witness``: every condition
holds and the sides differ) from its printed values.  The identities are common practice: the square of a
sum, the Lagrange and Binet-Cauchy identities (here with one term deliberately changed).
"""
from __future__ import annotations


import sympy

from verifier.model.limits import decision_clock
from verifier.algebra.translate import translate
from verifier.algebra.witness import find_witness
from verifier.algebra.witness_polynomial import polynomial_witness
from verifier.model.claim import Obligation
from exprs import cond, expr
from mp_reference import confirm_witness


def _sum(terms: list[str]) -> str:
    return " + ".join(terms)


def wrong_binet_cauchy(n: int) -> tuple[str, str]:
    left = (f"({_sum([f'a{i}*c{i}' for i in range(n)])})*({_sum([f'b{i}*d{i}' for i in range(n)])})"
            f" - ({_sum([f'a{i}*d{i}' for i in range(n)])})*({_sum([f'b{i}*c{i}' for i in range(n)])})")
    terms = [f"(a{i}*b{j} - a{j}*b{i})*(c{i}*d{j} - c{j}*d{i})" for i in range(n) for j in range(i + 1, n)]
    terms[-1] = "2*" + terms[-1]  # the identity has coefficient 1 here
    return left, _sum(terms)


def cheap(left: str, right: str, *conditions: str):
    ob = Obligation(expr(left), expr(right), tuple(cond(c) for c in conditions))
    translation = translate(ob)
    return polynomial_witness(ob.left, ob.right, ob.conditions, translation.difference,
                              deadline=decision_clock() + 10, generators=translation.generators)


def test_a_wrong_binet_cauchy_identity_is_refuted_at_a_checked_point() -> None:
    left, right = wrong_binet_cauchy(6)
    witness = cheap(left, right)
    assert witness is not None and witness.exact
    confirm_witness(expr(left), expr(right), (), witness.values)
    # sympy agrees that the printed sides are the values of the claim at the witness
    symbols = {name: sympy.Symbol(name) for name, _ in witness.values}
    point = {symbols[name]: sympy.Rational(text) for name, text in witness.values}
    a, b, c, d = ([symbols[f"{letter}{i}"] for i in range(6)] for letter in "abcd")
    sympy_left = (sum(a[i] * c[i] for i in range(6)) * sum(b[i] * d[i] for i in range(6))
                  - sum(a[i] * d[i] for i in range(6)) * sum(b[i] * c[i] for i in range(6)))
    assert sympy_left.subs(point) == sympy.Rational(witness.left)


def test_the_screen_finds_the_same_point_as_the_full_search() -> None:
    # same candidates, same order: the mod-p screen only skips points where the sides agree
    for left, right in [("(a + b)**2", "a**2 + b**2"), ("(x + 1)**3", "x**3 + 1 + 3*x"),
                        ("(p0**2 + p1**2)*(q0**2 + q1**2)", "(p0*q0 + p1*q1)**2 + (p0*q1 + p1*q0)**2")]:
        fast = cheap(left, right)
        full = find_witness(expr(left), expr(right), (), deadline=decision_clock() + 10)
        assert fast is not None and full is not None
        assert fast.values == full.values
        confirm_witness(expr(left), expr(right), (), fast.values)


def test_a_witness_satisfies_the_inequality_conditions() -> None:
    # x**2 - x is non-zero at small points that violate x > 5: the exact check must reject them
    witness = cheap("x**2", "x", "x > 5")
    assert witness is not None
    assert sympy.Rational(dict(witness.values)["x"]) > 5
    confirm_witness(expr("x**2"), expr("x"), (cond("x > 5"),), witness.values)


def test_no_point_is_offered_when_the_conditions_exclude_every_difference() -> None:
    # x > 1 and x < 0 cannot both hold: the difference is non-zero, but no point passes the exact check
    assert cheap("x", "x + 1", "x > 1", "x < 0") is None


def test_the_cheap_search_stands_aside_where_the_polynomial_is_not_the_claim() -> None:
    # true on the equation: the difference is not zero, only modulo s**2 + c**2 - 1 (random points of
    # the circle modulo the prime show it, and the proof is left to the ideal membership)
    assert cheap("s**2", "1 - c**2", "s**2 + c**2 == 1") is None
    # true where the denominator is not zero: f((x**2 - 1)*(1/(x - 1))) vanishes with the inverse set
    assert cheap("(x**2 - 1)/(x - 1)", "x + 1") is None
    # an angle: sin(x) is a variable of the circle with no rational value at a rational x != 0
    assert cheap("sin(x)", "x") is None


def test_the_command_line_refutes_the_wrong_identity_and_proves_the_right_one(cli, tmp_path) -> None:
    left, right = wrong_binet_cauchy(8)
    true_right = right.replace("2*(", "(", 1)  # the last term back to coefficient 1
    found = cli.verdicts(tmp_path, "identities.py", [f"{left} == {right}", f"{left} == {true_right}"])
    assert found == {f"{left} == {right}": "refuted", f"{left} == {true_right}": "proved"}


def test_definitions_among_the_conditions_are_computed_from_the_free_variables() -> None:
    # Strassen's first two products with the second deliberately wrong (common practice: the 2x2 scheme)
    conditions = ("m1 == (a11 + a22)*(b11 + b22)", "m2 == (a21 + a22)*b22")
    left, right = "m1 + m2", "(a11 + a22)*(b11 + b22) + (a21 + a22)*b11"
    witness = cheap(left, right, *conditions)
    assert witness is not None
    confirm_witness(expr(left), expr(right), tuple(cond(c) for c in conditions), witness.values)
    # circular or non-definition equations are left to the full search
    assert cheap("x", "y + 1", "x == y*z", "y == x*z") is None
