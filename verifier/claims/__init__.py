"""Source text -> Claim objects (no algebra here).  ``extract`` dispatches by file type."""
from __future__ import annotations

from collections.abc import Callable

from verifier.claims.comments import MARKER, CommentClaim, find_comments
from verifier.claims.expectation import attach_expectations, strip_expectations
from verifier.claims.expression import PYTHON_EXTENSIONS, expression_claims
from verifier.claims.julia_docstrings import julia_docstring_claims
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


def python_comments(text: str) -> list[CommentClaim]:
    """The claims of the Python module ``text``: its ``idealcheck:`` comments and the ``idealcheck:`` lines of
    its function docstrings (each once, in file order)."""
    comments = find_comments("module.py", text)  # the name only selects Python's comment syntax
    if MARKER not in text:
        return comments
    # function-level import: docstrings are found with libcst, which `idealcheck --help` does not load
    from verifier.claims.docstrings import docstring_claims

    seen = {(comment.line, comment.column) for comment in comments}
    found = [claim for claim in docstring_claims(text) if (claim.line, claim.column) not in seen]
    if not found:
        return comments
    return sorted(comments + found, key=lambda claim: (claim.line, claim.column))


def extract_python_module(path: str, text: str, context: ExtractionContext) -> list[Claim]:
    """The claims of ``text`` read as a Python module, reported under ``path`` (notebooks build such a text)."""
    found = python_comments(text)
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
    python_file = path.lower().endswith(PYTHON_EXTENSIONS)
    if python_file:
        found = python_comments(text)  # comments and function docstrings
    else:
        found = find_comments(path, text) if prose is None else prose
        if path.lower().endswith(".jl") and prose is None:
            found = sorted(found + julia_docstring_claims(text), key=lambda c: (c.line, c.column))
    # An inline `expect VERDICT: REASON` is split off before the claim is read, then put on its claims.
    comments, expectations, problems = strip_expectations(found)
    claims: list[Claim] = []
    extract_python = _python_extractor() if python_file else None
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


__all__ = ["extract", "extract_python_module", "python_comments", "find_comments", "expression_claims", "CommentClaim"]
