"""The decision procedure: a claim's obligations -> proved / refuted / inconclusive, with evidence.

For each obligation ``left == right`` under its conditions:
1. the translation gives the difference f and the generators G (conditions and auxiliary equations);
2. refutation first: f (in the claim's own variables, no equation among the conditions) evaluated modulo a
   prime at candidate points says where to look, the exact check on the claim decides
   (``witness_polynomial.py``); without conditions, a random evaluation modulo a large prime shows most
   other false claims and the full witness search runs before any Groebner basis;
3. f in the ideal of G -> proved, with cofactors c such that f = sum c_i g_i (denominators cleared
   first, then a Groebner basis of G; method: expansion when no generator is needed, saturation when an
   inverse variable is, else ideal); f**k in it for a small k -> proved (radical);
4. real reasoning (``sign_search.py``, method sign): contradictory sign hypotheses (vacuous), a real sum
   of squares, the conjugate argument for principal roots;
5. otherwise the counter-normal-form is shown, and the claim is refuted only if a real witness is found.
This module and the finders are the untrusted search.  ``proved`` is returned only after the trusted
kernel (``kernel/``) has re-checked the certificate by expansion and tied it to this obligation's
translation (``kernel.tie.certificate_fits``); if that fails the obligation is inconclusive, never proved.
"""
from __future__ import annotations

import time
from dataclasses import dataclass
from typing import Sequence

from verifier.model.limits import decision_clock
from verifier.algebra.clearing import cleared_membership
from verifier.algebra.describe import describe_translation
from verifier.algebra.groebner import (
    GroebnerTimeout,
    groebner_basis,
    membership_cofactors,
    reduce,
)
from verifier.algebra.facts import claim_facts
from verifier.algebra.kernel.polynomial import poly_to_data
from verifier.algebra.lemmas import chain_is_vacuous, chain_reason, find_lemma_chain
from verifier.algebra.kernel.tie import certificate_fits
from verifier.algebra.sign_search import (
    find_real_square,
    find_shift_contradiction,
    find_sign_contradiction,
    find_sign_proof,
)
from verifier.algebra.translate import Translation, TranslationError, translate
from verifier.algebra.witness import differs_mod_p, find_witness
from verifier.algebra.witness_polynomial import polynomial_witness
from verifier.model.certificate import Certificate, IdealCertificate
from verifier.model.claim import Claim, Obligation
from verifier.model.expr import has_opaque
from verifier.model.verdict import Method, ObligationResult, Verdict

_RANK = {"proved": 0, "inconclusive": 1, "refuted": 2, "error": 3}
_METHOD_RANK = {None: -1, "expansion": 0, "ideal": 1, "saturation": 2, "radical": 3, "sign": 4}
_RADICAL_POWERS = (2, 3)
_RADICAL_TERM_LIMIT = 60  # f**k of a larger difference is not worth the time


@dataclass(frozen=True)
class Limits:
    timeout: float = 10.0  # seconds for one claim, all its obligations together
    seed: int = 0  # for the random evaluation and the witness search (reproducible runs)


class _OutOfTime(Exception):
    pass


def decide(claim: Claim, limits: Limits = Limits()) -> Verdict:
    """Decide every obligation of ``claim`` and combine them into one verdict (the worst one wins)."""
    start = time.monotonic()
    if claim.problem is not None:
        return Verdict(claim, claim.problem.verdict, None, claim.problem.message, None, None, (),
                       round(time.monotonic() - start, 3))
    if not claim.obligations:
        return Verdict(claim, "inconclusive", None, "the claim produced nothing to check", None, None, (),
                       round(time.monotonic() - start, 3))
    deadline = decision_clock() + limits.timeout  # CPU seconds: the verdict does not depend on load
    results: list[ObligationResult] = []
    for index, obligation in enumerate(claim.obligations):
        results.append(decide_obligation(obligation, deadline=deadline, seed=limits.seed + index,
                                         timeout=limits.timeout))
    return combine(claim, tuple(results), round(time.monotonic() - start, 3))


def combine(claim: Claim, results: tuple[ObligationResult, ...], seconds: float) -> Verdict:
    """One verdict for the claim from its obligations' results."""
    worst = max(results, key=lambda r: _RANK[r.verdict])
    assumed = tuple(dict.fromkeys(a for r in results for a in r.assumed))
    if worst.verdict == "proved":
        method = max((r.method for r in results), key=lambda m: _METHOD_RANK[m])
        if len(results) == 1:
            reason = worst.reason
        else:
            vacuous = [r.label for r in results if r.vacuous]
            reason = f"all {len(results)} obligations proved"
            if vacuous:
                reason += f" ({', '.join(vacuous)}: vacuously, the conditions cannot all hold)"
        return Verdict(claim, "proved", method, reason, None, None, assumed, seconds, results)
    prefix = f"{worst.label}: " if worst.label and len(results) > 1 else ""
    return Verdict(claim, worst.verdict, worst.method, prefix + worst.reason, worst.counter_normal_form,
                   worst.witness, assumed, seconds, results)


def decide_obligation(obligation: Obligation, *, deadline: float, seed: int = 0,
                      timeout: float = 10.0) -> ObligationResult:
    label = obligation.label
    try:
        return _decide(obligation, deadline, seed)
    except TranslationError as exc:
        return ObligationResult(label, "inconclusive", None, f"cannot be represented as polynomials: {exc}")
    except (GroebnerTimeout, _OutOfTime):
        return ObligationResult(label, "inconclusive", None,
                                f"time limit of {timeout:g} s reached before a decision")
    except RecursionError:
        return ObligationResult(label, "inconclusive", None, "the expression is too deeply nested to translate")


def _check_time(deadline: float) -> None:
    if decision_clock() > deadline:
        raise _OutOfTime()


def _decide(ob: Obligation, deadline: float, seed: int) -> ObligationResult:
    label = ob.label
    notes = ob.notes
    early: Translation | None = None
    untranslatable: Exception | None = None
    try:
        early = translate(ob)
    except (TranslationError, RecursionError) as exc:
        untranslatable = exc  # raised below, after the witness search on the expressions had its chance
    if early is not None:
        # refutation first and cheap: the difference polynomial, screened modulo a prime, checked exactly
        witness = polynomial_witness(ob.left, ob.right, ob.conditions, early.difference, deadline=deadline,
                                     seed=seed, generators=early.generators)
        if witness is not None:
            cnf, assumed, plain = _normal_form_text(ob, deadline, early)
            return ObligationResult(label, "refuted", None, _refuted_reason(notes, plain), cnf, witness, assumed)
    if not ob.conditions and differs_mod_p(ob.left, ob.right, seed=seed) is True:
        # false as rational functions: look for a witness first, then the counter-normal-form if affordable
        witness = find_witness(ob.left, ob.right, ob.conditions, deadline=deadline, seed=seed)
        if witness is not None:
            cnf, assumed, plain = _normal_form_text(ob, deadline, early)
            return ObligationResult(label, "refuted", None, _refuted_reason(notes, plain), cnf, witness, assumed)
    if untranslatable is not None:
        raise untranslatable
    assert early is not None
    tr = early
    _check_time(deadline)
    generators = [g.poly for g in tr.generators]
    f = tr.difference
    if not f:
        return _proved(tr, label, "expansion", 1, tuple(tr.ring.zero for _ in generators),
                       "both sides expand to the same polynomial")
    cleared = cleared_membership(tr, deadline=deadline)
    if cleared is not None:
        method = _method_of(tr, cleared)
        return _proved(tr, label, method, 1, cleared, _proved_reason(method, tr))
    basis_result = groebner_basis(generators, deadline=deadline) if generators else None
    if basis_result is not None and _is_unit_ideal(basis_result.basis):
        if not ob.conditions:
            # nothing was given, so a denominator the claim divides by is 0 everywhere (tan(pi/2))
            return ObligationResult(label, "inconclusive", None,
                                    "division by zero: a denominator of the claim is 0 wherever it is defined",
                                    None, None, tr.assumed)
        # the conditions have no common (complex, hence real) point: the claim holds vacuously
        assert basis_result.cofactors is not None
        one_cofactors = basis_result.cofactors[0]
        scale = 1 / basis_result.basis[0].LC
        cofactors = tuple(f * c * scale for c in one_cofactors)
        return _proved(tr, label, _method_of(tr, cofactors), 1, cofactors,
                       "the conditions cannot all hold (1 is in their ideal): proved vacuously", vacuous=True)
    normal_form = f
    if basis_result is not None:
        member_cofactors = membership_cofactors(f, basis_result, deadline=deadline)
        if member_cofactors is not None:
            method = _method_of(tr, member_cofactors)
            return _proved(tr, label, method, 1, tuple(member_cofactors), _proved_reason(method, tr))
        _, normal_form = reduce(f, basis_result.basis, deadline=deadline)
        if len(f.terms()) <= _RADICAL_TERM_LIMIT:
            for k in _RADICAL_POWERS:
                _check_time(deadline)
                power_cofactors = membership_cofactors(f**k, basis_result, deadline=deadline)
                if power_cofactors is not None:
                    return _proved(tr, label, "radical", k, tuple(power_cofactors),
                                   f"(LEFT - RIGHT)**{k} lies in the ideal of the conditions, so LEFT - RIGHT "
                                   "vanishes wherever they hold (radical membership)")
    # real reasoning: hypotheses that cannot hold together first (the report then says "vacuously")
    _check_time(deadline)
    contradiction = find_sign_contradiction(tr, basis_result, deadline=deadline) or find_shift_contradiction(tr)
    if contradiction is not None:
        return _contradiction_result(tr, label, contradiction)
    if basis_result is not None:
        real_square = (find_real_square(tr, basis_result, deadline=deadline)
                       if len(f.terms()) <= _RADICAL_TERM_LIMIT else None)
        if real_square is not None:
            return _accept(tr, label, "sign", real_square,
                           "(LEFT - RIGHT)**2 plus a quantity that cannot be negative lies in the ideal of the "
                           "conditions, so LEFT - RIGHT vanishes at every real point where they hold")
        sign_certificate = find_sign_proof(tr, basis_result, deadline=deadline)
        if sign_certificate is not None:
            return _accept(tr, label, "sign", sign_certificate,
                           "proved with the sign of a principal square root and the sign hypotheses: "
                           "(LEFT - RIGHT) times its conjugate lies in the ideal, and the conjugate "
                           "cannot vanish where LEFT - RIGHT does not")
        chain = find_lemma_chain(tr, basis_result, deadline=deadline)
        if chain is not None:
            return _accept(tr, label, "sign", chain, chain_reason(chain), vacuous=chain_is_vacuous(chain))
    cnf = tr.printed(normal_form)
    witness = find_witness(ob.left, ob.right, ob.conditions, deadline=deadline, seed=seed)
    if witness is not None:
        plain = _describe(tr, basis_result.basis if basis_result is not None else (), deadline)
        return ObligationResult(label, "refuted", None, _refuted_reason(notes, plain), cnf, witness, tr.assumed)
    reason = ("the counter-normal-form is not zero, but no real point where every condition holds and the "
              "sides differ was found")
    if _has_opaque(tr):
        if any(has_opaque(e) for e in (ob.left, ob.right, *(x for c in ob.conditions for x in (c.left, c.right)))):
            reason += "; the difference involves calls the tool cannot see into"
        else:
            # only functions of the table: the search knew their values, the algebra did not
            reason += ("; the difference involves functions the algebra keeps opaque (the witness search "
                       "used their exact values)")
        if notes:
            reason += " (" + "; ".join(notes) + ")"
    elif tr.sign_conditions or any(a.kind == "radical" for a in tr.aux):
        reason += "; deciding it may need sign reasoning (inequalities, principal square roots)"
    else:
        reason += "; the counterexamples may all be complex, or the search ran out of time"
    return ObligationResult(label, "inconclusive", None, reason, cnf, None, tr.assumed)


def _contradiction_result(tr: Translation, label: str, contradiction: Certificate) -> ObligationResult:
    return _accept(tr, label, "sign", contradiction,
                   "the sign hypotheses (with the domains of square roots and logarithms) cannot all hold: "
                   "proved vacuously", vacuous=True)


def _refuted_reason(notes: Sequence[str], plain: str | None = None) -> str:
    reason = "the sides differ at the witness, where every condition holds"
    if plain:
        reason += f"; {plain}"
    if notes:
        reason += " (" + "; ".join(notes) + ")"
    return reason


def _describe(tr: Translation, basis: Sequence, deadline: float) -> str | None:
    """The remaining difference in plain terms, when it is small (``describe.py``); None otherwise."""
    try:
        return describe_translation(tr, basis, deadline=deadline)
    except (GroebnerTimeout, _OutOfTime, RecursionError):
        return None


def _normal_form_text(ob: Obligation, deadline: float, translated: Translation | None = None
                      ) -> tuple[str, tuple[str, ...], str | None]:
    """The counter-normal-form (and its plain description) for a claim already known to be false, within
    what time is left (``translated``: the obligation's translation when it is already at hand)."""
    try:
        tr = translated if translated is not None else translate(ob)
        generators = [g.poly for g in tr.generators]
        basis = groebner_basis(generators, track_cofactors=False, deadline=deadline).basis if generators else ()
        _, normal_form = reduce(tr.difference, basis, deadline=deadline) if basis else ((), tr.difference)
        return tr.printed(normal_form), tr.assumed, _describe(tr, basis, deadline)
    except (TranslationError, GroebnerTimeout, _OutOfTime, RecursionError):
        return ("(not computed within the time limit; the sides differ as rational functions, "
                "checked at random points modulo a prime)"), (), None


def _is_unit_ideal(basis: Sequence) -> bool:
    return len(basis) == 1 and basis[0].is_ground and bool(basis[0])


def _method_of(tr: Translation, cofactors: Sequence) -> Method:
    used = [g for g, c in zip(tr.generators, cofactors) if c]
    if not used:
        return "expansion"
    if any(g.kind in ("inverse", "nonzero") for g in used):
        return "saturation"
    return "ideal"


def _proved_reason(method: Method, tr: Translation) -> str:
    if method == "expansion":
        return "both sides expand to the same polynomial"
    if method == "saturation":
        return ("LEFT - RIGHT lies in the ideal of the conditions saturated by the non-zero conditions "
                "(denominators and != conditions)")
    return "LEFT - RIGHT lies in the ideal of the conditions"


def _proved(tr: Translation, label: str, method: Method, power: int, cofactors: tuple, reason: str,
            vacuous: bool = False) -> ObligationResult:
    return _accept(tr, label, method, build_certificate(tr, power, cofactors), reason, vacuous)


def _accept(tr: Translation, label: str, method: Method, certificate: Certificate, reason: str,
            vacuous: bool = False) -> ObligationResult:
    if not certificate_fits(certificate, claim_facts(tr)):
        # never report a proof that does not re-check; this would be a bug in the engine
        return ObligationResult(label, "inconclusive", None,
                                "internal: the proof certificate failed its independent re-check",
                                None, None, tr.assumed)
    return ObligationResult(label, "proved", method, reason, None, None, tr.assumed, certificate, vacuous)


def build_certificate(tr: Translation, power: int, cofactors: Sequence) -> IdealCertificate:
    """The certificate of ``tr.difference ** power == sum(cofactors[i] * generators[i])``."""
    return IdealCertificate(
        tuple(str(s) for s in tr.ring.symbols),
        poly_to_data(tr.difference),
        int(power),
        tuple(poly_to_data(g.poly) for g in tr.generators),
        tuple(poly_to_data(c) for c in cofactors),
    )


def _has_opaque(tr: Translation) -> bool:
    return any(a.kind in ("opaque", "log") for a in tr.aux)


def certificate_matches(claim: Claim, results: Sequence[ObligationResult]) -> bool:
    """True when every result is a proof whose certificate belongs to this claim and re-checks.

    Used to accept a proof read back from the cache: the claim is translated again (cheap, no Groebner
    basis) and the kernel checks the certificate against the facts of that translation.
    """
    if claim.problem is not None or len(results) != len(claim.obligations) or not results:
        return False
    for obligation, result in zip(claim.obligations, results):
        cert = result.certificate
        if result.verdict != "proved" or cert is None:
            return False
        try:
            tr = translate(obligation)
        except (TranslationError, RecursionError):
            return False
        if not certificate_fits(cert, claim_facts(tr)):
            return False
    return True
