"""Jupyter notebooks (``.ipynb``): read as JSON, never run.

Claims come from the comments of code cells and from the HTML comments of markdown cells
(``<!-- idealcheck: ... -->``, as in Markdown files).  The code cells, in order, are one module: a
function claim may sit above a ``def`` of any code cell and inline functions of earlier cells.  The
module text is built with a line map, handed to the Python claim reader, and every location is mapped
back to its cell: ``Location.cell`` is the 1-based position of the cell among all cells, ``line`` the
line within that cell's source.

IPython syntax that is not Python (``%magic``, ``!shell`` lines) becomes ``pass`` so that the rest of
the module still parses; a cell with a cell magic (``%%bash``, ...) is not Python and is left out.
Notebooks whose kernel is not Python have their code-cell comments read with that language's comment
syntax (expression claims only).
"""
from __future__ import annotations

import json
import re
from collections.abc import Callable
from dataclasses import dataclass, replace
from typing import Any

from verifier.claims.comments import MARKER, CommentClaim, find_comments
from verifier.claims.expression import expression_claims
from verifier.claims.markup import markdown_comments
from verifier.model.claim import Claim, ExtractionContext, Location, Obligation, Problem

# (path, module text, context) -> claims of that text read as a Python module reported under path
PythonModuleReader = Callable[[str, str, ExtractionContext], list[Claim]]

# Kernel language -> a file name whose extension selects that language's comment syntax.
_LANGUAGE_FILES = {"python": "cell.py", "julia": "cell.jl", "r": "cell.r", "matlab": "cell.m", "octave": "cell.m",
                   "c++": "cell.cpp", "c": "cell.c", "rust": "cell.rs", "go": "cell.go", "javascript": "cell.js",
                   "typescript": "cell.ts", "scala": "cell.scala", "bash": "cell.sh", "fortran": "cell.f90"}
_LINE_WORD = re.compile(r"\bline (\d+)\b")
_MAGIC = re.compile(r"^(\s*)(?:%%?[A-Za-z]|![^=])")  # "% n" or "!= b" may continue an expression


@dataclass(frozen=True)
class Cell:
    number: int  # 1-based position among all cells
    kind: str  # "code", "markdown", "raw"
    source: str


@dataclass(frozen=True)
class LineMap:
    """Module line (1-based) -> (cell number, line within the cell)."""

    places: tuple[tuple[int, int], ...]  # index = module line - 1; (0, 0) for separator lines

    def place(self, line: int) -> tuple[int, int] | None:
        if 1 <= line <= len(self.places) and self.places[line - 1][0] > 0:
            return self.places[line - 1]
        return None


class NotebookError(Exception):
    """The file is not a notebook this reader understands; the message says why and where."""


# ---------------------------------------------------------------- reading the JSON


def _source(value: Any) -> str:
    if isinstance(value, str):
        return value
    if isinstance(value, list) and all(isinstance(item, str) for item in value):
        return "".join(value)
    raise NotebookError("a cell's `source` is neither a string nor a list of strings")


def read_cells(text: str) -> tuple[list[Cell], str]:
    """The cells of a notebook (nbformat 4) and its kernel language (lower case, "python" if unknown)."""
    try:
        document = json.loads(text)
    except json.JSONDecodeError as exc:
        raise NotebookError(f"not valid notebook JSON: {exc.msg} (line {exc.lineno}, column {exc.colno})") from None
    except RecursionError:
        raise NotebookError("not a readable notebook: the JSON is nested too deeply") from None
    if not isinstance(document, dict):
        raise NotebookError("not a notebook: the JSON document is not an object")
    if "worksheets" in document and "cells" not in document:
        raise NotebookError("notebook format 3 is not read; save the notebook in format 4")
    cells = document.get("cells")
    if not isinstance(cells, list):
        raise NotebookError("not a notebook: no `cells` list")
    result: list[Cell] = []
    for number, cell in enumerate(cells, start=1):
        if not isinstance(cell, dict) or not isinstance(cell.get("cell_type"), str):
            raise NotebookError(f"cell {number} is not an object with a `cell_type`")
        try:
            source = _source(cell.get("source", ""))
        except NotebookError as exc:
            raise NotebookError(f"cell {number}: {exc}") from None
        result.append(Cell(number, cell["cell_type"], source))
    return result, _language(document.get("metadata"))


def _language(metadata: Any) -> str:
    if not isinstance(metadata, dict):
        return "python"
    for key, field in (("kernelspec", "language"), ("language_info", "name")):
        table = metadata.get(key)
        if isinstance(table, dict) and isinstance(table.get(field), str) and table[field].strip():
            return table[field].strip().lower()
    return "python"


# ---------------------------------------------------------------- the code cells as one module


def _python_lines(source: str) -> list[str] | None:
    """The cell's lines with IPython-only lines made ``pass``; None for a cell magic (not Python)."""
    lines = source.splitlines()
    if lines and lines[0].lstrip().startswith("%%"):
        return None
    result: list[str] = []
    for line in lines:
        magic = _MAGIC.match(line)
        if magic is not None:
            result.append(magic.group(1) + "pass")
        else:
            result.append(line)
    return result


def build_module(cells: list[Cell]) -> tuple[str, LineMap]:
    """The code cells in order as one module text (a blank line between cells) and its line map."""
    lines: list[str] = []
    places: list[tuple[int, int]] = []
    for cell in cells:
        if cell.kind != "code":
            continue
        cell_lines = _python_lines(cell.source)
        if cell_lines is None:
            continue
        for number, line in enumerate(cell_lines, start=1):
            lines.append(line)
            places.append((cell.number, number))
        lines.append("")
        places.append((0, 0))
    return "\n".join(lines) + "\n", LineMap(tuple(places))


# ---------------------------------------------------------------- mapping claims back to cells


def _map_text(text: str, line_map: LineMap) -> str:
    def one(match: re.Match[str]) -> str:
        place = line_map.place(int(match.group(1)))
        return match.group(0) if place is None else f"cell {place[0]} line {place[1]}"

    return _LINE_WORD.sub(one, text)


def _in_cell(claim: Claim, path: str, cell: int, line: int) -> Claim:
    """The claim re-located to ``line`` of ``cell``; the id names the cell so it stays unique."""
    suffix = claim.id[claim.id.index("#"):] if "#" in claim.id else ""
    column = claim.location.column
    return replace(claim, id=f"{path}:cell {cell}:{line}:{column}{suffix}",
                   location=Location(path, line, column, cell))


def _map_claim(claim: Claim, path: str, line_map: LineMap) -> Claim:
    place = line_map.place(claim.location.line) or (0, claim.location.line)
    problem = claim.problem
    if problem is not None:
        problem = Problem(problem.verdict, _map_text(problem.message, line_map))
    obligations = tuple(
        replace(o, label=_map_text(o.label, line_map), notes=tuple(_map_text(n, line_map) for n in o.notes))
        for o in claim.obligations
    )
    mapped = replace(claim, problem=problem, obligations=obligations,
                     notes=tuple(_map_text(n, line_map) for n in claim.notes))
    return _in_cell(mapped, path, place[0], place[1])


def _cell_claims(comments: list[CommentClaim], path: str, cell: int, context: ExtractionContext) -> list[Claim]:
    claims: list[Claim] = []
    for comment in comments:
        for claim in expression_claims(comment, path, context):
            claims.append(_in_cell(claim, path, cell, claim.location.line))
    return claims


def _error(path: str, message: str) -> Claim:
    return Claim(id=f"{path}:1:1", location=Location(path, 1, 1), kind="expression",
                 text="(the notebook could not be read)", problem=Problem("error", message), dependencies=(path,))


def extract_notebook(path: str, text: str, context: ExtractionContext, read_python: PythonModuleReader) -> list[Claim]:
    """Every claim of the notebook ``path`` whose JSON text is ``text``."""
    if MARKER not in text:
        return []
    try:
        cells, language = read_cells(text)
    except NotebookError as exc:
        return [_error(path, str(exc))]
    claims: list[Claim] = []
    if language == "python":
        module, line_map = build_module(cells)
        if MARKER in module:
            claims.extend(_map_claim(claim, path, line_map) for claim in read_python(path, module, context))
    else:
        syntax_file = _LANGUAGE_FILES.get(language, "cell.unknown-language")
        for cell in cells:
            if cell.kind == "code" and MARKER in cell.source:
                claims.extend(_cell_claims(find_comments(syntax_file, cell.source), path, cell.number, context))
    for cell in cells:
        if cell.kind == "markdown" and MARKER in cell.source:
            claims.extend(_cell_claims(markdown_comments(cell.source), path, cell.number, context))
    return sorted(claims, key=lambda c: (c.location.cell or 0, c.location.line, c.location.column, c.id))


__all__ = ["Cell", "LineMap", "NotebookError", "build_module", "extract_notebook", "read_cells"]
