"""Bytes of a scanned file -> text: binary files recognised by content, a Python file's coding
declaration honoured, any other non-UTF-8 file read as Latin-1 except its claim lines.

- Binary: a NUL byte in the first 8 KiB (the heuristic git and diff tools use, common practice) or the
  magic number of a common binary format at the start.  Such a file is skipped and listed, unless it
  holds the claim marker: then it is an ``error`` (its claims cannot be read as text).
- Python (``.py``, ``.pyw``, ``.pyi``): the PEP 263 declaration (``# coding: iso-8859-5`` in the first two
  lines) or a UTF-8 byte order mark decides, as for the interpreter (``tokenize.detect_encoding``).
- Otherwise UTF-8.  A file that is not valid UTF-8 is read line by line: a valid UTF-8 line as UTF-8, any
  other as Latin-1 (every byte is a character there, so nothing is lost) and every claim is told so.  A
  claim line (the marker's line and its ``\\`` continuation lines) that is not UTF-8 is an ``error`` at
  that line: its characters cannot be known, so the claim is not guessed at.
"""
from __future__ import annotations

import codecs
import io
import re
import tokenize
from dataclasses import dataclass

from verifier.claims.file_reads import read_bytes

from verifier.model.claim import FileProblem, Location
from verifier.model.skipped import Skipped

MARKER = b"idealcheck:"
BINARY_PROBE_BYTES = 8192
FALLBACK_ENCODING = "latin-1"
FALLBACK_NOTE = "this file is not UTF-8: lines that are not valid UTF-8 were read as Latin-1 (ISO-8859-1)"
PYTHON_SUFFIXES = (".py", ".pyw", ".pyi")
# PEP 263's own pattern for a coding declaration, on one of the first two lines.
_CODING = re.compile(rb"^[ \t\f]*#.*?coding[:=][ \t]*([-\w.]+)")
# ``near_miss`` looks for "ideal" in any case (ASCII letters only): ``bytes.lower`` folds exactly those,
# and is several times faster than a case-insensitive search on every file of a scan
_IDEAL = b"ideal"

# Leading bytes of common binary formats that may hold no NUL byte early (compressed or short files).
MAGIC_NUMBERS: tuple[tuple[bytes, str], ...] = (
    (b"\x89PNG\r\n\x1a\n", "PNG image"),
    (b"\xff\xd8\xff", "JPEG image"),
    (b"GIF87a", "GIF image"), (b"GIF89a", "GIF image"),
    (b"%PDF-", "PDF document"),
    (b"PK\x03\x04", "zip archive"), (b"PK\x05\x06", "zip archive"),
    (b"\x1f\x8b", "gzip data"),
    (b"\xfd7zXZ\x00", "xz data"),
    (b"7z\xbc\xaf\x27\x1c", "7-zip archive"),
    (b"\x28\xb5\x2f\xfd", "zstd data"),
    (b"\x7fELF", "ELF executable or object"),
    (b"\xcf\xfa\xed\xfe", "Mach-O binary"), (b"\xce\xfa\xed\xfe", "Mach-O binary"),
    (b"\xca\xfe\xba\xbe", "Java class or Mach-O binary"),
    (b"\x93NUMPY", "NumPy array"),
    (b"\x89HDF\r\n\x1a\n", "HDF5 data"),
    (b"SQLite format 3\x00", "SQLite database"),
    (b"\x00asm", "WebAssembly module"),
)
_MAGIC_PREFIXES = tuple(magic for magic, _name in MAGIC_NUMBERS)  # one ``startswith`` for the common case


@dataclass(frozen=True)
class Decoded:
    """The outcome of decoding one file: its text (None when it is not read), the problems found (a
    whole-file one, or one per claim line that cannot be decoded), a skip entry for a binary file, and
    ``note`` when a fallback was used (the claims of the file carry it)."""

    text: str | None
    problems: tuple[FileProblem, ...] = ()
    skipped: Skipped | None = None
    note: str | None = None
    claim_free: bool = False  # read, but its bytes hold no claim marker: not decoded (``decode_if_claimed``)


def binary_kind(data: bytes) -> str | None:
    """What binary format ``data`` is (a short description), or None when it may be text."""
    if data.startswith(_MAGIC_PREFIXES):
        return next(name for magic, name in MAGIC_NUMBERS if data.startswith(magic))
    # bzip2: "BZh", a block size digit, then the block magic (a text file may well start with "BZh")
    if len(data) >= 10 and data.startswith(b"BZh") and data[3:4].isdigit() and data[4:10] == b"1AY&SY":
        return "bzip2 data"
    nul = data.find(b"\0", 0, BINARY_PROBE_BYTES)
    if nul >= 0:
        return f"NUL byte at offset {nul}"
    return None


def _line_and_column(data: bytes, offset: int) -> tuple[int, int]:
    line_start = data.rfind(b"\n", 0, offset) + 1
    return data.count(b"\n", 0, offset) + 1, offset - line_start + 1


def decode_source(data: bytes, path: str) -> Decoded:
    """The text of a file's bytes (``path`` for locations and the file type)."""
    kind = binary_kind(data)
    if kind is not None:
        where = data.find(MARKER)
        if where >= 0:
            line, column = _line_and_column(data, where)
            message = (f"binary file ({kind}) that holds the claim marker `idealcheck:` at line {line}; its "
                       "claims cannot be read as text (exclude the file in [tool.idealcheck] if it is data)")
            return Decoded(None, (FileProblem(Location(path, line, column), message),))
        return Decoded(None, skipped=Skipped(path, "binary", f"binary file ({kind}), not read"))
    if path.lower().endswith(PYTHON_SUFFIXES):
        return _decode_python(data, path)
    try:
        return Decoded(data.decode("utf-8-sig"))
    except UnicodeDecodeError:
        return _decode_with_fallback(data, path)


def decode_if_claimed(data: bytes, path: str) -> Decoded:
    """``decode_source`` for a file whose bytes may hold a claim; any other text file is not decoded at all
    (``claim_free``), which keeps a scan of a tree without claims at the speed of reading its bytes."""
    if binary_kind(data) is None and not needs_text(data, path):
        return Decoded(None, claim_free=True)
    return decode_source(data, path)


def needs_text(data: bytes, path: str) -> bool:
    """Whether the text of a (not binary) file is needed: its bytes hold the claim marker, or ``ideal`` in
    any case (a misspelt marker gets a warning), or it is a Python file with a coding declaration (in an
    encoding that is not ASCII-compatible the marker's bytes differ, and a bad declaration is an error)."""
    if _IDEAL in data.lower():  # the marker, or a misspelling of it
        return True
    if not path.lower().endswith(PYTHON_SUFFIXES):
        return False
    second_end = data.find(b"\n", data.find(b"\n") + 1)  # the first two lines only, as PEP 263 reads them
    return _declaration_line(data if second_end < 0 else data[:second_end]) is not None


def _decode_python(data: bytes, path: str) -> Decoded:
    """A Python file as the interpreter reads it (PEP 263 and PEP 3120)."""
    try:
        encoding, _lines = tokenize.detect_encoding(io.BytesIO(data).readline)
    except SyntaxError as exc:  # an unknown encoding, or a declaration that contradicts the BOM
        line = _declaration_line(data) or 1
        return Decoded(None, (FileProblem(Location(path, line, 1), f"bad coding declaration: {exc.msg}, not read"),))
    if codecs.lookup(encoding).name in ("utf-8", "utf-8-sig") and encoding != "utf-8-sig":
        try:
            return Decoded(data.decode("utf-8"))
        except UnicodeDecodeError:
            if _declaration_line(data):  # `# coding: utf-8` said so: the interpreter would refuse the file
                return Decoded(None, (_undecodable(data, path, "utf-8"),))
            return _decode_with_fallback(data, path)
    try:
        return Decoded(data.decode(encoding))
    except UnicodeDecodeError:
        return Decoded(None, (_undecodable(data, path, encoding),))
    except LookupError as exc:  # a codec that is not a text encoding (rot13 ...)
        return Decoded(None, (FileProblem(Location(path, 1, 1), f"bad coding declaration: {exc}, not read"),))


def _declaration_line(data: bytes) -> int | None:
    """The line (1 or 2) of a PEP 263 coding declaration, or None."""
    for number, line in enumerate(data.split(b"\n", 2)[:2], start=1):
        if _CODING.match(line):
            return number
    return None


def _undecodable(data: bytes, path: str, encoding: str) -> FileProblem:
    try:
        data.decode(encoding)
        offset = 0
    except UnicodeDecodeError as exc:
        offset = exc.start
    line, column = _line_and_column(data, offset)
    byte = data[offset:offset + 1].hex()
    message = f"not valid {encoding} text as its coding declaration says (byte 0x{byte} at line {line}), not read"
    return FileProblem(Location(path, line, column), message)


def _claim_lines(lines: list[bytes]) -> set[int]:
    """Indexes of the lines that belong to a claim: the marker's line and its ``\\`` continuations."""
    found: set[int] = set()
    continuing = False
    for index, raw in enumerate(lines):
        if MARKER in raw or continuing:
            found.add(index)
            continuing = raw.rstrip(b"\r\n \t").endswith(b"\\")
    return found


def _decode_with_fallback(data: bytes, path: str) -> Decoded:
    # split at "\n" only, as claim locations count lines
    pieces = data.split(b"\n")
    lines = [piece + b"\n" for piece in pieces[:-1]] + ([pieces[-1]] if pieces[-1] else [])
    if lines and lines[0].startswith(codecs.BOM_UTF8):
        lines[0] = lines[0][len(codecs.BOM_UTF8):]
    claim_lines = _claim_lines(lines)
    texts: list[str] = []
    problems: list[FileProblem] = []
    group_start: int | None = None
    for index, raw in enumerate(lines):
        if index in claim_lines and MARKER in raw:
            group_start = index
        try:
            texts.append(raw.decode("utf-8"))
            continue
        except UnicodeDecodeError as exc:
            bad = exc.start
        texts.append(raw.decode(FALLBACK_ENCODING))
        if index not in claim_lines:
            continue
        column = len(raw[:bad].decode("utf-8", errors="replace")) + 1
        message = (f"this claim line is not UTF-8 (byte 0x{raw[bad:bad + 1].hex()} at column {column}), so its "
                   "characters are unknown and the claim is not read; write the claim in ASCII or UTF-8 (the "
                   "rest of the file is read as Latin-1)")
        problems.append(FileProblem(Location(path, index + 1, column), message))
        if group_start is not None:  # the claim is dropped: its marker no longer opens a comment
            texts[group_start] = texts[group_start].replace("idealcheck:", " " * len("idealcheck:"), 1)
    return Decoded("".join(texts), tuple(problems), note=FALLBACK_NOTE)


def read_helper_text(path: str) -> str | None:
    """The text of a file a claim reads besides its own (an imported module, a kernel of another file),
    decoded by the same rules as a scanned file; None when it cannot be read or is binary."""
    data = read_bytes(path)  # recorded: the extraction cache keys on what was read
    if data is None:
        return None
    return decode_source(data, path).text
