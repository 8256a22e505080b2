"""Proofs in steps (``algebra/lemmas.py``) and signs of constant roots by their conjugate.

Denesting: (sqrt(2) - 1)**2 == 3 - 2*sqrt(2), (2 - sqrt(3))**2 == 7 - 4*sqrt(3) and (sqrt(a) + sqrt(b))**2
== a + b + 2*sqrt(a*b) for a, b >= 0 are common practice (expand the square); each constant identity is
also checked here with mpmath at 50 digits.  Real sums of squares of degree 4 and more: a sum of real
squares is zero only when every square is, and a sum of squares plus a positive constant is never zero
(common practice); the decompositions are checked against sympy's ``expand``.
"""
from __future__ import annotations

import dataclasses
import json

import mpmath
import pytest
import sympy
from sympy import QQ
from sympy.polys.orderings import grevlex
from sympy.polys.rings import ring

from certificate_samples import claim_of
from verifier.algebra.decide import Limits, decide
from verifier.algebra.facts import claim_facts
from verifier.algebra.kernel.checkers import check, positive_factor_ok
from verifier.algebra.kernel.codec import certificate_from_json, to_json
from verifier.algebra.kernel.tie import certificate_fits
from verifier.algebra.squares import sum_of_squares
from verifier.algebra.translate import translate
from verifier.model.certificate import ConjugateCertificate, LemmaChainCertificate

TRUE = [
    "sqrt(3 - 2*sqrt(2)) == sqrt(2) - 1",
    "sqrt(7 - 4*sqrt(3)) == 2 - sqrt(3)",
    "sqrt(5 - 2*sqrt(6)) == sqrt(3) - sqrt(2)",  # (sqrt(3) - sqrt(2))**2 == 5 - 2*sqrt(6)
    "sqrt(a + b + 2*sqrt(a*b)) == sqrt(a) + sqrt(b) given a >= 0, b >= 0",
    # (sqrt(a) - sqrt(b))**2 == a + b - 2*sqrt(a*b), and sqrt(a) >= sqrt(b) when a >= b (common practice)
    "sqrt(a + b - 2*sqrt(a*b)) == sqrt(a) - sqrt(b) given a >= b, b >= 0",
    "sqrt(4*g**4*u) == 2*g**2*sqrt(u)",  # a real-code shape: a squared factor out of the root
    "sqrt(x**2) == x given x >= y**2",  # x >= y**2 >= 0
    "x == 0 given x**4 + y**4 == 0",
    "x == 0 given x**4 + x**2*y**2 + y**4 == 0",
    "x**2 == y**2 given x**4 + (x - y)**2 == 0",
    "x == 0 given x**6 + y**2 == 0",
    # no real point: a sum of squares, or of terms that cannot be negative, plus a positive constant
    "x == 0 given x**4 + 1 == 0",
    "x == 0 given x**4 + x**2*y**2 + 1 == 0",
    "x == y given exp(x) == -2",
    "x*y == 3 given sqrt(x) == -1",
]
FALSE = [
    "sqrt(3 - 2*sqrt(2)) == 1 - sqrt(2)",  # the principal root is positive
    "sqrt(7 - 4*sqrt(3)) == sqrt(3) - 2",
    "sqrt(5 - 2*sqrt(6)) == sqrt(2) - sqrt(3)",
    "sqrt(a + b - 2*sqrt(a*b)) == sqrt(a) - sqrt(b) given a >= 0, b >= 0",  # a = 0, b = 1
    "sqrt(a + b + 2*sqrt(a*b)) == sqrt(a) - sqrt(b) given a >= 0, b >= 0",
    "sqrt(a + b - 2*sqrt(a*b)) == sqrt(b) - sqrt(a) given a >= b, b >= 0",  # a = 1, b = 0
    "sqrt(x**2) == -x given x >= y**2",
    "sqrt(x**2) == x given x <= y**2",  # x = -1, y = 0
    "x == 1 given x**4 + y**4 == 0",
    "x == 0 given x**4 - y**4 == 0",  # x = y = 1
    "x == 0 given x**4 - 2*x**2 + 1 == 0",  # (x**2 - 1)**2: x = 1
    "x == 1 given exp(x) == 2",
]


def test_the_constant_identities_hold_at_50_digits() -> None:
    with mpmath.workdps(50):
        assert abs(mpmath.sqrt(3 - 2 * mpmath.sqrt(2)) - (mpmath.sqrt(2) - 1)) < mpmath.mpf(10) ** -45
        assert abs(mpmath.sqrt(7 - 4 * mpmath.sqrt(3)) - (2 - mpmath.sqrt(3))) < mpmath.mpf(10) ** -45
        assert abs(mpmath.sqrt(5 - 2 * mpmath.sqrt(6)) - (mpmath.sqrt(3) - mpmath.sqrt(2))) < mpmath.mpf(10) ** -45
        a, b = mpmath.mpf(2) / 7, mpmath.mpf(13) / 3
        assert abs(mpmath.sqrt(a + b + 2 * mpmath.sqrt(a * b)) - mpmath.sqrt(a) - mpmath.sqrt(b)) < \
            mpmath.mpf(10) ** -45


def test_denesting_and_higher_degree_squares_through_the_command_line(cli, tmp_path) -> None:
    claims = {text: "proved" for text in TRUE} | {text: "not proved" for text in FALSE}
    verdicts = cli.verdicts(tmp_path, "steps.py", claims)
    for text, expected in claims.items():
        assert (verdicts[text] != "proved") if expected == "not proved" else (verdicts[text] == expected), text


@pytest.mark.parametrize("text", ["sqrt(a + b + 2*sqrt(a*b)) == sqrt(a) + sqrt(b) given a >= 0, b >= 0",
                                  "x**2 == y**2 given x**4 + (x - y)**2 == 0", "x == y given exp(x) == -2"])
def test_the_chain_re_checks_round_trips_and_breaks_when_tampered(text) -> None:
    claim = claim_of(text)
    cert = decide(claim, Limits(timeout=20)).obligations[0].certificate
    assert isinstance(cert, LemmaChainCertificate)
    facts = claim_facts(translate(claim.obligations[0]))
    assert certificate_fits(cert, facts)
    assert certificate_from_json(to_json(cert)) == cert
    # without its lemmas the last step speaks of equations the claim does not have
    assert check(dataclasses.replace(cert, lemmas=())) is None
    first = cert.lemmas[0]
    assert check(dataclasses.replace(cert, lemmas=(dataclasses.replace(first, target=cert.target),)
                                     + cert.lemmas[1:])) is None


def test_a_positive_factor_must_be_positive() -> None:
    claim = claim_of("sqrt(3 - 2*sqrt(2)) == sqrt(2) - 1")
    cert = decide(claim, Limits(timeout=20)).obligations[0].certificate
    assert isinstance(cert, ConjugateCertificate) and cert.positive_factor
    assert check(cert) is not None
    assert check(dataclasses.replace(cert, positive_factor=())) is None  # then -A*B - P is not in the ideal
    # the factor without its constant term may be zero: rejected whatever the identity says
    no_constant = tuple(term for term in cert.positive_factor if any(term[1]))
    assert check(dataclasses.replace(cert, positive_factor=no_constant)) is None
    negated = tuple((c[1:] if c.startswith("-") else "-" + c, e) for c, e in cert.positive_factor)
    assert check(dataclasses.replace(cert, positive_factor=negated)) is None


def test_higher_degree_sums_of_squares_expand_back() -> None:
    R, x, y = ring("x,y", QQ, grevlex)
    X, Y = sympy.symbols("x y")
    cases = [x**4 + y**4, x**4 + x**2 * y**2 + y**4, (x**2 - y**2) ** 2, x**4 - x**2 * y**2 + y**4,
             x**4 + (x - y) ** 2, x**6 + y**2 + 3, x**4 - 2 * x**3 * y + x**2 * y**2 + 1]
    for p in cases:
        found = sum_of_squares(p)
        assert found is not None, p
        assert all(weight > 0 for weight, _ in found)
        rebuilt = sum((sympy.Rational(w.numerator, w.denominator) * sympy.sympify(str(q.as_expr())) ** 2
                       for w, q in found), sympy.Integer(0))
        assert sympy.expand(rebuilt - sympy.sympify(str(p.as_expr()))) == 0
    # not sums of squares: negative somewhere (x = 0, y = 1 and x = 1, y = 0)
    assert sum_of_squares(x**4 - 1) is None
    assert sum_of_squares(x**2 - y**4) is None
    assert sum_of_squares(x**3 + y**4) is None


def test_a_proof_in_steps_is_read_back_from_the_cache_with_the_same_texts(cli, tmp_path) -> None:
    texts = ["sqrt(a + b + 2*sqrt(a*b)) == sqrt(a) + sqrt(b) given a >= 0, b >= 0", "x == 0 given x**4 + 1 == 0"]
    (tmp_path / "steps.py").write_text("".join(f"# idealcheck: {t}\n" for t in texts))
    first = json.loads(cli("check", "--format", "json", "steps.py", cwd=tmp_path).out)["claims"]
    second = json.loads(cli("check", "--format", "json", "steps.py", cwd=tmp_path).out)["claims"]
    assert [c["verdict"] for c in first] == [c["verdict"] for c in second] == ["proved", "proved"]
    assert [(c["method"], c["reason"]) for c in first] == [(c["method"], c["reason"]) for c in second]
    assert "vacuously" in second[1]["reason"]
    shown = cli("explain", "steps.py:1", cwd=tmp_path).out
    assert "lemmas proved first" in shown


def test_a_factor_is_positive_by_a_constant_or_by_roots_of_positive_constants() -> None:
    R, r, s, x = ring("r,s,x", QQ, grevlex)
    everything = {0, 1, 2}
    assert positive_factor_ok(r + 1, [], everything)
    assert not positive_factor_ok(r + x, [], everything)  # both may be 0
    assert positive_factor_ok(r + s, [r**2 - 2, s**2 - 3], everything)  # sqrt(2) + sqrt(3) > 0
    assert not positive_factor_ok(r + s, [r**2 - x, s**2 - x], everything)  # x may be 0
    assert not positive_factor_ok(r + s, [r**2 + 2], everything)  # no real r: nothing to lean on
    assert not positive_factor_ok(r - s + 3, [r**2 - 2, s**2 - 3], everything)  # a negative term
    assert not positive_factor_ok(r, [r**2 - 2], {1, 2})  # r itself not known to be >= 0


def test_a_factor_that_may_vanish_needs_value_plus_factor_nonnegative() -> None:
    # sqrt(a) - sqrt(b) >= 0: times sqrt(a) + sqrt(b) it is a - b >= 0, and sqrt(a) + sqrt(b) is 0 only at
    # a = b = 0, where sqrt(a) - sqrt(b) + (sqrt(a) + sqrt(b)) == 2*sqrt(a) >= 0 settles it
    claim = claim_of("sqrt(a + b - 2*sqrt(a*b)) == sqrt(a) - sqrt(b) given a >= b, b >= 0")
    cert = decide(claim, Limits(timeout=20)).obligations[0].certificate
    assert isinstance(cert, LemmaChainCertificate)
    final = cert.final
    assert isinstance(final, ConjugateCertificate) and final.factor_may_vanish and final.positive_factor
    assert check(cert) is not None
    assert check(dataclasses.replace(cert, final=dataclasses.replace(final, factor_may_vanish=False))) is None
    negated = tuple((c[1:] if c.startswith("-") else "-" + c, e) for c, e in final.positive_factor)
    assert check(dataclasses.replace(cert, final=dataclasses.replace(final, positive_factor=negated))) is None
