"""Runs a batch of generated cases through ``idealcheck check --format json`` and judges each verdict.

The rules (issue 13): a claim false by the oracle is never ``proved`` (unsound); a true one is never
``refuted`` (false alarm); every ``refuted`` carries a witness at which the oracle finds the conditions
holding and the sides different; no well-formed claim is an ``error``; ``inconclusive`` is allowed and
counted.  The truth of each case is its generator's intent, confirmed by sampling with the oracle.
"""
from __future__ import annotations

import json
import random
from collections import Counter
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from pathlib import Path

from hypothesis import strategies as st

from fuzz_expressions import FAMILIES as EXPRESSION_FAMILIES
from fuzz_kernels import FAMILIES as KERNEL_FAMILIES
from fuzz_kernels import LANGUAGE_SUFFIX, KernelCase
from fuzz_oracle import Case, sampled_truth, witness_problem

# runs ``idealcheck ARGS`` in a folder and returns (exit status, stdout, stderr)
Runner = Callable[[Sequence[str], Path], tuple[int, str, str]]

CONFIG = """[tool.idealcheck]

[tool.idealcheck.conditions]
unit_circle = { vars = ["c", "s"], given = ["c**2 + s**2 == 1"] }
"""
EXPRESSION_FILES = {"claims.py": "# idealcheck: {}\n", "notes.md": "<!-- idealcheck: {} -->\n",
                    "formulas.h": "/* idealcheck: {} */\n"}
KERNEL_HEADER = {"python": "", "c": "#include <math.h>\n\n", "rust": "", "julia": "",
                 "fortran": "module fuzz_kernels\n    implicit none\ncontains\n\n"}
KERNEL_FOOTER = {"fortran": "end module fuzz_kernels\n"}


@dataclass(frozen=True)
class Outcome:
    """The verdict of one case and what the rules say of it (``problem`` is None when it is allowed)."""

    family: str
    truth: str  # "true", "false" or "unknown" (no sampled point was usable)
    verdict: str
    problem: str | None
    where: str  # file:line and the claim, for the failure message
    reason: str = ""  # the tool's reason (what keeps an inconclusive claim undecided)


@dataclass(frozen=True)
class Batch:
    expressions: tuple[Case, ...]
    kernels: tuple[KernelCase, ...]
    seed: int


def batch(per_family: int, expression_families: Sequence[str] | None = None,
          kernel_families: Sequence[str] | None = None) -> st.SearchStrategy[Batch]:
    """``per_family`` true and ``per_family`` false cases of every chosen family."""
    expressions = [EXPRESSION_FAMILIES[f](t) for f in (expression_families or EXPRESSION_FAMILIES)
                   for t in (True, False) for _ in range(per_family)]
    kernels = [KERNEL_FAMILIES[f](t) for f in (kernel_families or KERNEL_FAMILIES)
               for t in (True, False) for _ in range(per_family)]
    return st.builds(Batch, st.tuples(*expressions), st.tuples(*kernels), st.integers(0, 2**32 - 1))


def write_batch(folder: Path, cases: Batch) -> dict[tuple[str, int], Case]:
    """Writes the claims and kernels into ``folder``; returns each case by (file, claim line)."""
    folder.mkdir(parents=True, exist_ok=True)
    (folder / "pyproject.toml").write_text(CONFIG)
    where: dict[tuple[str, int], Case] = {}
    # hypothesis often draws the same case twice in a batch; each distinct claim is written once.  The
    # expression claims go round three kinds of file: Python comments, Markdown HTML comments, C header
    # comments (formulas there, not code-tied claims)
    distinct = list({case.text: case for case in cases.expressions}.values())
    files: dict[str, list[str]] = {name: [] for name in EXPRESSION_FILES}
    for index, case in enumerate(distinct):
        name = list(EXPRESSION_FILES)[index % len(EXPRESSION_FILES)]
        files[name].append(EXPRESSION_FILES[name].format(case.text))
        where[(name, len(files[name]))] = case
    for name, lines in files.items():
        if lines:
            (folder / name).write_text("".join(lines))
    for language, suffix in LANGUAGE_SUFFIX.items():
        chunks = [KERNEL_HEADER[language]]
        line = chunks[0].count("\n") + 1
        snippets = {k.snippet: k for k in cases.kernels if k.language == language}
        for index, kernel in enumerate(snippets.values()):
            snippet = kernel.snippet.replace("NAME", f"kernel_{index}") + "\n\n"
            where[(f"kernels{suffix}", line + kernel.claim_line)] = kernel.case
            chunks.append(snippet)
            line += snippet.count("\n")
        if len(chunks) > 1:
            (folder / f"kernels{suffix}").write_text("".join(chunks) + KERNEL_FOOTER.get(language, ""))
    return where


def judge(case: Case, truth: bool | None, claim: dict[str, object]) -> str | None:
    verdict = claim["verdict"]
    if verdict == "error":
        return f"error on a well-formed claim: {claim.get('reason')}"
    if verdict == "proved" and truth is False:
        return "UNSOUND: a false claim was proved"
    if verdict == "refuted":
        if truth is True:
            return "FALSE ALARM: a true claim was refuted"
        witness = claim.get("witness")
        if not isinstance(witness, dict):
            return "refuted without a witness"
        problem = witness_problem(case, witness["values"])
        if problem:
            return f"BAD WITNESS {witness['values']}: {problem}"
    if verdict not in ("proved", "refuted", "inconclusive", "error"):
        return f"unknown verdict {verdict!r}"
    return None


def check_batch(run: Runner, folder: Path, cases: Batch, extra: Sequence[str] = ()) -> list[Outcome]:
    """Writes, checks and judges one batch; a case whose claim is missing from the report is a problem."""
    where = write_batch(folder, cases)
    code, out, err = run(["check", "--no-cache", "--format", "json", *extra, "."], folder)
    if code not in (0, 1):
        raise AssertionError(f"exit status {code}: {err[-2000:]}")
    report = json.loads(out)
    rng = random.Random(cases.seed)
    outcomes: list[Outcome] = []
    seen = set()
    for claim in report["claims"]:
        key = (str(claim["path"]), int(claim["line"]))
        case = where.get(key)
        place = f"{key[0]}:{key[1]}: {claim['text']}"
        if case is None:
            outcomes.append(Outcome("unplaced", "unknown", str(claim["verdict"]), "a claim no case made", place))
            continue
        seen.add(key)
        truth = sampled_truth(case, rng)
        if case.meant_true and truth is False:
            raise AssertionError(f"generator: a case meant true differs at a sampled point: {place}")
        if not case.meant_true and truth is True:
            # the perturbation may have changed nothing, or changed the claim only where sampling missed:
            # judged by its witness alone (a true claim has no witness the oracle accepts)
            truth = None
        problem = judge(case, truth, claim)
        label = {True: "true", False: "false", None: "unknown"}[truth]
        outcomes.append(Outcome(case.family, label, str(claim["verdict"]), problem, place, str(claim["reason"])))
    for key, case in where.items():
        if key not in seen:
            outcomes.append(Outcome(case.family, "unknown", "missing", "no verdict for this claim",
                                    f"{key[0]}:{key[1]}: {case.text}"))
    return outcomes


def failures(outcomes: Sequence[Outcome]) -> list[str]:
    return [f"{o.family} ({o.truth}) {o.verdict}: {o.problem}\n    {o.where}" for o in outcomes if o.problem]


def tally(outcomes: Sequence[Outcome]) -> Counter[tuple[str, str, str]]:
    """Counts by (family, truth, verdict); an inconclusive verdict whose reason is an internal failure (a
    certificate that failed its re-check, say) is counted again as verdict "internal"."""
    counts = Counter((o.family, o.truth, o.verdict) for o in outcomes)
    counts.update((o.family, o.truth, "internal") for o in outcomes
                  if o.verdict == "inconclusive" and o.reason.startswith("internal"))
    return counts


def table(counts: Counter[tuple[str, str, str]]) -> str:
    """Counts per family and verdict class: true claims proved / inconclusive / refuted (false alarm), false
    claims refuted / inconclusive / proved (unsound), errors, claims of unknown truth (judged by their
    witness only), and inconclusive verdicts from an internal failure."""
    families = sorted({f for f, _, _ in counts})
    header = (f"{'family':<28}{'true':>6}{'proved':>8}{'incon':>7}{'refut!':>7}"
              f"{'false':>7}{'refuted':>8}{'incon':>7}{'proved!':>8}{'error':>6}{'unknown':>8}{'internal':>9}")
    rows = [header]
    for family in families + ["ALL"]:
        def n(truth: str, verdict: str) -> int:
            return sum(v for (f, t, d), v in counts.items()
                       if (family == "ALL" or f == family) and (truth == "*" or t == truth) and d == verdict)

        true_n = sum(n("true", d) for d in ("proved", "inconclusive", "refuted", "error", "missing"))
        false_n = sum(n("false", d) for d in ("proved", "inconclusive", "refuted", "error", "missing"))
        unknown = sum(n("unknown", d) for d in ("proved", "inconclusive", "refuted", "error", "missing"))
        rows.append(f"{family:<28}{true_n:>6}{n('true', 'proved'):>8}{n('true', 'inconclusive'):>7}"
                    f"{n('true', 'refuted'):>7}{false_n:>7}{n('false', 'refuted'):>8}"
                    f"{n('false', 'inconclusive'):>7}{n('false', 'proved'):>8}{n('*', 'error'):>6}{unknown:>8}"
                    f"{n('*', 'internal'):>9}")
    return "\n".join(rows)
