"""GitHub Actions workflow commands: one annotation per claim that is not proved.

Proved claims are silent (an annotation per proof would bury the findings); the run ends with one
``::notice`` carrying the summary.  Refuted and error claims are ``::error``; inconclusive ones are
``::error`` when they fail the run and ``::warning`` when the config says to warn.
"""
from __future__ import annotations

from collections.abc import Sequence

from verifier.model.skipped import Skipped
from verifier.model.verdict import Verdict
from verifier.report.escape import shown
from verifier.report.common import (
    OnInconclusive,
    fails_run,
    ordered,
    problem_message,
    summary_line,
)


def escape_data(text: str) -> str:
    # The escapes of the workflow-command format (GitHub Actions toolkit, common practice), after the
    # control characters other than newlines are made visible (the log is shown on a terminal).
    return shown(text.replace("%", "%25").replace("\r", "%0D").replace("\n", "%0A"))


def escape_property(text: str) -> str:
    return escape_data(text).replace(":", "%3A").replace(",", "%2C")


def _cell(cell: int | None) -> str:
    return "" if cell is None else f" (cell {cell})"  # notebooks: the line counts within that cell


def annotation(verdict: Verdict, on_inconclusive: OnInconclusive) -> str | None:
    if verdict.verdict == "proved":
        return None
    command = "error" if fails_run(verdict, on_inconclusive) else "warning"
    loc = verdict.claim.location
    properties = ",".join(
        [
            f"file={escape_property(loc.path)}",
            f"line={loc.line}",
            f"col={loc.column}",
            f"title={escape_property(f'idealcheck {verdict.verdict}{_cell(loc.cell)}: {verdict.claim.text}')}",
        ]
    )
    return f"::{command} {properties}::{escape_data(problem_message(verdict))}"


def render_github(
    verdicts: Sequence[Verdict], *, version: str, on_inconclusive: OnInconclusive = "fail",
    skipped: Sequence[Skipped] = (),
) -> str:
    lines = [line for v in ordered(verdicts) if (line := annotation(v, on_inconclusive)) is not None]
    for item in skipped:
        lines.append(f"::warning file={escape_property(item.path)},title={escape_property('idealcheck: not read')}"
                     f"::{escape_data(item.path + ': ' + item.reason)}")
    lines.append(f"::notice title={escape_property('idealcheck ' + version)}::{escape_data(summary_line(verdicts))}")
    return "\n".join(lines) + "\n"
