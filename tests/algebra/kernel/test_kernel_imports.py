"""The kernel stays small and trusted: it imports only the model, the standard library and sympy's ring
(for expansion) - never the search (Groebner bases, translation, witness search) or anything above."""
from __future__ import annotations

import ast
import sys
from pathlib import Path

import verifier.algebra.kernel as kernel

KERNEL = Path(kernel.__file__).parent
ALLOWED_SYMPY = ("sympy", "sympy.polys.orderings", "sympy.polys.rings")


def imported_modules(path: Path) -> set[str]:
    names = set()
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.Import):
            names.update(alias.name for alias in node.names)
        elif isinstance(node, ast.ImportFrom) and node.level == 0 and node.module:
            names.add(node.module)
    return names


def test_the_kernel_imports_only_the_model_the_standard_library_and_sympys_ring() -> None:
    files = sorted(KERNEL.glob("*.py"))
    assert {f.name for f in files} >= {"checkers.py", "codec.py", "polynomial.py", "tie.py"}
    for path in files:
        for name in imported_modules(path):
            top = name.split(".")[0]
            ok = (top in sys.stdlib_module_names or name == "__future__" or name in ALLOWED_SYMPY
                  or name.startswith("verifier.model.") or name.startswith("verifier.algebra.kernel."))
            assert ok, f"{path.name} imports {name}"


def test_the_kernel_is_short_enough_to_read() -> None:
    lines = sum(len(p.read_text(encoding="utf-8").splitlines()) for p in KERNEL.glob("*.py"))
    assert lines < 700, lines
