"""pytest plugin: every claim is a test item (entry point ``idealcheck`` in the ``pytest11`` group).

Off unless asked for, with ``pytest --idealcheck`` or ``idealcheck = true`` in the pytest ini options.
Then the claims under ``--idealcheck-path`` (repeatable), else ``idealcheck_paths`` (ini, relative to the
root folder), else ``paths`` of ``[tool.idealcheck]``, else the folder of that configuration, become one
item each, grouped under their file.  An item is named by its function (function claims), by function
and claim text (statement claims and claims inside a function) or by its claim text; names carry no line
numbers, so ``-k``, ``--lf`` and pytest-xdist (which needs the same items in every worker) see stable
ids.  A refuted, inconclusive or malformed claim fails its item with the report's details; an
inconclusive one is skipped instead when the configuration says ``on_inconclusive = "warn"``.  Time and
memory limits, the result cache and the baseline of accepted results are the tool's own
(``[tool.idealcheck]``); a stale baseline entry is a warning.

Importing this module loads neither sympy nor libcst: pytest imports it in every run of a project that
has idealcheck installed, also when the plugin stays off.
"""
from __future__ import annotations

import ast
import os
import warnings
from collections.abc import Iterator
from pathlib import Path
from typing import Any

import pytest

INI_ENABLE = "idealcheck"
INI_PATHS = "idealcheck_paths"


def pytest_addoption(parser: pytest.Parser) -> None:
    group = parser.getgroup("idealcheck", "decide the claims of idealcheck as test items")
    group.addoption("--idealcheck", action="store_true", default=False,
                    help="collect every idealcheck claim as a test item (ini: idealcheck = true)")
    group.addoption("--idealcheck-path", action="append", default=[], metavar="PATH",
                    help="file or folder whose claims are collected (repeatable; ini: idealcheck_paths; "
                         "default: paths of [tool.idealcheck], else the folder of that configuration)")
    group.addoption("--idealcheck-config", metavar="FILE", default=None,
                    help="pyproject.toml to read [tool.idealcheck] from (default: the nearest one)")
    group.addoption("--idealcheck-no-cache", action="store_true", default=False,
                    help="neither read nor write the idealcheck result cache")
    parser.addini(INI_ENABLE, "collect every idealcheck claim as a test item", type="bool", default=False)
    parser.addini(INI_PATHS, "files or folders whose idealcheck claims are collected", type="linelist", default=[])


def enabled(config: pytest.Config) -> bool:
    return bool(config.getoption("idealcheck") or config.getini(INI_ENABLE))


def pytest_configure(config: pytest.Config) -> None:
    if enabled(config):
        config.pluginmanager.register(ClaimCollection(config), "idealcheck-claims")


# ---------------------------------------------------------------- names


def _function_spans(source: str) -> list[tuple[int, int, int, str]]:
    """(first line incl. decorators, def line, last line, qualname) of every def; [] if it does not parse.

    ``ast.parse`` only builds the tree: nothing of the scanned file is run.
    """
    try:
        tree = ast.parse(source)
    except (SyntaxError, ValueError, RecursionError, MemoryError):
        return []
    spans: list[tuple[int, int, int, str]] = []

    def visit(node: ast.AST, prefix: str) -> None:
        for child in ast.iter_child_nodes(node):
            if isinstance(child, (ast.FunctionDef, ast.AsyncFunctionDef)):
                first = min([child.lineno] + [d.lineno for d in child.decorator_list])
                qualname = prefix + child.name
                spans.append((first, child.lineno, getattr(child, "end_lineno", None) or child.lineno, qualname))
                visit(child, qualname + ".<locals>.")
            elif isinstance(child, ast.ClassDef):
                visit(child, prefix + child.name + ".")
            else:
                visit(child, prefix)

    visit(tree, "")
    return spans


def _python_source(claim: Any, texts: dict[str, str]) -> str | None:
    """The Python source the claim's line counts in: the file, or for a notebook the claim's cell."""
    path = claim.location.path
    text = texts.get(path)
    if text is None:
        return None
    if claim.location.cell is None:
        return text if path.lower().endswith((".py", ".pyi")) else None
    # function-level import: only reached once the plugin is enabled
    from verifier.claims.notebook import NotebookError, build_module, read_cells

    try:
        cells, language = read_cells(text)
    except NotebookError:
        return None
    cell = next((c for c in cells if c.number == claim.location.cell), None)
    if cell is None or cell.kind != "code" or language != "python":
        return None
    return build_module([cell])[0]


def claim_name(claim: Any, spans: list[tuple[int, int, int, str]]) -> str:
    """``qualname`` for a function claim, ``qualname: text`` inside a function, else the claim text."""
    line = claim.location.line
    if claim.kind == "function":
        following = [span for span in spans if span[0] > line]
        if following:
            return min(following)[3]
    inside = [span for span in spans if span[1] <= line <= span[2]]
    if inside:
        innermost = max(inside, key=lambda span: span[1])
        return f"{innermost[3]}: {claim.text}"
    return claim.text


def item_names(claims: list[Any], texts: dict[str, str]) -> list[str]:
    """Names of the claims of one file, unique within it (a repeated name gets " (2)", " (3)", ...)."""
    spans_by_source: dict[str, list[tuple[int, int, int, str]]] = {}
    names: list[str] = []
    for claim in claims:
        source = _python_source(claim, texts)
        spans: list[tuple[int, int, int, str]] = []
        if source is not None:
            if source not in spans_by_source:
                spans_by_source[source] = _function_spans(source)
            spans = spans_by_source[source]
        name = claim_name(claim, spans).replace("::", ": :")  # "::" separates the parts of a node id
        if claim.location.cell is not None:
            name = f"cell {claim.location.cell}: {name}"
        names.append(name)
    seen: dict[str, int] = {}
    unique: list[str] = []
    for name in names:
        seen[name] = seen.get(name, 0) + 1
        unique.append(name if seen[name] == 1 else f"{name} ({seen[name]})")
    return unique


# ---------------------------------------------------------------- collection and running


class ClaimFailed(Exception):
    """A claim that is not proved; carries its verdict for the failure report."""

    def __init__(self, verdict: Any) -> None:
        super().__init__(verdict.verdict)
        self.verdict = verdict


class ClaimCollection:
    """Registered when the plugin is enabled: adds the claim items and decides them."""

    def __init__(self, config: pytest.Config) -> None:
        self.config = config
        self.claim_set: Any = None
        self.verdicts: dict[str, Any] = {}  # claim id -> verdict

    def _paths(self) -> list[str]:
        root = self.config.rootpath
        given = self.config.getoption("idealcheck_path") or []
        if given:
            invoked = Path(self.config.invocation_params.dir)
            return [os.path.relpath((invoked / p).resolve(), root) for p in given]
        configured = self.config.getini(INI_PATHS)
        return [os.path.relpath((root / p).resolve(), root) for p in configured]

    def find(self) -> Any:
        # function-level import: the API loads the claim readers; only an enabled plugin needs them
        from verifier import api

        explicit = self.config.getoption("idealcheck_config")
        if explicit is not None:
            explicit = str(Path(self.config.invocation_params.dir) / explicit)
        paths = self._paths()
        try:
            found = api.find_claims(paths or None, explicit, cwd=self.config.rootpath,
                                    cache=not self.config.getoption("idealcheck_no_cache"))
        except (api.ConfigError, api.DiscoveryError) as exc:
            raise pytest.UsageError(f"idealcheck: {exc}") from None
        except api.BaselineError as exc:
            raise pytest.UsageError(f"idealcheck: baseline error: {exc}") from None
        for entry in found.stale:
            warnings.warn(pytest.PytestWarning(f"idealcheck: {entry.message()}"), stacklevel=1)
        return found

    @pytest.hookimpl(tryfirst=True)
    def pytest_collection_modifyitems(self, session: pytest.Session, config: pytest.Config,
                                      items: list[pytest.Item]) -> None:
        self.claim_set = self.find()
        by_file: dict[str, list[Any]] = {}
        for claim in self.claim_set.claims:
            by_file.setdefault(claim.location.path, []).append(claim)
        texts = dict(self.claim_set.texts)
        for path, claims in by_file.items():
            collector = ClaimFile.from_parent(session, path=self.config.rootpath / path)
            collector.claims = list(zip(item_names(claims, texts), claims))
            collector.collection = self
            items.extend(session.genitems(collector))

    def verdict(self, item: "ClaimItem") -> Any:
        claim = item.claim
        if claim.id not in self.verdicts:
            from verifier import api

            if hasattr(self.config, "workerinput"):
                # pytest-xdist worker: items arrive one at a time, so decide just this one
                batch = [claim]
            else:
                # one run over every selected claim not yet decided: the tool's workers share the cores
                batch = [i.claim for i in item.session.items
                         if isinstance(i, ClaimItem) and i.claim.id not in self.verdicts]
                if all(c.id != claim.id for c in batch):
                    batch.append(claim)
            for decided, verdict in zip(batch, api.decide_claims(self.claim_set, batch)):
                self.verdicts[decided.id] = verdict
        return self.verdicts[claim.id]


class ClaimFile(pytest.File):
    """The claims of one scanned file (the file itself is only read, never imported)."""

    claims: list[tuple[str, Any]]
    collection: ClaimCollection

    def collect(self) -> Iterator["ClaimItem"]:
        for name, claim in self.claims:
            item = ClaimItem.from_parent(self, name=name)
            item.claim = claim
            item.collection = self.collection
            yield item


class ClaimItem(pytest.Item):
    claim: Any
    collection: ClaimCollection

    def runtest(self) -> None:
        verdict = self.collection.verdict(self)
        self.user_properties.append(("idealcheck_verdict", verdict.verdict))
        expected = verdict.claim.expected  # an inline `expect` or a baseline entry: skipped while it holds
        if expected is not None and verdict.verdict == expected.verdict:
            if expected.baseline is not None:
                why = f" ({expected.reason})" if expected.reason else ""
                pytest.skip(f"idealcheck {verdict.verdict}, accepted by the baseline {expected.baseline}{why}")
            pytest.skip(f"idealcheck {verdict.verdict} as expected: {expected.reason}")
        if verdict.verdict == "proved" and expected is None:
            return
        if verdict.verdict == "inconclusive" and self.collection.claim_set.on_inconclusive == "warn":
            pytest.skip(f"idealcheck inconclusive: {verdict.reason}")
        raise ClaimFailed(verdict)

    def repr_failure(self, excinfo: pytest.ExceptionInfo[BaseException], style: Any = None) -> Any:
        if isinstance(excinfo.value, ClaimFailed):
            from verifier.report.text import verdict_lines

            return "\n".join(verdict_lines(excinfo.value.verdict))
        return super().repr_failure(excinfo)

    def reportinfo(self) -> tuple[Any, int | None, str]:
        location = self.claim.location
        where = f"cell {location.cell} " if location.cell is not None else ""
        return self.path, location.line - 1, f"idealcheck {where}{self.claim.kind} claim: {self.claim.text}"
