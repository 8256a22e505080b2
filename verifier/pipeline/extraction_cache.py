"""The extraction cache: a file's claims as read last time, reused while nothing they were read from changed.

Reading claims (decoding, parsing with libcst or tree-sitter, symbolic execution) is redone on every run
otherwise, though a run where nothing changed only needs the cached proofs re-checked.  An entry is
found by a key over what the extraction is given: the file's path and text, the extraction context (named
condition sets, roots, unrolling limits), the working directory, the tool (its version and a digest of
the source of the claims and model layers, Python's version, the versions of libcst and the tree-sitter
packages).  What the extraction then read besides the file (imported modules, other kernel files, a
`same as` reference, a folder listing, a probe for a module that is not there) is recorded by
``claims.file_reads`` into the entry, and the entry is used only when every one of those looks sees the
same today (the same bytes by sha256, the same answer, the same listing): so the entry covers everything
the extraction read, and editing a helper module reads its importers again.

The claims are trusted once read (they are what is decided), and the cache folder may hold files from a
pull request, so an entry is signed: its first line carries an HMAC-SHA256 of the rest with a secret kept
outside the checkout (``cache_secret``); without a secret nothing is cached here.  The body is JSON of
our own data (``extraction_codec``), never a pickle.  An entry that is not a regular file, does not
carry a valid signature, or does not read back is ignored with a note and the file is read again; it can
cost time, never change a verdict.  Proofs reached through a cached extraction are still re-checked by the
result cache, as always.
"""
from __future__ import annotations

import functools
import hashlib
import hmac
import json
import os
import sys
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from verifier.claims.file_reads import Observation, still_true
from verifier.model.claim import Claim, ExtractionContext
from verifier.pipeline.cache_store import directory_refusal, read_entry_text, write_entry
from verifier.pipeline.extraction_codec import CodecError, claims_from_json, claims_to_json

FORMAT = 1
HEADER = "idealcheck-extraction"
_VERIFIER = Path(__file__).resolve().parents[1]
_CODE = ("claims", "model")  # the layers an extraction runs (the pipeline only hands it the text)
_OWN = ("pipeline/extraction_codec.py", "pipeline/extraction_cache.py", "pipeline/jobs.py")
_LIBRARIES = ("libcst-", "tree_sitter")  # dist-info names start so; their versions are in the names


@dataclass(frozen=True)
class CacheNote:
    """An extraction-cache entry that was there but could not be used (the file was read again)."""

    path: str  # the scanned file
    reason: str

    def message(self) -> str:
        return f"{self.path}: the cached reading of this file was not used ({self.reason}); it was read again"


@dataclass
class ExtractionStats:
    hits: int = 0
    misses: int = 0  # no entry, or one that something it read has since changed
    rejected: int = 0  # an entry that could not be used (with a note)
    stored: int = 0


def _library_versions() -> list[str]:
    """The dist-info folder names of libcst and the tree-sitter packages (they hold the versions)."""
    names: set[str] = set()
    for entry in sys.path:
        try:
            with os.scandir(entry or ".") as listing:
                names.update(e.name for e in listing if e.name.endswith(".dist-info") and e.name.startswith(_LIBRARIES))
        except OSError:
            continue
    return sorted(names)


@functools.cache
def tool_fingerprint() -> str:
    """A digest of the code that extracts claims: a change to any of it (or an upgrade) misses every entry."""
    from verifier import __version__

    digest = hashlib.sha256()
    for part in (HEADER, str(FORMAT), __version__, sys.implementation.name, sys.version, *_library_versions()):
        digest.update(part.encode("utf-8", "surrogateescape") + b"\0")
    files = [p for layer in _CODE for p in (_VERIFIER / layer).rglob("*.py")] + [_VERIFIER / p for p in _OWN]
    for path in sorted(files):
        digest.update(str(path.relative_to(_VERIFIER)).encode("utf-8", "surrogateescape") + b"\0")
        try:
            digest.update(hashlib.sha256(path.read_bytes()).digest())
        except OSError:  # an unreadable source file still counts: by its name and this marker
            digest.update(b"unreadable\0")
    return digest.hexdigest()


def extraction_key(path: str, text: str, context: ExtractionContext) -> str:
    """sha256 over everything an extraction of ``text`` as ``path`` is given (not what it reads later)."""
    material = json.dumps(
        [HEADER, FORMAT, tool_fingerprint(), os.path.abspath(os.getcwd()), path,
         hashlib.sha256(text.encode("utf-8", "surrogatepass")).hexdigest(), repr(context)],
        ensure_ascii=True,
    )
    return hashlib.sha256(material.encode("ascii")).hexdigest()


# ---------------------------------------------------------------- the observations, as JSON


def _reads_json(reads: list[Observation]) -> list[Any]:
    out: list[Any] = []
    for read in dict.fromkeys(reads):  # the same look twice is checked once
        seen = [list(entry) for entry in read.seen] if isinstance(read.seen, tuple) else read.seen
        out.append([read.kind, read.path, seen])
    return out


def _reads_from_json(value: Any) -> list[Observation]:
    if not isinstance(value, list):
        raise CodecError("expected a list of reads")
    reads: list[Observation] = []
    for item in value:
        if not isinstance(item, list) or len(item) != 3 or not isinstance(item[1], str):
            raise CodecError("expected a read record")
        kind, path, seen = item
        if kind == "file" and (seen is None or isinstance(seen, str)):
            reads.append(Observation("file", path, seen))
        elif kind == "isfile" and isinstance(seen, bool):
            reads.append(Observation("isfile", path, seen))
        elif kind == "folder" and seen is None:
            reads.append(Observation("folder", path, None))
        elif kind == "folder" and isinstance(seen, list):
            entries = []
            for entry in seen:
                if (not isinstance(entry, list) or len(entry) != 3 or not isinstance(entry[0], str)
                        or not isinstance(entry[1], bool) or not isinstance(entry[2], bool)):
                    raise CodecError("expected a folder entry")
                entries.append((entry[0], entry[1], entry[2]))
            reads.append(Observation("folder", path, tuple(entries)))
        else:
            raise CodecError("unknown read record")
    return reads


# ---------------------------------------------------------------- the cache


@dataclass
class ExtractionCache:
    """Extracted claims on disk under ``<cache folder>/x1/``, signed with ``secret``."""

    directory: Path
    secret: bytes | None
    stats: ExtractionStats = field(default_factory=ExtractionStats)
    notes: list[CacheNote] = field(default_factory=list)
    refused: str | None = None  # why the folder must not be used (a symbolic link, someone else's)
    _looked: dict[Observation, bool] = field(default_factory=dict)  # each look redone once per run

    def __post_init__(self) -> None:
        self.refused = directory_refusal(self.directory)

    @property
    def usable(self) -> bool:
        return self.secret is not None and self.refused is None

    def _parts(self, key: str) -> tuple[str, str, str]:
        return f"x{FORMAT}", key[:2], f"{key}.json"

    def _sign(self, body: str) -> str:
        assert self.secret is not None
        return hmac.new(self.secret, body.encode("utf-8"), hashlib.sha256).hexdigest()

    def load(self, path: str, text: str, context: ExtractionContext) -> list[Claim] | None:
        """The claims of an entry whose every read still holds, else None (the file must be read)."""
        if not self.usable:
            return None
        key = extraction_key(path, text, context)
        entry = self.directory.joinpath(*self._parts(key))
        if not os.path.lexists(entry):
            self.stats.misses += 1
            return None
        try:
            claims = self._read(entry, key, path)
        except Exception as exc:  # whatever is wrong with an entry costs a reading, never the run
            self.stats.rejected += 1
            self.notes.append(CacheNote(path, str(exc) if isinstance(exc, CodecError) else
                                        f"the entry does not read back: {type(exc).__name__}"))
            return None
        if claims is None:
            self.stats.misses += 1
            return None
        self.stats.hits += 1
        return claims

    def _read(self, entry: Path, key: str, path: str) -> list[Claim] | None:
        raw = read_entry_text(entry)
        if raw is None:
            raise CodecError("the entry is not a regular file of bounded size")
        header, newline, body = raw.partition("\n")
        words = header.split(" ")
        if not newline or len(words) != 3 or words[0] != HEADER or words[1] != str(FORMAT):
            raise CodecError("the entry is not an extraction of this format")
        if not hmac.compare_digest(words[2], self._sign(body)):
            raise CodecError("its signature does not match: written with another secret, or altered")
        document = json.loads(body)
        if not isinstance(document, dict) or set(document) != {"key", "path", "reads", "claims"}:
            raise CodecError("the entry is not an extraction record")
        if document["key"] != key or document["path"] != path:
            raise CodecError("the entry is of another file")
        if not all(self._still_true(read) for read in _reads_from_json(document["reads"])):
            return None  # a file it read has changed since: an ordinary miss
        return claims_from_json(document["claims"])

    def _still_true(self, read: Observation) -> bool:
        if read not in self._looked:  # a helper module imported by many files is hashed once
            self._looked[read] = still_true(read)
        return self._looked[read]

    def store(self, path: str, text: str, context: ExtractionContext, claims: list[Claim],
              reads: list[Observation]) -> None:
        """Write the claims of a completed extraction and what it read (atomically; failures cost nothing)."""
        if not self.usable:
            return
        key = extraction_key(path, text, context)
        try:
            document = {"key": key, "path": path, "reads": _reads_json(reads), "claims": claims_to_json(claims)}
            body = json.dumps(document, ensure_ascii=True, separators=(",", ":"))
        except (CodecError, ValueError, TypeError, RecursionError):
            return
        if write_entry(self.directory, self._parts(key), f"{HEADER} {FORMAT} {self._sign(body)}\n{body}"):
            self.stats.stored += 1


def open_extraction_cache(directory: str | os.PathLike[str]) -> ExtractionCache:
    """The extraction cache in the result cache's folder, signed with this user's secret."""
    from verifier.pipeline.cache_secret import cache_secret

    return ExtractionCache(Path(directory), cache_secret())
