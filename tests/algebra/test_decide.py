"""The decision procedure on published identities and on their deliberately broken variants.

Every proved claim must carry a certificate that re-checks by expansion; every refuted claim must carry a
witness at which mpmath (the reference library) confirms that the conditions hold and the sides differ.
"""
from __future__ import annotations

import mpmath
import pytest

from verifier.algebra.kernel.checkers import is_valid as certificate_is_valid
from verifier.algebra.decide import Limits, certificate_matches, decide
from verifier.model.certificate import (
    ConjugateCertificate,
    ShiftContradictionCertificate,
    SignContradictionCertificate,
)
from verifier.claims.language import parse_claim_text
from verifier.model.claim import Claim, Location, NamedConditionSet, Obligation

from mp_reference import confirm_witness, parse_value

UNIT_QUATERNION = NamedConditionSet("unit_quaternion", ("w", "x", "y", "z"),
                                    ("w**2 + x**2 + y**2 + z**2 == 1",))


def claim_of(text: str) -> Claim:
    parsed = parse_claim_text(text, {"unit_quaternion": UNIT_QUATERNION})
    assert parsed.form == "equation"
    left, right = parsed.sides[0], parsed.sides[1]
    return Claim("t:1:1", Location("t", 1, 1), "expression", text,
                 (Obligation(left, right, parsed.conditions),))


def verdict_of(text: str, timeout: float = 20.0):
    return decide(claim_of(text), Limits(timeout=timeout))


def _mp(value: str) -> mpmath.mpf:
    return parse_value(value)


def assert_proved(text: str, method: str | None = None) -> None:
    v = verdict_of(text)
    assert v.verdict == "proved", (text, v.reason, v.counter_normal_form)
    if method is not None:
        assert v.method == method, (text, v.method)
    for result in v.obligations:
        assert result.certificate is not None and certificate_is_valid(result.certificate)
    assert certificate_matches(v.claim, v.obligations)


def assert_refuted(text: str) -> None:
    v = verdict_of(text)
    assert v.verdict == "refuted", (text, v.verdict, v.reason)
    assert v.counter_normal_form not in (None, "0")
    assert v.witness is not None
    # independent confirmation with mpmath at the witness (reference library)
    ob = v.claim.obligations[0]
    confirm_witness(ob.left, ob.right, ob.conditions, v.witness.values)


# -- fast multiplication schemes -----------------------------------------------------------------

# Strassen, "Gaussian elimination is not optimal", Numerische Mathematik 13 (1969), the seven products
# for a 2x2 block product (formulas from memory, checked here against the definition C = A*B).
STRASSEN = ("m1 == (a11 + a22)*(b11 + b22), m2 == (a21 + a22)*b11, m3 == a11*(b12 - b22), "
            "m4 == a22*(b21 - b11), m5 == (a11 + a12)*b22, m6 == (a21 - a11)*(b11 + b12), "
            "m7 == (a12 - a22)*(b21 + b22)")


@pytest.mark.parametrize("text", [
    f"m1 + m4 - m5 + m7 == a11*b11 + a12*b21 given {STRASSEN}",
    f"m3 + m5 == a11*b12 + a12*b22 given {STRASSEN}",
    f"m2 + m4 == a21*b11 + a22*b21 given {STRASSEN}",
    f"m1 - m2 + m3 + m6 == a21*b12 + a22*b22 given {STRASSEN}",
])
def test_strassen_products(text):
    assert_proved(text, "ideal")


def test_strassen_with_a_wrong_sign_is_refuted():
    assert_refuted(f"m1 - m4 - m5 + m7 == a11*b11 + a12*b21 given {STRASSEN}")


def test_winograd_inner_product_pairs():
    # Winograd, "A new algorithm for inner product", IEEE Trans. Computers C-17 (1968): pairwise products.
    assert_proved("x1*y1 + x2*y2 == (x1 + y2)*(x2 + y1) - x1*x2 - y1*y2", "expansion")
    assert_refuted("x1*y1 + x2*y2 == (x1 + y2)*(x2 + y1) - x1*x2 + y1*y2")


def test_gauss_complex_product_three_multiplications():
    # Knuth, The Art of Computer Programming vol. 2, section 4.6.4 (from memory): three real products.
    given = "given k1 == c*(a + b), k2 == a*(d - c), k3 == b*(c + d)"
    assert_proved(f"k1 - k3 == a*c - b*d {given}", "ideal")
    assert_proved(f"k1 + k2 == a*d + b*c {given}", "ideal")
    assert_refuted(f"k1 + k3 == a*c - b*d {given}")


# -- multiple-angle and product formulas --------------------------------------------------------
# Abramowitz and Stegun, Handbook of Mathematical Functions (1964), section 4.3 (equation numbers from
# memory: 4.3.16-4.3.17 addition, 4.3.24-4.3.25 double angle, 4.3.27-4.3.28 triple angle, 4.3.20 half angle).

@pytest.mark.parametrize("text", [
    "sin(a + b) == sin(a)*cos(b) + cos(a)*sin(b)",
    "cos(a + b) == cos(a)*cos(b) - sin(a)*sin(b)",
    "sin(2*t) == 2*sin(t)*cos(t)",
    "cos(2*t) == 2*cos(t)**2 - 1",
    "sin(3*t) == 3*sin(t) - 4*sin(t)**3",
    "cos(3*t) == 4*cos(t)**3 - 3*cos(t)",
    "1 - cos(t) == 2*sin(t/2)**2",
    "sin(t) == 2*sin(t/2)*cos(t/2)",
    "tan(a + b) == (tan(a) + tan(b))/(1 - tan(a)*tan(b))",
    "sin(a)*sin(b) == (cos(a - b) - cos(a + b))/2",
    "cos(5*t) == 16*cos(t)**5 - 20*cos(t)**3 + 5*cos(t)",  # Chebyshev T5, A&S table 22.3 (from memory)
    # tangent of a sum of three angles (common practice; follows from A&S 4.3.18 applied twice)
    "tan(a + b + c) == (tan(a) + tan(b) + tan(c) - tan(a)*tan(b)*tan(c))/"
    "(1 - tan(a)*tan(b) - tan(b)*tan(c) - tan(a)*tan(c))",
])
def test_handbook_trigonometric_identities(text):
    assert_proved(text)


@pytest.mark.parametrize("text", [
    "sin(a + b) == sin(a)*cos(b) - cos(a)*sin(b)",
    "cos(2*t) == 2*sin(t)**2 - 1",
    "sin(3*t) == 3*sin(t) - 3*sin(t)**3",
    "1 + cos(t) == 2*sin(t/2)**2",
])
def test_broken_trigonometric_identities_are_refuted(text):
    assert_refuted(text)


def test_exponential_rules():
    # exp(a + b) = exp(a) exp(b), A&S 4.2.1 (from memory); common practice for the rest.
    assert_proved("exp(a + b) == exp(a)*exp(b)")
    assert_proved("exp(2*x) - 1 == (exp(x) - 1)*(exp(x) + 1)")
    assert_proved("1/(1 + exp(-x)) == exp(x)/(exp(x) + 1)")
    assert_refuted("exp(a + b) == exp(a) + exp(b)")


# -- sum-of-squares identities -------------------------------------------------------------------

def test_two_square_identity():
    # Brahmagupta-Fibonacci identity (Fibonacci, Liber Quadratorum, 1225).
    assert_proved("(a**2 + b**2)*(c**2 + d**2) == (a*c - b*d)**2 + (a*d + b*c)**2", "expansion")
    assert_refuted("(a**2 + b**2)*(c**2 + d**2) == (a*c - b*d)**2 + (a*d - b*c)**2 + a*b")


def test_euler_four_square_identity():
    # Euler's four-square identity (Euler, letter to Goldbach, 1748).
    text = ("(a1**2 + a2**2 + a3**2 + a4**2)*(b1**2 + b2**2 + b3**2 + b4**2) == "
            "(a1*b1 - a2*b2 - a3*b3 - a4*b4)**2 + (a1*b2 + a2*b1 + a3*b4 - a4*b3)**2 + "
            "(a1*b3 - a2*b4 + a3*b1 + a4*b2)**2 + (a1*b4 + a2*b3 - a3*b2 + a4*b1)**2")
    assert_proved(text, "expansion")
    assert_refuted(text.replace("a3*b2 + a4*b1", "a3*b2 - a4*b1"))


def test_lagrange_identity_three_terms():
    # Lagrange's identity |a|^2 |b|^2 - (a.b)^2 = |a x b|^2 (common practice).
    assert_proved("(a1**2 + a2**2 + a3**2)*(b1**2 + b2**2 + b3**2) - (a1*b1 + a2*b2 + a3*b3)**2 == "
                  "(a2*b3 - a3*b2)**2 + (a3*b1 - a1*b3)**2 + (a1*b2 - a2*b1)**2")


# -- side conditions, divisions, radicals ---------------------------------------------------------

def test_heron_formula_with_semi_perimeter():
    # Heron's formula, 16*Area**2 = (a+b+c)(-a+b+c)(a-b+c)(a+b-c) (common practice).
    assert_proved("s*(s - a)*(s - b)*(s - c) == (a + b + c)*(-a + b + c)*(a - b + c)*(a + b - c)/16 "
                  "given s == (a + b + c)/2", "ideal")


def test_unit_quaternion_rotation_entry():
    # Rotation matrix of a unit quaternion (common practice).
    assert_proved("1 - 2*(y**2 + z**2) == w**2 + x**2 - y**2 - z**2 given unit_quaternion", "ideal")
    assert_refuted("1 - 2*(y**2 + z**2) == w**2 - x**2 + y**2 - z**2 given unit_quaternion")


def test_division_uses_saturation():
    assert_proved("(x**2 - 1)/(x - 1) == x + 1", "saturation")
    assert_refuted("(x**2 - 1)/(x + 1) == x + 1")


def test_conjugate_quadratic_root():
    # The conjugate form of the quadratic root (Goldberg, "What every computer scientist should know
    # about floating-point arithmetic", ACM Computing Surveys 23(1), 1991, section 1.4, from memory).
    assert_proved("2*c/(-b - sqrt(b**2 - 4*a*c)) == (-b + sqrt(b**2 - 4*a*c))/(2*a)")


def test_radical_membership():
    # x**2 == 0 forces x == 0 over the reals, but x is not in the ideal (x**2): only in its radical.
    assert_proved("x == 0 given x**2 == 0", "radical")


def test_inconsistent_conditions_prove_vacuously():
    v = verdict_of("x == 1 given y == 1, y == 2")
    assert v.verdict == "proved" and v.obligations[0].vacuous


def test_no_complex_only_refutation():
    # x**2 + 1 == 0 has no real point: a false-looking claim under it must not be refuted.
    v = verdict_of("x == 5 given x**2 + 1 == 0")
    assert v.verdict != "refuted"


def test_principal_square_root_needs_its_sign():
    # sqrt(x**2) == |x| (common practice): true for x >= 0, false for some x < 0.
    assert_proved("sqrt(x**2) == x given x >= 0", "sign")
    v = verdict_of("sqrt(x**2) == x")
    assert v.verdict == "refuted"
    assert _mp(dict(v.witness.values)["x"]) < 0
    assert_refuted("sqrt(x**2) == x given x <= 0")


@pytest.mark.parametrize("text", [
    "sqrt(x)*sqrt(y) == sqrt(x*y)",  # both roots principal (common practice)
    "sqrt(a**2*b) == a*sqrt(b) given a >= 0",
    "hypot(3*t, 4*t) == 5*t given t > 0",  # the 3-4-5 right triangle
])
def test_sign_argument_on_principal_roots(text):
    assert_proved(text, "sign")


def test_sign_argument_does_not_prove_the_wrong_sign():
    assert_refuted("sqrt(x)*sqrt(y) == -sqrt(x*y) given x > 0, y > 0")
    assert_refuted("hypot(3*t, 4*t) == 5*t given t < 0")


def test_decimal_literals_are_exact():
    assert_proved("0.1 + 0.2 == 0.3")
    assert_refuted("0.1*3 == 0.30000000000000004")


def test_huge_power_false_claim_is_refuted_quickly():
    v = verdict_of("(x + y)**200 == x**200 + y**200", timeout=10)
    assert v.verdict == "refuted"


def test_tampered_sign_certificates_are_rejected():
    import dataclasses

    v = verdict_of("sqrt(x**2) == x given x >= 0")
    cert = v.obligations[0].certificate
    assert isinstance(cert, ConjugateCertificate) and certificate_is_valid(cert)
    # a claimed sign fact that is not one: x is not known to be >= 0 without the hypothesis
    assert not certificate_is_valid(dataclasses.replace(cert, nonnegative_symbols=(cert.root,)))
    # a different multiplier breaks the first identity
    assert not certificate_is_valid(dataclasses.replace(cert, multiplier=(("1", (0, 1)),)))
    # malformed data is rejected, not evaluated
    assert not certificate_is_valid(dataclasses.replace(cert, nonnegative=(("__import__('os')", (0, 1)),)))
    # the certificate of the true claim does not transfer to the false one
    false_claim = claim_of("sqrt(x**2) == x")
    assert not certificate_matches(false_claim, v.obligations)


@pytest.mark.parametrize("text", [
    "x == 1 given a > b, a <= b",  # a branch that contradicts a hypothesis (common practice)
    "x == 1 given x > 0, x < 0",
    "x == 1 given y == 2, y < 1",
    "x == 1 given 2*a - 2*b > 0, b - a >= 0",
])
def test_contradictory_sign_hypotheses_prove_vacuously(text):
    v = verdict_of(text)
    assert v.verdict == "proved" and v.method == "sign" and v.obligations[0].vacuous, v.reason
    assert certificate_is_valid(v.obligations[0].certificate)
    assert certificate_matches(v.claim, v.obligations)


@pytest.mark.parametrize("text", [
    "x == 1 given a >= b, a <= b",  # a == b is possible: not a contradiction
    "x == 1 given y == 2, y > 1",
])
def test_compatible_sign_hypotheses_are_not_contradictions(text):
    v = verdict_of(text)
    assert v.verdict == "refuted"


def test_tampered_contradiction_certificate_is_rejected():
    import dataclasses

    v = verdict_of("x == 1 given a > b, a <= b")
    cert = v.obligations[0].certificate
    assert isinstance(cert, SignContradictionCertificate)
    assert not certificate_is_valid(dataclasses.replace(cert, first_strict=False, second_strict=False))
    # the certificate is not accepted for a claim whose hypotheses are different
    assert not certificate_matches(claim_of("x == 1 given a >= b, a <= b"), v.obligations)


@pytest.mark.parametrize("text", [
    "sqrt(x**2 + 2*x + 1) == x + 1 given x >= -1",  # a sign hypothesis on a polynomial, not a variable
    "sqrt(a)/sqrt(b) == sqrt(a/b) given a > 0, b > 0",  # inverses of positive quantities are positive
    # the tangent half-angle substitution (common practice), where s is fixed by its sign
    "s == 2*t/(1 + t**2) given s**2 + c**2 == 1, c == (1 - t**2)/(1 + t**2), s > 0, t > 0",
])
def test_sign_argument_generalizations(text):
    assert_proved(text, "sign")


def test_sign_argument_generalizations_keep_false_claims_false():
    assert_refuted("sqrt(x**2 + 2*x + 1) == x + 1 given x >= -3")
    assert_refuted("s == 2*t/(1 + t**2) given s**2 + c**2 == 1, c == (1 - t**2)/(1 + t**2), s < 0, t > 0")


def test_refutation_names_the_missing_term():
    # (a + b)**2 == a**2 + b**2 is the classic dropped cross term (common practice)
    v = verdict_of("(a + b)**2 == a**2 + b**2")
    assert v.verdict == "refuted"
    assert "right side lacks 2*a*b" in v.reason, v.reason


@pytest.mark.parametrize("text", [
    "sin(pi) == 0",  # values at pi/n: A&S table 4.3.46 (from memory)
    "sin(x + 2*pi) == sin(x)",
    "cos(x + pi/2) == -sin(x)",
    "sin(pi/6) == 1/2",
    "tan(pi/4) == 1",
    "cos(2*math.pi*t)**2 + sin(2*math.pi*t)**2 == 1",
])
def test_pi_is_the_number_pi(text):
    assert_proved(text)


def test_false_claims_with_pi_are_refuted_at_the_true_value_of_pi():
    v = verdict_of("cos(x - pi) == cos(x)")
    assert v.verdict == "refuted"
    v = verdict_of("pi*r == 2*pi*r")
    assert v.verdict == "refuted"
    # the witness is checked with pi = 3.14159...: sides differ by pi*r
    left = parse_value(v.witness.left)
    assert abs(left - mpmath.pi * parse_value(dict(v.witness.values)["r"])) < 1e-15


@pytest.mark.parametrize("text", [
    "x == 0 given x**2 + y**2 == 0",  # a real sum of squares vanishes only where each term does
    "sqrt(2) + sqrt(3) == sqrt(5 + 2*sqrt(6))",  # denesting (common practice)
    "sqrt(2 + sqrt(3)) == (sqrt(6) + sqrt(2))/2",  # cos(pi/12) two ways, A&S 4.3.46 (from memory)
    "sqrt(x**3) == x*sqrt(x)",  # the domain of sqrt(x) makes x >= 0
    "sqrt(12) == 2*sqrt(3)",
    "log(x*y) == log(x) + log(y) given x > 0, y > 0",  # A&S 4.1.16 (from memory)
    "log(2*x**3) == log(2) + 3*log(x) given x > 0",
])
def test_real_reasoning_extensions(text):
    assert_proved(text)


@pytest.mark.parametrize("text", [
    "x == 1 given x**2 + y**2 == 1",
    "sqrt(2) + sqrt(3) == sqrt(5 - 2*sqrt(6))",
    "sqrt(x**3) == -x*sqrt(x) given x > 0",
])
def test_real_reasoning_extensions_keep_false_claims_false(text):
    assert_refuted(text)


def test_log_of_a_product_is_not_split_without_positive_factors():
    # log(x*y) == log(x) + log(y) needs x > 0 and y > 0; without them it stays open (never proved by
    # splitting, never refuted since it holds wherever both sides are defined)
    assert verdict_of("log(x*y) == log(x) + log(y)").verdict == "inconclusive"


@pytest.mark.parametrize("text", [
    "x == 1 given x > 2, x < 1",
    "sqrt(x)*sqrt(y) == sqrt(x*y) given x < 0, y < 0",  # the square roots' domains contradict
])
def test_more_contradictions_are_vacuous_and_say_so(text):
    v = verdict_of(text)
    assert v.verdict == "proved" and v.obligations[0].vacuous and "vacuously" in v.reason


@pytest.mark.parametrize("text", [
    "exp(x) == 1 given x == 0",
    "sin(t) == 0 given t == 0",
    "cos(a)*cos(b) - sin(a)*sin(b) == 1 given a == 0, b == 0",
])
def test_constant_definitions_reach_inside_functions(text):
    assert_proved(text)


def test_constant_definitions_keep_false_claims_false():
    assert_refuted("exp(x) == 2 given x == 0")


def test_a_guard_that_zeroes_a_denominator_is_a_vacuous_path():
    # the path `if s == 0: return 0` of a guarded a/s (common practice)
    v = verdict_of("0 == a/s given s == 0")
    assert v.verdict == "proved" and v.obligations[0].vacuous


def test_denominators_that_cancel_completely():
    assert_proved("(b/a)*(1/b) == 1/a")
    assert_proved("(b/a)*(c/b) == c/a")


@pytest.mark.parametrize("text", [
    "x == 5 given r > 1, r*r <= 1",  # r > 1 makes r*r > 1 (common practice)
    "x == 5 given r >= 2, r**3 - 8 < 0",
    "x == 5 given r > 0, r**2 + r <= 0",
])
def test_shifted_bounds_make_branches_vacuous(text):
    v = verdict_of(text)
    assert v.verdict == "proved" and v.obligations[0].vacuous, v.reason
    assert certificate_is_valid(v.obligations[0].certificate)
    assert certificate_matches(v.claim, v.obligations)


@pytest.mark.parametrize("text", [
    "x == 5 given r >= 1, r*r <= 1",  # r == 1 satisfies both
    "x == 5 given r > -1, r*r <= 1",
])
def test_shifted_bounds_that_leave_room_are_not_contradictions(text):
    assert verdict_of(text).verdict == "refuted"


def test_tampered_shift_certificate_is_rejected():
    import dataclasses

    v = verdict_of("x == 5 given r > 1, r*r <= 1")
    cert = v.obligations[0].certificate
    assert isinstance(cert, ShiftContradictionCertificate)
    assert not certificate_is_valid(dataclasses.replace(cert, bound_strict=False))
    assert not certificate_is_valid(dataclasses.replace(cert, shift="0"))
    assert not certificate_matches(claim_of("x == 5 given r >= 1, r*r <= 1"), v.obligations)
