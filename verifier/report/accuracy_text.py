"""Text of sampled floating-point accuracy estimates (``--accuracy``)."""
from __future__ import annotations

from collections.abc import Sequence

from verifier.model.accuracy import AccuracyEstimate, SideAccuracy
from verifier.report.escape import shown_lines

ACCURACY_DISCLAIMER = (
    "note: accuracy figures are a sampled estimate at random points, not a bound; rounding can be worse "
    "elsewhere. Safety-critical code needs the project's own numerical review."
)


def _ulps(value: float) -> str:
    if value == float("inf"):
        return "inf (overflow or undefined in double)"
    if value >= 1e6:
        return f"{value:.3g} ulp"
    return f"{value:.3g} ulp" if value < 100 else f"{value:.0f} ulp"


def _point(side: SideAccuracy) -> str:
    return ", ".join(f"{name} = {value!r}" for name, value in side.worst_point)


def accuracy_lines(
    estimate: AccuracyEstimate, indent: str = "    ", side_names: tuple[str, str] = ("left", "right")
) -> list[str]:
    """Lines for one obligation's estimate (the obligation label leads when there is one)."""
    head = f"{indent}accuracy" + (f" ({estimate.label})" if estimate.label else "") + ":"
    if estimate.problem is not None or estimate.left is None or estimate.right is None:
        return [f"{head} not measured: {estimate.problem or 'no samples'}"]
    lines = [f"{head} {estimate.samples} sampled points ({estimate.rejected} drawn points rejected by the conditions)"]
    if estimate.equations_solved:
        lines.append(f"{indent}  solved the equation conditions for: {', '.join(estimate.equations_solved)}")
    width = max(len(n) for n in side_names)
    for name, side in ((side_names[0], estimate.left), (side_names[1], estimate.right)):
        lines.append(f"{indent}  {name:<{width}}: median {_ulps(side.median_ulps)}, worst {_ulps(side.worst_ulps)} at {_point(side)}")
        lines.append(f"{indent}  {'':<{width}}  (double result {side.worst_computed!r}, exact {side.worst_exact})")
    lines.append(f"{indent}  {comparison(estimate.left, estimate.right, side_names)}")
    return lines


def _side(name: str) -> str:
    """``the left side``; names that are already a phrase (``the function``, ``this function``) stay."""
    return name if name.startswith(("the ", "this ")) else f"the {name} side"


def _lower(left: float, right: float, names: tuple[str, str]) -> str | None:
    if left == right:
        return None
    return _side(names[0] if left < right else names[1])


def comparison(left: SideAccuracy, right: SideAccuracy, names: tuple[str, str]) -> str:
    """Which side has the lower median and which the lower worst error, said separately when they differ."""
    median = _lower(left.median_ulps, right.median_ulps, names)
    worst = _lower(left.worst_ulps, right.worst_ulps, names)
    if median == worst:
        if median is None:
            return "both sides have the same median and worst error on these samples"
        return f"{median} is more accurate on these samples (lower median and lower worst error)"
    median_text = (f"lower median error: {median} ({_ulps(left.median_ulps)} vs {_ulps(right.median_ulps)})"
                   if median else f"equal median error ({_ulps(left.median_ulps)})")
    worst_text = (f"lower worst error: {worst} ({_ulps(left.worst_ulps)} vs {_ulps(right.worst_ulps)})"
                  if worst else f"equal worst error ({_ulps(left.worst_ulps)})")
    return f"{median_text}; {worst_text}; neither side is better on both"


def render_accuracy_section(
    items: Sequence[tuple[str, Sequence[AccuracyEstimate]]],
    side_names: tuple[str, str] = ("left", "right"),
    names_per_item: Sequence[tuple[str, str]] | None = None,
) -> str:
    """A report section: for each (heading, estimates) the estimate lines, then the disclaimer.

    ``names_per_item`` names the sides of each item (the function and the claim), else ``side_names``."""
    lines: list[str] = ["", "floating-point accuracy (IEEE double, in the order the source writes each side):"]
    if not items:
        lines.append("    no proved claim to measure")
    for number, (heading, estimates) in enumerate(items):
        names = names_per_item[number] if names_per_item is not None else side_names
        lines.append(f"  {heading}")
        for estimate in estimates:
            lines.extend(accuracy_lines(estimate, side_names=names))
    lines.append(ACCURACY_DISCLAIMER)
    return shown_lines(lines)
