"""The tie of a certificate to its claim: a proof that re-checks is accepted only for its own claim.

Each sample certificate proves a claim that is true by common practice; its neighbour claim is false
(``certificate_samples.py``), so accepting the certificate for it would report a false claim as proved.
"""
from __future__ import annotations

import dataclasses

import pytest

from certificate_samples import CLAIMS, sample
from verifier.algebra.kernel.tie import certificate_fits

KINDS = sorted(CLAIMS)


@pytest.mark.parametrize("kind", KINDS)
def test_a_certificate_fits_its_own_claim(kind) -> None:
    s = sample(kind)
    assert certificate_fits(s.certificate, s.facts)


@pytest.mark.parametrize("kind", KINDS)
def test_a_certificate_does_not_fit_a_swapped_claim(kind) -> None:
    s = sample(kind)
    assert not certificate_fits(s.certificate, s.other_facts)


@pytest.mark.parametrize("kind", KINDS)
def test_relabelled_to_the_swapped_claim_it_still_fails(kind) -> None:
    """Copying the other claim's ring, target and equations into the certificate does not help: the
    identities or the premises then fail."""
    s = sample(kind)
    other = s.other_facts
    moved = dataclasses.replace(s.certificate, symbols=other.symbols, target=other.target,
                                generators=other.generators)
    assert not certificate_fits(moved, other)


@pytest.mark.parametrize("kind", ["conjugate", "real_square"])
def test_a_sign_fact_the_claim_lacks_is_rejected(kind) -> None:
    s = sample(kind)
    facts = dataclasses.replace(s.facts, nonnegative_symbols=())
    if not s.certificate.nonnegative_symbols:
        pytest.skip("this proof needs no sign fact")
    assert not certificate_fits(s.certificate, facts)


@pytest.mark.parametrize("kind", ["conjugate", "sign_contradiction", "shift_contradiction"])
def test_a_hypothesis_the_claim_lacks_is_rejected(kind) -> None:
    s = sample(kind)
    if kind == "conjugate" and not s.certificate.hypotheses:
        facts = dataclasses.replace(s.facts, nonnegative_symbols=(), signs=())
    else:
        facts = dataclasses.replace(s.facts, signs=())
    assert not certificate_fits(s.certificate, facts)


@pytest.mark.parametrize("kind", ["sign_contradiction", "shift_contradiction"])
def test_a_strict_premise_needs_a_strict_hypothesis(kind) -> None:
    s = sample(kind)
    weakened = dataclasses.replace(s.facts, signs=tuple((p, False) for p, _ in s.facts.signs))
    assert not certificate_fits(s.certificate, weakened)


def test_a_tampered_shift_hypothesis_that_still_contradicts_is_caught_by_the_tie() -> None:
    """1 - 2*r**2 >= 0 with r > 1 is also contradictory, so the checker accepts the changed certificate;
    but the claim's hypothesis is 1 - r**2 >= 0, so the tie must refuse it."""
    s = sample("shift_contradiction")
    other = tuple((("-2", e) if c == "-1" else (c, e)) for c, e in s.certificate.other)
    assert other != s.certificate.other
    tampered = dataclasses.replace(s.certificate, other=other)
    from verifier.algebra.kernel.checkers import check

    assert check(tampered) is not None
    assert not certificate_fits(tampered, s.facts)


def test_junk_is_not_a_certificate_of_any_claim() -> None:
    s = sample("ideal")
    assert not certificate_fits(object(), s.facts)  # type: ignore[arg-type]
    assert not certificate_fits(dataclasses.replace(s.certificate, target=[["1", [0, 0]]]), s.facts)


@pytest.mark.parametrize("kind", KINDS)
def test_decide_proves_nothing_the_kernel_does_not_accept(kind, monkeypatch) -> None:
    """With the checker of one kind withdrawn, the engine's proof of that kind is not reported."""
    from certificate_samples import claim_of
    from verifier.algebra.decide import Limits, decide
    from verifier.algebra.kernel import checkers

    cls = type(sample(kind).certificate)
    monkeypatch.delitem(checkers.CHECKERS, cls)
    verdict = decide(claim_of(CLAIMS[kind][0]), Limits(timeout=20))
    assert verdict.verdict != "proved"
    assert "failed its independent re-check" in verdict.reason
