"""Finds ``idealcheck:`` comments in source files of many languages.

A claim is a comment whose text starts with ``idealcheck:`` (after the comment leader and any doc-comment
decoration such as ``///``, ``/**`` or `` * ``).  A claim line ending in ``\\`` continues on the next line's
comment.  The comment syntax is chosen by file extension; strings are skipped on a best-effort basis so that
``"// idealcheck: ..."`` inside a string literal is not a claim.  Python files are read with ``tokenize``.

To support another language, describe its comments and strings with a ``CommentSyntax`` and add its
extensions to the table below (plus a sample file in fixtures/languages/ and its expectation in
tests/test_comments.py).  Files of unknown type get a generic scan: any leader at the start of a line.
"""
from __future__ import annotations

import io
import os
import re
import tokenize
from dataclasses import dataclass

MARKER = "idealcheck:"


@dataclass(frozen=True)
class CommentClaim:
    line: int  # 1-based line of the comment
    column: int  # 1-based column where "idealcheck:" starts
    text: str  # after "idealcheck:", continuation lines joined, stripped
    end_line: int  # last line the claim text uses (== line without continuation)
    trailing: bool  # True when code precedes the comment on its first line
    # Where each joined piece of ``text`` comes from: (offset in text, line, 1-based column), for error columns.
    pieces: tuple[tuple[int, int, int], ...] = ()
    # For a claim in a Python docstring: the line of its function's first decorator or ``def``, which the
    # claim is about as if it stood above it; None for a comment.
    subject_line: int | None = None

    def position(self, offset: int) -> tuple[int, int]:
        """(line, column) in the file of the character at ``offset`` in ``text`` (best effort)."""
        line, column = self.line, self.column
        for start, piece_line, piece_column in self.pieces:
            if offset >= start:
                line, column = piece_line, piece_column + (offset - start)
        return line, column


@dataclass(frozen=True)
class CommentSyntax:
    """How comments and strings look in one family of languages (only what the scanner needs)."""

    line_leaders: tuple[str, ...]
    blocks: tuple[tuple[str, str], ...] = ()
    quotes: tuple[str, ...] = ('"', "'")  # strings that end at the end of the line at the latest
    multiline_quotes: tuple[str, ...] = ()  # strings that may span lines (checked before ``quotes``)
    char_quote: str | None = None  # "strict": 'x' char literals only; "transpose": ' after a value is an operator
    backslash_escapes: bool = True
    leader_needs_space: bool = False  # shell-like: '#' starts a comment only at a word start
    leader_escape: str | None = None  # LaTeX: '\%' is not a comment
    fixed_form: bool = False  # Fortran fixed form: C, c, * or ! in column 1


C_LIKE = CommentSyntax(("//",), (("/*", "*/"),), quotes=('"',), char_quote="strict")
RUST = CommentSyntax(("//",), (("/*", "*/"),), quotes=(), multiline_quotes=('"',), char_quote="strict")
GO = CommentSyntax(("//",), (("/*", "*/"),), quotes=('"',), multiline_quotes=("`",), char_quote="strict")
JAVASCRIPT = CommentSyntax(("//",), (("/*", "*/"),), quotes=('"', "'"), multiline_quotes=("`",))
HASH = CommentSyntax(("#",))
SHELL = CommentSyntax(("#",), leader_needs_space=True)
JULIA = CommentSyntax(("#",), (("#=", "=#"),), quotes=('"',), multiline_quotes=('"""',), char_quote="transpose")
MATLAB = CommentSyntax(
    ("%", "#"), (("%{", "%}"),), quotes=('"',), char_quote="transpose", backslash_escapes=False
)
FORTRAN_FREE = CommentSyntax(("!",), backslash_escapes=False)
FORTRAN_FIXED = CommentSyntax(("!",), backslash_escapes=False, fixed_form=True)
LATEX = CommentSyntax(("%",), quotes=(), leader_escape="\\")
DASHES = CommentSyntax(("--",), (("/*", "*/"),), backslash_escapes=False)
HASKELL = CommentSyntax(("--",), (("{-", "-}"),), quotes=('"',), char_quote="strict")
LUA = CommentSyntax(("--",), (("--[[", "]]"),))
ADA = CommentSyntax(("--",), quotes=('"',), char_quote="strict", backslash_escapes=False)
SEMICOLON = CommentSyntax((";",), quotes=('"',))
PHP = CommentSyntax(("//", "#"), (("/*", "*/"),))

_BY_EXTENSION: dict[str, CommentSyntax] = {}
for _syntax, _extensions in (
    (C_LIKE, ".c .h .cc .cpp .cxx .c++ .hpp .hh .hxx .h++ .cu .cuh .java .kt .kts .scala .cs .swift .dart .m4 .glsl .cl .proto"),
    (RUST, ".rs"),
    (GO, ".go"),
    (JAVASCRIPT, ".js .mjs .cjs .ts .mts .cts .tsx .jsx"),
    (HASH, ".py .pyi .pyx .pxd .r .rb .pl .pm .toml .cmake .nim .tcl .ps1 .awk .mk .cfg .conf .gitignore"),
    (SHELL, ".sh .bash .zsh .ksh .fish .yaml .yml"),
    (JULIA, ".jl"),
    (MATLAB, ".m"),
    (FORTRAN_FREE, ".f90 .f95 .f03 .f08 .f18"),
    (FORTRAN_FIXED, ".f .for .f77 .ftn"),
    (LATEX, ".tex .sty .cls .bib .ltx .dtx"),
    (DASHES, ".sql"),
    (HASKELL, ".hs .lhs .elm"),
    (LUA, ".lua"),
    (ADA, ".adb .ads .vhd .vhdl"),
    (SEMICOLON, ".lisp .lsp .el .cl .clj .cljs .scm .ss .rkt .asm .s .ini"),
    (PHP, ".php"),
):
    for _extension in _extensions.split():
        _BY_EXTENSION.setdefault(_extension, _syntax)

PYTHON_EXTENSIONS = (".py", ".pyi")
# Leaders tried at the start of a line in files of unknown type (longest first).
GENERIC_LEADERS = ("/*", "//", "--", "#", "!", "%", ";", "*")
# Doc-comment decoration allowed between a leader and "idealcheck:" (``///``, ``//!``, ``/**``, ``!>``, ``-- |``).
_DECORATION = {"//": "/!<", "#": "#!", "!": "!<>", "%": "%", ";": ";", "--": "-|", "*": "*"}
# Decoration stripped from a continuation line (never '-', which may be a minus sign).
_CONTINUATION_DECORATION = {"//": "/!", "#": "#", "!": "!", "%": "%", ";": ";", "--": "", "*": "*"}


def syntax_for(path: str) -> CommentSyntax | None:
    """The comment syntax for ``path`` by extension (case-insensitive), or None for an unknown type."""
    name = os.path.basename(path)
    extension = os.path.splitext(name)[1].lower()
    if extension in _BY_EXTENSION:
        return _BY_EXTENSION[extension]
    if name in ("Makefile", "makefile", "GNUmakefile", "Dockerfile", "CMakeLists.txt", ".bashrc", ".profile"):
        return HASH
    return None


# ---------------------------------------------------------------- comment segments


@dataclass(frozen=True)
class _Segment:
    line: int  # 1-based
    start: int  # 0-based character index of the comment body in the line
    body: str  # comment text after the leader (block comments: without the closing marker)
    code_before: bool
    leader: str  # the leader, or "*" for the inner lines of a block comment


def _python_segments(text: str) -> list[_Segment] | None:
    lines = text.splitlines()
    segments: list[_Segment] = []
    try:
        for token in tokenize.generate_tokens(io.StringIO(text).readline):
            if token.type == tokenize.COMMENT:
                row, col = token.start
                line = lines[row - 1] if row - 1 < len(lines) else token.line
                segments.append(_Segment(row, col + 1, token.string[1:], bool(line[:col].strip()), "#"))
    except (tokenize.TokenError, IndentationError, SyntaxError, ValueError):
        return None
    return segments


_STRICT_CHAR = re.compile(r"'(?:\\.[^'\n]{0,9}|[^\\'\n])'")


def _string_end(line: str, start: int, quote: str, escapes: bool) -> int:
    """Index just after the string starting at ``start`` (which holds ``quote``), or -1 if open at line end."""
    i = start + len(quote)
    while i < len(line):
        if escapes and line[i] == "\\":
            i += 2
            continue
        if line.startswith(quote, i):
            return i + len(quote)
        i += 1
    return -1


def _scan_segments(text: str, syntax: CommentSyntax) -> list[_Segment]:
    segments: list[_Segment] = []
    starts = {token[0] for token in (*syntax.line_leaders, *syntax.quotes, *syntax.multiline_quotes)}
    starts |= {opener[0] for opener, _ in syntax.blocks}
    if syntax.char_quote:
        starts.add("'")
    interesting = re.compile("[" + re.escape("".join(sorted(starts))) + "]")
    block_close: str | None = None  # inside a block comment
    open_quote: str | None = None  # inside a multi-line string
    for number, line in enumerate(text.splitlines(), start=1):
        i = 0
        code_before = False
        if syntax.fixed_form and line[:1] in ("C", "c", "*", "!") and block_close is None:
            segments.append(_Segment(number, 1, line[1:], False, "!"))
            continue
        if block_close is not None:
            end = line.find(block_close)
            if end < 0:
                segments.append(_Segment(number, 0, line, False, "*"))
                continue
            segments.append(_Segment(number, 0, line[:end], False, "*"))
            i = end + len(block_close)
            block_close = None
        if open_quote is not None:
            end = _string_end(line, -len(open_quote), open_quote, syntax.backslash_escapes)
            if end < 0:
                continue
            i = end
            open_quote = None
            code_before = True
        while i < len(line):
            # jump over plain code to the next character that may start a comment or a string
            match = interesting.search(line, i)
            if match is None:
                break
            if match.start() > i:
                code_before = code_before or bool(line[i : match.start()].strip())
                i = match.start()
            char = line[i]
            handled = False
            for opener, closer in syntax.blocks:
                if line.startswith(opener, i):
                    body_start = i + len(opener)
                    end = line.find(closer, body_start)
                    if end < 0:
                        segments.append(_Segment(number, body_start, line[body_start:], code_before, "*"))
                        block_close = closer
                        i = len(line)
                    else:
                        segments.append(_Segment(number, body_start, line[body_start:end], code_before, "*"))
                        i = end + len(closer)
                    handled = True
                    break
            if handled:
                continue
            leader = next((lead for lead in syntax.line_leaders if line.startswith(lead, i)), None)
            if leader is not None:
                escaped = syntax.leader_escape is not None and i > 0 and line[i - 1] == syntax.leader_escape
                spaced = not syntax.leader_needs_space or i == 0 or line[i - 1].isspace()
                if not escaped and spaced:
                    body_start = i + len(leader)
                    segments.append(_Segment(number, body_start, line[body_start:], code_before, leader))
                    break
            quote = next((q for q in syntax.multiline_quotes if line.startswith(q, i)), None)
            if quote is not None:
                end = _string_end(line, i, quote, syntax.backslash_escapes)
                if end < 0:
                    open_quote = quote
                    break
                i = end
                code_before = True
                continue
            if char in syntax.quotes:
                end = _string_end(line, i, char, syntax.backslash_escapes)
                i = len(line) if end < 0 else end
                code_before = True
                continue
            if char == "'" and syntax.char_quote == "strict":
                match = _STRICT_CHAR.match(line, i)
                i = match.end() if match else i + 1
                code_before = True
                continue
            if char == "'" and syntax.char_quote == "transpose":
                previous = line[i - 1] if i > 0 else " "
                if previous.isalnum() or previous in "_)]}.'":
                    i += 1  # the transpose operator
                else:
                    end = _string_end(line, i, "'", syntax.backslash_escapes)
                    i = len(line) if end < 0 else end
                code_before = True
                continue
            code_before = True
            i += 1
    return segments


def _generic_segments(text: str) -> list[_Segment]:
    segments: list[_Segment] = []
    for number, line in enumerate(text.splitlines(), start=1):
        stripped = line.lstrip()
        start = len(line) - len(stripped)
        leader = next((lead for lead in GENERIC_LEADERS if stripped.startswith(lead)), None)
        if leader is None:
            continue
        body = stripped[len(leader):]
        if leader == "/*":
            close = body.find("*/")
            body = body if close < 0 else body[:close]
        elif body.rstrip().endswith("*/"):
            body = body.rstrip()[:-2]
        segments.append(_Segment(number, start + len(leader), body, False, "*" if leader == "/*" else leader))
    return segments


_OBJECTIVE_C = re.compile(r"^\s*(?:#import|#include|@interface|@implementation|@protocol)\b", re.MULTILINE)


def comment_segments(path: str, text: str) -> list[_Segment]:
    """Every comment piece of ``text`` (one per line of a block comment), in file order."""
    extension = os.path.splitext(path)[1].lower()
    if extension in PYTHON_EXTENSIONS:
        found = _python_segments(text)
        if found is not None:
            return found
        return _scan_segments(text, HASH)
    syntax = syntax_for(path)
    if syntax is MATLAB and _OBJECTIVE_C.search(text):
        syntax = C_LIKE  # .m is also Objective-C
    if syntax is None:
        return _generic_segments(text)
    return _scan_segments(text, syntax)


# ---------------------------------------------------------------- claims


def _skip(body: str, chars: str) -> int:
    i = 0
    while i < len(body) and body[i].isspace():
        i += 1
    while i < len(body) and body[i] in chars:
        i += 1
    while i < len(body) and body[i].isspace():
        i += 1
    return i


def _continuation_start(segment: _Segment) -> int:
    """Index in ``segment.body`` where a continuation line's text starts (decoration and spaces skipped)."""
    body = segment.body
    i = 0
    if segment.leader == "*":
        while i < len(body) and body[i].isspace():
            i += 1
        if body.startswith("*", i) and not body.startswith("**", i):
            i += 1
    else:
        chars = _CONTINUATION_DECORATION.get(segment.leader, "")
        while i < len(body) and body[i] in chars:
            i += 1
    while i < len(body) and body[i].isspace():
        i += 1
    return i


def _strip_backslash(text: str) -> tuple[str, bool]:
    stripped = text.rstrip()
    if stripped.endswith("\\"):
        return stripped[:-1].rstrip(), True
    return stripped, False


def find_comments(path: str, text: str) -> list[CommentClaim]:
    """The ``idealcheck:`` claims in the comments of ``text``; ``path`` selects the comment syntax."""
    if MARKER not in text:
        return []
    if text.startswith("\ufeff"):  # a byte-order mark is not a column
        text = text[1:]
    segments = comment_segments(path, text)
    by_line: dict[int, _Segment] = {}
    for segment in segments:
        by_line.setdefault(segment.line, segment)
    claims: list[CommentClaim] = []
    used: set[int] = set()  # lines consumed as continuations
    for segment in segments:
        if segment.line in used and by_line.get(segment.line) is segment:
            continue
        skip = _skip(segment.body, _DECORATION.get(segment.leader, ""))
        if not segment.body.startswith(MARKER, skip):
            continue
        start = skip + len(MARKER)
        part = segment.body[start:]
        start += len(part) - len(part.lstrip())
        texts: list[str] = []
        places: list[tuple[int, int, int]] = []
        offset = 0
        line = segment.line
        current: _Segment | None = segment
        while current is not None:
            part, continues = _strip_backslash(current.body[start:])
            if part:
                if texts:
                    offset += 1  # the joining space
                places.append((offset, current.line, current.start + start + 1))
                texts.append(part)
                offset += len(part)
            line = current.line
            current = None
            if continues:
                following = by_line.get(line + 1)
                if following is not None:
                    used.add(following.line)
                    current = following
                    start = _continuation_start(following)
        claims.append(
            CommentClaim(
                segment.line,
                segment.start + skip + 1,
                " ".join(texts),
                line,
                segment.code_before,
                tuple(places),
            )
        )
    return claims
