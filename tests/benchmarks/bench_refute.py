"""Refuting against proving, decision only: the same claims with one coefficient changed, side by side.

Usage: python tests/benchmarks/bench_refute.py [--repeat N]

Each row is a pair of claims of the same size, one true and one false (a sign or a coefficient changed),
written to a temporary Python project and extracted once; the decision (verifier.algebra.decide.decide,
in this process) is timed for each, medians of N runs, and the ratio refuted / proved is printed.  The
matrix-product kernel row also reports extraction and the whole command line run (a fresh interpreter,
as a user runs it).  First, for every shipped corpus: the refuted claims' share of all decision time and
the mean refuted decision against the mean proved one, side by side in three modes of the cheap witness
search (``witness_polynomial.py``), all measured in this run: "slow only" (no cheap search: the full
search and the Groebner basis), "earlier" (the cheap search as it first was: polynomial differences and
definitions among the conditions only) and "now"; then, for "now", how the refuted claims were found:
by the cheap search, or why it stood aside (count and decision seconds per reason).  Nothing is
asserted; the figures are printed.

Identities (common practice): the Lagrange identity, the Binet-Cauchy identity
(sum a_i c_i)(sum b_j d_j) - (sum a_i d_i)(sum b_j c_j) = sum_{i<j} (a_i b_j - a_j b_i)(c_i d_j - c_j d_i),
and trace(A B) = sum_ij a_ij b_ji for an unrolled 10x10 matrix product.
"""
from __future__ import annotations

import argparse
import json
import resource
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

from unittest import mock

from verifier.algebra import decide as decide_module
from verifier.algebra.decide import Limits, decide
from verifier.algebra.translate import TranslationError, translate
from verifier.algebra.witness_polynomial import definitions, polynomial_witness, screen_obstacle, sparse_terms
from verifier.algebra.witness_problem import searchable_problem
from verifier.api import find_claims
from verifier.model.limits import decision_clock


def _sum(terms: list[str]) -> str:
    return " + ".join(terms)


def lagrange(n: int, wrong: bool) -> str:
    left = (f"({_sum([f'p{i}**2' for i in range(n)])})*({_sum([f'q{i}**2' for i in range(n)])})"
            f" - ({_sum([f'p{i}*q{i}' for i in range(n)])})**2")
    terms = [f"(p{i}*q{j} - p{j}*q{i})**2" for i in range(n) for j in range(i + 1, n)]
    if wrong:
        terms[-1] = terms[-1].replace("-", "+", 1)
    return f"# idealcheck: {left} == {_sum(terms)}\n"


def binet_cauchy(n: int, wrong: bool) -> str:
    left = (f"({_sum([f'a{i}*c{i}' for i in range(n)])})*({_sum([f'b{i}*d{i}' for i in range(n)])})"
            f" - ({_sum([f'a{i}*d{i}' for i in range(n)])})*({_sum([f'b{i}*c{i}' for i in range(n)])})")
    terms = [f"(a{i}*b{j} - a{j}*b{i})*(c{i}*d{j} - c{j}*d{i})" for i in range(n) for j in range(i + 1, n)]
    if wrong:
        terms[len(terms) // 2] = terms[len(terms) // 2].replace("(a", "(2*a", 1)
    return f"# idealcheck: {left} == {_sum(terms)}\n"


def matrix_kernel(n: int, wrong: bool) -> str:
    """An unrolled n x n product C = A B (n**2 (2n - 1) operations) and a claim on its trace."""
    args = ", ".join([f"a{i}{j}" for i in range(n) for j in range(n)] + [f"b{i}{j}" for i in range(n) for j in range(n)])
    trace = [f"a{i}{j}*b{j}{i}" for i in range(n) for j in range(n)]
    if wrong:
        trace[-1] = "2*" + trace[-1]
    lines = [f"# idealcheck: returns {_sum(trace)}", f"def trace_of_product({args}):"]
    for i in range(n):
        for j in range(n):
            lines.append(f"    c{i}{j} = {_sum([f'a{i}{k}*b{k}{j}' for k in range(n)])}")
    lines.append(f"    return {_sum([f'c{i}{i}' for i in range(n)])}")
    return "\n".join(lines) + "\n"


ROWS = [
    ("Lagrange identity, 8 pairs", lambda wrong: lagrange(8, wrong)),
    ("Binet-Cauchy identity, 20 dimensions", lambda wrong: binet_cauchy(20, wrong)),
    ("unrolled 10x10 matrix product, trace (2,000 operations)", lambda wrong: matrix_kernel(10, wrong)),
]


def extracted(source: str, folder: Path):
    folder.mkdir(parents=True, exist_ok=True)
    (folder / "claims.py").write_text(source)
    start = time.process_time()
    found = find_claims([str(folder)], cwd=str(folder), cache=False, in_process=True)
    seconds = time.process_time() - start
    [claim] = found.claims
    return claim, seconds


def decision_seconds(claim, repeat: int) -> tuple[float, str]:
    times, verdict = [], ""
    for _ in range(repeat):
        start = time.process_time()
        verdict = decide(claim, Limits(timeout=60.0)).verdict
        times.append(time.process_time() - start)
    return statistics.median(times), verdict


def command_line_seconds(folder: Path) -> tuple[float, float, str]:
    """Wall seconds, CPU seconds of the command and the processes it waited for, verdicts."""
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    start = time.perf_counter()
    result = subprocess.run([sys.executable, "-m", "verifier", "check", "--no-cache", "--format", "json", "."],
                            cwd=folder, capture_output=True, text=True)
    elapsed = time.perf_counter() - start
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    cpu = (after.ru_utime + after.ru_stime) - (before.ru_utime + before.ru_stime)
    try:
        verdicts = [v["verdict"] for v in json.loads(result.stdout)["claims"]]
    except (ValueError, KeyError):
        verdicts = [f"exit {result.returncode}: {result.stderr[-200:]}"]
    return elapsed, cpu, ",".join(verdicts)


CHECKOUT = Path(__file__).resolve().parents[2]
CORPORA = ("fixtures/acceptance", "fixtures/py_acceptance", "fixtures/demo", "fixtures/kernels",
           "fixtures/kernels_lang", "fixtures/py_numpy", "fixtures/explain", "fixtures/languages")


def _no_cheap_search(*args, **kwargs):
    return None


def _earlier_cheap_search(left, right, conditions, difference, *, deadline, seed=0, generators=()):
    """The first coverage: only a difference in the claim's own variables, only definitions as equations."""
    problem = searchable_problem(left, right, conditions)
    if problem is None or definitions(conditions) is None or sparse_terms(difference, problem.names) is None:
        return None
    return polynomial_witness(left, right, conditions, difference, deadline=deadline, seed=seed)


MODES = (("slow only", _no_cheap_search), ("earlier", _earlier_cheap_search), ("now", polynomial_witness))


def _how_refuted(claim) -> str:
    """For a refuted claim: found by the cheap search, or why the cheap search stood aside."""
    for obligation in claim.obligations:
        try:
            tr = translate(obligation)
        except (TranslationError, RecursionError):
            continue
        args = (obligation.left, obligation.right, obligation.conditions, tr.difference)
        if polynomial_witness(*args, deadline=decision_clock() + 10, generators=tr.generators) is not None:
            return "found by the cheap search"
    for obligation in claim.obligations:
        try:
            tr = translate(obligation)
        except (TranslationError, RecursionError):
            return "an obligation cannot be translated"
        reason = screen_obstacle(tr, obligation.left, obligation.right, obligation.conditions)
        if reason is not None:
            return reason
    return "searched, found nothing"


def corpus_shares(repeat: int) -> None:
    """Per corpus and mode: the refuted claims' share of all decision time, and the mean decision of a
    refuted claim against that of a proved one (CPU seconds, decided in this process, medians of
    ``repeat`` runs); then the refuted claims by how they were found, in mode "now"."""
    print(f"{'corpus':14} {'claims':>6} " + " ".join(f"{name + ': share, refuted/proved':>32}" for name, _ in MODES))
    reasons: dict[str, list[float]] = {}
    for corpus in CORPORA:
        folder = CHECKOUT / corpus
        found = find_claims([str(folder)], cwd=str(folder), cache=False, in_process=True)
        cells = []
        for name, search in MODES:
            spent: dict[str, list[float]] = {}
            with mock.patch.object(decide_module, "polynomial_witness", search):
                for claim in found.claims:
                    seconds, verdict = decision_seconds(claim, repeat)
                    spent.setdefault(verdict, []).append(seconds)
                    if name == "now" and verdict == "refuted":
                        reasons.setdefault(_how_refuted(claim), []).append(seconds)
            total = sum(sum(v) for v in spent.values())
            refuted, proved = spent.get("refuted", []), spent.get("proved", [])
            share = sum(refuted) / total if total else 0.0
            ratio = (statistics.mean(refuted) / statistics.mean(proved)) if refuted and proved else float("nan")
            cells.append(f"{share:19.0%} {ratio:11.2f}x")
        print(f"{corpus.split('/')[-1]:14} {len(found.claims):6d} " + " ".join(cells))
    print("refuted claims of all corpora, mode now: how they were found   count   decision s")
    for reason, seconds in sorted(reasons.items(), key=lambda item: -sum(item[1])):
        print(f"  {reason:60} {len(seconds):5d} {sum(seconds):11.3f}")


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("--repeat", type=int, default=3)
    parser.add_argument("--no-cli", action="store_true", help="skip the command line runs")
    parser.add_argument("--no-corpora", action="store_true", help="skip the shares over the shipped corpora")
    args = parser.parse_args()
    if not args.no_corpora:
        corpus_shares(args.repeat)
    print(f"{'row':58} {'proved s':>9} {'refuted s':>9} {'ratio':>7}  (decision only, CPU, goal <= 2x)")
    with tempfile.TemporaryDirectory() as tmp:
        for index, (name, make) in enumerate(ROWS):
            seconds = {}
            for wrong in (False, True):
                folder = Path(tmp) / f"row{index}{'w' if wrong else 't'}"
                claim, extraction = extracted(make(wrong), folder)
                decision, verdict = decision_seconds(claim, args.repeat)
                expected = "refuted" if wrong else "proved"
                if verdict != expected:
                    print(f"  ! {name}: {verdict}, expected {expected}")
                seconds[wrong] = (decision, extraction, folder)
            (proved, p_extract, p_folder), (refuted, r_extract, r_folder) = seconds[False], seconds[True]
            print(f"{name[:58]:58} {proved:9.3f} {refuted:9.3f} {refuted / proved:6.2f}x")
            if index == len(ROWS) - 1:
                print(f"  extraction (in process, CPU): proved {p_extract:.2f} s, refuted {r_extract:.2f} s")
                if not args.no_cli:
                    for label, folder, goal in (("proved", p_folder, 3), ("refuted", r_folder, 1)):
                        wall, cpu, verdicts = command_line_seconds(folder)
                        print(f"  idealcheck check, {label} kernel: {wall:.2f} s wall, {cpu:.2f} s CPU "
                              f"(goal < {goal} s), verdict {verdicts}")


if __name__ == "__main__":
    main()
