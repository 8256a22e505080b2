"""Comments that look meant as claims but miss the exact marker (``IdealCheck:``, ``idealcheck :``).

Such a comment is silently no claim at all, so the command line warns about each one with the fix.  Only
comments are looked at (the same comment scanner as for claims); the marker must open the comment.
"""
from __future__ import annotations

import re
from dataclasses import dataclass

from verifier.claims.comments import MARKER, comment_segments

# Any spelling of the marker: case, a space/dash/underscore inside, spaces before the colon, `;` for `:`.
_NEAR = re.compile(r"ideal[ _-]?check\s*[:;]", re.IGNORECASE)
# What may stand between a comment leader and the marker (doc-comment decoration, spaces).
_DECORATION = " \t/!<>#%;*-|"
# Prose files: an HTML comment (Markdown) or a `..` comment (reStructuredText) opens the claim.
_PROSE = re.compile(r"(?:<!--|^\s*\.\.)\s*(?P<marker>ideal[ _-]?check\s*[:;])", re.IGNORECASE | re.MULTILINE)
_PROSE_EXTENSIONS = (".md", ".markdown", ".rst")


@dataclass(frozen=True)
class NearMiss:
    line: int  # 1-based
    column: int  # 1-based, where the misspelt marker starts
    found: str  # the marker as written

    def message(self) -> str:
        return (f"`{self.found}` is not the claim marker, so this comment is not checked; write "
                f"`{MARKER}` (lower case, the colon right after it) to make it a claim, or reword the comment")


def near_misses(path: str, text: str) -> list[NearMiss]:
    """Comments of ``text`` (file ``path``) that open with a misspelt ``idealcheck:`` marker."""
    if "ideal" not in text.lower():
        return []
    if path.lower().endswith(".ipynb"):
        return []  # JSON: the notebook reader owns its cells; a misspelling there is not reported
    if path.lower().endswith(_PROSE_EXTENSIONS):
        found: list[NearMiss] = []
        for match in _PROSE.finditer(text):
            marker = match.group("marker")
            if marker != MARKER:
                line = text.count("\n", 0, match.start("marker")) + 1
                column = match.start("marker") - (text.rfind("\n", 0, match.start("marker")) + 1) + 1
                found.append(NearMiss(line, column, marker))
        return found
    if text.startswith("\ufeff"):
        text = text[1:]
    found = []
    for segment in comment_segments(path, text):
        body = segment.body
        skip = len(body) - len(body.lstrip(_DECORATION))
        near = _NEAR.match(body, skip)
        if near is None or near.group(0) == MARKER:
            continue
        found.append(NearMiss(segment.line, segment.start + skip + 1, near.group(0)))
    return found


__all__ = ["NearMiss", "near_misses"]
