"""The algebra behind one claim's verdict (``idealcheck explain FILE:LINE``): computation only.

For every obligation of the claims that start on the given line: the condition ideal with its auxiliary
variables, the monomial order, the reduced Groebner basis, the minimal generators of the leading-term
ideal, the dimension of the condition variety (and the standard monomials when it is zero-dimensional),
the normal forms of both sides and of their difference, and the verdict's evidence (certificate or
witness).  ``report/explain_text.py`` turns an ``Explanation`` into text.
"""
from __future__ import annotations

import os
import time
from fractions import Fraction
from pathlib import Path
from typing import Any, Sequence

from sympy import QQ, Symbol
from sympy.polys.orderings import grevlex
from sympy.polys.rings import PolyElement, PolyRing

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
from verifier.model.certificate import Certificate
from verifier.model.claim import Claim, ExtractionContext, Obligation
from verifier.model.explanation import (
    CertificateText,
    ClaimExplanation,
    Explanation,
    GeneratorText,
    ObligationExplanation,
)
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
    relative = os.path.relpath(os.path.abspath(full), os.path.abspath(cwd)).replace(os.sep, "/")
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


def certificate_polys(certificate: Certificate) -> tuple[PolyRing, PolyElement, list[PolyElement], list[PolyElement]]:
    """A certificate's data as polynomials (target, generators, cofactors) in a ring on its symbols."""
    ring = PolyRing([Symbol(s) for s in certificate.symbols] or [Symbol("$one")], QQ, grevlex)

    def poly(data) -> PolyElement:
        terms = {}
        for coeff, exps in data:
            value = Fraction(coeff)
            terms[tuple(exps)] = QQ(value.numerator, value.denominator)
        return ring(terms) if terms else ring.zero

    return ring, poly(certificate.target), [poly(g) for g in certificate.generators], [poly(c) for c in certificate.cofactors]


def _certificate_text(certificate: Certificate) -> CertificateText:
    ring, _, generators, cofactors = certificate_polys(certificate)
    terms = tuple((format_poly(c), format_poly(g)) for c, g in zip(cofactors, generators) if c)
    sign = getattr(certificate, "sign", None)  # the conjugate (sign) argument, when the proof used one
    if sign is None:
        return CertificateText(certificate.power, terms)
    multiplier = certificate_polys(_with_target(certificate, sign.multiplier))[1]
    nonnegative = certificate_polys(_with_target(certificate, sign.nonnegative))[1]
    note = (f"with LEFT - RIGHT = A*{sign.root} + B and the multiplier A*{sign.root} - B, -A*B - P is in the "
            f"ideal too, where P = {format_poly(nonnegative)} has positive coefficients and odd powers only of "
            f"{', '.join(sign.nonnegative_symbols) or 'no variable'} (so it is not negative)")
    return CertificateText(certificate.power, terms, format_poly(multiplier), note)


def _with_target(certificate: Certificate, target) -> Certificate:
    from dataclasses import replace

    return replace(certificate, target=target)


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
    timeout: float = 10.0,
    accuracy: AccuracySettings | None = None,
    decider: Any = None,
) -> ClaimExplanation:
    """Decide ``claim`` and explain each of its obligations within ``timeout`` seconds of algebra."""
    if decider is None:
        from verifier.algebra.decide import Limits, decide

        verdict = decide(claim, Limits(timeout=timeout))
    else:
        verdict = decider(claim)
    if claim.problem is not None:
        return ClaimExplanation(claim, verdict, ())
    results: Sequence[ObligationResult | None] = verdict.obligations or (None,) * len(claim.obligations)
    deadline = time.monotonic() + timeout
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
    timeout: float = 10.0,
    accuracy: AccuracySettings | None = None,
) -> Explanation:
    """Explain every claim starting at ``target`` (``FILE:LINE`` or ``FILE:LINE:COLUMN``)."""
    path, line, column = parse_place(target)
    claims = claims_on_line(path, line, context, cwd=cwd, column=column)
    explained = tuple(explain_claim(c, timeout=timeout, accuracy=accuracy) for c in claims)
    return Explanation(claims[0].location.path, line, explained)
