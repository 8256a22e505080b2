"""The texts of a cached result, derived again from the claim and the re-checked certificate or witness.

A cache entry may have been written by anyone, and only its certificate or witness is re-checked; so no
stored word is reported.  For a proof the method follows from the certificate's shape (sign parts, the
power, which generators have a non-zero cofactor), "vacuously" from the certificate too, and the
assumptions from translating the claim again.  For a refutation the counter-normal-form and its plain
description are computed again within the claim's time limit.  An inconclusive entry cannot be re-checked
at all, so it is reported with a fixed reason.  The wording mirrors ``algebra.decide``; the cache tests
compare a fresh and a cached verdict text for text.
"""
from __future__ import annotations

from dataclasses import replace
from typing import Any

from verifier.model.limits import decision_clock
from verifier.model.certificate import (
    Certificate,
    ConjugateCertificate,
    IdealCertificate,
    LemmaChainCertificate,
    RealSquareCertificate,
    ShiftContradictionCertificate,
    SignContradictionCertificate,
)
from verifier.model.claim import Obligation
from verifier.model.verdict import Method, ObligationResult

CACHED_INCONCLUSIVE = ("not decided in an earlier run with the same limits (a cached result, which cannot be "
                       "re-checked; run with --no-cache to decide it again and see why)")
_REASONS: dict[str, str] = {
    "expansion": "both sides expand to the same polynomial",
    "ideal": "LEFT - RIGHT lies in the ideal of the conditions",
    "saturation": ("LEFT - RIGHT lies in the ideal of the conditions saturated by the non-zero conditions "
                   "(denominators and != conditions)"),
    "vacuous": "the conditions cannot all hold (1 is in their ideal): proved vacuously",
    "real_square": ("(LEFT - RIGHT)**2 plus a quantity that cannot be negative lies in the ideal of the "
                    "conditions, so LEFT - RIGHT vanishes at every real point where they hold"),
    "sign": ("proved with the sign of a principal square root and the sign hypotheses: (LEFT - RIGHT) times "
             "its conjugate lies in the ideal, and the conjugate cannot vanish where LEFT - RIGHT does not"),
    "contradiction": ("the sign hypotheses (with the domains of square roots and logarithms) cannot all hold: "
                      "proved vacuously"),
}


def _radical_reason(power: int) -> str:
    return (f"(LEFT - RIGHT)**{power} lies in the ideal of the conditions, so LEFT - RIGHT vanishes wherever "
            "they hold (radical membership)")


def _all_divisible_by_target(cert: IdealCertificate) -> bool:
    """Every cofactor is a multiple of LEFT - RIGHT: then sum(cofactor / target * generator) = 1, so the
    conditions cannot all hold (exact polynomial division, nothing else)."""
    # sympy loads only when cached results are read back: keeps `idealcheck --help` fast
    from verifier.algebra.kernel.polynomial import certificate_ring, data_to_poly

    ring = certificate_ring(cert.symbols)
    target = data_to_poly(cert.target, ring)
    cofactors = [data_to_poly(c, ring) for c in cert.cofactors]
    if not target or not any(cofactors):
        return False
    return all(not c.rem(target) for c in cofactors)


def proved_texts(obligation: Obligation, result: ObligationResult, tr: Any = None) -> ObligationResult | None:
    """The proved result with method, reason, assumptions and "vacuous" derived again from ``tr``, the
    obligation's translation (translated here when not given); None if the claim no longer translates
    (then the entry is not used)."""
    # sympy loads only when cached results are read back: keeps `idealcheck --help` fast
    from verifier.algebra.translate import TranslationError, translate

    cert = result.certificate
    if cert is None:
        return None
    try:
        tr = translate(obligation) if tr is None else tr
    except (TranslationError, RecursionError):
        return None
    method: Method
    vacuous = False
    if isinstance(cert, (SignContradictionCertificate, ShiftContradictionCertificate)):
        method, reason, vacuous = "sign", _REASONS["contradiction"], True
    elif isinstance(cert, LemmaChainCertificate):
        # the wording of the proof in steps lives beside its finder (sympy is loaded by now anyway)
        from verifier.algebra.lemmas import chain_is_vacuous, chain_reason

        method, reason, vacuous = "sign", chain_reason(cert), chain_is_vacuous(cert)
    elif isinstance(cert, RealSquareCertificate):
        method, reason = "sign", _REASONS["real_square"]
    elif isinstance(cert, ConjugateCertificate):
        method, reason = "sign", _REASONS["sign"]
    elif cert.power > 1:
        method, reason = "radical", _radical_reason(cert.power)
    else:
        used = [g for g, c in zip(tr.generators, cert.cofactors) if c]
        if not used:
            method = "expansion"
        elif any(g.kind in ("inverse", "nonzero") for g in used):
            method = "saturation"
        else:
            method = "ideal"
        vacuous = method != "expansion" and _all_divisible_by_target(cert)
        reason = _REASONS["vacuous"] if vacuous else _REASONS[method]
    return replace(result, method=method, reason=reason, assumed=tuple(tr.assumed), vacuous=vacuous,
                   counter_normal_form=None, witness=None, limit=None)


def refuted_texts(obligation: Obligation, result: ObligationResult, timeout: float) -> ObligationResult:
    """The refuted result (its witness already re-checked) with its reason, counter-normal-form and
    assumptions computed again, within ``timeout`` seconds."""
    from verifier.algebra.decide import _normal_form_text, _refuted_reason  # decide's own wording

    cnf, assumed, plain = _normal_form_text(obligation, decision_clock() + timeout)
    return replace(result, method=None, reason=_refuted_reason(obligation.notes, plain), counter_normal_form=cnf,
                   assumed=tuple(assumed), certificate=None, vacuous=False, limit=None)


def inconclusive_texts(result: ObligationResult) -> ObligationResult:
    return replace(result, method=None, reason=CACHED_INCONCLUSIVE, counter_normal_form=None, witness=None,
                   assumed=(), certificate=None, vacuous=False, limit=None)
