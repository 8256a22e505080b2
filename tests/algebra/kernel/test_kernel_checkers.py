"""Every kind of certificate: the checker accepts the engine's certificate and rejects tampered ones.

The claims behind the samples are true by common practice (``certificate_samples.py``); the tampered
certificates state identities that do not expand, or sign patterns that do not hold.
"""
from __future__ import annotations

import dataclasses
from fractions import Fraction
from typing import get_args

import pytest

from certificate_samples import CLAIMS, sample
from verifier.algebra.kernel.checkers import CHECKERS, Premises, check, is_valid
from verifier.algebra.kernel.polynomial import fraction_text
from verifier.model.certificate import Certificate

KINDS = sorted(CLAIMS)


def bump(poly):
    """The polynomial data with its first coefficient increased by 1 (or the term 1 added when empty)."""
    if not poly:
        width = None
        raise AssertionError("nothing to bump", width)
    (coefficient, exponents), *rest = poly
    changed = Fraction(coefficient) + 1
    if changed == 0:
        changed += 1
    return ((fraction_text(changed), exponents), *rest)


def bump_first_nonempty(polys):
    index = next(i for i, p in enumerate(polys) if p)
    return polys[:index] + (bump(polys[index]),) + polys[index + 1:]


def test_every_certificate_class_has_a_checker_and_a_sample() -> None:
    classes = set(get_args(Certificate))
    assert set(CHECKERS) == classes
    assert {cls.kind for cls in classes} == set(CLAIMS)


@pytest.mark.parametrize("kind", KINDS)
def test_the_engines_certificate_checks(kind) -> None:
    assert isinstance(check(sample(kind).certificate), Premises)


# (kind, field, change): each change breaks an identity or a sign condition the checker must verify
TAMPERINGS = [
    ("ideal", "cofactors", bump_first_nonempty),
    ("ideal", "power", lambda p: p + 1),
    ("conjugate", "cofactors", bump_first_nonempty),
    ("conjugate", "multiplier", bump),
    ("conjugate", "form", bump),
    ("conjugate", "nonnegative", lambda p: tuple((("-" + c).replace("--", ""), e) for c, e in p)),
    ("conjugate", "nonnegative_symbols", lambda names: ()),
    ("real_square", "cofactors", bump_first_nonempty),
    ("real_square", "remainder", lambda p: tuple((("-" + c).replace("--", ""), e) for c, e in p)),
    ("sign_contradiction", "first_strict", lambda strict: not strict),
    ("sign_contradiction", "constant", lambda c: "1"),
    ("sign_contradiction", "ratio", lambda r: "1"),
    ("shift_contradiction", "shift", lambda s: "0"),
    ("shift_contradiction", "bound_strict", lambda strict: not strict),
    ("shift_contradiction", "variable", lambda v: "y"),
    ("lemma_chain", "lemmas", lambda steps: ()),
    ("lemma_chain", "lemmas", lambda steps: steps + steps),  # the second copy is over too few equations
    ("lemma_chain", "lemmas", lambda steps: (dataclasses.replace(steps[0], remainder=bump(steps[0].remainder)),)
     + steps[1:]),
    ("lemma_chain", "final", lambda step: dataclasses.replace(step, cofactors=bump_first_nonempty(step.cofactors))),
    # a step over the claim's equations alone may not use the lemma targets the chain claims to have proved
    ("lemma_chain", "final", lambda step: dataclasses.replace(step, generators=step.generators[:2],
                                                              cofactors=step.cofactors[:2])),
]


@pytest.mark.parametrize("kind,field,change", TAMPERINGS, ids=[f"{k}-{f}" for k, f, _ in TAMPERINGS])
def test_a_tampered_certificate_is_rejected(kind, field, change) -> None:
    cert = sample(kind).certificate
    tampered = dataclasses.replace(cert, **{field: change(getattr(cert, field))})
    assert tampered != cert
    assert check(tampered) is None


@pytest.mark.parametrize("kind", KINDS)
def test_the_target_of_another_claim_is_rejected(kind) -> None:
    """A certificate whose target is swapped for another polynomial no longer re-checks (shift
    contradictions prove from the hypotheses alone, so only the tie can reject those: see test_kernel_tie)."""
    if kind == "shift_contradiction":
        pytest.skip("the target plays no part in a contradiction of the hypotheses")
    cert = sample(kind).certificate
    if kind == "sign_contradiction":
        tampered = dataclasses.replace(cert, first=bump(cert.first))
    else:
        tampered = dataclasses.replace(cert, target=bump(cert.target))
    assert check(tampered) is None


@pytest.mark.parametrize("kind", KINDS)
def test_a_symbol_list_of_the_wrong_width_is_rejected(kind) -> None:
    cert = sample(kind).certificate
    assert not is_valid(dataclasses.replace(cert, symbols=cert.symbols + ("extra",)))


@pytest.mark.parametrize("kind", KINDS)
def test_malformed_fields_are_rejected_without_raising(kind) -> None:
    cert = sample(kind).certificate
    for field in dataclasses.fields(cert):
        for junk in (None, "1+1", 3.5, [["1", [0]]], ((("__import__('os')", (0,)),),)):
            tampered = dataclasses.replace(cert, **{field.name: junk})
            assert check(tampered) is None, (field.name, junk)


def test_an_object_of_no_certificate_class_is_rejected() -> None:
    assert check(object()) is None  # type: ignore[arg-type]
    assert check(sample("ideal").facts) is None  # type: ignore[arg-type]


@pytest.mark.parametrize("kind", KINDS)
def test_the_premises_name_what_the_proof_uses(kind) -> None:
    premises = check(sample(kind).certificate)
    assert premises is not None
    if kind == "ideal":
        assert premises == Premises()
    if kind in ("conjugate", "real_square", "shift_contradiction"):
        assert set(premises.nonnegative_symbols) <= set(sample(kind).certificate.symbols)
    if kind in ("sign_contradiction", "shift_contradiction"):
        assert any(strict for _, strict in premises.hypotheses)  # a strict hypothesis makes the contradiction
