"""The plain-terms description of a refuted claim's remaining difference (algebra/describe.py)."""
from __future__ import annotations

from exprs import cond, expr

from verifier.algebra.describe import describe_difference, describe_translation, normal_forms
from verifier.algebra.groebner import groebner_basis
from verifier.algebra.translate import translate
from verifier.model.claim import Obligation


def _describe(left: str, right: str, *conditions: str) -> str | None:
    tr = translate(Obligation(expr(left), expr(right), tuple(cond(c) for c in conditions)))
    basis = groebner_basis([g.poly for g in tr.generators], track_cofactors=False).basis if tr.generators else ()
    return describe_translation(tr, basis)


def test_missing_cross_term_of_a_square():
    # (a + b)**2 = a**2 + 2*a*b + b**2 (binomial theorem, common practice): the right side lacks 2*a*b
    assert _describe("(a + b)**2", "a**2 + b**2") == "the right side lacks 2*a*b"


def test_extra_term_on_the_right_is_lacking_on_the_left():
    assert _describe("a*b", "a*b + c**3") == "the left side lacks c**3"


def test_different_coefficients_are_named():
    text = _describe("3*x*y + 1", "2*x*y + 1")
    assert text == "the coefficient of x*y is 3 on the left and 2 on the right"


def test_constant_term():
    assert _describe("x + 1", "x + 2") == "the constant term is 1 on the left and 2 on the right"


def test_uses_the_normal_forms_modulo_the_conditions():
    # variables are ordered by name (c before s, so c > s in grevlex): modulo s**2 + c**2 - 1, c**2 reduces
    # to 1 - s**2, so c**2 against 1 leaves -s**2 that only the left side has
    assert _describe("c**2", "1", "s**2 + c**2 == 1") == "the right side lacks -s**2"
    tr = translate(Obligation(expr("s**2 + c**2"), expr("1"), (cond("s**2 + c**2 == 1"),)))
    basis = groebner_basis([g.poly for g in tr.generators], track_cofactors=False).basis
    left, right = normal_forms(tr, basis)
    assert left == right  # a true claim has equal normal forms: nothing to describe
    assert describe_translation(tr, basis) is None


def test_auxiliary_variables_print_as_what_they_stand_for():
    text = _describe("sqrt(x)*sqrt(x) + 1/y", "x")
    assert text == "the right side lacks (1/y)"


def test_large_differences_are_left_alone():
    assert _describe("(a + b + c + d)**2", "0") is None
    tr = translate(Obligation(expr("a"), expr("a")))
    assert describe_difference(tr.left, tr.right) is None
