"""The package's shape, read from its source with ``ast`` (nothing of it is imported here).

- every import between our modules, at module level or inside a function, follows the layer order
  model < claims, algebra, report (which never import each other) < pipeline < features < cli;
- no import cycle between modules;
- no module over 500 lines;
- a function-level import of sympy or libcst, or of a module that loads one of them, says why on its
  line or the line above (the reason to import late is to keep ``idealcheck --help`` fast);
- ``idealcheck --help`` loads neither sympy nor libcst (checked in a fresh interpreter).
"""
from __future__ import annotations

import ast
import subprocess
import sys
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parents[1] / "verifier"
MAX_LINES = 500
HEAVY = ("sympy", "libcst")  # the libraries that make start-up slow

# bottom to top; packages on one level never import each other
LAYERS: dict[str, int] = {"model": 0, "claims": 1, "algebra": 1, "report": 1, "pipeline": 2, "features": 3, "cli": 4}
# verifier/__init__.py holds the version only (importable from every layer); __main__ sits above the cli;
# the Python API is a front door beside the cli, the pytest plugin is built on the API
TOP_LEVEL = {"verifier": -1, "verifier.api": 4, "verifier.__main__": 5, "verifier.pytest_plugin": 5}


@dataclass(frozen=True)
class Import:
    source: str  # importing module, dotted
    target: str  # imported module (ours resolved to a module, others by their top-level name)
    line: int
    in_function: bool
    type_only: bool  # under ``if TYPE_CHECKING:``: never executed


def module_name(path: Path) -> str:
    parts = list(path.relative_to(PACKAGE.parent).with_suffix("").parts)
    if parts[-1] == "__init__":
        parts.pop()
    return ".".join(parts)


@lru_cache(maxsize=None)
def modules() -> dict[str, Path]:
    return {module_name(path): path for path in sorted(PACKAGE.rglob("*.py"))}


def _resolve(name: str) -> str:
    """The module an imported dotted name denotes (``verifier.a.b`` may be a module or a name in ``a``)."""
    known = modules()
    while name not in known and "." in name:
        name = name.rsplit(".", 1)[0]
    return name


def _is_type_checking(test: ast.expr) -> bool:
    return (isinstance(test, ast.Name) and test.id == "TYPE_CHECKING") or (
        isinstance(test, ast.Attribute) and test.attr == "TYPE_CHECKING")


def _imports_of(name: str, path: Path) -> list[Import]:
    tree = ast.parse(path.read_text(encoding="utf-8"), filename=str(path))
    package = name if path.name == "__init__.py" else name.rsplit(".", 1)[0]
    found: list[Import] = []

    def walk(node: ast.AST, in_function: bool, type_only: bool) -> None:
        for child in ast.iter_child_nodes(node):
            handle(child, in_function, type_only)

    def handle(node: ast.AST, in_function: bool, type_only: bool) -> None:
        if isinstance(node, ast.Import):
            for alias in node.names:
                add(alias.name, node.lineno, in_function, type_only)
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = package.split(".")
                base = base[: len(base) - (node.level - 1)]
                stem = ".".join(base + ([node.module] if node.module else []))
            else:
                stem = node.module or ""
            for alias in node.names:
                target = f"{stem}.{alias.name}" if stem.split(".")[0] == "verifier" else stem
                add(target, node.lineno, in_function, type_only)
        elif isinstance(node, ast.If) and _is_type_checking(node.test):
            for statement in node.body:
                handle(statement, in_function, True)
            for statement in node.orelse:
                handle(statement, in_function, type_only)
        else:
            walk(node, in_function or isinstance(node, (ast.FunctionDef, ast.AsyncFunctionDef, ast.Lambda)),
                 type_only)

    def add(target: str, line: int, in_function: bool, type_only: bool) -> None:
        top = target.split(".")[0]
        resolved = _resolve(target) if top == "verifier" else top
        found.append(Import(name, resolved, line, in_function, type_only))

    walk(tree, False, False)
    return found


@lru_cache(maxsize=None)
def all_imports() -> tuple[Import, ...]:
    return tuple(item for name, path in modules().items() for item in _imports_of(name, path))


def ours(items: tuple[Import, ...]) -> list[Import]:
    return [item for item in items if item.target.split(".")[0] == "verifier" and item.target != item.source]


def layer_of(name: str) -> tuple[str, int]:
    """(package, level): ``verifier.algebra.kernel.certificate`` -> ("algebra", 1)."""
    if name in TOP_LEVEL:
        return name, TOP_LEVEL[name]
    package = name.split(".")[1]
    assert package in LAYERS, f"{name}: a package with no place in the layer order (add it to LAYERS)"
    return package, LAYERS[package]


def allowed(source: str, target: str) -> bool:
    source_package, source_level = layer_of(source)
    target_package, target_level = layer_of(target)
    return source_package == target_package or target_level < source_level


# ---------------------------------------------------------------- the checker itself


def test_the_import_reader_sees_imports_inside_functions_and_resolves_names(tmp_path: Path) -> None:
    sample = tmp_path / "sample.py"
    sample.write_text(
        "from typing import TYPE_CHECKING\n"
        "from verifier.model.claim import Claim\n"
        "if TYPE_CHECKING:\n"
        "    from verifier.pipeline.config import Config\n"
        "def late():\n"
        "    import sympy.polys\n"
        "class Holder:\n"
        "    def method(self):\n"
        "        from ..algebra.decide import decide\n",
        encoding="utf-8",
    )
    found = {(item.target, item.in_function, item.type_only) for item in _imports_of("verifier.pipeline.sample", sample)}
    assert found == {
        ("typing", False, False),
        ("verifier.model.claim", False, False),
        ("verifier.pipeline.config", False, True),
        ("sympy", True, False),
        ("verifier.algebra.decide", True, False),
    }
    assert not allowed("verifier.claims.language", "verifier.algebra.translate")  # sideways
    assert not allowed("verifier.model.claim", "verifier.pipeline.runner")  # upward
    assert allowed("verifier.cli.check", "verifier.algebra.decide") and allowed("verifier.algebra.decide", "verifier")


# ---------------------------------------------------------------- the package


def test_no_import_runs_against_the_layer_order() -> None:
    wrong = [f"{item.source}:{item.line} imports {item.target}" for item in ours(all_imports())
             if not allowed(item.source, item.target)]
    assert not wrong, "imports against the layer order:\n" + "\n".join(wrong)


def test_the_model_imports_nothing_of_ours_but_the_model() -> None:
    wrong = [f"{item.source}:{item.line} imports {item.target}" for item in ours(all_imports())
             if item.source.startswith("verifier.model") and not item.target.startswith("verifier.model")]
    assert not wrong, "\n".join(wrong)


def _cycles(edges: dict[str, set[str]]) -> list[list[str]]:
    """The strongly connected components with more than one module (Tarjan's algorithm)."""
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on_stack: set[str] = set()
    found: list[list[str]] = []

    def connect(node: str) -> None:
        index[node] = low[node] = len(index)
        stack.append(node)
        on_stack.add(node)
        for nxt in sorted(edges.get(node, ())):
            if nxt not in index:
                connect(nxt)
                low[node] = min(low[node], low[nxt])
            elif nxt in on_stack:
                low[node] = min(low[node], index[nxt])
        if low[node] == index[node]:
            component = []
            while True:
                member = stack.pop()
                on_stack.discard(member)
                component.append(member)
                if member == node:
                    break
            if len(component) > 1:
                found.append(sorted(component))

    for node in sorted(edges):
        if node not in index:
            connect(node)
    return found


def test_cycle_finder_finds_a_cycle_and_only_that() -> None:
    assert _cycles({"a": {"b"}, "b": {"c"}, "c": {"a"}, "d": {"a"}}) == [["a", "b", "c"]]
    assert _cycles({"a": {"b"}, "b": set()}) == []


def test_no_import_cycle_between_modules() -> None:
    edges: dict[str, set[str]] = {}
    for item in ours(all_imports()):
        if not item.type_only:
            edges.setdefault(item.source, set()).add(item.target)
    assert _cycles(edges) == []


def test_no_module_is_over_500_lines() -> None:
    too_long = {}
    for path in modules().values():
        relative = path.relative_to(PACKAGE.parent).as_posix()
        count = len(path.read_text(encoding="utf-8").splitlines())
        if count > MAX_LINES:
            too_long[relative] = count
    assert not too_long, f"modules over {MAX_LINES} lines: {too_long}"


# ---------------------------------------------------------------- late imports and start-up time


@lru_cache(maxsize=None)
def loads_heavy() -> frozenset[str]:
    """Our modules whose import (module level, following our imports and parent packages) loads sympy or
    libcst."""
    executed: dict[str, set[str]] = {name: set() for name in modules()}
    for item in all_imports():
        if item.in_function or item.type_only:
            continue
        executed[item.source].add(item.target)
        parts = item.target.split(".")
        for end in range(1, len(parts)):  # importing a.b.c runs a/__init__ and a/b/__init__ first
            executed[item.source].add(".".join(parts[:end]))
    heavy = {name for name, targets in executed.items() if targets & set(HEAVY)}
    changed = True
    while changed:
        changed = False
        for name, targets in executed.items():
            if name not in heavy and targets & heavy:
                heavy.add(name)
                changed = True
    return frozenset(heavy)


def test_heavy_modules_are_found() -> None:
    assert "verifier.algebra.groebner" in loads_heavy()  # imports sympy at module level
    assert "verifier.model.expr" not in loads_heavy()


def _has_reason(lines: list[str], line: int) -> bool:
    """A comment on the import's line, or on the line above the block of imports (or the ``try:``) it
    stands in."""
    if "#" in lines[line - 1]:
        return True
    above = line - 2
    while above >= 0 and lines[above].strip().startswith(("from ", "import ", "try:")):
        above -= 1
    return above >= 0 and lines[above].strip().startswith("#")


def test_every_late_import_of_a_heavy_module_says_why() -> None:
    missing = []
    heavy = loads_heavy()
    for item in all_imports():
        if not item.in_function or not (item.target in HEAVY or item.target in heavy):
            continue
        lines = modules()[item.source].read_text(encoding="utf-8").splitlines()
        if not _has_reason(lines, item.line):
            missing.append(f"{item.source}:{item.line} imports {item.target}")
    assert not missing, "late imports of sympy/libcst without a comment saying why:\n" + "\n".join(missing)


@pytest.mark.parametrize("argv", [["--help"], ["check", "--help"], ["audit", "--help"], ["explain", "--help"]])
def test_help_loads_neither_sympy_nor_libcst(argv: list[str]) -> None:
    probe = (
        "import contextlib, io, sys\n"
        "from verifier.cli.main import main\n"
        "with contextlib.redirect_stdout(io.StringIO()):\n"
        "    try:\n"
        f"        main({argv!r})\n"
        "    except SystemExit:\n"
        "        pass\n"
        f"print(sorted(name for name in {HEAVY!r} if name in sys.modules))\n"
    )
    done = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True, timeout=120)
    assert done.returncode == 0, done.stderr
    assert done.stdout.strip() == "[]"
