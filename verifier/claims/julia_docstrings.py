"""``idealcheck:`` lines in Julia docstrings: the string literal directly above a function definition.

Julia attaches a docstring to the definition that follows it (``\"\"\"...\"\"\"`` or ``@doc \"\"\"...\"\"\"`` on the
lines before ``function f(x)`` or ``f(x) = ...``).  A docstring line whose text starts with ``idealcheck:``
is a claim about that function, read as if it stood in the comment lines above it: each claim carries
``subject_line``, the line of the definition.  A string on its own lines that documents no function keeps
its claims without a subject (a formula is checked; a ``returns`` there is an error saying why).  The text is taken as
written; a line ending in ``\\`` continues on the next line of the docstring, as in comments.
"""
from __future__ import annotations

import re

from verifier.claims.comments import MARKER, CommentClaim

_OPENING = re.compile(r'^(\s*(?:@doc\s+(?:raw)?)?)"""')
# A definition the docstring documents: `function f`, macros before it, or the short form `f(x) = ...`.
_DEFINITION = re.compile(r"^\s*(?:@\w+(?:\.\w+)*\s+)*(?:function\b|[A-Za-z_][\w.!]*\s*(?:\{[^}]*\})?\s*\(.*\)"
                         r"\s*(?:::\s*[\w{}., ]+)?\s*(?:where\b.*)?=(?!=))")


def julia_docstring_claims(text: str) -> list[CommentClaim]:
    """The claims in the docstrings of ``text`` (the source of a ``.jl`` file)."""
    if MARKER not in text:
        return []
    lines = text.splitlines()
    claims: list[CommentClaim] = []
    number = 0
    while number < len(lines):
        opening = _OPENING.match(lines[number])
        if opening is None:
            if lines[number].count('"""') % 2:  # a string opened in code (`s = """`): skip to its end
                end = next((i for i in range(number + 1, len(lines)) if '"""' in lines[i]), len(lines))
                number = end
            number += 1
            continue
        first_start = opening.end()
        close = _closing_line(lines, number, first_start)
        if close is None:
            break  # an unterminated string: the parser reports the file
        # a claim in a string that documents no function is still read (a `returns` there is an error)
        claims.extend(_claims_in(lines, number, close, first_start, _definition_after(lines, close)))
        number = close + 1
    return claims


def _closing_line(lines: list[str], opening: int, start: int) -> int | None:
    """The index of the line holding the closing quotes of the docstring opened on line ``opening``."""
    if '"""' in lines[opening][start:]:
        return opening
    for index in range(opening + 1, len(lines)):
        if '"""' in lines[index]:
            return index
    return None


def _definition_after(lines: list[str], close: int) -> int | None:
    """The 1-based line of the definition right after the docstring (blank lines between are allowed)."""
    if lines[close].split('"""')[-1].strip():
        return None  # code after the closing quotes on the same line: not a docstring of ours
    for index in range(close + 1, len(lines)):
        if lines[index].strip():
            return index + 1 if _DEFINITION.match(lines[index]) else None
    return None


def _claims_in(lines: list[str], opening: int, close: int, first_start: int, definition: int | None
              ) -> list[CommentClaim]:
    found: list[CommentClaim] = []
    index = opening
    while index <= close:
        line = lines[index]
        start = first_start if index == opening else 0
        end = line.find('"""', start) if index == close else len(line)
        body = line[start:end if end >= 0 else len(line)]
        skip = len(body) - len(body.lstrip())
        if not body.startswith(MARKER, skip):
            index += 1
            continue
        column = start + skip + 1
        texts: list[str] = []
        places: list[tuple[int, int, int]] = []
        offset, piece_start, last = 0, start + skip + len(MARKER), index
        while True:
            piece = lines[last][piece_start:end if last == close and end >= 0 else None]
            stripped = piece.strip()
            continues = stripped.endswith("\\")
            stripped = stripped[:-1].rstrip() if continues else stripped
            if stripped:
                if texts:
                    offset += 1  # the joining space
                places.append((offset, last + 1, piece_start + len(piece) - len(piece.lstrip()) + 1))
                texts.append(stripped)
                offset += len(stripped)
            if not continues or last + 1 > close:
                break
            last += 1
            piece_start = 0
            end = lines[last].find('"""') if last == close else len(lines[last])
        found.append(CommentClaim(index + 1, column, " ".join(texts), last + 1, False, tuple(places),
                                  subject_line=definition))
        index = last + 1
    return found
