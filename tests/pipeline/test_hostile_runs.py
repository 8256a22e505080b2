"""Hostile runs: every piece of work on a claim is bounded, and one failure never ends the run.

Facts used (common practice): a for loop of 256**3 steps takes far longer than a one-second limit to
execute symbolically; ``RLIMIT_NOFILE`` bounds the open files of a process and its children; killing a
process with SIGKILL cannot be caught.
"""
from __future__ import annotations

import os
import pickle
import sys
from fractions import Fraction
from pathlib import Path

import pytest

from verifier.model.claim import Claim, Location, Obligation
from verifier.model.expr import Neg, Var
from verifier.pipeline.config import Config
from verifier.pipeline.jobs import _sendable
from verifier.pipeline.runner import CheckRequest, RunOptions, check_run, run, run_limited

FORK_KILLER = "runner_deciders:kills_the_fork_server"
SLOW_LOOP = ("# idealcheck: returns x\ndef f(x):\n    for i in range(256):\n        for j in range(256):\n"
             "            for k in range(256):\n                x = x\n    return x\n")


def _claim(text: str, line: int) -> Claim:
    return Claim(id=f"a.c:{line}:1", location=Location("a.c", line, 1), kind="expression", text=text,
                 obligations=(Obligation(Var("x"), Var("x")),), dependencies=("a.c",))


def _check(root: Path, **options) -> object:
    return check_run(CheckRequest(config=Config(path=None, root=root), cwd=str(root), options=RunOptions(**options)))


def test_reading_claims_runs_under_the_time_limit(tmp_path: Path) -> None:
    (tmp_path / "k.py").write_text(SLOW_LOOP, encoding="utf-8")
    (tmp_path / "ok.c").write_text("// idealcheck: (a+b)**2 == a**2 + 2*a*b + b**2\n", encoding="utf-8")
    result = _check(tmp_path, timeout=1.0, jobs=2)
    by_path = {v.claim.location.path: v for v in result.verdicts}
    assert by_path["ok.c"].verdict == "proved"
    assert by_path["k.py"].verdict == "inconclusive" and "time limit" in by_path["k.py"].reason


def test_a_claim_nested_too_deeply_is_an_error_at_its_line_and_the_run_goes_on(tmp_path: Path) -> None:
    (tmp_path / "a.c").write_text("// idealcheck: x == " + "-" * 450 + "x\n// idealcheck: y == y\n",
                                  encoding="utf-8")
    result = _check(tmp_path, timeout=5.0, jobs=1)
    verdicts = sorted(result.verdicts, key=lambda v: v.claim.location.line)
    assert [v.verdict for v in verdicts] == ["error", "proved"]
    assert verdicts[0].claim.location.line == 1 and "nested too deeply" in verdicts[0].reason


def test_a_claim_nested_deeper_than_the_recursion_limit_passes_between_processes() -> None:
    deep: object = Var("x")
    for _ in range(5000):  # deeper than the recursion limit: pickled node by node, not recursively
        deep = Neg(deep)
    claim = Claim("a.c:3:1", Location("a.c", 3, 1), "expression", "x == -...-x",
                  obligations=(Obligation(Var("x"), deep),), dependencies=("a.c",))
    assert pickle.loads(pickle.dumps(claim)) == claim
    (sent,) = _sendable([claim])
    assert sent.problem is None and sent.obligations == claim.obligations


def test_a_constant_past_the_default_integer_text_limit_is_decided(tmp_path: Path) -> None:
    base = "9" * 4000
    (tmp_path / "a.c").write_text(f"// idealcheck: x + ({base})**2 - ({base})**2 == x\n"
                                  f"// idealcheck: x == ({base})**2\n", encoding="utf-8")
    verdicts = sorted(_check(tmp_path, timeout=20.0, jobs=1).verdicts, key=lambda v: v.claim.location.line)
    assert [v.verdict for v in verdicts] == ["proved", "refuted"]
    assert Fraction(int(base) ** 2) > 0  # the constant itself is an ordinary Python integer


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="reads /proc to find the fork server")
def test_a_dying_fork_server_neither_crashes_the_pool_nor_kills_live_claims() -> None:
    # one worker: the claim after the kill must start a new worker through a dead fork server
    claims = [_claim("kill the fork server", 1), _claim("sleep forever", 2), _claim("fine", 3), _claim("fine", 4)]
    verdicts = run(claims, RunOptions(timeout=0.5, kill_grace=0.3, jobs=1, decider=FORK_KILLER))
    assert [v.verdict for v in verdicts] == ["proved", "inconclusive", "proved", "proved"]
    assert verdicts[1].limit == "time"
    # two workers: the one napping while the fork server dies is alive and answers
    claims = [_claim("nap 1", 1), _claim("kill the fork server", 2), _claim("fine", 3)]
    verdicts = run(claims, RunOptions(timeout=5, jobs=2, decider=FORK_KILLER))
    assert [v.verdict for v in verdicts] == ["proved", "proved", "proved"]


def test_limits_are_structured_fields() -> None:
    claims = [_claim("sleep forever", 1), _claim("allocate 8 GB", 2), _claim("raise", 3)]
    verdicts = run(claims, RunOptions(timeout=0.5, kill_grace=0.3, memory_mb=512, jobs=3,
                                      decider="runner_deciders:misbehave"))
    assert [v.limit for v in verdicts] == ["time", "memory", None]
    assert verdicts[2].verdict == "error"


def test_a_memory_limit_too_large_for_the_system_call_is_ignored_not_fatal() -> None:
    code = ("import resource, sys; sys.path.insert(0, %r); from verifier.pipeline.workers import limit_memory; "
            "limit_memory(9223372036854775807); print('alive')") % (str(Path(__file__).resolve().parents[2]),)
    import subprocess

    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=False)
    assert out.returncode == 0 and out.stdout.strip() == "alive", out.stderr


def test_long_work_of_a_higher_layer_runs_under_the_claim_limits() -> None:
    options = RunOptions(timeout=0.5, kill_grace=0.3, jobs=2)
    results = run_limited("runner_deciders:slow_sampling", [(0.0,), (60.0,)], options,
                          lambda args, why: f"stopped: {why}")
    assert results[0] == "slept 0.0"
    assert results[1].startswith("stopped: time limit")


@pytest.mark.skipif(not hasattr(os, "fork"), reason="needs resource limits of POSIX")
def test_few_file_descriptors_give_a_report_not_a_traceback(tmp_path: Path) -> None:
    import subprocess

    for index in range(10):
        (tmp_path / f"f{index}.c").write_text(f"// idealcheck: a*{index} == {index}*a\n", encoding="utf-8")
    script = ("import resource, sys\n"
              "resource.setrlimit(resource.RLIMIT_NOFILE, (16, 16))\n"
              "from verifier.cli.main import main\n"
              "sys.exit(main(['check', '--no-cache', '--jobs', '8', '.']))\n")
    out = subprocess.run([sys.executable, "-c", script], cwd=tmp_path, capture_output=True, text=True,
                         check=False, env={**os.environ, "PYTHONPATH": str(Path(__file__).resolve().parents[2])})
    assert "Traceback" not in out.stderr, out.stderr
    assert out.returncode in (0, 1)
    assert "10 claims:" in out.stdout
