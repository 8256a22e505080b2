"""Parsing kernel source files with tree-sitter: one grammar per language, loaded on first use.

The language of a file follows from its extension.  The parse is never an execution: tree-sitter only
builds a syntax tree.  A tree with error nodes is reported as a syntax error at the first bad place.
"""
from __future__ import annotations

import os
from dataclasses import dataclass
from typing import Any

# extension -> language name (the grammar packages are tree_sitter_<name>)
_LANGUAGE_BY_EXTENSION: dict[str, str] = {}
for _language, _extensions in (
    ("c", ".c .h"),
    ("cpp", ".cc .cpp .cxx .c++ .hpp .hh .hxx .h++"),
    ("cuda", ".cu .cuh"),
    ("fortran", ".f90 .f95 .f03 .f08 .f18 .f .for .f77 .ftn"),  # fixed form: see fixed_form.py
    ("julia", ".jl"),
    ("rust", ".rs"),
):
    for _extension in _extensions.split():
        _LANGUAGE_BY_EXTENSION[_extension] = _language

KERNEL_LANGUAGES = ("c", "cpp", "cuda", "fortran", "julia", "rust")
_PARSERS: dict[str, Any] = {}


def language_of(path: str) -> str | None:
    """The kernel language of ``path`` by its extension (case-insensitive), or None."""
    return _LANGUAGE_BY_EXTENSION.get(os.path.splitext(path)[1].lower())


class GrammarMissing(Exception):
    """The grammar package of a language is not installed."""


def _parser(language: str) -> Any:
    parser = _PARSERS.get(language)
    if parser is None:
        # Function-level imports: they keep `idealcheck --help` (and runs without kernel claims) from
        # loading tree-sitter and the grammars.
        import importlib

        try:
            import tree_sitter

            grammar = importlib.import_module(f"tree_sitter_{language}")
        except ImportError as exc:
            raise GrammarMissing(f"the tree-sitter grammar for {language} is not installed ({exc})") from None
        parser = tree_sitter.Parser(tree_sitter.Language(grammar.language()))
        _PARSERS[language] = parser
    return parser


@dataclass(frozen=True)
class SyntaxProblem:
    line: int  # 1-based
    column: int  # 1-based, in characters
    message: str


@dataclass(frozen=True)
class ParsedSource:
    """A parsed file: the tree-sitter tree and the text, with byte offsets turned into characters."""

    language: str
    text: str
    data: bytes
    root: Any  # tree_sitter.Node
    problem: SyntaxProblem | None

    def node_text(self, node: Any) -> str:
        return self.data[node.start_byte:node.end_byte].decode("utf-8", "replace")

    def line(self, node: Any) -> int:
        return int(node.start_point[0]) + 1

    def end_line(self, node: Any) -> int:
        return int(node.end_point[0]) + 1

    def column(self, node: Any) -> int:
        row, byte_column = node.start_point
        line_start = node.start_byte - byte_column
        return len(self.data[line_start:node.start_byte].decode("utf-8", "replace")) + 1


def parse_source(language: str, text: str) -> ParsedSource:
    """Parse ``text`` as ``language``; ``problem`` names the first syntax error, if any."""
    data = text.encode("utf-8", "surrogatepass")
    tree = _parser(language).parse(data)
    parsed = ParsedSource(language, text, data, tree.root_node, None)
    if tree.root_node.has_error:
        bad = _first_error(tree.root_node)
        if bad is not None:
            if bad.is_missing:
                message = f"syntax error: missing `{bad.type}`"
            else:
                snippet = parsed.node_text(bad).strip().splitlines()
                shown = snippet[0][:40] if snippet else ""
                message = f"syntax error near `{shown}`" if shown else "syntax error"
            problem = SyntaxProblem(parsed.line(bad), parsed.column(bad), message)
        else:
            problem = SyntaxProblem(1, 1, "syntax error")
        parsed = ParsedSource(language, text, data, tree.root_node, problem)
    return parsed


def _first_error(root: Any) -> Any:
    """The first ERROR or MISSING node in document order (iterative: deep trees must not recurse)."""
    stack = [root]
    while stack:
        node = stack.pop()
        if node.is_error or node.is_missing:
            return node
        if node.has_error:
            stack.extend(reversed(node.children))
    return None
