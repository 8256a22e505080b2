"""The cheap counterexample search on claims with equations and divisions among their conditions.

Each witness is confirmed outside the tool: the conditions hold and the sides differ in sympy's exact
rationals (``sympy.Rational`` from the printed values, the claim rebuilt with sympy operators) and with
mpmath at 60 digits (``mp_reference.confirm_witness``).  The identities are common practice: the angle
addition formulas written on unit circles (c = cos, s = sin), the product of unit quaternions (Hamilton's
product; its norm is the product of the norms), partial fractions.
"""
from __future__ import annotations

import random
from fractions import Fraction

import sympy

from verifier.model.limits import decision_clock
from verifier.algebra.translate import translate
from verifier.algebra.witness_polynomial import polynomial_witness
from verifier.algebra.witness_variety import EXACT, MODULAR, equation_plan, solve_plan
from verifier.model.claim import Obligation
from exprs import cond, expr
from mp_reference import confirm_witness


def cheap(left: str, right: str, *conditions: str):
    ob = Obligation(expr(left), expr(right), tuple(cond(c) for c in conditions))
    translation = translate(ob)
    return polynomial_witness(ob.left, ob.right, ob.conditions, translation.difference,
                              deadline=decision_clock() + 10, generators=translation.generators)


def sympy_values(witness) -> dict[str, sympy.Rational]:
    return {name: sympy.Rational(text) for name, text in witness.values}


def confirmed(left: str, right: str, *conditions: str):
    witness = cheap(left, right, *conditions)
    assert witness is not None and witness.exact
    confirm_witness(expr(left), expr(right), tuple(cond(c) for c in conditions), witness.values)
    return sympy_values(witness)


HAMILTON = ("pw*qw - px*qx - py*qy - pz*qz", "pw*qx + px*qw + py*qz - pz*qy",
            "pw*qy - px*qz + py*qw + pz*qx", "pw*qz + px*qy - py*qx + pz*qw")
UNIT_P = "pw**2 + px**2 + py**2 + pz**2 == 1"
UNIT_Q = "qw**2 + qx**2 + qy**2 + qz**2 == 1"


def test_a_wrong_angle_addition_on_two_unit_circles_is_refuted_at_rational_points_of_them() -> None:
    # cos(a + b) = c1*c2 - s1*s2 and sin(a + b) = s1*c2 + c1*s2 have squares summing to 1; a sign slip
    # (c1*c2 + s1*s2) breaks it
    v = confirmed("(c1*c2 + s1*s2)**2 + (s1*c2 + c1*s2)**2", "1", "c1**2 + s1**2 == 1", "c2**2 + s2**2 == 1")
    c1, s1, c2, s2 = (v[n] for n in ("c1", "s1", "c2", "s2"))
    assert c1**2 + s1**2 == 1 and c2**2 + s2**2 == 1  # exactly on both circles, in sympy's rationals
    assert (c1 * c2 + s1 * s2)**2 + (s1 * c2 + c1 * s2)**2 != 1


def test_the_norm_of_a_wrong_quaternion_product_is_refuted_on_two_unit_quaternions() -> None:
    right = list(HAMILTON)
    right[3] = right[3].replace("- py*qx", "+ py*qx")  # one sign slip in the z component
    norm = " + ".join(f"({component})**2" for component in right)
    v = confirmed(norm, "1", UNIT_P, UNIT_Q)
    p = [v[f"p{k}"] for k in "wxyz"]
    q = [v[f"q{k}"] for k in "wxyz"]
    assert sum(x**2 for x in p) == 1 and sum(x**2 for x in q) == 1
    # the true product keeps the norm 1 there (sympy), the wrong one does not
    pw, px, py, pz = p
    qw, qx, qy, qz = q
    true_z = pw * qz + px * qy - py * qx + pz * qw
    wrong_z = pw * qz + px * qy + py * qx + pz * qw
    rest = ((pw * qw - px * qx - py * qy - pz * qz)**2 + (pw * qx + px * qw + py * qz - pz * qy)**2
            + (pw * qy - px * qz + py * qw + pz * qx)**2)
    assert rest + true_z**2 == 1 and rest + wrong_z**2 != 1


def test_true_claims_on_the_equations_are_left_to_the_proof() -> None:
    norm = " + ".join(f"({component})**2" for component in HAMILTON)
    assert cheap(norm, "1", UNIT_P, UNIT_Q) is None  # Euler's four-square identity under unit norms
    assert cheap("c**4 - s**4", "c**2 - s**2", "c**2 + s**2 == 1") is None
    assert cheap("a/b", "c/d", "a*d == b*c", "b != 0", "d != 0") is None


def test_an_equation_affine_in_one_variable_is_solved_for_it() -> None:
    # a/b == c/d needs a*d == b*c; with a*d == -b*c the two fractions are opposite
    v = confirmed("a/b", "c/d", "a*d == -b*c")
    assert v["a"] * v["d"] == -v["b"] * v["c"] and v["a"] / v["b"] != v["c"] / v["d"]


def test_quadratic_equations_with_rational_roots_are_solved() -> None:
    v = confirmed("x", "y", "x**2 == y**2")
    assert v["x"]**2 == v["y"]**2 and v["x"] == -v["y"] != 0
    assert confirmed("x", "1", "x**2 == 1")["x"] == -1


def test_divisions_are_screened_with_the_inverses_computed_modulo_the_prime() -> None:
    # partial fractions: 1/(x**2 - 1) = (1/(x - 1) - 1/(x + 1))/2; without the factor 1/2 it is wrong
    x = sympy.Symbol("x")
    v = confirmed("1/(x**2 - 1)", "1/(x - 1) - 1/(x + 1)")
    assert (1 / (x**2 - 1) - (1 / (x - 1) - 1 / (x + 1))).subs(x, v["x"]) != 0
    v = confirmed("1 + 1/(1 + 1/x)", "(2*x + 1)/x")  # a nested inverse: 1/(1 + 1/x)
    assert 1 + 1 / (1 + 1 / v["x"]) != (2 * v["x"] + 1) / v["x"]
    assert cheap("1/(x**2 - 1)", "(1/(x - 1) - 1/(x + 1))/2") is None  # the true one


def test_points_of_the_plan_lie_exactly_on_the_equations_and_modulo_the_prime() -> None:
    conditions = tuple(cond(c) for c in (UNIT_P, "m == qw*qx + 2", "a*qw == qz + 1"))
    plan = equation_plan(conditions)
    assert plan is not None
    names = sorted({"pw", "px", "py", "pz", "qw", "qx", "qz", "m", "a"})
    rng = random.Random(7)
    solved = 0
    for _ in range(20):
        point = {name: Fraction(rng.randint(1, 9), rng.randint(1, 9)) for name in names}
        if solve_plan(plan, point, rng, EXACT):
            solved += 1
            s = {k: sympy.Rational(v.numerator, v.denominator) for k, v in point.items()}
            assert s["pw"]**2 + s["px"]**2 + s["py"]**2 + s["pz"]**2 == 1
            assert s["m"] == s["qw"] * s["qx"] + 2 and s["a"] * s["qw"] == s["qz"] + 1
    assert solved >= 15
    p = 2**61 - 1
    for _ in range(10):
        residues = {name: MODULAR.number(rng.randrange(1, p)) for name in names}
        if solve_plan(plan, residues, rng, MODULAR):
            r = {k: v.value for k, v in residues.items()}
            assert (r["pw"]**2 + r["px"]**2 + r["py"]**2 + r["pz"]**2 - 1) % p == 0
            assert (r["m"] - r["qw"] * r["qx"] - 2) % p == 0 and (r["a"] * r["qw"] - r["qz"] - 1) % p == 0


def test_equations_sharing_all_their_variables_have_no_plan() -> None:
    assert equation_plan((cond("x**2 + y**2 == 1"), cond("x*y == 1/4"))) is None


def test_the_command_line_refutes_a_wrong_rotation_and_proves_the_right_one(cli, tmp_path) -> None:
    # a rotation by the unit-circle point (c, s) keeps lengths; with s*x - c*y it is a reflection composed
    # wrongly, which does not
    wrong = "(c*x - s*y)**2 + (s*x - c*y)**2 == x**2 + y**2 given c**2 + s**2 == 1"
    right = "(c*x - s*y)**2 + (s*x + c*y)**2 == x**2 + y**2 given c**2 + s**2 == 1"
    assert cli.verdicts(tmp_path, "rotation.py", [wrong, right]) == {wrong: "refuted", right: "proved"}


def test_roots_are_screened_at_points_where_the_radicands_are_rational_squares() -> None:
    # sqrt(a**2*b) = |a|*sqrt(b), not a*sqrt(b): wrong for a < 0 (common practice)
    v = confirmed("sqrt(a**2*b)", "a*sqrt(b)")
    assert sympy.sqrt(v["a"]**2 * v["b"]) != v["a"] * sympy.sqrt(v["b"])  # sympy's exact principal roots
    v = confirmed("hypot(a, b)", "a + b")
    assert sympy.sqrt(v["a"]**2 + v["b"]**2) != v["a"] + v["b"]
    v = confirmed("x**2.5", "x**3*sqrt(x)")  # x**2.5 = x**2*sqrt(x)
    assert v["x"]**sympy.Rational(5, 2) != v["x"]**3 * sympy.sqrt(v["x"])


def test_claims_true_for_the_principal_root_are_not_refuted() -> None:
    # mod p a root is either square root, so the screen proposes; the exact check takes the principal one
    assert cheap("sqrt(x**2)", "x", "x >= 0") is None
    assert cheap("sqrt(x**4)", "x**2") is None
    assert cheap("sqrt(a**2*b)", "a*sqrt(b)", "a >= 0") is None
    assert cheap("sqrt(2 + sqrt(3))", "(sqrt(6) + sqrt(2))/2") is None  # true; constant roots stand aside
