"""Counterexample search and checking.

Every witness returned is re-checked here independently with mpmath (the reference library) or exact
fractions, straight from its printed values.  The false rewrites are classic mistakes (common practice).
"""
from __future__ import annotations

from fractions import Fraction

import mpmath
import pytest
from mpmath import mp, mpf

from verifier.model.limits import decision_clock
from verifier.algebra.evaluate import exact_value
from verifier.model.verdict import Witness
from verifier.algebra.witness import check_witness, differs_mod_p, find_witness, parse_value
from verifier.model.expr import Opaque, Var
from exprs import cond, expr

F = Fraction


def search(left: str, right: str, *conditions: str, seconds: float = 10.0, seed: int = 0) -> Witness | None:
    return find_witness(expr(left), expr(right), [cond(c) for c in conditions],
                        deadline=decision_clock() + seconds, seed=seed)


def values_of(witness: Witness) -> dict[str, str]:
    return dict(witness.values)


def high_precision_point(witness: Witness) -> dict[str, mpf]:
    with mp.workdps(100):
        return {name: mpf(F(text).numerator) / F(text).denominator if "/" in text else mpf(text)
                for name, text in witness.values}


# ---------------------------------------------------------------- differs_mod_p


def test_mod_p_binomial_square_is_not_the_sum_of_squares():
    # (a+b)**2 = a**2 + 2ab + b**2 (common practice)
    assert differs_mod_p(expr("(a+b)**2"), expr("a**2 + b**2")) is True
    assert differs_mod_p(expr("(a+b)**2"), expr("a**2 + 2*a*b + b**2")) is False


def test_mod_p_huge_powers_without_expansion():
    assert differs_mod_p(expr("(x+y)**4096"), expr("(x**2 + 2*x*y + y**2)**2048")) is False
    assert differs_mod_p(expr("(x+y)**4096"), expr("(x**2 + 2*x*y + y**2)**2048 + x - x**1")) is False
    assert differs_mod_p(expr("(x+y)**4097"), expr("(x**2 + 2*x*y + y**2)**2048 * (x - y)")) is True
    # a denominator that is a huge power of a difference
    assert differs_mod_p(expr("1/(x-y)**300 * (x-y)**301"), expr("x - y")) is False


def test_mod_p_rational_functions():
    assert differs_mod_p(expr("(x**2 - 1)/(x - 1)"), expr("x + 1")) is False
    assert differs_mod_p(expr("1/x + 1/y"), expr("1/(x + y)")) is True
    assert differs_mod_p(expr("fma(a, b, c)"), expr("a*b + c")) is False


def test_mod_p_declines_what_it_cannot_evaluate():
    assert differs_mod_p(expr("sqrt(x**2)"), expr("x")) is None
    assert differs_mod_p(expr("sin(x)"), expr("x")) is None
    assert differs_mod_p(expr("x**0.5"), expr("x")) is None
    assert differs_mod_p(expr("1/(x - x)"), expr("1")) is None  # no point where it is defined


# ---------------------------------------------------------------- find_witness


def test_binomial_square_witness_is_exact_and_genuine():
    w = search("(a+b)**2", "a**2 + b**2")
    assert w is not None and w.exact
    a, b = (F(values_of(w)[n]) for n in "ab")
    assert a * b != 0  # the only way the two sides can differ
    assert F(w.left) == (a + b) ** 2 and F(w.right) == a**2 + b**2


def test_true_identity_has_no_witness():
    assert search("(a+b)**2", "a**2 + 2*a*b + b**2") is None
    assert search("(x**2 - 1)/(x - 1)", "x + 1") is None  # the only bad point, x = 1, is excluded


def test_division_by_zero_is_excluded():
    # x/x == 1 everywhere it is defined; x = 0 must not count as a counterexample
    assert search("x/x", "1") is None
    w = search("x/(x - 1)", "1 + x", "x != 0")
    assert w is not None
    x = F(values_of(w)["x"])
    assert x not in (0, 1)


def test_principal_square_root():
    w = search("sqrt(x**2)", "x")
    assert w is not None
    assert F(values_of(w)["x"]) < 0  # sqrt(x**2) = |x| (common practice)
    assert search("sqrt(x**2)", "x", "x >= 0") is None


def test_given_sign_is_respected():
    assert search("sqrt(x)**2", "x", "x > 0") is None
    w = search("x**2", "x", "x > 0")
    assert w is not None
    x = F(values_of(w)["x"])
    assert x > 0 and x != 1


def test_sin_double_angle_is_not_sin():
    w = search("sin(2*t)", "sin(t)")
    assert w is not None and not w.exact
    with mp.workdps(60):
        t = high_precision_point(w)["t"]
        assert abs(mpmath.sin(2 * t) - mpmath.sin(t)) > mpf(10) ** -10
        assert abs(mpf(w.left) - mpmath.sin(2 * t)) < mpf(10) ** -15


def test_wrong_half_angle_identity_on_the_unit_circle():
    # s = sin(t), c = cos(t), h = sin(t/2), k = cos(t/2).  The true half-angle identity is
    # h**2 == (1 - c)/2 (common practice); the sign-flipped one is a classic slip.
    circle = ["s**2 + c**2 == 1", "h**2 + k**2 == 1", "s == 2*h*k", "c == k**2 - h**2"]
    w = search("h**2", "(1 + c)/2", *circle, "h > 0.1")
    assert w is not None
    with mp.workdps(100):
        p = high_precision_point(w)
        s, c, h, k = p["s"], p["c"], p["h"], p["k"]
        for residual in (s**2 + c**2 - 1, h**2 + k**2 - 1, s - 2 * h * k, c - (k**2 - h**2)):
            assert abs(residual) < mpf(10) ** -30
        assert h > mpf(1) / 10
        assert abs(h**2 - (1 + c) / 2) > mpf(10) ** -10
    assert search("h**2", "(1 - c)/2", *circle, seconds=5) is None


def test_wrong_pythagorean_rewrite_under_an_equation():
    w = search("s", "1 - c**2", "s**2 + c**2 == 1")
    assert w is not None
    s, c = (parse_value(values_of(w)[n]) for n in "sc")
    assert s is not None and c is not None
    if w.exact:
        assert s**2 + c**2 == 1
    assert s != 1 - c**2
    assert search("s**2", "1 - c**2", "s**2 + c**2 == 1", seconds=5) is None


def test_conditions_without_real_solution_give_nothing():
    assert search("x", "1", "x**2 + 1 == 0", seconds=5) is None


def test_singular_equation_is_not_trusted_numerically():
    # x**2 == 0 forces x == 0; a point merely close to 0 must not refute x == 0 or sin(x) == 0
    assert search("x", "0", "x**2 == 0", seconds=5) is None
    assert search("sin(x)", "0", "x**2 == 0", seconds=5) is None
    assert check_witness(expr("x"), expr("0"), [cond("x**2 == 0")], {"x": "1e-70"}) is None


def test_irrational_solutions_of_equations():
    w = search("a", "b", "a**2 == 2", "b**2 == 3", "a > 0", "b > 0")
    assert w is not None and not w.exact
    with mp.workdps(60):
        p = high_precision_point(w)
        assert abs(p["a"] - mpmath.sqrt(2)) < mpf(10) ** -35
        assert abs(p["b"] - mpmath.sqrt(3)) < mpf(10) ** -35
    assert search("a", "b", "a**2 == 2", "b**2 == 2", "a > 0", "b > 0", seconds=5) is None


def test_functions_with_domains():
    assert search("log(x*y)", "log(x) + log(y)") is None  # true wherever both sides are defined
    assert search("exp(x + y)", "exp(x)*exp(y)") is None
    assert search("tan(x)", "sin(x)/cos(x)") is None
    w = search("log(x*y)", "log(x) - log(y)")
    assert w is not None
    x, y = (F(values_of(w)[n]) for n in "xy")
    assert x > 0 and y > 0 and y != 1


def test_opaque_calls_and_expired_deadline_give_nothing():
    opaque = Opaque("helper", (Var("x"),))
    assert find_witness(opaque, Var("x"), [], deadline=decision_clock() + 5) is None
    assert find_witness(expr("x + 1"), expr("x"), [], deadline=decision_clock() - 1) is None


def test_search_is_deterministic_for_a_seed():
    first = search("2*s*c", "s", "s**2 + c**2 == 1", "s > 0.3", "c > 0.1", seed=7)
    second = search("2*s*c", "s", "s**2 + c**2 == 1", "s > 0.3", "c > 0.1", seed=7)
    assert first is not None and first == second


# ---------------------------------------------------------------- check_witness


def test_check_witness_accepts_what_find_witness_returns():
    left, right = expr("2*s*c"), expr("s")
    conditions = [cond("s**2 + c**2 == 1"), cond("s > 0.3"), cond("c > 0.1")]
    w = find_witness(left, right, conditions, deadline=decision_clock() + 10)
    assert w is not None
    assert check_witness(left, right, conditions, values_of(w)) == w


def test_check_witness_rejects_tampered_values():
    left, right = expr("(a+b)**2"), expr("a**2 + b**2")
    assert check_witness(left, right, [], {"a": "3", "b": "1/2"}) is not None
    assert check_witness(left, right, [], {"a": "3", "b": "0"}) is None  # sides are equal there
    assert check_witness(left, right, [cond("a < 0")], {"a": "3", "b": "1"}) is None  # condition fails
    assert check_witness(left, right, [], {"a": "3"}) is None  # a value is missing
    assert check_witness(left, right, [], {"a": "3", "b": "1", "c": "2"}) is None  # unknown name
    # a unit-circle point off the circle by a visible amount
    circle = [cond("s**2 + c**2 == 1")]
    assert check_witness(expr("s"), expr("1 - c**2"), circle, {"s": "0.6", "c": "0.8"}) is not None
    assert check_witness(expr("s"), expr("1 - c**2"), circle, {"s": "0.6", "c": "0.81"}) is None


@pytest.mark.parametrize("text", ["2**3", "1+1", "__import__('os')", "1/0", "", "0x10", "1e99999",
                                  "nan", "inf", "3/-4", "1.2.3", "--1", "x"])
def test_check_witness_rejects_malformed_values_without_evaluating_them(text):
    assert parse_value(text) is None
    assert check_witness(expr("x"), expr("x + 1"), [], {"x": text}) is None


def test_parse_value_reads_exact_decimals():
    assert parse_value("0.1") == F(1, 10)  # the exact decimal, not the nearest double
    assert parse_value("-3/4") == F(-3, 4)
    assert parse_value("1.5e-3") == F(3, 2000)
    assert parse_value("-.25") == F(-1, 4)
    assert parse_value("12") == 12


def test_exact_witness_sides_match_exact_evaluation():
    w = search("x**3 - x", "0", "x > 1")
    assert w is not None and w.exact
    x = F(values_of(w)["x"])
    assert x > 1
    assert F(w.left) == exact_value(expr("x**3 - x"), {"x": x}) == x**3 - x


def test_repeated_and_scaled_equations_do_not_block_numeric_witnesses():
    # the same circle stated twice (as a named set and again by hand, say) and once scaled
    conditions = ["s**2 + c**2 == 1", "c**2 + s**2 == 1", "2*s**2 + 2*c**2 == 2", "s > 0.3", "c > 0.1"]
    w = search("2*s*c", "s", *conditions)
    assert w is not None
    with mp.workdps(60):
        p = high_precision_point(w)
        assert abs(p["s"] ** 2 + p["c"] ** 2 - 1) < mpf(10) ** -35
        assert p["s"] > 0.3 and p["c"] > 0.1
        assert abs(2 * p["s"] * p["c"] - p["s"]) > mpf(10) ** -10
    # a genuinely different second equation is kept: no real point has both
    assert search("s", "c", "s**2 + c**2 == 1", "s**2 + c**2 == 2", seconds=5) is None


def test_constant_equations_are_checked():
    assert search("x", "x + 1", "sqrt(2)**2 == 2") is not None
    assert search("x", "x + 1", "sqrt(2)**2 == 2.000001", seconds=5) is None


def test_equation_affine_in_a_variable_is_solved_exactly():
    # no combination of small values satisfies this equation, a secant step in s does exactly
    w = search("s", "a", "7*s == a + b + 3*c + 1/11")
    assert w is not None and w.exact
    v = {name: F(text) for name, text in w.values}
    assert 7 * v["s"] == v["a"] + v["b"] + 3 * v["c"] + F(1, 11)
    assert v["s"] != v["a"]


def test_equation_with_an_irrational_root_is_solved_numerically():
    # x**3 + x - 1 has exactly one real root, about 0.6823 (common practice: it is increasing)
    w = search("x", "7/10", "x**3 + x == 1")
    assert w is not None and not w.exact
    with mp.workdps(60):
        x = high_precision_point(w)["x"]
        assert abs(x**3 + x - 1) < mpf(10) ** -35
        assert abs(x - mpmath.findroot(lambda t: t**3 + t - 1, 0.7)) < mpf(10) ** -35
    w = search("x", "7/10", "exp(x) == 2")
    assert w is not None
    with mp.workdps(60):
        assert abs(high_precision_point(w)["x"] - mpmath.log(2)) < mpf(10) ** -35


def test_long_exact_sides_are_shown_with_twenty_digits():
    w = search("(x + 1)**300", "x**300", "x > 1")
    assert w is not None and w.exact
    x = F(values_of(w)["x"])
    left = (x + 1) ** 300
    assert len(str(left.numerator)) > 60  # too long to print exactly
    with mp.workdps(40):
        assert abs(mpf(w.left) / (mpf(left.numerator) / left.denominator) - 1) < mpf(10) ** -18


def test_a_slightly_negative_radicand_is_not_rounded_to_zero():
    # sqrt(x)**2 == x holds wherever sqrt(x) is real; at x = -1e-100 it is undefined, whatever the
    # precision would round it to.  The sin term keeps the check away from exact arithmetic.
    left, right = expr("sqrt(x + 0*sin(y))**2"), expr("x")
    assert check_witness(left, right, [], {"x": "-1e-100", "y": "1"}) is None
    assert check_witness(left, right, [], {"x": "1e-100", "y": "1"}) is None  # true there


def test_bounds_on_single_variables_steer_the_search():
    # a unit quaternion confined to a corner of the sphere; a false rotation-norm rewrite
    conditions = ["w**2 + x**2 + y**2 + z**2 == 1", "w > 0.1", "x > 0.5", "y > 0.3", "z < -0.2",
                  "a > 0", "b > 0"]
    w = search("(w*a - x*b)**2 + (x*a + w*b)**2", "a**2 + b**2 + w*x*a*b", *conditions)
    assert w is not None
    with mp.workdps(60):
        p = high_precision_point(w)
        assert abs(p["w"] ** 2 + p["x"] ** 2 + p["y"] ** 2 + p["z"] ** 2 - 1) < mpf(10) ** -35
        assert p["w"] > 0.1 and p["x"] > 0.5 and p["y"] > 0.3 and p["z"] < -0.2
        assert p["a"] > 0 and p["b"] > 0


def test_dependent_equations_still_give_numeric_witnesses():
    # s**2 + c**2 == 1 follows from the other three (not a multiple of any one of them); with
    # h**2 == 3*k**2 the point is t = 2*pi/3: s = sqrt(3)/2, c = -1/2 (common practice)
    conditions = ["s**2 + c**2 == 1", "h**2 + k**2 == 1", "s == 2*h*k", "c == k**2 - h**2", "h**2 == 3*k**2",
                  "h > 0", "k > 0"]
    w = search("s", "c", *conditions)
    assert w is not None and not w.exact
    with mp.workdps(60):
        p = high_precision_point(w)
        assert abs(p["s"] - mpmath.sqrt(3) / 2) < mpf(10) ** -35
        assert abs(p["c"] + mpf(1) / 2) < mpf(10) ** -35
    # a point 1e-20 off the solution is not accepted (the check moves it by no more than 1e-25)
    values = {name: text for name, text in w.values}
    assert check_witness(expr("s"), expr("c"), [cond(c) for c in conditions], values) == w
    values["c"] = "-0.50000000000000000001"
    assert check_witness(expr("s"), expr("c"), [cond(c) for c in conditions], values) is None


def test_check_witness_keeps_the_values_as_given():
    w = check_witness(expr("(a+b)**2"), expr("a**2 + b**2"), [], {"a": "0.5", "b": " 2 "})
    assert w is not None and w.exact
    assert dict(w.values) == {"a": "0.5", "b": "2"}
    assert (w.left, w.right) == ("25/4", "17/4")  # (1/2 + 2)**2 and 1/4 + 4


def test_unknown_functions_are_declined_not_raised():
    from verifier.model.expr import Call

    odd = Call("gamma", (Var("x"),))  # not one of the known functions
    assert find_witness(odd, Var("x"), [], deadline=decision_clock() + 2) is None
    assert check_witness(odd, Var("x"), [], {"x": "1"}) is None
    assert differs_mod_p(odd, Var("x")) is None


def test_small_but_real_differences_are_refuted_and_rounding_is_not():
    # a 27-digit value of sqrt(2) is not sqrt(2): the difference (about 2e-27) is the same at both precisions
    w = search("sqrt(x)", "1.41421356237309504880168872", "x == 2")
    assert w is not None and w.exact is False
    with mp.workdps(60):
        true_difference = mpmath.sqrt(2) - mpf("1.41421356237309504880168872")
        assert abs(mpf(w.right) - mpf("1.41421356237309504880168872")) < mpf(10) ** -40
        # the sides are printed with enough digits for their difference to show
        shown_difference = mpf(w.left) - mpf(w.right)
        assert abs(shown_difference / true_difference - 1) < mpf(10) ** -3
    # a point 1e-100 off the unit circle does not refute a claim that holds on it
    with mp.workdps(150):
        s = mpmath.sqrt(8) / 3 + mpf(10) ** -100
        s_text = mpmath.nstr(s, 130, min_fixed=-5, max_fixed=5)
    circle = [cond("s**2 + c**2 == 1")]
    assert check_witness(expr("s**2"), expr("1 - c**2"), circle, {"s": s_text, "c": "1/3"}) is None


def test_affine_equation_solved_where_the_first_secant_points_are_undefined():
    # 1/s is undefined at s = 0, so the secant step uses other points
    w = search("s", "a", "1/s + 7*s == a + 1/s + 1/11")
    assert w is not None and w.exact
    v = {name: F(text) for name, text in w.values}
    assert v["s"] != 0 and 7 * v["s"] == v["a"] + F(1, 11) and v["s"] != v["a"]
