"""The algebra behind one claim's verdict (``idealcheck explain FILE:LINE``): computation only.

For every obligation of the claims that start on the given line: the condition ideal with its auxiliary
variables, the monomial order, the reduced Groebner basis, the minimal generators of the leading-term
ideal, the dimension of the condition variety (and the standard monomials when it is zero-dimensional),
the normal forms of both sides and of their difference, and the verdict's evidence (certificate or
witness).  ``report/explain_text.py`` turns an ``Explanation`` into text.
"""
from __future__ import annotations

import os
from dataclasses import replace
from fractions import Fraction
from pathlib import Path
from typing import Any, Sequence

from sympy import QQ, Symbol
from sympy.polys.orderings import grevlex
from sympy.polys.rings import PolyElement, PolyRing

from verifier.model.limits import decision_clock
from verifier.algebra.decide import Limits, decide
from verifier.algebra.describe import describe_difference
from verifier.algebra.groebner import GroebnerTimeout, groebner_basis, reduce
from verifier.algebra.quotient import monomial_text, quotient_structure
from verifier.algebra.translate import (
    Translation,
    TranslationError,
    format_poly,
    translate,
)
from verifier.features.accuracy import estimate_accuracy
from verifier.model.accuracy import AccuracySettings
from verifier.model.certificate import (
    Certificate,
    ConjugateCertificate,
    IdealCertificate,
    LemmaChainCertificate,
    PolyData,
    RealSquareCertificate,
    ShiftContradictionCertificate,
    SignContradictionCertificate,
)
from verifier.model.claim import Claim, ExtractionContext, Obligation
from verifier.model.explanation import (
    CertificateText,
    ClaimExplanation,
    Explanation,
    GeneratorText,
    ObligationExplanation,
)
from verifier.model.limits import DEFAULT_TIMEOUT_SECONDS
from verifier.model.paths import relative_path
from verifier.model.verdict import ObligationResult


class ExplainError(Exception):
    """The request cannot be answered (no such file, no claim on that line ...); printed, exit status 2."""


# ---------------------------------------------------------------- finding the claim


def parse_target(text: str) -> tuple[str, int]:
    """``FILE:LINE`` -> (file, line); ExplainError when it is not of that form."""
    path, sep, line = text.rpartition(":")
    if not sep or not path or not line.strip().isdigit() or int(line) < 1:
        raise ExplainError(f"expected FILE:LINE with a line number >= 1, got {text!r}")
    return path, int(line)


def parse_place(text: str) -> tuple[str, int, int | None]:
    """``FILE:LINE`` or ``FILE:LINE:COLUMN`` (as the report prints a place) -> (file, line, column or None)."""
    parts = text.rsplit(":", 2)
    if len(parts) == 3 and parts[0] and parts[1].strip().isdigit() and parts[2].strip().isdigit():
        path, line, column = parts[0], int(parts[1]), int(parts[2])
        if line < 1 or column < 1:
            raise ExplainError(f"expected FILE:LINE or FILE:LINE:COLUMN with numbers >= 1, got {text!r}")
        return path, line, column
    try:
        path, line = parse_target(text)
    except ExplainError:
        raise ExplainError(f"expected FILE:LINE or FILE:LINE:COLUMN with numbers >= 1, got {text!r}") from None
    return path, line, None


def claims_on_line(path: str, line: int, context: ExtractionContext, *, cwd: str = ".",
                   column: int | None = None) -> list[Claim]:
    """The claims of ``path`` that start on ``line`` (a chain gives several); ExplainError when none.

    With ``column`` only the claims at that place, when the line holds claims at several columns."""
    from verifier.claims import extract

    full = os.path.join(cwd, path)
    if not os.path.isfile(full):
        raise ExplainError(f"no such file: {path}")
    try:
        text = Path(full).read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError) as exc:
        raise ExplainError(f"cannot read {path}: {exc}") from exc
    relative = relative_path(path, cwd)
    claims = extract(relative, text, context)
    found = [c for c in claims if c.location.line == line]
    if not found:
        lines = sorted({c.location.line for c in claims})
        where = ("claims in this file start on lines " + ", ".join(map(str, lines))) if lines else "the file has no claims"
        raise ExplainError(f"no idealcheck claim starts on line {line} of {relative} ({where})")
    if column is not None and len({c.location.column for c in found}) > 1:
        at_column = [c for c in found if c.location.column == column]
        if not at_column:
            columns = ", ".join(str(col) for col in sorted({c.location.column for c in found}))
            raise ExplainError(f"no idealcheck claim at line {line}, column {column} of {relative} "
                               f"(claims on that line are at columns {columns})")
        found = at_column
    return found


# ---------------------------------------------------------------- the algebra of one obligation


def _ring_names(ring: PolyRing) -> tuple[str, ...]:
    return tuple(str(s) for s in ring.symbols)


def _certificate_ring(certificate: Certificate) -> PolyRing:
    """A ring on the certificate's symbols (a placeholder symbol when it has none, to print constants)."""
    return PolyRing([Symbol(s) for s in certificate.symbols] or [Symbol("$one")], QQ, grevlex)


def _poly(data: PolyData, ring: PolyRing) -> PolyElement:
    terms = {}
    for coeff, exps in data:
        value = Fraction(coeff)
        terms[tuple(exps)] = QQ(value.numerator, value.denominator)
    return ring(terms) if terms else ring.zero


def _text(data: PolyData, ring: PolyRing) -> str:
    return format_poly(_poly(data, ring))


def _terms(cofactors: Sequence[PolyData], generators: Sequence[PolyData], ring: PolyRing) -> tuple[tuple[str, str], ...]:
    """(cofactor, generator) texts of the non-zero cofactors."""
    return tuple((_text(c, ring), _text(g, ring)) for c, g in zip(cofactors, generators) if c)


def _sign_pattern(symbols: Sequence[str]) -> str:
    return (f"has positive coefficients and odd powers only of {', '.join(symbols) or 'no variable'} "
            "(so it is not negative)")


def _strictly(strict: bool) -> str:
    return ">" if strict else ">="


def _certificate_text(certificate: Certificate) -> CertificateText:
    """What the proof of each kind shows, with its polynomials printed."""
    ring = _certificate_ring(certificate)
    if isinstance(certificate, LemmaChainCertificate):
        # the steps' targets first, then what the last step shows (over the conditions and the lemmas)
        lemmas = ", ".join(f"{_text(step.target, ring)} == 0" for step in certificate.lemmas)
        last = _certificate_text(certificate.final)
        note = f"lemmas proved first, then used as conditions: {lemmas}" + (f"; {last.sign_note}" if last.sign_note
                                                                            else "")
        return replace(last, sign_note=note)  # the last step's kind says which identity its terms expand
    if isinstance(certificate, IdealCertificate):
        return CertificateText(certificate.power, _terms(certificate.cofactors, certificate.generators, ring))
    if isinstance(certificate, ConjugateCertificate):
        root = certificate.root
        note = (f"with LEFT - RIGHT = A*{root} + B and the multiplier A*{root} - B, -A*B - P is in the "
                f"ideal too, where P = {_text(certificate.nonnegative, ring)} "
                f"{_sign_pattern(certificate.nonnegative_symbols)}")
        return CertificateText(1, _terms(certificate.cofactors, certificate.generators, ring),
                               _text(certificate.multiplier, ring), note, kind="conjugate")
    if isinstance(certificate, RealSquareCertificate):
        note = (f"P = {_text(certificate.remainder, ring)} {_sign_pattern(certificate.nonnegative_symbols)}, "
                "so (LEFT - RIGHT)**2 = -P cannot be positive")
        return CertificateText(2, _terms(certificate.cofactors, certificate.generators, ring), None, note,
                               kind="real_square")
    if isinstance(certificate, SignContradictionCertificate):
        first = f"F = {_text(certificate.first, ring)} {_strictly(certificate.first_strict)} 0"
        second = (f", S = {_text(certificate.second, ring)} {_strictly(certificate.second_strict)} 0"
                  if certificate.second else "")
        note = (f"{first}{second}, and F - ({certificate.ratio})*S - ({certificate.constant}) vanishes where the "
                "conditions hold: these signs cannot all be right")
        return CertificateText(1, _terms(certificate.cofactors, certificate.generators, ring), None, note,
                               kind="sign_contradiction")
    assert isinstance(certificate, ShiftContradictionCertificate)  # the last kind
    shifted = certificate
    note = (f"{_text(shifted.bound, ring)} {_strictly(shifted.bound_strict)} 0 and "
            f"{_text(shifted.other, ring)} {_strictly(shifted.other_strict)} 0 cannot both hold: with "
            f"{shifted.variable} = t + {shifted.shift}, minus the second {_sign_pattern(('t',) + shifted.nonnegative_symbols)}, "
            "which the two signs rule out")
    return CertificateText(1, (), None, note, kind="shift_contradiction")


def explain_obligation(
    obligation: Obligation,
    result: ObligationResult | None,
    *,
    deadline: float | None = None,
    accuracy: AccuracySettings | None = None,
) -> ObligationExplanation:
    """The algebra of one obligation; a translation failure or timeout becomes ``problem``."""
    label = obligation.label
    try:
        tr = translate(obligation)
    except TranslationError as exc:
        return ObligationExplanation(label, result, problem=f"cannot be represented as polynomials: {exc}")
    except RecursionError:
        return ObligationExplanation(label, result, problem="the expression is too deeply nested to translate")
    try:
        return _explain_translation(tr, obligation, result, deadline, accuracy)
    except GroebnerTimeout:
        return ObligationExplanation(label, result, _ring_names(tr.ring), aux=tr.aux,
                                     generators=_generator_texts(tr), assumed=tr.assumed,
                                     problem="the time limit was reached while computing the Groebner basis")


def _generator_texts(tr: Translation) -> tuple[GeneratorText, ...]:
    return tuple(GeneratorText(format_poly(g.poly), g.kind, g.meaning) for g in tr.generators)


def _explain_translation(
    tr: Translation,
    obligation: Obligation,
    result: ObligationResult | None,
    deadline: float | None,
    accuracy: AccuracySettings | None,
) -> ObligationExplanation:
    ring = tr.ring
    names = _ring_names(ring)
    generators = [g.poly for g in tr.generators]
    basis = groebner_basis(generators, track_cofactors=False, deadline=deadline).basis if generators else ()
    structure = quotient_structure(basis, ring)
    if basis:
        _, left = reduce(tr.left, basis, deadline=deadline)
        _, right = reduce(tr.right, basis, deadline=deadline)
    else:
        left, right = tr.left, tr.right
    difference = left - right
    standard = None
    if structure.standard_monomials is not None:
        standard = tuple(monomial_text(m, names) for m in structure.standard_monomials)
    description = describe_difference(left, right, tr.printed) if difference else None
    certificate = None
    if result is not None and result.certificate is not None:
        certificate = _certificate_text(result.certificate)
    estimate = None
    if accuracy is not None and result is not None and result.verdict == "proved":
        estimate = estimate_accuracy(obligation, accuracy)
    return ObligationExplanation(
        label=obligation.label,
        result=result,
        ring_variables=names,
        order="grevlex (graded reverse lexicographic), " + " > ".join(names),
        aux=tr.aux,
        generators=_generator_texts(tr),
        basis=tuple(format_poly(b) for b in basis),
        leading_generators=tuple(monomial_text(m, names) for m in structure.minimal_leading_monomials),
        structure=structure,
        standard_monomials=standard,
        independent_variables=tuple(names[i] for i in structure.independent_variables),
        left_normal_form=format_poly(left),
        right_normal_form=format_poly(right),
        difference_normal_form=format_poly(difference),
        difference_description=description,
        certificate=certificate,
        accuracy=estimate,
        assumed=tr.assumed,
    )


# ---------------------------------------------------------------- the whole request


def explain_claim(
    claim: Claim,
    *,
    timeout: float = DEFAULT_TIMEOUT_SECONDS,
    accuracy: AccuracySettings | None = None,
    decider: Any = None,
) -> ClaimExplanation:
    """Decide ``claim`` and explain each of its obligations within ``timeout`` seconds of algebra."""
    if decider is None:
        verdict = decide(claim, Limits(timeout=timeout))
    else:
        verdict = decider(claim)
    if claim.problem is not None:
        return ClaimExplanation(claim, verdict, ())
    results: Sequence[ObligationResult | None] = verdict.obligations or (None,) * len(claim.obligations)
    deadline = decision_clock() + timeout
    explained = tuple(
        explain_obligation(ob, res, deadline=deadline, accuracy=accuracy)
        for ob, res in zip(claim.obligations, results)
    )
    return ClaimExplanation(claim, verdict, explained)


def explain(
    target: str,
    context: ExtractionContext,
    *,
    cwd: str = ".",
    timeout: float = DEFAULT_TIMEOUT_SECONDS,
    accuracy: AccuracySettings | None = None,
) -> Explanation:
    """Explain every claim starting at ``target`` (``FILE:LINE`` or ``FILE:LINE:COLUMN``)."""
    path, line, column = parse_place(target)
    claims = claims_on_line(path, line, context, cwd=cwd, column=column)
    explained = tuple(explain_claim(c, timeout=timeout, accuracy=accuracy) for c in claims)
    return Explanation(claims[0].location.path, line, explained)
