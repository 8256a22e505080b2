"""Claims in prose files: Markdown HTML comments and reStructuredText comments.

Markdown: ``<!-- idealcheck: LEFT == RIGHT -->``; the comment may span lines (its lines are joined with a
space).  Comments inside fenced code blocks and inline code spans are text being shown, not comments, so
they are skipped.

reStructuredText: a comment ``.. idealcheck: LEFT == RIGHT`` (one colon: ``idealcheck::`` would be a
directive); the comment's body goes on over the following lines indented more than the ``..``, as in
the reStructuredText specification.  Literal blocks (after a paragraph ending in ``::`` and in code
directives) are skipped.

Both give ``CommentClaim`` objects, which the expression reader turns into claims as for any comment.
"""
from __future__ import annotations

import re

from verifier.claims.comments import MARKER, CommentClaim

MARKDOWN_EXTENSIONS = (".md", ".markdown", ".mdown", ".mkd")
RST_EXTENSIONS = (".rst", ".rest")

_FENCE = re.compile(r"^ {0,3}(`{3,}|~{3,})")
_INLINE_CODE = re.compile(r"(`+)(?:(?!\1).)+?\1")


def _claim(pieces: list[tuple[int, int, str]]) -> CommentClaim | None:
    """A claim from (line, 0-based column, text) pieces whose first non-blank one starts with the marker."""
    while len(pieces) > 1 and not pieces[0][2].strip():
        pieces = pieces[1:]
    first_line, first_column, first_text = pieces[0]
    stripped = first_text.lstrip()
    if not stripped.startswith(MARKER):
        return None
    column = first_column + (len(first_text) - len(stripped))
    body = stripped[len(MARKER):]
    body_column = column + len(MARKER) + (len(body) - len(body.lstrip()))
    parts = [(first_line, body_column, body.strip())]
    for line, start, text in pieces[1:]:
        parts.append((line, start + len(text) - len(text.lstrip()), text.strip()))
    texts: list[str] = []
    places: list[tuple[int, int, int]] = []
    offset = 0
    for line, start, text in parts:
        if not text:
            continue
        if texts:
            offset += 1  # the joining space
        places.append((offset, line, start + 1))
        texts.append(text)
        offset += len(text)
    last_line = pieces[-1][0]
    return CommentClaim(first_line, column + 1, " ".join(texts), last_line, False, tuple(places))


# ---------------------------------------------------------------- Markdown


def _blank_inline_code(line: str) -> str:
    """The line with inline code spans replaced by spaces (columns kept)."""
    return _INLINE_CODE.sub(lambda match: " " * len(match.group(0)), line)


def markdown_comments(text: str) -> list[CommentClaim]:
    """The ``<!-- idealcheck: ... -->`` claims of a Markdown text."""
    if MARKER not in text:
        return []
    claims: list[CommentClaim] = []
    fence: str | None = None
    pieces: list[tuple[int, int, str]] | None = None  # inside an open HTML comment
    for number, line in enumerate(text.splitlines(), start=1):
        if pieces is None:
            match = _FENCE.match(line)
            if fence is not None:
                if match and match.group(1)[0] == fence[0] and len(match.group(1)) >= len(fence):
                    fence = None
                continue
            if match:
                fence = match.group(1)
                continue
        scan = line if pieces is not None else _blank_inline_code(line)
        position = 0
        while position <= len(scan):
            if pieces is None:
                start = scan.find("<!--", position)
                if start < 0:
                    break
                pieces = []
                position = start + 4
            end = scan.find("-->", position)
            if end < 0:
                pieces.append((number, position, line[position:]))
                break
            pieces.append((number, position, line[position:end]))
            found = _claim(pieces)
            if found is not None:
                claims.append(found)
            pieces = None
            position = end + 3
    return claims


# ---------------------------------------------------------------- reStructuredText

_EXPLICIT = re.compile(r"^(\s*)\.\.(?:\s+|$)")
_DIRECTIVE = re.compile(r"^\s*\.\.\s+([\w:+.-]+)::")
_LITERAL_DIRECTIVES = frozenset({"code", "code-block", "sourcecode", "literalinclude", "highlight", "raw",
                                 "math", "parsed-literal", "doctest", "testcode", "testoutput", "ipython"})


def _indent(line: str) -> int:
    return len(line) - len(line.lstrip())


def rst_comments(text: str) -> list[CommentClaim]:
    """The ``.. idealcheck: ...`` comment claims of a reStructuredText text."""
    if MARKER not in text:
        return []
    lines = text.splitlines()
    claims: list[CommentClaim] = []
    literal_indent: int | None = None  # inside a literal block: lines indented more than this
    index = 0
    while index < len(lines):
        line = lines[index]
        if literal_indent is not None:
            if not line.strip() or _indent(line) > literal_indent:
                index += 1
                continue
            literal_indent = None
        explicit = _EXPLICIT.match(line)
        directive = _DIRECTIVE.match(line)
        if directive is not None:
            if directive.group(1).lower() in _LITERAL_DIRECTIVES:
                literal_indent = _indent(line)
            index += 1
            continue
        if explicit is None:
            if line.rstrip().endswith("::"):
                literal_indent = _indent(line)
            index += 1
            continue
        # a comment: the rest of this line, then the lines indented more than the ".."
        base = len(explicit.group(1))
        pieces = [(index + 1, explicit.end(), line[explicit.end():])]
        following = index + 1
        while following < len(lines):
            item = lines[following]
            if item.strip() and _indent(item) <= base:
                break
            pieces.append((following + 1, 0, item))
            following += 1
        found = _claim(pieces)
        if found is not None:
            claims.append(found)
        index = following
    return claims
