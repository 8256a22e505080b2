"""Fuzzing defect D2: a difference with a power r**k (k >= 2) of a principal root r gave "the proof
certificate failed its independent re-check".

Cause: the conjugate search splits f == A*r + B only modulo r**2 - radicand, so A*r + B was another
polynomial than f, while the certificate stated the argument for f itself (its checker reads A and B off
f +- multiplier, which then are not linear in r).  Now the certificate carries that linear form and the
cofactors of f - form, and the checker verifies both by expansion.

References (common practice): sqrt(u)**3 == u*sqrt(u), and u == y makes both sides of each true claim
equal; the false ones differ at y = u = 1 (checked with mpmath below).
"""
from __future__ import annotations

import dataclasses
import json
from pathlib import Path

import mpmath

from certificate_samples import claim_of
from verifier.algebra.decide import Limits, decide
from verifier.algebra.facts import claim_facts
from verifier.algebra.kernel.checkers import check
from verifier.algebra.kernel.codec import certificate_from_json, parse, to_json
from verifier.algebra.kernel.tie import certificate_fits
from verifier.algebra.translate import translate
from verifier.model.certificate import ConjugateCertificate

PROVED = [
    "sqrt(y)**3 == sqrt(u)**3 given u == y",
    "sqrt(x)**2 + 2*sqrt(x) == sqrt(u)**2 + 2*sqrt(u) given u == x",
    "sqrt(y)**5 + sqrt(y) == sqrt(u)**5 + sqrt(u) given u == y",
]
REFUTED = [
    "sqrt(y)**3 == -sqrt(u)**3 given u == y",
    "sqrt(x)**2 + 2*sqrt(x) == sqrt(u)**2 - 2*sqrt(u) given u == x",
]


def test_powers_of_a_root_are_proved_end_to_end(cli, tmp_path: Path) -> None:
    one = mpmath.mpf(1)
    assert mpmath.sqrt(one) ** 3 != -mpmath.sqrt(one) ** 3
    assert mpmath.sqrt(one) ** 2 + 2 * mpmath.sqrt(one) != mpmath.sqrt(one) ** 2 - 2 * mpmath.sqrt(one)
    expected = {text: "proved" for text in PROVED} | {text: "refuted" for text in REFUTED}
    assert cli.verdicts(tmp_path, "roots.py", expected) == expected


def _certificate(text: str) -> ConjugateCertificate:
    verdict = decide(claim_of(text), Limits(timeout=20))
    assert verdict.verdict == "proved", verdict.reason
    certificate = verdict.obligations[0].certificate
    assert isinstance(certificate, ConjugateCertificate)
    return certificate


def test_the_certificate_states_the_linear_form_and_its_cofactors() -> None:
    # written as u - y == 0: a condition between two bare variables is substituted before any search
    text = "sqrt(y)**3 == sqrt(u)**3 given u - y == 0"
    cert = _certificate(text)
    facts = claim_facts(translate(claim_of(text).obligations[0]))
    assert cert.form != cert.target and any(cert.form_cofactors)
    assert check(cert) is not None and certificate_fits(cert, facts)
    # through the strict codec and back (the cache's path)
    assert certificate_from_json(parse(json.dumps(to_json(cert)))) == cert
    # the old statement, the argument for the target itself, is what the checker rightly refused
    assert check(dataclasses.replace(cert, form=cert.target,
                                     form_cofactors=tuple(() for _ in cert.generators))) is None
    # a tampered form or tampered cofactors of target - form do not re-check
    first, *rest = cert.form
    assert check(dataclasses.replace(cert, form=((str(int(first[0]) + 1), first[1]), *rest))) is None
    assert check(dataclasses.replace(cert, form_cofactors=tuple(() for _ in cert.generators))) is None
