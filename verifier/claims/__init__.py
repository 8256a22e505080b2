"""Source text -> Claim objects (no algebra here).  ``extract`` dispatches by file type."""
from __future__ import annotations

from collections.abc import Callable

from verifier.claims.comments import CommentClaim, find_comments
from verifier.claims.expression import PYTHON_EXTENSIONS, expression_claims
from verifier.model.claim import Claim, ExtractionContext

PythonExtractor = Callable[[str, str, list[CommentClaim], ExtractionContext], list[Claim]]


def _python_extractor() -> PythonExtractor | None:
    # The Python extractor (function and statement claims) lives in verifier.claims.python; until it is
    # there, Python files are read like any other file.
    try:
        from verifier.claims.python import extract_python
    except ImportError as exc:
        if exc.name == "verifier.claims.python":
            return None
        raise
    return extract_python


def _is_kernel(path: str) -> bool:
    from verifier.claims.kernels.parse import language_of

    return language_of(path) is not None


def extract(path: str, text: str, context: ExtractionContext | None = None) -> list[Claim]:
    """Every claim in the file ``path`` (relative, forward slashes) whose content is ``text``."""
    context = context or ExtractionContext()
    comments = find_comments(path, text)
    if path.lower().endswith(PYTHON_EXTENSIONS):
        extract_python = _python_extractor()
        if extract_python is not None:
            return extract_python(path, text, comments, context)
    if comments and _is_kernel(path):
        # The kernel front ends (tree-sitter) load only for files of their languages that hold claims.
        from verifier.claims.kernels.extract import extract_kernel

        return extract_kernel(path, text, comments, context)
    claims: list[Claim] = []
    for comment in comments:
        claims.extend(expression_claims(comment, path, context))
    return claims


__all__ = ["extract", "find_comments", "expression_claims", "CommentClaim"]
