"""``idealcheck:`` lines in the docstrings of Python functions.

A docstring line whose text starts with ``idealcheck:`` is a claim about its function, read as if it stood
in the comment lines above the ``def``: each claim carries ``subject_line``, the line the Python reader
files that ``def`` under (its first decorator, else the ``def``).  The docstring is the string statement
that opens the function's body, as Python defines it; any other string (``s = "idealcheck: ..."``) is no
claim.  The text is taken as written in the source (escape sequences are not interpreted); a line ending
in ``\\`` continues on the next line of the docstring, as in comments.  Files are parsed with libcst,
never imported or run.
"""
from __future__ import annotations

import re

from collections.abc import Sequence

import libcst as cst

from verifier.claims.comments import MARKER, CommentClaim
from verifier.claims.frontends.python.modules import ModuleInfo, parse_module_text

# Only a file with a marker at the start of a line or right after a quote can hold a docstring claim;
# the rest skip the second parse.
_MAYBE = re.compile(r"(?:^|[\"'])[ \t]*" + re.escape(MARKER), re.MULTILINE)
_NEWLINE = re.compile(r"\r\n|\r|\n")


def _docstring_parts(node: cst.FunctionDef) -> list[cst.SimpleString]:
    """The string literals that make up the function's docstring; [] when it has none."""
    body = node.body
    smalls: Sequence[cst.CSTNode]
    if isinstance(body, cst.IndentedBlock):
        if not body.body or not isinstance(body.body[0], cst.SimpleStatementLine):
            return []
        smalls = body.body[0].body
    else:
        smalls = body.body
    if not smalls or not isinstance(smalls[0], cst.Expr):
        return []
    parts: list[cst.SimpleString] = []
    pending: list[cst.BaseExpression] = [smalls[0].value]
    while pending:
        value = pending.pop(0)
        if isinstance(value, cst.ConcatenatedString):
            pending[:0] = [value.left, value.right]
        elif isinstance(value, cst.SimpleString) and "b" not in _prefix(value.value).lower():
            parts.append(value)
        else:
            return []  # an f-string or bytes part: Python keeps no docstring
    return parts


def _prefix(raw: str) -> str:
    return raw[: len(raw) - len(raw.lstrip("rRuUbB"))]


def _part_claims(raw: str, line: int, column: int, subject_line: int) -> list[CommentClaim]:
    """The claims of one string literal whose source text ``raw`` starts at ``line``, 0-based ``column``."""
    prefix = _prefix(raw)
    quote = raw[len(prefix): len(prefix) + 3]
    if quote not in ('"""', "'''"):
        quote = quote[:1]
    lines = _NEWLINE.split(raw[: len(raw) - len(quote)])
    starts = [column + len(prefix) + len(quote)] + [0] * (len(lines) - 1)  # 0-based column of each body
    lines[0] = lines[0][len(prefix) + len(quote):]
    claims: list[CommentClaim] = []
    index = 0
    while index < len(lines):
        body = lines[index]
        stripped = body.lstrip()
        if not stripped.startswith(MARKER):
            index += 1
            continue
        first = index
        marker_column = starts[index] + len(body) - len(stripped) + 1
        start = len(body) - len(stripped) + len(MARKER)
        start += len(body[start:]) - len(body[start:].lstrip())
        texts: list[str] = []
        pieces: list[tuple[int, int, int]] = []
        offset = 0
        while True:
            part = lines[index][start:].rstrip()
            continues = part.endswith("\\") and index + 1 < len(lines)
            if part.endswith("\\"):
                part = part[:-1].rstrip()
            if part:
                if texts:
                    offset += 1  # the joining space
                pieces.append((offset, line + index, starts[index] + start + 1))
                texts.append(part)
                offset += len(part)
            if not continues:
                break
            index += 1
            start = len(lines[index]) - len(lines[index].lstrip())
        claims.append(CommentClaim(line + first, marker_column, " ".join(texts), line + index, False,
                                   tuple(pieces), subject_line))
        index += 1
    return claims


def _module_claims(info: ModuleInfo) -> list[CommentClaim]:
    claims: list[CommentClaim] = []

    class Visitor(cst.CSTVisitor):
        def visit_FunctionDef(self, node: cst.FunctionDef) -> None:
            subject = info.line(node.decorators[0] if node.decorators else node)
            for part in _docstring_parts(node):
                where = info.positions.get(part)
                if where is not None and MARKER in part.value:
                    claims.extend(_part_claims(part.value, where.start.line, where.start.column, subject))

    info.module.visit(Visitor())
    return claims


def docstring_claims(text: str) -> list[CommentClaim]:
    """The ``idealcheck:`` lines of the function docstrings of the Python module ``text``, in file order;
    [] when the text does not parse (its comment claims then report the parse error)."""
    if not _MAYBE.search(text):
        return []
    if text.startswith("\ufeff"):  # a byte-order mark is not a column
        text = text[1:]
    try:
        info = parse_module_text("module.py", text)
    except (cst.ParserSyntaxError, RecursionError, MemoryError, ValueError):
        return []
    return sorted(_module_claims(info), key=lambda claim: (claim.line, claim.column))


__all__ = ["docstring_claims"]
