"""The per-claim time limit counts the worker's CPU time, with a wall-clock safety net: a verdict does not
change with how busy the machine is (a job waiting without computing is not charged), and a claim that
needs more CPU than its limit is still stopped and reported with the time limit."""
from __future__ import annotations

import json

from verifier.model.claim import Claim, Location
from verifier.model.limits import WALL_SAFETY_FACTOR
from verifier.pipeline.runner import RunOptions, run

MISBEHAVE = "runner_deciders:misbehave"


def _claim(text: str, line: int = 1) -> Claim:
    return Claim(id=f"a.py:{line}:1", location=Location("a.py", line, 1), kind="expression", text=text,
                 dependencies=("a.py",))


def test_waiting_is_not_charged_but_computing_is() -> None:
    # 0.9 s of waiting is more than the 0.5 s a wall-clock limit allowed, far less than the safety net
    assert 0.9 < 0.4 * WALL_SAFETY_FACTOR
    claims = [_claim("nap 0.9", 1), _claim("spin 30", 2)]
    verdicts = run(claims, RunOptions(timeout=0.4, kill_grace=0.1, jobs=2, decider=MISBEHAVE))
    assert verdicts[0].verdict == "proved" and verdicts[0].limit is None
    assert verdicts[1].verdict == "inconclusive" and verdicts[1].limit == "time"
    assert verdicts[1].reason.startswith("time limit of 0.4 s exceeded")


def test_a_claim_that_needs_more_cpu_than_its_limit_is_inconclusive(cli, tmp_path) -> None:
    # expanding a 24th power of a six-term sum takes seconds of CPU (C(29, 5) = 118,755 terms)
    (tmp_path / "heavy.py").write_text(
        "# idealcheck: (a + b + c + d + e + f)**24 == ((a + b + c + d + e + f)**2)**12\n")
    result = cli("check", "--no-cache", "--format", "json", "--timeout", "0.3", "heavy.py", cwd=tmp_path)
    [claim] = json.loads(result.out)["claims"]
    assert claim["verdict"] == "inconclusive"
    assert claim["reason"].startswith("time limit of 0.3 s")
