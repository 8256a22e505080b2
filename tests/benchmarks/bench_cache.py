"""Cold versus warm run of `idealcheck check` on a fixtures tree; prints the times and their ratio.

Usage: python tests/benchmarks/bench_cache.py [TREE] [--repeat N]   (TREE defaults to fixtures/demo)

The tree is copied to a temporary folder; each round runs the command line as a user would (a fresh
interpreter): once with an empty cache (cold) and once more with the cache it filled (warm).  The warm
run re-checks every cached certificate and witness, so the ratio is the honest cost of a run where
nothing changed.
"""
from __future__ import annotations

import argparse
import json
import shutil
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

CHECKOUT = Path(__file__).resolve().parents[2]


def timed_check(tree: Path, cache: Path, *extra: str) -> tuple[float, dict]:
    start = time.perf_counter()
    result = subprocess.run(
        [sys.executable, "-m", "verifier", "check", "--format", "json", "--cache-dir", str(cache), *extra, "."],
        cwd=tree, capture_output=True, text=True,
    )
    elapsed = time.perf_counter() - start
    if result.returncode not in (0, 1):
        raise SystemExit(f"idealcheck failed ({result.returncode}):\n{result.stderr}")
    return elapsed, json.loads(result.stdout)


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("tree", nargs="?", default=str(CHECKOUT / "fixtures" / "demo"))
    parser.add_argument("--repeat", type=int, default=3)
    args = parser.parse_args()
    colds, warms = [], []
    for _round in range(args.repeat):
        with tempfile.TemporaryDirectory() as scratch:
            tree = Path(scratch) / "tree"
            shutil.copytree(args.tree, tree)
            cache = Path(scratch) / "cache"
            cold, cold_report = timed_check(tree, cache)
            warm, warm_report = timed_check(tree, cache)
            verdicts = [c["verdict"] for c in cold_report["claims"]]
            assert verdicts == [c["verdict"] for c in warm_report["claims"]], "warm run changed a verdict"
            colds.append(cold)
            warms.append(warm)
    cold, warm = statistics.median(colds), statistics.median(warms)
    summary = cold_report["summary"]
    print(f"tree: {args.tree} ({len(cold_report['claims'])} claims: {summary})")
    print(f"cold run (empty cache): median {cold:.2f} s over {args.repeat}")
    print(f"warm run (nothing changed): median {warm:.2f} s over {args.repeat}")
    print(f"warm/cold ratio: {warm / cold:.3f}")


if __name__ == "__main__":
    main()
