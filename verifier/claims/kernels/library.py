"""Kernel files by path: parsed once, lowered function by function, searched for callees and references."""
from __future__ import annotations

import os
from typing import Any

from verifier.claims.decoding import read_helper_text
from verifier.claims.file_reads import read_bytes, walk_files
from verifier.claims.kernels import tree as t
from verifier.claims.kernels.fixed_form import is_fixed_form, to_free_form
from verifier.claims.kernels.locate import FunctionSite, SourceIndex
from verifier.claims.kernels.parse import ParsedSource, language_of, parse_source

MAX_SEARCHED_FILES = 2000
_SKIPPED_DIRS = {".git", ".venv", "venv", "node_modules", "__pycache__", "build", "target", ".tox"}


def lowering_for(source: ParsedSource, path: str) -> Any:
    """The front end of the file's language (each is imported when a file of its language is read)."""
    language = source.language
    if language in ("c", "cpp", "cuda"):
        from verifier.claims.kernels.lower_c import CLowering

        return CLowering(source, path)
    if language == "fortran":
        from verifier.claims.kernels.lower_fortran import FortranLowering

        return FortranLowering(source, path)
    if language == "julia":
        from verifier.claims.kernels.lower_julia import JuliaLowering

        return JuliaLowering(source, path)
    if language == "rust":
        from verifier.claims.kernels.lower_rust import RustLowering

        return RustLowering(source, path)
    raise ValueError(language)


class KernelFile:
    def __init__(self, path: str, text: str, language: str):
        self.path = path
        self.source = parse_source(language, to_free_form(text) if is_fixed_form(path) else text)
        self.index = SourceIndex(self.source)
        self._lowering: Any = None
        self._functions: dict[int, t.Function] = {}

    @property
    def lowering(self) -> Any:
        if self._lowering is None:
            self._lowering = lowering_for(self.source, self.path)
        return self._lowering

    def function(self, site: FunctionSite) -> t.Function:
        key = site.node.start_byte
        if key not in self._functions:
            self._functions[key] = self.lowering.function(site.node)
        return self._functions[key]

    def named(self, name: str) -> t.Function | None:
        owner, _, method = name.rpartition("::")
        if owner and self.source.language in ("rust", "cpp", "cuda"):  # `Vec3::dot`: a method of Vec3
            site = self.index.method_named(owner.rsplit("::", 1)[-1], method)
            return self.function(site) if site is not None else None
        site = self.index.function_named(name)
        return self.function(site) if site is not None else None


class KernelLibrary:
    """The claim's own file and, on demand, other files of the scanned roots."""

    def __init__(self, roots: tuple[str, ...]):
        self.roots = roots
        self.files: dict[str, KernelFile | None] = {}
        self.used: list[str] = []
        self._listing: dict[str, list[str]] | None = None

    def add(self, path: str, text: str) -> KernelFile:
        language = language_of(path)
        assert language is not None
        kernel = KernelFile(path, text, language)
        self.files[path] = kernel
        return kernel

    def open(self, path: str) -> KernelFile | None:
        """The kernel file at ``path`` (relative to the working directory), or None if it cannot be read."""
        if path not in self.files:
            language = language_of(path)
            kernel = None
            if language is not None:
                text = read_helper_text(path)
                try:
                    kernel = KernelFile(path, text, language) if text is not None else None
                except ValueError:
                    kernel = None
            self.files[path] = kernel
        return self.files[path]

    def resolver(self, home: KernelFile) -> Any:
        """Finds a called function: in ``home`` first, then in other scanned files of the same language."""

        def resolve(name: str) -> t.Function | None:
            found = home.named(name)
            if found is not None:
                return found
            for path in self._candidates(home, name):
                other = self.open(path)
                if other is None or other.source.problem is not None:
                    continue
                found = other.named(name)
                if found is not None:
                    if path not in self.used:
                        self.used.append(path)
                    return found
            return None

        return resolve

    def _candidates(self, home: KernelFile, name: str) -> list[str]:
        families = {"c": ("c", "cpp", "cuda"), "cpp": ("c", "cpp", "cuda"), "cuda": ("c", "cpp", "cuda")}
        wanted = families.get(home.source.language, (home.source.language,))
        out = []
        for path in self._files():
            if path == home.path or language_of(path) not in wanted:
                continue
            data = read_bytes(path)
            if data is not None and name in data.decode("utf-8", errors="replace"):
                out.append(path)
        return out

    def _files(self) -> list[str]:
        if self._listing is None:
            listing: list[str] = []
            for root in self.roots:
                found = walk_files(root, lambda name: language_of(name) is not None, _SKIPPED_DIRS,
                                   MAX_SEARCHED_FILES - len(listing))  # the cap counts every root
                listing += [os.path.normpath(path).replace(os.sep, "/") for path in found]
            self._listing = {"all": listing}
        return self._listing["all"]
