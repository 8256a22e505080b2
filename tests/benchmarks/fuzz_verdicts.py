"""The fuzzer's long profile: thousands of generated claims through the installed ``idealcheck`` command.

Usage: python tests/benchmarks/fuzz_verdicts.py [--batches N] [--per-family K] [--seed S] [--timeout S]

Each batch holds K true and K false claims of every family (11 expression families, 5 kernel families in
Python, C, Rust and Julia), written into one folder and checked by one ``idealcheck check --format json``
run; the verdicts are judged by the rules of tests/fuzz_run.py against the 50-digit mpmath oracle.  Prints
the counts per family and verdict class, and every violation; exits 1 when there is one (an unsound proof,
a false alarm, a bad witness, an error on a well-formed claim).  Not part of the test run.
"""
from __future__ import annotations

import argparse
import shutil
import subprocess
import sys
import tempfile
import time
from collections import Counter
from collections.abc import Sequence
from pathlib import Path

TESTS = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(TESTS))

from hypothesis import HealthCheck, Phase, given, seed, settings  # noqa: E402

from fuzz_run import Batch, Outcome, batch, check_batch, failures, table, tally  # noqa: E402

IDEALCHECK = Path(sys.executable).parent / "idealcheck"


def run(args: Sequence[str], folder: Path) -> tuple[int, str, str]:
    done = subprocess.run([str(IDEALCHECK), *args], cwd=folder, capture_output=True, text=True)
    return done.returncode, done.stdout, done.stderr


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--batches", type=int, default=40)
    parser.add_argument("--per-family", type=int, default=3)
    parser.add_argument("--seed", type=int, default=13)
    parser.add_argument("--timeout", type=float, default=10.0, help="seconds per claim (the tool's --timeout)")
    parser.add_argument("--show-inconclusive", type=int, default=0, metavar="N",
                        help="list N inconclusive true claims of each family with the tool's reason")
    parser.add_argument("--keep", type=Path, help="copy each batch folder with a violation under this folder")
    options = parser.parse_args()
    outcomes: list[Outcome] = []
    batches: list[int] = []
    started = time.perf_counter()

    @settings(max_examples=options.batches, deadline=None, database=None, phases=[Phase.generate],
              suppress_health_check=list(HealthCheck))
    @given(cases=batch(options.per_family))
    def one_batch(cases: Batch) -> None:
        with tempfile.TemporaryDirectory() as folder:
            found = check_batch(run, Path(folder), cases, ["--timeout", str(options.timeout)])
            if options.keep and failures(found):
                shutil.copytree(folder, options.keep / f"batch{len(batches) + 1}")
        outcomes.extend(found)
        batches.append(len(found))
        print(f"batch {len(batches)}: {len(found)} claims, "
              f"{len(failures(found))} violations, {time.perf_counter() - started:.0f} s", file=sys.stderr)

    seed(options.seed)(one_batch)()
    counts = tally(outcomes)
    print(table(counts))
    verdicts = Counter(o.verdict for o in outcomes)
    true_claims = [o for o in outcomes if o.truth == "true"]
    undecided = sum(o.verdict == "inconclusive" for o in true_claims)
    distinct = len({(o.family, o.where.split(": ", 1)[-1]) for o in outcomes})
    print(f"\n{len(outcomes)} claims ({distinct} distinct) in {len(batches)} batches, "
          f"{time.perf_counter() - started:.0f} s; verdicts {dict(verdicts)}; "
          f"true claims inconclusive {undecided}/{len(true_claims)}"
          f" ({100 * undecided / max(1, len(true_claims)):.1f}%)")
    shown: Counter[str] = Counter()
    for o in true_claims:
        if o.verdict == "inconclusive" and shown[o.family] < options.show_inconclusive:
            shown[o.family] += 1
            print(f"inconclusive {o.family}: {o.where}\n    {o.reason[:300]}")
    bad = failures(outcomes)
    print(f"violations: {len(bad)}")
    for line in bad:
        print(line)
    return 1 if bad else 0


if __name__ == "__main__":
    sys.exit(main())
