"""Cold versus warm run of `idealcheck check` on a fixtures tree; prints the times and their ratio.

Usage: python tests/benchmarks/bench_cache.py [TREE ...] [--repeat N]
(default trees: fixtures/demo and the whole fixtures folder)

The tree is copied to a temporary folder; each round runs the command line as a user would (a fresh
interpreter): once with an empty cache (cold) and once more with the cache it filled (warm).  The warm
run reads no file whose claims are in the extraction cache and re-checks every cached certificate and
witness, so the ratio is the honest cost of a run where nothing changed.  Both wall time and CPU time
are shown: CPU time counts every process of the run (the worker processes too: on Linux this script
adopts them as a child subreaper and reaps them), and does not depend on how busy the machine is.
"""
from __future__ import annotations

import argparse
import ctypes
import json
import os
import resource
import shutil
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

CHECKOUT = Path(__file__).resolve().parents[2]


def adopt_descendants() -> bool:
    """Become the child subreaper (Linux), so that the worker processes of a run, orphaned when it ends,
    are reaped here and their CPU time counts in ``RUSAGE_CHILDREN``."""
    try:
        libc = ctypes.CDLL(None, use_errno=True)
        return bool(sys.platform.startswith("linux") and libc.prctl(36, 1, 0, 0, 0) == 0)  # PR_SET_CHILD_SUBREAPER
    except (OSError, AttributeError):
        return False


def reap_descendants(limit: float = 10.0) -> None:
    end = time.monotonic() + limit
    while time.monotonic() < end:
        try:
            pid, _status = os.waitpid(-1, os.WNOHANG)
        except ChildProcessError:
            return
        if pid == 0:
            time.sleep(0.01)


def children_cpu() -> float:
    usage = resource.getrusage(resource.RUSAGE_CHILDREN)
    return usage.ru_utime + usage.ru_stime


def timed_check(tree: Path, cache: Path, *extra: str) -> tuple[float, float, dict]:
    """(wall seconds, CPU seconds of the whole process tree, the JSON report)."""
    cpu_start = children_cpu()
    start = time.perf_counter()
    result = subprocess.run(
        [sys.executable, "-m", "verifier", "check", "--format", "json", "--cache-dir", str(cache), *extra, "."],
        cwd=tree, capture_output=True, text=True,
    )
    elapsed = time.perf_counter() - start
    reap_descendants()
    if result.returncode not in (0, 1):
        raise SystemExit(f"idealcheck failed ({result.returncode}):\n{result.stderr}")
    return elapsed, children_cpu() - cpu_start, json.loads(result.stdout)


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
    parser.add_argument("--corpora", action="store_true", help="every shipped corpus: each folder of fixtures/")
    args = parser.parse_args()
    if not adopt_descendants():
        print("note: CPU times count the main process only (no child subreaper on this platform)")
    trees = args.trees
    if args.corpora:
        trees = [str(p) for p in sorted((CHECKOUT / "fixtures").iterdir()) if p.is_dir() and any(
            b"idealcheck:" in f.read_bytes() for f in p.rglob("*") if f.is_file())]
    for source in trees:
        bench_tree(Path(source), args.repeat)
    if args.synthetic:
        with tempfile.TemporaryDirectory() as scratch:
            bench_tree(generate_tree(Path(scratch) / "synthetic", args.synthetic), args.repeat)


def bench_tree(source: Path, repeat: int) -> None:
    colds, warms, cold_cpus, warm_cpus = [], [], [], []
    for _round in range(repeat):
        with tempfile.TemporaryDirectory() as scratch:
            tree = Path(scratch) / "tree"
            shutil.copytree(source, tree)
            cache = Path(scratch) / "cache"
            cold, cold_cpu, cold_report = timed_check(tree, cache)
            warm, warm_cpu, warm_report = timed_check(tree, cache)
            verdicts = [c["verdict"] for c in cold_report["claims"]]
            assert verdicts == [c["verdict"] for c in warm_report["claims"]], "warm run changed a verdict"
            colds.append(cold)
            warms.append(warm)
            cold_cpus.append(cold_cpu)
            warm_cpus.append(warm_cpu)
    baseline = time_startup()
    cold, warm = statistics.median(colds), statistics.median(warms)
    cold_cpu, warm_cpu = statistics.median(cold_cpus), statistics.median(warm_cpus)
    summary = cold_report["summary"]
    print(f"tree: {source} ({len(cold_report['claims'])} claims: {summary})")
    print(f"  cold run (empty cache):     median {cold:.2f} s wall, {cold_cpu:.2f} s CPU over {repeat}")
    print(f"  warm run (nothing changed): median {warm:.2f} s wall, {warm_cpu:.2f} s CPU over {repeat}")
    print(f"  warm/cold ratio: {warm / cold:.3f} wall, {warm_cpu / cold_cpu:.3f} CPU" if cold_cpu else
          f"  warm/cold ratio: {warm / cold:.3f} wall")
    print(f"  interpreter start + imports alone (idealcheck --version and the algebra import): {baseline:.2f} s")


def time_startup() -> float:
    start = time.perf_counter()
    subprocess.run([sys.executable, "-c", "import verifier.cli.main, verifier.algebra.decide, verifier.claims"],
                   check=True, capture_output=True)
    return time.perf_counter() - start


if __name__ == "__main__":
    main()
