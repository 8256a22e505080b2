"""Verdict objects -> reports (text, json, github, sarif, junit).  All formatting lives here."""
from __future__ import annotations

from collections.abc import Sequence
from typing import Literal

from verifier.model.skipped import Skipped
from verifier.model.verdict import Verdict
from verifier.report.common import (
    OnInconclusive,
    fails_run,
    ordered,
    summary_counts,
    summary_line,
)
from verifier.report.github import render_github
from verifier.report.json_report import render_json
from verifier.report.junit import render_junit
from verifier.report.sarif import render_sarif
from verifier.report.text import Detail, render_text

Format = Literal["text", "json", "github", "sarif", "junit"]
FORMATS: tuple[str, ...] = ("text", "json", "github", "sarif", "junit")


def render(
    verdicts: Sequence[Verdict],
    fmt: Format = "text",
    *,
    version: str,
    on_inconclusive: OnInconclusive = "fail",
    skipped: Sequence[Skipped] = (),
    detail: Detail = "normal",
    color: bool = False,
    cwd: str | None = None,
    repository_root: str | None = None,
    width: int | None = None,
) -> str:
    """The report of ``verdicts`` in format ``fmt``; ``on_inconclusive`` decides error vs warning levels;
    ``skipped`` lists what was not read (every format shows it).

    ``detail`` (quiet, normal, verbose), ``color`` and ``width`` (a terminal's columns, for cutting long
    one-line claim texts) concern the text report only; ``cwd`` (what the
    claims' paths are relative to) and ``repository_root`` make SARIF URIs repository-relative.
    """
    if fmt == "text":
        return render_text(verdicts, version=version, detail=detail, color=color, on_inconclusive=on_inconclusive,
                           width=width, skipped=skipped)
    if fmt == "json":
        return render_json(verdicts, version=version, skipped=skipped)
    if fmt == "github":
        return render_github(verdicts, version=version, on_inconclusive=on_inconclusive, skipped=skipped)
    if fmt == "sarif":
        return render_sarif(verdicts, version=version, on_inconclusive=on_inconclusive, cwd=cwd,
                            repository_root=repository_root, skipped=skipped)
    if fmt == "junit":
        return render_junit(verdicts, version=version, on_inconclusive=on_inconclusive, skipped=skipped)
    raise ValueError(f"unknown report format {fmt!r}; choose one of {', '.join(FORMATS)}")


__all__ = ["FORMATS", "Detail", "Format", "fails_run", "ordered", "render", "summary_counts", "summary_line"]
