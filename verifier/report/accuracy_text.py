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
    if estimate.more_accurate is None:
        lines.append(f"{indent}  both sides are equally accurate on these samples")
    else:
        better = side_names[0] if estimate.more_accurate == "left" else side_names[1]
        lines.append(f"{indent}  the {better} side is more accurate on these samples")
    return lines


def render_accuracy_section(
    items: Sequence[tuple[str, Sequence[AccuracyEstimate]]], side_names: tuple[str, str] = ("left", "right")
) -> str:
    """A report section: for each (heading, estimates) the estimate lines, then the disclaimer."""
    lines: list[str] = ["", "floating-point accuracy (IEEE double, in the order the source writes each side):"]
    if not items:
        lines.append("    no proved claim to measure")
    for heading, estimates in items:
        lines.append(f"  {heading}")
        for estimate in estimates:
            lines.extend(accuracy_lines(estimate, side_names=side_names))
    lines.append(ACCURACY_DISCLAIMER)
    return shown_lines(lines)
