"""The tie of a certificate to its claim: a proof that re-checks must also speak about this claim.

``ClaimFacts`` is what the claim's translation says, as plain data: its ring, its difference LEFT - RIGHT,
its equations, the ring symbols it knows to be >= 0 and its sign hypotheses.  The untrusted part
(``algebra/facts.py``) computes them from the claim; the kernel trusts that translation, and checks here
that the certificate's ring, target and equations are exactly the claim's and that every premise of the
proof (``checkers.Premises``) is one of its facts.
"""
from __future__ import annotations

from dataclasses import dataclass

from verifier.algebra.kernel.checkers import check
from verifier.model.certificate import Certificate, PolyData


@dataclass(frozen=True)
class ClaimFacts:
    symbols: tuple[str, ...]
    target: PolyData  # LEFT - RIGHT
    generators: tuple[PolyData, ...]  # the equations of the conditions and the auxiliary variables
    nonnegative_symbols: tuple[str, ...]  # ring symbols that are >= 0 wherever the conditions hold
    signs: tuple[tuple[PolyData, bool], ...]  # sign hypotheses S > 0 (True) or S >= 0 (False)


def certificate_fits(cert: Certificate, facts: ClaimFacts) -> bool:
    """True when ``cert`` re-checks and proves ``facts.target == 0`` from ``facts`` alone."""
    try:
        if (cert.symbols, cert.target, cert.generators) != (facts.symbols, facts.target, facts.generators):
            return False
        premises = check(cert)
        if premises is None:
            return False
        if not set(premises.nonnegative_symbols) <= set(facts.nonnegative_symbols):
            return False
        strict = {p for p, is_strict in facts.signs if is_strict}
        either = {p for p, _ in facts.signs}
        # a strict premise needs a strict hypothesis; S >= 0 also follows from S > 0
        return all(p in (strict if needs_strict else either) for p, needs_strict in premises.hypotheses)
    except (TypeError, AttributeError):  # unhashable or missing fields: not a certificate of ours
        return False
