"""Scan and extraction rows of the performance table, each a ratio measured in this script.

Usage: python tests/benchmarks/bench_scaling.py [--files N] [--repeat N] [--locals N] [--checkout DIR]

- claim-free tree: CPU of `idealcheck check .` on N generated files without claims, over the CPU of
  `grep -rl idealcheck: .` plus `python -c pass` on the same tree (interleaved rounds, medians).
- straight-line function: extraction time of a function of 4L assignments over one of L; a linear
  executor gives about 4, one that rebuilds its locals per assignment about 16.
- accumulation chain (`acc = acc + c*p`, 1,500 and 20,000 times) and a 500- and 5,000-term `returns`
  claim: the verdicts and wall times (the goal is that all are decided; no recursion limit).
The command line runs in a fresh interpreter with byte-code caching on, as users run it.
"""
from __future__ import annotations

import argparse
import json
import os
import resource
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

CHECKOUT = Path(__file__).resolve().parents[2]
ENV = {key: value for key, value in os.environ.items() if key != "PYTHONDONTWRITEBYTECODE"}


def child_cpu(command: list[str], cwd: Path) -> float:
    """User + system CPU seconds of ``command`` and the children it waits for."""
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    subprocess.run(command, cwd=cwd, env=ENV, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, check=False)
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    return (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)


def claim_free_tree(root: Path, files: int) -> None:
    kinds = (".py", ".jl", ".c", ".f90", ".md")
    for index in range(files):
        folder = root / f"pkg{index % 50}"
        folder.mkdir(parents=True, exist_ok=True)
        body = f"# plain module {index}\nx = {index}\ndef f(a):\n    return a * 2 + 1\n" * 20
        (folder / f"m{index}{kinds[index % len(kinds)]}").write_text(body, encoding="utf-8")


def bench_claim_free(files: int, repeat: int) -> None:
    with tempfile.TemporaryDirectory() as scratch:
        tree = Path(scratch)
        claim_free_tree(tree, files)
        scan = [sys.executable, "-m", "verifier", "check", "--no-cache", "-q", "."]
        child_cpu(scan, tree)  # byte-code and file cache warm
        ours, baseline = [], []
        for _round in range(repeat):
            ours.append(child_cpu(scan, tree))
            baseline.append(child_cpu(["grep", "-rl", "idealcheck:", "."], tree)
                            + child_cpu([sys.executable, "-c", "pass"], tree))
    mine, theirs = statistics.median(ours), statistics.median(baseline)
    print(f"claim-free tree of {files} files: scan {mine:.3f} s CPU, grep + python -c pass {theirs:.3f} s CPU;"
          f" ratio {mine / theirs:.2f}x (goal <= 2x)")


def straight_line(count: int) -> str:
    lines = [f"# idealcheck: returns {count - 1}*x + y", "def kernel(x, y):"]
    lines += [f"    t{i} = {i}*x + y" for i in range(count)]
    return "\n".join(lines + [f"    return t{count - 1}"]) + "\n"


def bench_locals(count: int) -> None:
    sys.path.insert(0, str(CHECKOUT))
    from verifier.claims import extract

    def seconds(n: int) -> float:
        text = straight_line(n)
        start = time.process_time()
        claims = extract("kernel.py", text)
        assert claims and claims[0].problem is None, claims
        return time.process_time() - start

    seconds(50)  # imports out of the way
    small, large = seconds(count), seconds(4 * count)
    print(f"straight-line function, {count} -> {4 * count} assignments: extraction {small:.2f} s -> {large:.2f} s;"
          f" ratio {large / small:.1f} (linear: 4, quadratic: 16)")


def verdicts_of(tree: Path, name: str, text: str) -> list[str]:
    (tree / name).write_text(text, encoding="utf-8")
    start = time.monotonic()
    done = subprocess.run([sys.executable, "-m", "verifier", "check", "--no-cache", "--timeout", "120",
                           "--format", "json", name], cwd=tree, env=ENV, capture_output=True, text=True)
    claims = json.loads(done.stdout)["claims"]
    seconds = time.monotonic() - start
    return [f"{c['verdict']} ({(c.get('reason') or '')[:60]}) in {seconds:.1f} s wall" for c in claims]


def accumulation_chain(steps: int, kinds: int = 100) -> str:
    """``acc = acc + c*p_k`` ``steps`` times over ``kinds`` parameters, claimed regrouped by k."""
    claim = f"acc0 + {steps // kinds}*c*(" + " + ".join(f"p{k}" for k in range(kinds)) + ")"
    lines = [f"# idealcheck: returns {claim}",
             "def accumulate(acc0, c, " + ", ".join(f"p{k}" for k in range(kinds)) + "):", "    acc = acc0"]
    lines += [f"    acc = acc + c*p{i % kinds}" for i in range(steps)]
    return "\n".join(lines + ["    return acc"]) + "\n"


def term_claim(terms: int, rows: int = 50) -> str:
    """A ``returns`` claim listing ``terms`` products a_i*b_j, over a chain that adds them one by one."""
    pairs = [(i % rows, i // rows) for i in range(terms)]
    params = [f"a{i}" for i in range(rows)] + [f"b{j}" for j in range(terms // rows)]
    lines = ["# idealcheck: returns " + " + ".join(f"a{i}*b{j}" for i, j in pairs),
             f"def dot({', '.join(params)}):", "    s = 0"]
    lines += [f"    s = s + b{j}*a{i}" for i, j in pairs]
    return "\n".join(lines + ["    return s"]) + "\n"


def bench_deep() -> None:
    """Row: 20,000-statement accumulation chain and a 5,000-term claim decided (goal), next to the sizes
    of the issue's first measurement (1,500 and 500) in the same run."""
    with tempfile.TemporaryDirectory() as scratch:
        tree = Path(scratch)
        for steps in (1500, 20000):
            print(f"{steps}-statement accumulation chain:", verdicts_of(tree, "chain.py", accumulation_chain(steps)))
        for terms in (500, 5000):
            print(f"{terms}-term `returns` claim:", verdicts_of(tree, "terms.py", term_claim(terms)))


def main() -> None:
    global CHECKOUT
    parser = argparse.ArgumentParser()
    parser.add_argument("--files", type=int, default=5000)
    parser.add_argument("--repeat", type=int, default=3)
    parser.add_argument("--locals", type=int, default=1000)
    parser.add_argument("--checkout", type=Path, default=None, help="the checkout to measure (default: this one)")
    args = parser.parse_args()
    CHECKOUT = (args.checkout or CHECKOUT).resolve()
    ENV["PYTHONPATH"] = str(CHECKOUT)
    bench_claim_free(args.files, args.repeat)
    bench_locals(args.locals)
    bench_deep()


if __name__ == "__main__":
    main()
