"""``idealcheck audit NEW --against OLD`` when either file is a kernel file (C, C++, CUDA, Fortran, Julia,
Rust): every function of NEW with a same-named function in OLD (any supported language or Python) becomes
one ``same as`` claim, decided like a ``same as OLD::NAME`` comment above it would be."""
from __future__ import annotations

from collections.abc import Sequence
from dataclasses import replace

from verifier.claims.kernels.extract import kernel_same_as_claim
from verifier.claims.kernels.library import KernelFile
from verifier.claims.kernels.parse import language_of
from verifier.model.claim import Claim, Condition, ExtractionContext, Location


def is_kernel_file(path: str) -> bool:
    return language_of(path) is not None


def kernel_functions(path: str, text: str) -> dict[str, int] | str:
    """Function name -> line of the kernel file, or the syntax error's message."""
    language = language_of(path)
    assert language is not None
    kernel = KernelFile(path, text, language)
    if kernel.source.problem is not None:
        problem = kernel.source.problem
        return f"cannot parse {path}: {problem.message} (line {problem.line}, column {problem.column})"
    return {site.name: site.first_line for site in kernel.index.functions}


def python_functions(path: str, text: str) -> dict[str, int] | str:
    # libcst is needed only when a Python module is audited against a kernel file.
    from verifier.claims.frontends.python.modules import parse_module_text

    try:
        module = parse_module_text(path, text)
    except Exception as exc:  # any parse failure of the scanned file is reported, never raised
        return f"cannot parse {path} as Python: {type(exc).__name__}"
    return {name: module.line(node) for name, node in module.functions.items()}


def functions_of(path: str, text: str) -> dict[str, int] | str:
    return kernel_functions(path, text) if is_kernel_file(path) else python_functions(path, text)


def pair_claim(new_path: str, new_text: str, old_path: str, name: str, context: ExtractionContext,
               given: Sequence[Condition] = ()) -> Claim:
    return kernel_same_as_claim(new_path, new_text, old_path, name, context, tuple(given))


def python_pair_claim(python_path: str, line: int, kernel_path: str, kernel_text: str, name: str,
                      context: ExtractionContext, given: Sequence[Condition] = ()) -> Claim:
    """A Python function audited against a kernel function: the kernel's claim against the Python module
    (the kernel front end reads both), turned around so that the Python function is the left side."""
    claim = kernel_same_as_claim(kernel_path, kernel_text, python_path, name, context, tuple(given))
    location = Location(python_path, line, 1)
    return replace(claim, id=f"{location}", location=location, text=f"same as {name} in {kernel_path}",
                   obligations=tuple(replace(o, left=o.right, right=o.left) for o in claim.obligations))
