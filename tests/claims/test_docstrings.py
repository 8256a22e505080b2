"""Docstring claims (verifier/claims/docstrings.py): which strings are docstrings follows Python's own rule
(the string statement that opens a function body; bytes and f-strings are none), from the language
reference, from memory."""
from __future__ import annotations

from verifier.claims import extract, python_comments
from verifier.claims.docstrings import docstring_claims


def _found(text: str) -> list[tuple[int, int, str, int | None]]:
    return [(c.line, c.column, c.text, c.subject_line) for c in docstring_claims(text)]


def test_lines_columns_and_the_function_each_claim_is_about() -> None:
    text = ('@decorate\n'
            'def f(x):\n'
            '    """First line.\n'
            '\n'
            '    idealcheck: returns x + \\\n'
            '        1\n'
            '    """\n'
            '    def inner(y): "idealcheck: returns y"; return y\n'
            '    return x + 1\n')
    assert _found(text) == [(5, 5, "returns x + 1", 1), (8, 20, "returns y", 8)]
    (claim, _) = docstring_claims(text)
    assert claim.end_line == 6 and claim.position(len("returns x + ")) == (6, 9)


def test_only_docstrings_are_claims() -> None:
    text = ('def a(x):\n    b"idealcheck: returns x"\n    return x\n'
            'def b(x):\n    f"idealcheck: returns {x}"\n    return x\n'
            'def c(x):\n    y = 1\n    "idealcheck: returns x"\n    return x\n'
            'def d(x):\n    ("idealcheck: returns x"\n     "")\n    return x\n'
            's = "idealcheck: x == y"\n'
            'class K:\n    """idealcheck: 1 == 2"""\n')
    assert _found(text) == [(12, 7, "returns x", 11)]  # d: an implicitly joined string is a docstring


def test_a_file_that_does_not_parse_has_none_and_comments_are_not_doubled() -> None:
    assert docstring_claims('def f(:\n    """idealcheck: returns 1"""\n') == []
    text = 'def f(x):\n    """idealcheck: returns x"""\n    # idealcheck: == x\n    return x\n'
    assert [(c.line, c.column, c.subject_line) for c in python_comments(text)] == [(2, 8, 1), (3, 7, None)]


def test_a_docstring_claim_stands_for_a_claim_above_the_def() -> None:
    above = extract("m.py", "# idealcheck: returns 2*x\ndef f(x):\n    return x + x\n")
    inside = extract("m.py", 'def f(x):\n    """idealcheck: returns 2*x"""\n    return x + x\n')
    assert [c.obligations for c in inside] == [c.obligations for c in above]
    assert inside[0].problem is None and inside[0].kind == "function"
