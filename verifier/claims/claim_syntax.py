"""Claim text before parsing: the syntax error type, ``^`` -> ``**`` with an offset map, brackets.

Offsets in ``ClaimSyntaxError`` are 0-based character offsets into the text given to the parser.
"""
from __future__ import annotations

import ast
import re


class ClaimSyntaxError(Exception):
    """A malformed claim: ``message`` says what is wrong, ``offset`` (0-based) where in the claim text."""

    def __init__(self, message: str, offset: int = 0) -> None:
        super().__init__(message)
        self.message = message
        self.offset = max(0, offset)

    def shifted(self, by: int) -> "ClaimSyntaxError":
        return ClaimSyntaxError(self.message, self.offset + by)


# ---------------------------------------------------------------- text helpers


class ClaimSource:
    """A piece of claim text prepared for ``ast``: ``^`` -> ``**``, with a map back to original offsets."""

    def __init__(self, text: str) -> None:
        self.original = text
        pieces: list[str] = []
        back: list[int] = []
        for index, char in enumerate(text):
            if char == "^":
                pieces.append("**")
                back.extend((index, index))
            else:
                pieces.append(char)
                back.append(index)
        back.append(len(text))
        self.text = "".join(pieces)
        self.back = back
        # ast columns are UTF-8 byte offsets per line; the text is made one line by the caller.
        self._ascii = self.text.isascii()

    def original_offset(self, parsed_offset: int) -> int:
        parsed_offset = min(max(parsed_offset, 0), len(self.back) - 1)
        return self.back[parsed_offset]

    def char_offset(self, byte_offset: int) -> int:
        if self._ascii:
            return byte_offset
        return len(self.text.encode("utf-8")[:byte_offset].decode("utf-8", errors="ignore"))

    def node_offset(self, node: ast.AST) -> int:
        return self.original_offset(self.char_offset(getattr(node, "col_offset", 0)))

    def node_segment(self, node: ast.AST) -> str:
        start = self.char_offset(getattr(node, "col_offset", 0))
        end = self.char_offset(getattr(node, "end_col_offset", start))
        return self.text[start:end]


def one_line(text: str) -> str:
    # Continuation lines are joined by the comment scanner; a stray newline or tab becomes a space so that
    # character offsets and ast columns agree (and no statement boundary can be formed).
    return text.replace("\r", " ").replace("\n", " ").replace("\t", " ")


def check_brackets(text: str) -> None:
    """Unbalanced brackets, reported where they are (clearer than the generic ast message)."""
    pairs = {")": "(", "]": "[", "}": "{"}
    stack: list[tuple[str, int]] = []
    quote: str | None = None
    for index, char in enumerate(text):
        if quote:
            if char == quote:
                quote = None
            continue
        if char in "\"'":
            quote = char
        elif char in "([{":
            stack.append((char, index))
        elif char in pairs:
            if not stack:
                raise ClaimSyntaxError(f"unbalanced parenthesis: `{char}` has no matching `{pairs[char]}`", index)
            opener, where = stack.pop()
            if opener != pairs[char]:
                raise ClaimSyntaxError(
                    f"unbalanced parenthesis: `{opener}` at column {where + 1} is closed by `{char}`", index
                )
    if stack:
        opener, where = stack[-1]
        raise ClaimSyntaxError(f"unbalanced parenthesis: `{opener}` is never closed", where)


def top_level_positions(text: str, pattern: re.Pattern[str]) -> list[re.Match[str]]:
    """Matches of ``pattern`` outside brackets and quotes."""
    depth = 0
    quote: str | None = None
    inside = [False] * len(text)
    for index, char in enumerate(text):
        if quote:
            inside[index] = True
            if char == quote:
                quote = None
            continue
        if char in "\"'":
            quote = char
            inside[index] = True
        elif char in "([{":
            depth += 1
            inside[index] = depth > 0
        elif char in ")]}":
            inside[index] = depth > 0
            depth = max(0, depth - 1)
        else:
            inside[index] = depth > 0
    return [m for m in pattern.finditer(text) if not inside[m.start()]]


def split_top_level(text: str, separator: str = ",") -> list[tuple[int, str]]:
    """``text`` split at ``separator`` outside brackets and quotes, as (offset, piece) pairs."""
    parts: list[tuple[int, str]] = []
    start = 0
    for match in top_level_positions(text, re.compile(re.escape(separator))):
        parts.append((start, text[start : match.start()]))
        start = match.end()
    parts.append((start, text[start:]))
    return parts


def stripped(offset: int, piece: str) -> tuple[int, str]:
    lead = len(piece) - len(piece.lstrip())
    return offset + lead, piece.strip()


# Typographic operators (from papers, word processors, other languages) and what the claim language writes.
NON_ASCII_OPERATORS: dict[str, str] = {
    "\u00b7": "*", "\u22c5": "*", "\u2219": "*", "\u2022": "*", "\u00d7": "*", "\u2217": "*",
    "\u00f7": "/", "\u2215": "/", "\u2212": "-", "\u2013": "-", "\u2014": "-",
    "\u2264": "<=", "\u2266": "<=", "\u2265": ">=", "\u2267": ">=", "\u2260": "!=",
    "\u2261": "==", "\uff1d": "==", "\u00b2": "**2", "\u00b3": "**3", "\u221a": "sqrt(...)",
}


def check_operator_characters(text: str) -> None:
    """A ``ClaimSyntaxError`` with the fix at the first typographic operator (``a·b`` is not a name)."""
    for offset, char in enumerate(text):
        fix = NON_ASCII_OPERATORS.get(char)
        if fix is not None:
            raise ClaimSyntaxError(f"`{char}` (U+{ord(char):04X}) is not an operator of the claim language; "
                                   f"write `{fix}` instead", offset)
