"""Plain data for a whole check: the verdicts and what was left out unread."""
from __future__ import annotations

from dataclasses import dataclass

from verifier.model.skipped import Skipped
from verifier.model.verdict import Verdict


@dataclass(frozen=True)
class RunResult:
    verdicts: tuple[Verdict, ...]  # one per claim, in the order the claims were found
    skipped: tuple[Skipped, ...] = ()  # files and folders not read, with the reason (see model.skipped)
