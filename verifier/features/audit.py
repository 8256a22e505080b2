"""``idealcheck audit OPTIMIZED --against REFERENCE``: module-against-module equivalence, computation only.

Both sides are Python files or package folders.  Files are matched by their path relative to the folder
(two single files match each other); inside a matched pair every top-level function of the optimized
module that has a same-named function in the reference module becomes one claim (``claims.audit_pairs``),
decided like any other claim by ``runner.run``.  Functions present on one side only are listed.
"""
from __future__ import annotations

import os
from pathlib import Path
from typing import TYPE_CHECKING, Sequence

from verifier.model.audit import AuditedFunction, AuditPlan, AuditResult, OneSided
from verifier.model.claim import Claim, Condition, ExtractionContext, Location, Problem
from verifier.model.paths import relative_path

if TYPE_CHECKING:
    from verifier.claims.audit_pairs import ModuleSource

_SKIPPED_DIRS = {"__pycache__", ".git", ".hg", ".svn", ".tox", ".venv", "venv", "node_modules", ".idealcheck_cache"}


class AuditError(Exception):
    """A usage problem (missing path, a file against a folder ...); printed, exit status 2."""


# ---------------------------------------------------------------- matching modules and functions


def python_modules(root: Path) -> dict[str, Path]:
    """Module key (posix path relative to ``root``) -> file, for every ``.py`` file under a folder."""
    found: dict[str, Path] = {}
    for folder, dirs, files in os.walk(root):
        dirs[:] = sorted(d for d in dirs if d not in _SKIPPED_DIRS and not d.startswith("."))
        for name in sorted(files):
            if name.endswith(".py"):
                full = Path(folder) / name
                found[full.relative_to(root).as_posix()] = full
    return found


def module_pairs(optimized: Path, reference: Path) -> tuple[list[tuple[str, Path, Path]], list[tuple[str, Path]], list[tuple[str, Path]]]:
    """(matched (key, opt, ref), only in optimized, only in reference) modules."""
    for path, option in ((optimized, "OPTIMIZED"), (reference, "--against")):
        if not path.exists():
            raise AuditError(f"{option}: no such file or folder: {path}")
    if optimized.is_file() and reference.is_file():
        return [("", optimized, reference)], [], []
    if optimized.is_dir() and reference.is_dir():
        a, b = python_modules(optimized), python_modules(reference)
        matched = [(key, a[key], b[key]) for key in sorted(a) if key in b]
        return matched, [(k, a[k]) for k in sorted(a) if k not in b], [(k, b[k]) for k in sorted(b) if k not in a]
    raise AuditError("OPTIMIZED and --against must both be Python files or both be folders")


def _read(path: Path, cwd: Path) -> ModuleSource:
    # the audit's claims need libcst: loaded when an audit runs, not by `idealcheck --help`
    from verifier.claims.audit_pairs import ModuleSource

    try:
        text = path.read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError) as exc:
        raise AuditError(f"cannot read {path}: {exc}") from exc
    return ModuleSource(relative_path(path.absolute(), cwd), text)


def _unreadable_claim(path: str, message: str) -> Claim:
    location = Location(path, 1, 1)
    return Claim(f"{location}", location, "function", "(module could not be read)", (), Problem("error", message),
                 dependencies=(path,))


def plan_audit(
    optimized: str,
    reference: str,
    context: ExtractionContext,
    given: Sequence[Condition] = (),
    *,
    cwd: str = ".",
) -> AuditPlan:
    """Match modules and functions and build one claim per function present in both versions."""
    # libcst parses the modules: loaded when an audit runs, not by `idealcheck --help`
    from verifier.claims.audit_pairs import (
        ModuleUnreadable,
        function_pair_claim,
        parse_module,
        top_level_functions,
    )

    base = Path(cwd)
    opt_path, ref_path = base / optimized, base / reference
    matched, only_a_modules, only_b_modules = module_pairs(opt_path, ref_path)
    functions: list[AuditedFunction] = []
    only_a: list[OneSided] = []
    only_b: list[OneSided] = []
    unreadable: list[Claim] = []

    def listed(key: str, path: Path, into: list[OneSided]) -> None:
        source = _read(path, base)
        try:
            info = parse_module(source)
        except ModuleUnreadable as exc:
            unreadable.append(_unreadable_claim(source.path, str(exc)))
            return
        for name, site in sorted(top_level_functions(info).items()):
            into.append(OneSided(key, name, source.path, site.line))

    for key, a, b in matched:
        a_source, b_source = _read(a, base), _read(b, base)
        from verifier.claims.kernels.parse import language_of

        if language_of(a_source.path) or language_of(b_source.path):
            _plan_kernel_pair(key, a_source, b_source, context, given, functions, only_a, only_b, unreadable)
            continue
        try:
            a_info = parse_module(a_source)
        except ModuleUnreadable as exc:
            unreadable.append(_unreadable_claim(a_source.path, str(exc)))
            continue
        try:
            b_info = parse_module(b_source)
        except ModuleUnreadable as exc:
            unreadable.append(_unreadable_claim(b_source.path, str(exc)))
            continue
        a_sites, b_sites = top_level_functions(a_info), top_level_functions(b_info)
        for name in sorted(a_sites, key=lambda n: a_sites[n].line):
            if name not in b_sites:
                only_a.append(OneSided(key, name, a_source.path, a_sites[name].line))
                continue
            try:
                claim = function_pair_claim(a_source, b_source, name, context, given,
                                            optimized_info=a_info, reference_info=b_info)
            except RecursionError:
                site = a_sites[name]
                location = Location(a_source.path, site.line, site.column)
                claim = Claim(f"{location}", location, "function", f"same as {name} in {b_source.path}", (),
                              Problem("inconclusive", f"{name} is nested too deeply to execute symbolically"),
                              dependencies=(a_source.path, b_source.path))
            functions.append(AuditedFunction(key, name, claim))
        for name in sorted(b_sites, key=lambda n: b_sites[n].line):
            if name not in a_sites:
                only_b.append(OneSided(key, name, b_source.path, b_sites[name].line))
    for key, path in only_a_modules:
        listed(key, path, only_a)
    for key, path in only_b_modules:
        listed(key, path, only_b)
    return AuditPlan(relative_path(opt_path.absolute(), base), relative_path(ref_path.absolute(), base),
                     tuple(functions), tuple(only_a), tuple(only_b), tuple(unreadable))


def _plan_kernel_pair(key, a_source, b_source, context, given, functions, only_a, only_b, unreadable) -> None:
    """A kernel file (C, C++, CUDA, Fortran, Julia, Rust) on either side: the kernel front ends decide."""
    # Loaded only for audits that involve kernel files (tree-sitter).
    from verifier.claims.kernels.audit import functions_of, is_kernel_file, pair_claim, python_pair_claim

    a_sites, b_sites = functions_of(a_source.path, a_source.text), functions_of(b_source.path, b_source.text)
    for source, sites in ((a_source, a_sites), (b_source, b_sites)):
        if isinstance(sites, str):
            unreadable.append(_unreadable_claim(source.path, sites))
    if isinstance(a_sites, str) or isinstance(b_sites, str):
        return
    for name in sorted(a_sites, key=lambda n: a_sites[n]):
        if name not in b_sites:
            only_a.append(OneSided(key, name, a_source.path, a_sites[name]))
        elif not is_kernel_file(a_source.path):
            functions.append(AuditedFunction(key, name, python_pair_claim(
                a_source.path, a_sites[name], b_source.path, b_source.text, name, context, given)))
        else:
            functions.append(AuditedFunction(key, name, pair_claim(a_source.path, a_source.text, b_source.path,
                                                                   name, context, given)))
    for name in sorted(b_sites, key=lambda n: b_sites[n]):
        if name not in a_sites:
            only_b.append(OneSided(key, name, b_source.path, b_sites[name]))


def run_audit(plan: AuditPlan, options) -> AuditResult:
    """Decide every claim of the plan with ``runner.run`` (workers, limits, cache as in ``options``)."""
    from verifier.pipeline.runner import run

    claims = [f.claim for f in plan.functions] + list(plan.unreadable)
    verdicts = run(claims, options)
    return AuditResult(plan, tuple(verdicts))
