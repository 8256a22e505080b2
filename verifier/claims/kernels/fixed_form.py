"""Fortran fixed-form source (``.f``, ``.for``, ``.f77``, ``.ftn``) rewritten as free form, line for line.

The Fortran grammar reads free form.  Fixed form differs in a few column rules (FORTRAN 77 standard,
section 3.2, from memory): ``C``, ``c``, ``*`` or ``!`` in column 1 starts a comment line; a character
other than blank or ``0`` in column 6 continues the previous statement; columns 73 and beyond are ignored
(card sequence numbers).  The rewrite keeps every line and every column of the statement text where it
was, so that positions in reports still point into the original file: comment leaders become ``!``, a
continued line gets `` &`` after its last statement character and its continuation mark becomes ``&``.
"""
from __future__ import annotations

FIXED_FORM_EXTENSIONS = (".f", ".for", ".f77", ".ftn")
_LAST_COLUMN = 72
_COMMENT_LEADERS = ("C", "c", "*", "!")


def is_fixed_form(path: str) -> bool:
    return path.lower().endswith(FIXED_FORM_EXTENSIONS)


def to_free_form(text: str) -> str:
    """``text`` (fixed form) as free-form Fortran with the same lines and columns."""
    lines = text.split("\n")
    out: list[str] = []
    last_statement: int | None = None  # index in ``out`` of the line a continuation continues
    for raw in lines:
        line = raw.rstrip("\r")
        if not line.strip():
            out.append(line)
            continue
        if line[:1] in _COMMENT_LEADERS:
            out.append("!" + line[1:])
            continue
        line = line[:_LAST_COLUMN]
        if len(line) >= 6 and not line[:5].strip() and line[5] not in (" ", "0"):
            if last_statement is not None:
                out[last_statement] = _with_comment_after(out[last_statement], " &")
            out.append(line[:5] + "&" + line[6:])
            last_statement = len(out) - 1
            continue
        out.append(line)
        last_statement = len(out) - 1
    return "\n".join(out)


def _with_comment_after(line: str, mark: str) -> str:
    """``line`` with ``mark`` after its statement text (before a trailing ``!`` comment, outside strings)."""
    quote: str | None = None
    for i, char in enumerate(line):
        if quote is not None:
            if char == quote:
                quote = None
        elif char in ("'", '"'):
            quote = char
        elif char == "!":
            return line[:i].rstrip() + mark + " " + line[i:]
    return line.rstrip() + mark
