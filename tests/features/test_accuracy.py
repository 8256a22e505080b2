"""Sampled floating-point accuracy of the two sides of an identity (algebra/accuracy.py)."""
from __future__ import annotations

import json
import math
from pathlib import Path

import pytest
from exprs import cond, expr

from verifier.model.accuracy import AccuracySettings
from verifier.features.accuracy import estimate_accuracy, float_value, reference_value, ulp_error
from verifier.model.claim import Obligation
from verifier.claims.language import parse_expression

NAIVE_ROOT = "(-b + sqrt(b*b - 4*a*c))/(2*a)"
CONJUGATE_ROOT = "2*c/(-b - sqrt(b*b - 4*a*c))"
NEAR_CANCELLATION = AccuracySettings(samples=200, seed=1, ranges=(("a", 0.5, 2.0), ("b", 1e3, 1e6), ("c", 0.5, 2.0)))


def test_naive_quadratic_root_is_less_accurate_near_cancellation():
    # Goldberg, "What Every Computer Scientist Should Know About Floating-Point Arithmetic", ACM Computing
    # Surveys 23(1), 1991, section 1.4 (equations (4) and (5), numbers from memory): when b*b >> 4*a*c the
    # naive formula subtracts nearly equal numbers; the conjugate form avoids the cancellation.
    estimate = estimate_accuracy(Obligation(expr(NAIVE_ROOT), expr(CONJUGATE_ROOT)), NEAR_CANCELLATION)
    assert estimate.samples == 200
    assert estimate.more_accurate == "right"
    assert estimate.left.median_ulps > 1000 * max(estimate.right.median_ulps, 1.0)
    # both sides of the conjugate form round a few operations only: a handful of ulps at worst
    assert estimate.right.worst_ulps < 16
    # written the other way round, the ranking follows the expression, not the position
    flipped = estimate_accuracy(Obligation(expr(CONJUGATE_ROOT), expr(NAIVE_ROOT)), NEAR_CANCELLATION)
    assert flipped.more_accurate == "left"


def test_reproducible_with_a_seed_and_different_with_another():
    ob = Obligation(expr(NAIVE_ROOT), expr(CONJUGATE_ROOT))
    first = estimate_accuracy(ob, NEAR_CANCELLATION)
    again = estimate_accuracy(ob, NEAR_CANCELLATION)
    other = estimate_accuracy(ob, AccuracySettings(samples=200, seed=2, ranges=NEAR_CANCELLATION.ranges))
    assert first == again
    assert first.left.worst_point != other.left.worst_point


def test_float_evaluation_follows_the_written_order():
    # 1e16 + 1 rounds to 1e16 (the spacing of doubles there is 2, ties to even), so (x + y) - x is 0 while
    # y + (x - x) is 1 (IEEE 754 round to nearest even, common practice); the exact value is 1
    values = {"x": 1e16, "y": 1.0}
    assert float_value(expr("(x + y) - x"), values) == 0.0
    assert float_value(expr("y + (x - x)"), values) == 1.0
    assert reference_value(expr("(x + y) - x"), values) == 1
    assert ulp_error(0.0, reference_value(expr("(x + y) - x"), values)) == 1 / math.ulp(1.0)


def test_exact_double_result_has_no_error():
    assert ulp_error(0.5, reference_value(expr("x/2"), {"x": 1.0})) == 0.0
    # 0.1 is the exact decimal 1/10 in a claim; the double 0.1 is off by less than half an ulp (IEEE 754)
    error = ulp_error(float_value(expr("0.1"), {}), reference_value(expr("0.1"), {}))
    assert 0 < error <= 0.5


def test_equation_conditions_are_met_by_solving():
    # Heron's area with s defined by an equation: the sampler solves for s, so the two forms agree closely
    left = "sqrt(s*(s - a)*(s - b)*(s - c))"
    right = "sqrt((a + b + c)*(-a + b + c)*(a - b + c)*(a + b - c))/4"
    ob = Obligation(expr(left), expr(right), (cond("s == (a + b + c)/2"),))
    settings = AccuracySettings(samples=50, seed=3, default_range=(0.1, 2.0))
    estimate = estimate_accuracy(ob, settings)
    assert estimate.equations_solved == ("s",)
    assert estimate.samples == 50
    assert estimate.rejected > 0  # points that are not triangles make a radicand negative
    for _, value in estimate.left.worst_point:
        assert isinstance(value, float)
    point = dict(estimate.left.worst_point)
    assert abs(point["s"] - (point["a"] + point["b"] + point["c"]) / 2) <= 4 * math.ulp(point["s"])


def test_points_on_a_unit_sphere_inside_wide_ranges():
    # a rotation-matrix entry of a unit quaternion, two ways (common practice): with the default ranges
    # [-10, 10] most draws have no real solution, so the sampler narrows the ranges and solves for z
    ob = Obligation(expr("1 - 2*(y*y + z*z)"), expr("w*w + x*x - y*y - z*z"), (cond("w*w + x*x + y*y + z*z == 1"),))
    estimate = estimate_accuracy(ob, AccuracySettings(samples=40, seed=5))
    assert estimate.samples == 40 and estimate.equations_solved == ("z",)
    point = dict(estimate.left.worst_point)
    assert abs(sum(v * v for v in point.values()) - 1) < 1e-12


def test_sign_conditions_reject_points():
    ob = Obligation(expr("sqrt(x)**2"), expr("x"), (cond("x > 1"),))
    estimate = estimate_accuracy(ob, AccuracySettings(samples=30, seed=0, default_range=(-4.0, 4.0)))
    assert estimate.samples == 30 and estimate.rejected > 0
    assert all(value > 1 for name, value in estimate.left.worst_point)


def test_impossible_conditions_measure_nothing():
    ob = Obligation(expr("x"), expr("x"), (cond("x > 5"),))
    estimate = estimate_accuracy(ob, AccuracySettings(samples=5, seed=0, default_range=(0.0, 1.0)))
    assert estimate.samples == 0 and estimate.problem


# ---------------------------------------------------------------- through the command line


ROOT = Path(__file__).resolve().parents[2]
QUADRATIC_RANGES = ("--accuracy-range", "a=0.5:2", "--accuracy-range", "b=1e3:1e6", "--accuracy-range", "c=0.5:2")


CHECK = ("check", "fixtures/explain/accuracy", "--no-cache")


def test_check_accuracy_ranks_the_naive_root_as_less_accurate(cli):
    # Goldberg (ACM Computing Surveys 23(1), 1991, section 1.4): the function body is the naive root (the
    # claim's left side), the claim is the conjugate form (its right side)
    result = cli(*CHECK, "--accuracy", "--accuracy-samples", "200", *QUADRATIC_RANGES, cwd=ROOT, fresh_process=True)
    assert result.code == 0, result.out + result.err
    out = result.out
    assert "proved" in out
    assert "the claim is more accurate on these samples" in out
    assert "sampled estimate" in out and "not a bound" in out and "numerical review" in out
    left_line = next(line for line in out.splitlines() if line.strip().startswith("the function"))
    assert "ulp" in left_line and "b = " in left_line


def test_check_accuracy_keeps_machine_output_clean(cli):
    code, out, err = cli(*CHECK, "--in-process", "--accuracy", "--accuracy-samples", "20", "--format", "json",
                         *QUADRATIC_RANGES, cwd=ROOT)
    assert code == 0, err
    data = json.loads(out)
    assert data["summary"]["proved"] == 1
    assert "more accurate" in err


def test_accuracy_options_are_validated(cli):
    for bad in (("--accuracy-range", "5:1"), ("--accuracy-range", "x=a:b"), ("--accuracy-samples", "0")):
        run = cli(*CHECK, "--in-process", "--accuracy", *bad, cwd=ROOT)
        assert run.code == 2, bad
        assert bad[0] in run.err


def test_accuracy_settings_from_the_config(tmp_path, monkeypatch, cli):
    (tmp_path / "pyproject.toml").write_text(
        "[tool.idealcheck.accuracy]\nsamples = 30\nseed = 4\n"
        "ranges = { a = [0.5, 2.0], b = [1e3, 1e6], c = [0.5, 2.0] }\n")
    (tmp_path / "roots.py").write_text((ROOT / "fixtures/explain/accuracy/quadratic.py").read_text())
    monkeypatch.chdir(tmp_path)
    run = cli("check", "roots.py", "--no-cache", "--in-process", "--accuracy")
    assert run.code == 0
    out = run.out
    assert "30 sampled points" in out
    assert "the claim is more accurate on these samples" in out
    # the command line overrides the config
    run = cli("check", "roots.py", "--no-cache", "--in-process", "--accuracy", "--accuracy-samples", "7")
    assert run.code == 0
    assert "7 sampled points" in run.out


@pytest.mark.parametrize("table", ["samples = 0", "range = [2, 1]", "ranges = { b = [1] }", "colour = 1", "seed = 1.5"])
def test_bad_accuracy_config_is_a_usage_error(tmp_path, monkeypatch, table, cli):
    (tmp_path / "pyproject.toml").write_text(f"[tool.idealcheck.accuracy]\n{table}\n")
    monkeypatch.chdir(tmp_path)
    run = cli("check", ".", "--no-cache", "--in-process")
    assert run.code == 2
    assert "tool.idealcheck.accuracy" in run.err


def test_check_accuracy_measures_a_claim_with_pi(tmp_path, cli):
    # sin(x + pi/2) == cos(x) (the shift formula, common practice): proved with pi as an unknown constant,
    # and measured in double with pi as math.pi (the double evaluator once refused pi: "not measured")
    (tmp_path / "angles.txt").write_text("# idealcheck: sin(x + pi/2) == cos(x)\n")
    code, out, _ = cli("check", "angles.txt", "--no-cache", "--in-process", "--accuracy", "--accuracy-samples", "25",
                       cwd=tmp_path)
    assert code == 0
    assert "proved: sin(x + pi/2) == cos(x)" in out
    assert "not measured" not in out
    assert "25 sampled points" in out
    left_line = next(line for line in out.splitlines() if line.strip().startswith("left"))
    assert "ulp" in left_line and "x = " in left_line


def test_estimate_with_pi_uses_its_double_value():
    ob = Obligation(parse_expression("cos(pi - x)"), parse_expression("-cos(x)"))
    estimate = estimate_accuracy(ob, AccuracySettings(samples=30, seed=3))
    assert estimate.problem is None
    assert estimate.samples == 30
    # both sides are a cosine (and a subtraction): within a few ulps except near a zero of cos, where the
    # rounding of pi - x is magnified; the median stays small
    assert estimate.right.median_ulps < 2
