"""Which kernel function runs of fixtures/kernels_lang go through the shared IR executor, and why the rest do not.

The list of runs left on the kernel runner (``kernels/run.py``) is pinned: a change that moves a run onto
the IR updates it (and the differential test ``test_kernels_on_ir.py`` gains a kernel with the construct);
a change that moves one back fails here.
"""
from __future__ import annotations

from pathlib import Path

import pytest

from verifier.claims import extract
from verifier.claims.kernels import extract as kernel_extract
from verifier.claims.kernels import to_ir
from verifier.model.claim import ExtractionContext

CORPUS = Path(__file__).resolve().parents[3] / "fixtures" / "kernels_lang"
SUFFIXES = (".c", ".cpp", ".cu", ".f90", ".jl", ".rs")

ON_THE_KERNEL_RUNNER = {
    # pointer arithmetic (the kernel runner gives it up too)
    ("unsupported.c", "pair_sum"): "pair_sum: a place that is not rooted at a parameter or local",
}
RUNS = 58


@pytest.fixture(scope="module")
def runs(monkeypatch_module):
    seen: list[tuple[str, str, str | None]] = []
    original = kernel_extract.run_on_ir

    def counting(function, resolve, *rest):
        result = original(function, resolve, *rest)
        reason = None if result is not None else to_ir.refusal(function, resolve) or "the arguments of a `same as`"
        seen.append((Path(function.path).name, function.name, reason))
        return result

    monkeypatch_module.setattr(kernel_extract, "run_on_ir", counting)
    monkeypatch_module.chdir(CORPUS)
    for path in sorted(p for p in Path(".").rglob("*") if p.suffix in SUFFIXES):
        extract(path.as_posix(), path.read_text(), ExtractionContext(roots=(".",)))
    return seen


@pytest.fixture(scope="module")
def monkeypatch_module():
    with pytest.MonkeyPatch.context() as patch:
        yield patch


def test_the_runs_left_on_the_kernel_runner_are_the_pinned_ones(runs):
    left = {(file, name): reason for file, name, reason in runs if reason is not None}
    assert left == ON_THE_KERNEL_RUNNER
    assert len(runs) == RUNS
    on_ir = len(runs) - len(left)
    assert on_ir == RUNS - len(ON_THE_KERNEL_RUNNER)  # 29 of 59 before places, 51 of 59 after, 57 of 58 with integer kinds
