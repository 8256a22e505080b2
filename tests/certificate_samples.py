"""One certificate of every proof kind, from the engine on claims whose truth is common practice, with
the facts of its claim and of a nearby claim it must not prove (for the kernel's tests)."""
from __future__ import annotations

from dataclasses import dataclass
from functools import cache

from verifier.algebra.decide import Limits, decide
from verifier.algebra.facts import claim_facts
from verifier.algebra.kernel.tie import ClaimFacts
from verifier.algebra.translate import translate
from verifier.claims.language import parse_claim_text
from verifier.model.certificate import Certificate
from verifier.model.claim import Claim, Location, Obligation


def claim_of(text: str) -> Claim:
    parsed = parse_claim_text(text, {})
    return Claim("t:1:1", Location("t", 1, 1), "expression", text,
                 (Obligation(parsed.sides[0], parsed.sides[1], parsed.conditions),))


@dataclass(frozen=True)
class Sample:
    certificate: Certificate
    facts: ClaimFacts  # of the claim it proves
    other_facts: ClaimFacts  # of a claim it must not prove


# kind -> (true claim, a claim the certificate must not prove)
CLAIMS = {
    # on the unit circle (x + y)**2 - 2*x*y = x**2 + y**2 = 1
    "ideal": ("(x + y)**2 - 2*x*y == 1 given x**2 + y**2 == 1", "(x + y)**2 - 2*x*y == 2 given x**2 + y**2 == 1"),
    # sqrt(x**2) == |x|: equal to x exactly when x >= 0
    "conjugate": ("sqrt(x**2) == x given x >= 0", "sqrt(x**2) == x given x >= -1"),
    # a real sum of squares is zero only when every term is
    "real_square": ("x == 0 given x**2 + y**2 == 0", "x == 0 given x**2 - y**2 == 0"),
    # a > b and a <= b cannot hold together; a >= b and a <= b can (a == b)
    "sign_contradiction": ("x == 1 given a > b, a <= b", "x == 1 given a >= b, a <= b"),
    # r > 1 makes r*r > 1; r == 1 satisfies r >= 1 and r*r <= 1
    "shift_contradiction": ("y == 5 given r > 1, r*r <= 1", "y == 5 given r >= 1, r*r <= 1"),
    # x**4 + y**4 is a sum of the squares of x**2 and y**2, zero only at 0; x**4 - y**4 vanishes at x = y = 1
    "lemma_chain": ("x == 0 given x**4 + y**4 == 0", "x == 0 given x**4 - y**4 == 0"),
}


def facts_of(text: str) -> ClaimFacts:
    return claim_facts(translate(claim_of(text).obligations[0]))


@cache
def sample(kind: str) -> Sample:
    true_text, other_text = CLAIMS[kind]
    verdict = decide(claim_of(true_text), Limits(timeout=20))
    assert verdict.verdict == "proved", verdict.reason
    certificate = verdict.obligations[0].certificate
    assert certificate is not None and certificate.kind == kind, certificate
    return Sample(certificate, facts_of(true_text), facts_of(other_text))
