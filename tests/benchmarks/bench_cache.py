"""Cold versus warm run of `idealcheck check` on a fixtures tree; prints the times and their ratio.

Usage: python tests/benchmarks/bench_cache.py [TREE ...] [--repeat N]
(default trees: fixtures/demo and the whole fixtures folder)

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


def chebyshev(n: int) -> list[int]:
    """Coefficients of the Chebyshev polynomial T_n (T_0 = 1, T_1 = x, T_k = 2x T_(k-1) - T_(k-2)), common practice."""
    previous, current = [1], [0, 1]
    if n == 0:
        return previous
    for _ in range(n - 1):
        doubled = [0] + [2 * c for c in current]
        padded = previous + [0] * (len(doubled) - len(previous))
        previous, current = current, [a - b for a, b in zip(doubled, padded)]
    return current


def generate_tree(root: Path, files: int) -> Path:
    """A large synthetic repository of textbook identities (multiple-angle, addition, Lagrange, rotation)."""
    root.mkdir(parents=True, exist_ok=True)
    for index in range(files):
        t, a, b = f"t{index}", f"a{index}", f"b{index}"
        n = 3 + index % 10
        cheb = " + ".join(f"({c})*cos({t})**{k}" for k, c in enumerate(chebyshev(n)) if c)
        m = 3 + index % 4
        lagrange_left = (f"({' + '.join(f'p{i}**2' for i in range(m))})*({' + '.join(f'q{i}**2' for i in range(m))})"
                         f" - ({' + '.join(f'p{i}*q{i}' for i in range(m))})**2")
        lagrange_right = " + ".join(f"(p{i}*q{j} - p{j}*q{i})**2" for i in range(m) for j in range(i + 1, m))
        lines = [
            f"// idealcheck: cos({n}*{t}) == {cheb}",
            f"// idealcheck: tan({a} + {b}) == (tan({a}) + tan({b}))/(1 - tan({a})*tan({b}))",
            f"// idealcheck: sin({a} + {b})*sin({a} - {b}) == sin({a})**2 - sin({b})**2",
            f"// idealcheck: {lagrange_left} == {lagrange_right}",
            "// idealcheck: ((1 - 2*(y**2 + z**2))*u + 2*(x*y - w*z)*v + 2*(x*z + w*y)*s)**2"
            " + (2*(x*y + w*z)*u + (1 - 2*(x**2 + z**2))*v + 2*(y*z - w*x)*s)**2"
            f" + (2*(x*z - w*y)*u + 2*(y*z + w*x)*v + (1 - 2*(x**2 + y**2))*s)**2 == u**2 + v**2 + s**2 + {index}*0"
            " given w**2 + x**2 + y**2 + z**2 == 1",
            f"// idealcheck: cos({n}*{t}) == {cheb} + sin({t})**{n % 3 + 1}",  # false: one wrong claim per file
        ]
        (root / f"kernel{index:03d}.c").write_text("\n".join(lines) + "\n", encoding="utf-8")
    return root


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("trees", nargs="*",
                        default=[str(CHECKOUT / "fixtures" / "demo"), str(CHECKOUT / "fixtures")])
    parser.add_argument("--repeat", type=int, default=3)
    parser.add_argument("--synthetic", type=int, default=60, metavar="FILES",
                        help="also a generated tree of FILES files with 6 textbook claims each (0: none)")
    args = parser.parse_args()
    for source in args.trees:
        bench_tree(Path(source), args.repeat)
    if args.synthetic:
        with tempfile.TemporaryDirectory() as scratch:
            bench_tree(generate_tree(Path(scratch) / "synthetic", args.synthetic), args.repeat)


def bench_tree(source: Path, repeat: int) -> None:
    colds, warms = [], []
    for _round in range(repeat):
        with tempfile.TemporaryDirectory() as scratch:
            tree = Path(scratch) / "tree"
            shutil.copytree(source, tree)
            cache = Path(scratch) / "cache"
            cold, cold_report = timed_check(tree, cache)
            warm, warm_report = timed_check(tree, cache)
            verdicts = [c["verdict"] for c in cold_report["claims"]]
            assert verdicts == [c["verdict"] for c in warm_report["claims"]], "warm run changed a verdict"
            colds.append(cold)
            warms.append(warm)
    baseline = time_startup()
    cold, warm = statistics.median(colds), statistics.median(warms)
    summary = cold_report["summary"]
    print(f"tree: {source} ({len(cold_report['claims'])} claims: {summary})")
    print(f"  cold run (empty cache):     median {cold:.2f} s over {repeat}")
    print(f"  warm run (nothing changed): median {warm:.2f} s over {repeat}")
    print(f"  warm/cold ratio: {warm / cold:.3f}")
    print(f"  interpreter start + imports alone (idealcheck --version and the algebra import): {baseline:.2f} s")


def time_startup() -> float:
    start = time.perf_counter()
    subprocess.run([sys.executable, "-c", "import verifier.cli.main, verifier.algebra.decide, verifier.claims"],
                   check=True, capture_output=True)
    return time.perf_counter() - start


if __name__ == "__main__":
    main()
