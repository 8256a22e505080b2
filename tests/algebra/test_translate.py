"""The polynomial translation (algebra/translate.py, rules in algebra/translator.py), rule by rule, against sympy.

For each rule of the translator's docstring the test checks, with sympy and not with the tool's own
algebra, that
- the generators span the ideal the rule prescribes (equal reduced Groebner bases from sympy.groebner),
- the translated value means the original expression: with each auxiliary variable replaced by what it
  stands for (sqrt(x), 1/(x - y), sin(t), ...), sympy simplifies the difference to 0, and
- where the claim is an identity, sympy.reduced leaves no remainder of the translated difference modulo
  sympy's Groebner basis of the generators.
Trigonometric identities (multiple angles, addition theorem, values at pi/n) and the exponential and
logarithm laws used are common practice (any calculus reference).
"""
from __future__ import annotations

from typing import Mapping

import pytest
import sympy
from sympy import Rational, Symbol

from verifier.algebra.translate import Translation, TranslationError, translate
from verifier.claims.language import parse_conditions, parse_expression
from verifier.model.claim import Obligation
from verifier.model.expr import Opaque, Var

x, y, t, u, a, b, c = (Symbol(name) for name in ("x", "y", "t", "u", "a", "b", "c"))


def translated(left: str, right: str = "0", given: str = "") -> Translation:
    conditions = parse_conditions(given) if given else ()
    return translate(Obligation(parse_expression(left), parse_expression(right), conditions))


def aux(t_: Translation, meaning: str) -> Symbol:
    """The ring symbol of the auxiliary variable that stands for ``meaning`` (as the report shows it)."""
    names = [v.name for v in t_.aux if v.meaning == meaning]
    assert len(names) == 1, (meaning, t_.aux)
    return Symbol(names[0])


def poly(t_: Translation, expr: sympy.Expr):
    """A sympy polynomial in the translation's ring (to compare with its sign hypotheses)."""
    return t_.ring.from_expr(expr)


def kinds(t_: Translation) -> list[str]:
    return [v.kind for v in t_.aux]


def generators(t_: Translation) -> list[sympy.Expr]:
    return [g.poly.as_expr() for g in t_.generators]


def gens(t_: Translation) -> list[Symbol]:
    return [Symbol(str(s)) for s in t_.ring.symbols]


def same_ideal(t_: Translation, expected: list[sympy.Expr]) -> bool:
    ours = sympy.groebner(generators(t_), *gens(t_), order="grevlex", domain="QQ")
    theirs = sympy.groebner(expected, *gens(t_), order="grevlex", domain="QQ")
    return list(ours.exprs) == list(theirs.exprs)


def in_ideal(t_: Translation, poly: sympy.Expr) -> bool:
    basis = sympy.groebner(generators(t_), *gens(t_), order="grevlex", domain="QQ")
    _, remainder = sympy.reduced(poly, list(basis.exprs), *gens(t_), order="grevlex", domain="QQ")
    return remainder == 0


def means(t_: Translation, poly: sympy.Expr, meanings: Mapping[str, sympy.Expr], original: sympy.Expr) -> bool:
    """``poly`` with the auxiliary variables replaced by their ``meanings`` simplifies to ``original``."""
    replaced = poly.subs({aux(t_, text): value for text, value in meanings.items()}, simultaneous=True)
    return sympy.simplify(sympy.expand_trig(replaced - original)) == 0


# ---------------------------------------------------------------- polynomials, hypot, fma


def test_polynomials_translate_to_themselves():
    tr = translated("(x + y)**3 - 3*x*y*(x + y)", "x**3 + y**3")
    assert tr.aux == () and tr.generators == ()
    assert sympy.expand(tr.left.as_expr() - (x + y) ** 3 + 3 * x * y * (x + y)) == 0
    assert tr.difference == 0


def test_fma_is_a_times_b_plus_c():
    tr = translated("fma(a, b, c)")
    assert tr.aux == ()
    assert sympy.expand(tr.left.as_expr() - (a * b + c)) == 0


def test_hypot_is_the_square_root_of_the_sum_of_squares():
    tr = translated("hypot(a, b)**2", "a**2 + b**2")
    r = aux(tr, "sqrt(a**2 + b**2)")
    assert kinds(tr) == ["radical"]
    assert same_ideal(tr, [r**2 - a**2 - b**2])
    assert means(tr, tr.left.as_expr(), {"sqrt(a**2 + b**2)": sympy.sqrt(a**2 + b**2)}, a**2 + b**2)
    assert in_ideal(tr, tr.difference.as_expr())
    assert (poly(tr, a**2 + b**2), False) in tr.signs  # the radicand is >= 0


# ---------------------------------------------------------------- division


def test_a_division_gets_one_inverse_variable():
    tr = translated("x/(x - y) - y/(x - y)", "1")
    d = aux(tr, "1/(x - y)")
    assert kinds(tr) == ["inverse"]
    assert same_ideal(tr, [d * (x - y) - 1])
    assert means(tr, tr.left.as_expr(), {"1/(x - y)": 1 / (x - y)}, x / (x - y) - y / (x - y))
    assert in_ideal(tr, tr.difference.as_expr())
    assert "x - y != 0" in tr.assumed


def test_opposite_denominators_share_their_inverse():
    tr = translated("1/(x - y) + 1/(y - x)")
    assert kinds(tr) == ["inverse"]
    assert tr.difference == 0


def test_one_inverse_per_irreducible_factor():
    tr = translated("1/(x**2 - y**2)")
    _, factors = sympy.factor_list(x**2 - y**2)
    assert kinds(tr).count("inverse") == len(factors) == 2
    d1, d2 = aux(tr, "1/(x - y)"), aux(tr, "1/(x + y)")
    assert same_ideal(tr, [d1 * (x - y) - 1, d2 * (x + y) - 1])
    assert means(tr, tr.left.as_expr(), {"1/(x - y)": 1 / (x - y), "1/(x + y)": 1 / (x + y)}, 1 / (x**2 - y**2))


def test_a_negative_power_is_a_power_of_the_inverse():
    tr = translated("x**-3 * x**3", "1")
    assert in_ideal(tr, tr.difference.as_expr())


def test_division_by_an_identically_zero_denominator_is_refused():
    with pytest.raises(TranslationError, match="identically 0"):
        translated("1/(x - x)")


# ---------------------------------------------------------------- square roots


def test_a_square_root_gets_a_radical_variable_and_a_sign_hypothesis():
    tr = translated("sqrt(x)**2", "x")
    r = aux(tr, "sqrt(x)")
    assert same_ideal(tr, [r**2 - x])
    assert in_ideal(tr, tr.difference.as_expr())
    assert (poly(tr, x), False) in tr.signs
    assert "x >= 0 (square root)" in tr.assumed


def test_equal_radicands_share_one_radical_and_half_powers_are_roots():
    tr = translated("sqrt(x*y) - sqrt(y*x) + (x*y)**0.5", "(x*y)**1.5 / (x*y)")
    assert kinds(tr).count("radical") == 1
    assert in_ideal(tr, tr.difference.as_expr())


def test_a_square_content_leaves_the_root():
    tr = translated("sqrt(4*x)")
    r = aux(tr, "sqrt(x)")
    assert sympy.expand(tr.left.as_expr() - 2 * r) == 0


def test_constant_radicands_split_into_prime_radicals():
    tr = translated("sqrt(12) + sqrt(6)")
    r2, r3 = aux(tr, "sqrt(2)"), aux(tr, "sqrt(3)")
    assert same_ideal(tr, [r2**2 - 2, r3**2 - 3])
    assert means(tr, tr.left.as_expr(), {"sqrt(2)": sympy.sqrt(2), "sqrt(3)": sympy.sqrt(3)},
                 sympy.sqrt(12) + sympy.sqrt(6))
    assert translated("sqrt(6)", "sqrt(2)*sqrt(3)").difference == 0
    assert translated("sqrt(9/4)", "3/2").difference == 0


def test_square_root_of_a_negative_constant_is_refused():
    with pytest.raises(TranslationError, match="negative"):
        translated("sqrt(-2)")


# ---------------------------------------------------------------- angles


@pytest.mark.parametrize("k", [2, 3, 5])
def test_multiple_angles_expand_exactly(k):
    tr = translated(f"sin({k}*t) + cos({k}*t)")
    s, co = aux(tr, "sin(t)"), aux(tr, "cos(t)")
    assert same_ideal(tr, [s**2 + co**2 - 1])
    assert means(tr, tr.left.as_expr(), {"sin(t)": sympy.sin(t), "cos(t)": sympy.cos(t)},
                 sympy.sin(k * t) + sympy.cos(k * t))


def test_sums_of_angles_use_the_addition_theorem():
    tr = translated("sin(x + 2*y)")
    meanings = {"sin(x)": sympy.sin(x), "cos(x)": sympy.cos(x), "sin(y)": sympy.sin(y), "cos(y)": sympy.cos(y)}
    assert means(tr, tr.left.as_expr(), meanings, sympy.sin(x + 2 * y))
    assert len([g for g in tr.generators if g.kind == "trig"]) == 2  # one pair per base angle


def test_fractions_of_an_angle_share_one_base_angle():
    # sin(t) and sin(t/2) in one claim: the base angle is t/2
    tr = translated("sin(t)", "2*sin(t/2)*cos(t/2)")
    assert {v.meaning for v in tr.aux} == {"sin(t/2)", "cos(t/2)"}
    assert in_ideal(tr, tr.difference.as_expr())


def test_tan_is_sine_times_the_inverse_of_cosine():
    tr = translated("tan(t)*cos(t)", "sin(t)")
    co, d = aux(tr, "cos(t)"), aux(tr, "1/cos(t)")
    s = aux(tr, "sin(t)")
    assert same_ideal(tr, [s**2 + co**2 - 1, d * co - 1])
    assert in_ideal(tr, tr.difference.as_expr())


def test_angles_of_non_linear_arguments_are_base_angles_themselves():
    tr = translated("sin(2*x*y)")
    assert means(tr, tr.left.as_expr(), {"sin(x*y)": sympy.sin(x * y), "cos(x*y)": sympy.cos(x * y)},
                 sympy.sin(2 * x * y))


# ---------------------------------------------------------------- pi


PI = sympy.pi


@pytest.mark.parametrize("text, in_sympy, value", [
    ("sin(pi)", sympy.sin(PI), 0), ("cos(pi)", sympy.cos(PI), -1), ("sin(pi/2)", sympy.sin(PI / 2), 1),
    ("cos(pi/2)", sympy.cos(PI / 2), 0), ("cos(pi/3)", sympy.cos(PI / 3), Rational(1, 2)),
    ("sin(pi/6)", sympy.sin(PI / 6), Rational(1, 2)), ("sin(pi/4) - cos(pi/4)", sympy.sin(PI / 4) - sympy.cos(PI / 4), 0),
    ("cos(pi/4)**2", sympy.cos(PI / 4) ** 2, Rational(1, 2)), ("sin(pi/3)**2", sympy.sin(PI / 3) ** 2, Rational(3, 4)),
    ("cos(pi/6)**2", sympy.cos(PI / 6) ** 2, Rational(3, 4)),
])
def test_sine_and_cosine_at_fractions_of_pi(text, in_sympy, value):
    assert sympy.simplify(in_sympy - value) == 0
    tr = translated(text, str(value))
    assert "opaque" in kinds(tr)  # pi itself stays an unknown constant
    assert in_ideal(tr, tr.difference.as_expr())


def test_pi_is_otherwise_unknown():
    tr = translated("pi", "3.14159")
    assert not in_ideal(tr, tr.difference.as_expr())


# ---------------------------------------------------------------- exponentials and logarithms


def test_exponentials_get_a_variable_and_its_inverse():
    tr = translated("exp(2*x)*exp(-x)", "exp(x)")
    e, ei = aux(tr, "exp(x)"), aux(tr, "exp(-x)")
    assert same_ideal(tr, [e * ei - 1])
    assert means(tr, tr.left.as_expr(), {"exp(x)": sympy.exp(x), "exp(-x)": sympy.exp(-x)}, sympy.exp(x))
    assert in_ideal(tr, tr.difference.as_expr())


def test_fractions_of_an_exponent_share_one_base():
    tr = translated("exp(x)", "exp(x/2)**2")
    assert in_ideal(tr, tr.difference.as_expr())
    assert "exp(x/2)" in {v.meaning for v in tr.aux}


def test_a_logarithm_is_one_variable_per_argument():
    tr = translated("log(x*y) - log(y*x)")
    assert kinds(tr) == ["log"]
    assert tr.difference == 0
    assert (poly(tr, x * y), True) in tr.signs  # the argument is > 0
    assert not in_ideal(translated("log(x*y)", "log(x) + log(y)"),
                        translated("log(x*y)", "log(x) + log(y)").difference.as_expr())


def test_logarithm_of_positive_variables_splits_into_a_sum():
    tr = translated("log(2*x**2*y)", "log(2) + 2*log(x) + log(y)", "x > 0, y > 0")
    assert tr.difference == 0
    assert means(tr, tr.left.as_expr(), {"log(x)": sympy.log(x), "log(y)": sympy.log(y), "log(2)": sympy.log(2)},
                 sympy.expand_log(sympy.log(2 * x**2 * y), force=True))
    assert translated("log(1)", "0").difference == 0


def test_opaque_calls_are_one_variable_per_distinct_argument():
    first = Opaque("f", (parse_expression("x + y"),))
    second = Opaque("f", (parse_expression("y + x"),))
    other = Opaque("f", (Var("x"),))
    assert translate(Obligation(first, second)).difference == 0
    tr = translate(Obligation(first, other))
    assert kinds(tr) == ["opaque", "opaque"]
    assert tr.difference != 0


# ---------------------------------------------------------------- conditions


def test_equations_become_generators_and_constants_are_substituted():
    tr = translated("x**2", "y", "x**2 == y")
    assert same_ideal(tr, [x**2 - y])
    assert in_ideal(tr, tr.difference.as_expr())
    # v == constant is substituted first, so exp sees its value
    assert translated("exp(x)", "1", "x == 0").difference == 0


def test_disequalities_and_strict_inequalities_become_inverses():
    tr = translated("x", "y", "x - y != 0, u > 1")
    d1, d2 = aux(tr, "1/(x - y)"), aux(tr, "1/(u - 1)")
    assert same_ideal(tr, [d1 * (x - y) - 1, d2 * (u - 1) - 1])
    assert (poly(tr, u - 1), True) in tr.signs
    # a != a can never hold: 1 joins the ideal
    assert same_ideal(translated("x", "y", "x != x"), [sympy.Integer(1)])


def test_non_strict_inequalities_are_sign_hypotheses_only():
    tr = translated("x", "y", "x <= y")
    assert tr.generators == ()
    assert (poly(tr, y - x), False) in tr.signs


# ---------------------------------------------------------------- the further real functions (issue 10)


def test_radians_and_degrees_are_multiples_of_pi():
    # radians(u) = u*pi/180, degrees(u) = u*180/pi (Python's math module reference, common practice)
    tr = translated("sin(radians(90))", "1")
    assert in_ideal(tr, tr.difference.as_expr())  # sin(pi/2) = 1
    tr = translated("degrees(radians(x))", "x")
    p = aux(tr, "pi")
    assert means(tr, tr.left.as_expr(), {"pi": sympy.pi, "1/pi": 1 / sympy.pi}, x)
    assert in_ideal(tr, tr.difference.as_expr())
    assert (poly(tr, p * aux(tr, "1/pi")) - 1).as_expr() in generators(tr)


def test_hyperbolic_functions_are_written_with_exp():
    tr = translated("cosh(x)**2 - sinh(x)**2", "1")
    e, ei = aux(tr, "exp(x)"), aux(tr, "exp(-x)")
    assert same_ideal(tr, [e * ei - 1])
    assert means(tr, tr.left.as_expr(), {"exp(x)": sympy.exp(x), "exp(-x)": sympy.exp(-x)},
                 sympy.cosh(x) ** 2 - sympy.sinh(x) ** 2)
    assert in_ideal(tr, tr.difference.as_expr())
    tr = translated("tanh(x) + expm1(x)", "sinh(x)/cosh(x) + exp(x) - 1")
    assert in_ideal(tr, tr.difference.as_expr())


def test_log1p_is_the_logarithm_of_one_plus_its_argument():
    tr = translated("log1p(x)", "log(1 + x)")
    assert tr.difference == 0
    assert (poly(tr, x + 1), True) in tr.signs  # the argument of the logarithm is > 0


def test_abs_is_the_principal_root_of_the_square():
    tr = translated("abs(x)*fabs(x)", "x**2")
    r = aux(tr, "sqrt(x**2)")
    assert same_ideal(tr, [r**2 - x**2])
    assert means(tr, tr.left.as_expr(), {"sqrt(x**2)": sympy.Abs(x)}, sympy.Abs(x) ** 2)
    assert in_ideal(tr, tr.difference.as_expr())


@pytest.mark.parametrize("text", ["atan(x)", "atan2(y, x)", "erf(x)", "floor(x)", "x % y", "min(x, y)",
                                  "copysign(x, y)", "fmod(x, y)", "asin(x)"])
def test_opaque_functions_get_one_variable_per_argument_and_cancel(text):
    tr = translated(f"{text} + 1", f"1 + {text}")
    assert kinds(tr) == ["opaque"] and tr.difference == 0
    other = translated(text, text.replace("x", "(x + 1)"))
    assert kinds(other) == ["opaque", "opaque"] and other.difference != 0


def test_opaque_functions_of_constants_take_their_exact_value():
    # floor(-1/2) = -1, |-3| = 3, atan(0) = 0, 7 % 3 = 1, min(2, -1) = -1 (common practice)
    tr = translated("floor(-1/2) + abs(-3) + atan(0) + 7 % 3 + min(2, -1)", "2")
    assert tr.aux == () and tr.difference == 0
    kept = translated("atan(1) + floor(x)")  # atan(1) = pi/4 is irrational: it stays a variable
    assert kinds(kept) == ["opaque", "opaque"]
