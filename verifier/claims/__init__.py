"""Source text -> Claim objects (no algebra here).  ``extract`` dispatches by file type."""
from __future__ import annotations

from collections.abc import Callable

from verifier.claims.comments import CommentClaim, find_comments
from verifier.claims.expectation import attach_expectations, strip_expectations
from verifier.claims.expression import PYTHON_EXTENSIONS, expression_claims
from verifier.claims.unknown_names import flag_unknown_names
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


def extract_python_module(path: str, text: str, context: ExtractionContext) -> list[Claim]:
    """The claims of ``text`` read as a Python module, reported under ``path`` (notebooks build such a text)."""
    found = find_comments("module.py", text)  # the name only selects Python's comment syntax
    comments, expectations, problems = strip_expectations(found)
    extract_python = _python_extractor()
    if extract_python is not None:
        claims = extract_python(path, text, comments, context)
    else:
        claims = [claim for comment in comments for claim in expression_claims(comment, path, context)]
    claims = flag_unknown_names(path, text, claims, comments, context)
    return attach_expectations(claims, path, found, expectations, problems)


def _prose_comments(path: str, text: str) -> list[CommentClaim] | None:
    """Markdown and reStructuredText comments, or None for other files."""
    from verifier.claims.markup import MARKDOWN_EXTENSIONS, RST_EXTENSIONS, markdown_comments, rst_comments

    lowered = path.lower()
    if lowered.endswith(MARKDOWN_EXTENSIONS):
        return markdown_comments(text)
    if lowered.endswith(RST_EXTENSIONS):
        return rst_comments(text)
    return None


def _is_kernel(path: str) -> bool:
    from verifier.claims.kernels.parse import language_of

    return language_of(path) is not None


def extract(path: str, text: str, context: ExtractionContext | None = None) -> list[Claim]:
    """Every claim in the file ``path`` (relative, forward slashes) whose content is ``text``."""
    context = context or ExtractionContext()
    if path.lower().endswith(".ipynb"):
        from verifier.claims.notebook import extract_notebook

        return extract_notebook(path, text, context, extract_python_module)
    prose = _prose_comments(path, text)
    found = find_comments(path, text) if prose is None else prose
    # An inline `expect VERDICT: REASON` is split off before the claim is read, then put on its claims.
    comments, expectations, problems = strip_expectations(found)
    claims: list[Claim] = []
    extract_python = _python_extractor() if path.lower().endswith(PYTHON_EXTENSIONS) else None
    if extract_python is not None:
        claims = flag_unknown_names(path, text, extract_python(path, text, comments, context), comments, context)
    elif comments and _is_kernel(path):
        # The kernel front ends (tree-sitter) load only for files of their languages that hold claims.
        from verifier.claims.kernels.extract import extract_kernel

        claims = extract_kernel(path, text, comments, context)
    else:
        for comment in comments:
            claims.extend(expression_claims(comment, path, context))
    return attach_expectations(claims, path, found, expectations, problems)


__all__ = ["extract", "extract_python_module", "find_comments", "expression_claims", "CommentClaim"]
