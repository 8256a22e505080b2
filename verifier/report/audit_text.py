"""Text of an ``idealcheck audit`` run: a table of functions and verdicts, details, one-sided functions."""
from __future__ import annotations

from verifier.model.audit import AuditResult, OneSided
from verifier.model.verdict import Verdict
from verifier.report.common import EXACTNESS_REMINDER, summary_line, witness_values_text
from verifier.report.escape import shown_lines
from verifier.report.text import verdict_lines

_DETAIL_WIDTH = 72


def _short(text: str, width: int = _DETAIL_WIDTH) -> str:
    text = " ".join(text.split())
    return text if len(text) <= width else text[: width - 3] + "..."


def function_label(module: str, name: str) -> str:
    return f"{module}::{name}" if module else name


def short_detail(verdict: Verdict) -> str:
    """The table's last column: the method of a proof, the witness of a refutation, else the reason."""
    if verdict.verdict == "proved":
        return verdict.method or ""
    if verdict.verdict == "refuted" and verdict.witness is not None:
        return _short("witness " + witness_values_text(verdict.witness))
    return _short(verdict.reason)


def _table(rows: list[tuple[str, str, str]]) -> list[str]:
    header = ("function", "verdict", "method / witness")
    widths = [max(len(r[i]) for r in rows + [header]) for i in range(2)]
    lines = [f"{header[0]:<{widths[0]}}  {header[1]:<{widths[1]}}  {header[2]}",
             f"{'-' * widths[0]}  {'-' * widths[1]}  {'-' * len(header[2])}"]
    for name, verdict, detail in rows:
        lines.append(f"{name:<{widths[0]}}  {verdict:<{widths[1]}}  {detail}".rstrip())
    return lines


def _one_sided(items: tuple[OneSided, ...], where: str) -> list[str]:
    if not items:
        return []
    lines = [f"only in {where} ({len(items)}):"]
    for item in items:
        lines.append(f"    {function_label(item.module, item.name)}  ({item.path}:{item.line})")
    return lines


def render_audit_text(result: AuditResult) -> str:
    plan = result.plan
    lines = [f"audit of {plan.optimized} against {plan.reference}"]
    rows: list[tuple[str, str, str]] = [
        (function_label(f.module, f.name), v.verdict, short_detail(v)) for f, v in result.function_verdicts()
    ]
    extra = result.verdicts[len(plan.functions):]
    rows += [(v.claim.location.path, v.verdict, _short(v.reason)) for v in extra]
    if rows:
        lines.extend(_table(rows))
    else:
        lines.append("no function is present in both versions")
    details = [v for v in result.verdicts if v.verdict != "proved"]
    if details:
        lines.append("")
        lines.append("details (left side: the optimized version, right side: the reference):")
        for verdict in details:
            lines.extend(verdict_lines(verdict))
    one_sided = _one_sided(plan.only_optimized, plan.optimized) + _one_sided(plan.only_reference, plan.reference)
    if one_sided:
        lines.append("")
        lines.extend(one_sided)
    lines.append("")
    lines.append(summary_line(result.verdicts))
    lines.append(EXACTNESS_REMINDER)
    return shown_lines(lines)
