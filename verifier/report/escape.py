"""Text from pull requests made safe to show: on a terminal, in JSON, in XML.

Claim text and file names come from the code under review, so they may hold terminal escape sequences,
other control characters, bidirectional overrides (which make a line read differently from what it is)
or, in file names, bytes that are not valid UTF-8 (kept by Python as surrogate escapes).  Every report
shows them as visible escapes - ``\\x1b``, ``\\u202e``, ``\\xff`` for a stray byte of a name - so a report
never drives the terminal, never fails to encode, and is always valid JSON and XML.
"""
from __future__ import annotations

from typing import Any

# Unicode bidirectional embedding, override and isolate controls (common practice since "Trojan Source").
_BIDI = frozenset(range(0x202A, 0x202F)) | frozenset(range(0x2066, 0x206A)) | {0x200E, 0x200F, 0x061C}


def _escape_char(char: str) -> str:
    code = ord(char)
    if 0xDC80 <= code <= 0xDCFF:  # a byte of a name that is not UTF-8 (surrogateescape)
        return f"\\x{code - 0xDC00:02x}"
    if code <= 0xFF:
        return f"\\x{code:02x}"
    return f"\\u{code:04x}"


def _needs_escape(code: int, keep_newlines: bool) -> bool:
    if code in (0x09, 0x0A):
        return not keep_newlines
    return code < 0x20 or 0x7F <= code <= 0x9F or 0xD800 <= code <= 0xDFFF or code in _BIDI


def shown(text: str, *, keep_newlines: bool = False) -> str:
    """``text`` with control characters, bidirectional controls and undecodable bytes escaped
    (``keep_newlines``: tabs and newlines stay)."""
    if all(not _needs_escape(ord(c), keep_newlines) for c in text):
        return text
    return "".join(_escape_char(c) if _needs_escape(ord(c), keep_newlines) else c for c in text)


def portable(text: str) -> str:
    """``text`` with only what cannot be encoded escaped (lone surrogates): for JSON, whose own escapes
    already cover control characters."""
    if not any(0xD800 <= ord(c) <= 0xDFFF for c in text):
        return text
    return "".join(_escape_char(c) if 0xD800 <= ord(c) <= 0xDFFF else c for c in text)


def portable_tree(value: Any) -> Any:
    """A JSON document with every string (keys included) made ``portable``."""
    if isinstance(value, str):
        return portable(value)
    if isinstance(value, dict):
        return {portable_tree(k): portable_tree(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [portable_tree(v) for v in value]
    return value


def xml_text(text: str) -> str:
    """``text`` with everything XML 1.0 cannot hold (and terminal controls) escaped; tabs and newlines kept."""
    return shown(text, keep_newlines=True)


def shown_lines(lines: list[str]) -> str:
    """Report lines joined for a terminal, each with its control characters escaped."""
    return "\n".join(shown(line) for line in lines) + "\n"
