"""The accuracy summary compares median and worst error separately (hand-made estimates, no sampling)."""
from __future__ import annotations

from verifier.model.accuracy import AccuracyEstimate, SideAccuracy
from verifier.report.accuracy_text import accuracy_lines


def _side(median: float, worst: float) -> SideAccuracy:
    return SideAccuracy(median, worst, (("x", 1.0),), 1.0, "1.0000000000000000")


def _estimate(left: SideAccuracy, right: SideAccuracy) -> AccuracyEstimate:
    return AccuracyEstimate("", 100, 0, left, right, "left")


def test_a_side_better_by_median_but_worse_in_the_worst_case_is_not_called_more_accurate() -> None:
    lines = accuracy_lines(_estimate(_side(0.4, 900.0), _side(0.6, 2.0)), side_names=("the function", "the claim"))
    verdict = lines[-1].strip()
    assert "more accurate" not in verdict
    assert verdict == ("lower median error: the function (0.4 ulp vs 0.6 ulp); lower worst error: the claim "
                       "(900 ulp vs 2 ulp); neither side is better on both")


def test_a_side_better_on_both_counts_is_named_once() -> None:
    lines = accuracy_lines(_estimate(_side(3.0, 50.0), _side(0.5, 1.0)))
    assert lines[-1].strip() == "the right side is more accurate on these samples (lower median and lower worst error)"


def test_equal_sides_are_said_equal() -> None:
    lines = accuracy_lines(_estimate(_side(0.5, 1.0), _side(0.5, 1.0)))
    assert lines[-1].strip() == "both sides have the same median and worst error on these samples"
