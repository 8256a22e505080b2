"""Plain data of an explanation of a verdict (``features/explain.py`` computes it, ``report`` prints it)."""
from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

from verifier.model.accuracy import AccuracyEstimate
from verifier.model.claim import Claim
from verifier.model.verdict import ObligationResult, Verdict

AuxKind = Literal["inverse", "radical", "sin", "cos", "exp", "exp_inverse", "log", "opaque"]
Monom = tuple[int, ...]


@dataclass(frozen=True)
class AuxVariable:
    name: str
    meaning: str  # how it prints in the original variables, e.g. "1/(x - y)", "sqrt(x)", "sin(t/2)"
    kind: AuxKind


@dataclass(frozen=True)
class QuotientStructure:
    """What the leading-term ideal of a Groebner basis says about the ideal."""

    variable_count: int
    minimal_leading_monomials: tuple[Monom, ...]  # minimal generators of LT(I), largest first
    dimension: int  # Krull dimension of the ideal; -1 for the unit ideal (no common zero at all)
    independent_variables: tuple[int, ...]  # indices of a largest set independent modulo LT(I)
    zero_dimensional: bool
    standard_monomial_count: int | None  # dim of K[x]/I as a vector space when zero-dimensional
    count_complete: bool  # False when counting stopped at STANDARD_MONOMIAL_LIMIT
    standard_monomials: tuple[Monom, ...] | None  # listed when there are at most ``list_limit``
    dimension_exact: bool = True  # False: the search stopped and ``dimension`` is only a lower bound


@dataclass(frozen=True)
class GeneratorText:
    polynomial: str  # in the ring's variables (auxiliary ones by their $-names)
    kind: str
    meaning: str  # where it comes from, in the original variables


@dataclass(frozen=True)
class CertificateText:
    power: int
    terms: tuple[tuple[str, str], ...]  # (cofactor, generator) pairs with a non-zero cofactor
    multiplier: str | None = None  # a sign-argument proof: (LEFT - RIGHT) * multiplier is in the ideal
    sign_note: str | None = None  # what else the sign argument shows
    # the certificate's kind (``model/certificate.py``): says which identity ``terms`` expand
    kind: str = "ideal"


@dataclass(frozen=True)
class ObligationExplanation:
    label: str
    result: ObligationResult | None  # the decision of this obligation (None if the claim has a problem)
    ring_variables: tuple[str, ...] = ()  # in the order of the monomial order, largest first
    order: str = "grevlex"
    aux: tuple[AuxVariable, ...] = ()
    generators: tuple[GeneratorText, ...] = ()
    basis: tuple[str, ...] = ()  # the reduced Groebner basis, monic, largest leading monomial first
    leading_generators: tuple[str, ...] = ()  # minimal generators of the leading-term ideal
    structure: QuotientStructure | None = None
    standard_monomials: tuple[str, ...] | None = None
    independent_variables: tuple[str, ...] = ()
    left_normal_form: str = ""
    right_normal_form: str = ""
    difference_normal_form: str = ""
    difference_description: str | None = None
    certificate: CertificateText | None = None
    accuracy: AccuracyEstimate | None = None
    problem: str | None = None  # why the algebra could not be shown (translation failure, time limit)
    assumed: tuple[str, ...] = ()


@dataclass(frozen=True)
class ClaimExplanation:
    claim: Claim
    verdict: Verdict
    obligations: tuple[ObligationExplanation, ...]


@dataclass(frozen=True)
class Explanation:
    path: str
    line: int
    claims: tuple[ClaimExplanation, ...]
