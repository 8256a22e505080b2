"""Plain data of a module-against-module audit (``features/audit.py`` computes it)."""
from __future__ import annotations

from dataclasses import dataclass

from verifier.model.claim import Claim
from verifier.model.verdict import Verdict


@dataclass(frozen=True)
class AuditedFunction:
    """One function present in both versions, with its claim."""

    module: str  # the module's path relative to the audited folder ("" for two single files)
    name: str
    claim: Claim


@dataclass(frozen=True)
class OneSided:
    module: str
    name: str
    path: str  # the file it is in
    line: int


@dataclass(frozen=True)
class AuditPlan:
    optimized: str
    reference: str
    functions: tuple[AuditedFunction, ...]
    only_optimized: tuple[OneSided, ...]
    only_reference: tuple[OneSided, ...]
    unreadable: tuple[Claim, ...]  # pseudo-claims for modules that could not be parsed (verdict error)


@dataclass(frozen=True)
class AuditResult:
    plan: AuditPlan
    verdicts: tuple[Verdict, ...]  # one per plan.functions, in order, then one per plan.unreadable

    def function_verdicts(self) -> list[tuple[AuditedFunction, Verdict]]:
        return list(zip(self.plan.functions, self.verdicts))
