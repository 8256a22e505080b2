"""The fuzzer's fast profile: generated true and false claims of every family through the command line.

True claims are true by construction (sympy expands, factors, reduces or substitutes on the generator side)
and false ones differ by one perturbation; the truth of each is confirmed by sampling it with an mpmath
oracle at 50 digits (``tests/fuzz_oracle.py``), which evaluates the generator's sympy expressions and never
the tool's own evaluator.  A false claim proved, a true claim refuted, a witness the oracle does not confirm,
or an error on a well-formed claim fails the test; inconclusive verdicts are allowed (the long profile,
``tests/benchmarks/fuzz_verdicts.py``, counts them).  Derandomized: the same claims on every run.
"""
from __future__ import annotations

import tempfile
from collections.abc import Sequence
from pathlib import Path

import sympy
from hypothesis import HealthCheck, Phase, given, settings

from fuzz_expressions import FAMILIES as EXPRESSION_FAMILIES
from fuzz_kernels import FAMILIES as KERNEL_FAMILIES
from fuzz_oracle import Case, Condition, free_sampler
from fuzz_run import Batch, batch, check_batch, failures, judge

FAST = settings(max_examples=4, derandomize=True, deadline=None, database=None,
                phases=[Phase.explicit, Phase.generate], suppress_health_check=list(HealthCheck))


def _runner(cli):  # type: ignore[no-untyped-def]
    def run(args: Sequence[str], folder: Path) -> tuple[int, str, str]:
        return tuple(cli(*args, cwd=folder))  # type: ignore[return-value]

    return run


@FAST
@given(cases=batch(1))
def test_fuzzed_claims_are_never_proved_false_refuted_true_or_errors(cli, cases: Batch) -> None:
    with tempfile.TemporaryDirectory() as folder:
        outcomes = check_batch(_runner(cli), Path(folder), cases)
    assert not failures(outcomes), "\n".join(failures(outcomes))
    # every family was generated and judged (kernel families carry their language: kernel_horner_rust)
    families = {o.family for o in outcomes}
    assert set(EXPRESSION_FAMILIES) <= families
    assert all(any(f.startswith(k) for f in families) for k in KERNEL_FAMILIES)


X, Y = sympy.symbols("x y")
SQUARE = Case("check", "(x + y)**2 == x**2 + y**2", (X + Y) ** 2, X**2 + Y**2, (), free_sampler(["x", "y"]), False)
CIRCLE_CLAIM = Case("check", "x == 1 given x**2 == 1", X, sympy.Integer(1), (Condition(X**2, "==", sympy.Integer(1)),),
                    free_sampler(["x"]), False)


def test_the_judge_flags_each_broken_rule() -> None:
    # the rules must be able to fail: each kind of wrong verdict on the classic mistake (a + b)^2 = a^2 + b^2
    assert judge(SQUARE, False, {"verdict": "proved"}).startswith("UNSOUND")
    assert judge(SQUARE, True, {"verdict": "refuted", "witness": {"values": {"x": "1", "y": "1"}}}) \
        .startswith("FALSE ALARM")
    assert judge(SQUARE, False, {"verdict": "error", "reason": "x"}).startswith("error")
    # x = 0 or y = 0 makes the sides agree: not a witness
    assert judge(SQUARE, False, {"verdict": "refuted", "witness": {"values": {"x": "0", "y": "1/3"}}}) \
        .startswith("BAD WITNESS")
    assert judge(SQUARE, False, {"verdict": "refuted", "witness": {"values": {"x": "1/2", "y": "1"}}}) is None
    assert judge(SQUARE, False, {"verdict": "inconclusive"}) is None
    # a witness must satisfy the conditions: x = 2 is not a root of x**2 == 1; x = -1 is, and refutes
    assert "condition" in judge(CIRCLE_CLAIM, None, {"verdict": "refuted", "witness": {"values": {"x": "2"}}})
    assert judge(CIRCLE_CLAIM, None, {"verdict": "refuted", "witness": {"values": {"x": "-1"}}}) is None
    # a decimal witness off the condition by more than rounding is refused
    assert judge(CIRCLE_CLAIM, None, {"verdict": "refuted", "witness": {"values": {"x": "-1.0000001"}}}) is not None
