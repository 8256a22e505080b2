"""Plain data for decisions: verdicts of claims and of their obligations, and witnesses."""
from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

from verifier.model.certificate import Certificate
from verifier.model.claim import Claim

VerdictName = Literal["proved", "refuted", "inconclusive", "error"]
Method = Literal["expansion", "ideal", "saturation", "radical", "sign"]
# Which resource limit cut a decision short (None: the decision ran to its end).  Results cut short are
# never cached: a busy machine must not make an "inconclusive" stick.
Limit = Literal["time", "memory"]
LIMITS: tuple[str, ...] = ("time", "memory")

@dataclass(frozen=True)
class Witness:
    """A real point where every condition holds and the two sides differ."""

    values: tuple[tuple[str, str], ...]  # variable -> exact value ("3/4") or decimal with enough digits
    left: str
    right: str
    exact: bool  # True when checked in rational arithmetic, False when by mpmath with a margin


@dataclass(frozen=True)
class ObligationResult:
    """The decision of one obligation of a claim."""

    label: str
    verdict: VerdictName
    method: Method | None
    reason: str
    counter_normal_form: str | None = None
    witness: Witness | None = None
    assumed: tuple[str, ...] = ()
    certificate: Certificate | None = None
    vacuous: bool = False  # proved because the conditions cannot all hold (1 is in the ideal)
    limit: Limit | None = None  # the time or memory limit that stopped this obligation, if one did


@dataclass(frozen=True)
class Verdict:
    """The decision of a whole claim: the worst of its obligations (error > refuted > inconclusive > proved)."""

    claim: Claim
    verdict: VerdictName
    method: Method | None
    reason: str
    counter_normal_form: str | None
    witness: Witness | None
    assumed: tuple[str, ...]
    seconds: float
    obligations: tuple[ObligationResult, ...] = ()
    cached: bool = False
    limit: Limit | None = None  # the time or memory limit that stopped the decision, if one did
