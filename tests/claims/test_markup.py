"""Markdown and reStructuredText comment claims (verifier/claims/markup.py) and their dispatch by extension.

The comment syntaxes are those of the formats' own specifications (from memory): HTML comments
``<!-- ... -->`` in Markdown, not inside fenced code blocks or code spans; reStructuredText comments are
explicit markup blocks ``.. text`` that are no directive (``name::``), go on over the more-indented lines
after them, and are not comments inside literal blocks (a paragraph ending in ``::``).
"""
from __future__ import annotations

from verifier.claims import extract
from verifier.claims.markup import markdown_comments, rst_comments


def _texts(found) -> list[tuple[int, int, str]]:  # type: ignore[no-untyped-def]
    return [(c.line, c.column, c.text) for c in found]


def test_markdown_one_line_comment_with_its_column() -> None:
    text = "# Title\n\nSome prose. <!-- idealcheck: (a+b)**2 == a**2 + 2*a*b + b**2 -->\n"
    assert _texts(markdown_comments(text)) == [(3, 18, "(a+b)**2 == a**2 + 2*a*b + b**2")]


def test_markdown_multi_line_comment_joins_its_lines() -> None:
    text = "<!--\n  idealcheck: (x - 1)*(x + 1)\n     == x**2 - 1 given x > 0\n-->\n"
    found = markdown_comments(text)
    assert _texts(found) == [(2, 3, "(x - 1)*(x + 1) == x**2 - 1 given x > 0")]
    # the second line's text is placed on line 3 for error columns
    assert found[0].position(len("(x - 1)*(x + 1) ")) == (3, 6)


def test_markdown_skips_fenced_blocks_and_code_spans() -> None:
    text = (
        "```markdown\n<!-- idealcheck: a == b -->\n```\n"
        "~~~~\n<!-- idealcheck: c == d -->\n```\nstill fenced <!-- idealcheck: e == f -->\n~~~~\n"
        "Write `<!-- idealcheck: g == h -->` to add a claim.\n"
        "<!-- idealcheck: u == u -->\n"
    )
    assert [c.text for c in markdown_comments(text)] == ["u == u"]


def test_markdown_comments_that_are_no_claims_and_two_on_a_line() -> None:
    text = "<!-- a note --> <!-- idealcheck: p == p --><!-- idealcheck: q == q -->\n<!-- TODO idealcheck: no -->\n"
    assert [c.text for c in markdown_comments(text)] == ["p == p", "q == q"]


def test_rst_comment_with_continuation_lines() -> None:
    text = (
        "Title\n=====\n\n"
        ".. idealcheck: sin(t)**2 + cos(t)**2\n"
        "   == 1\n"
        "\n"
        "Prose.\n"
    )
    assert _texts(rst_comments(text)) == [(4, 4, "sin(t)**2 + cos(t)**2 == 1")]


def test_rst_comment_whose_text_starts_on_the_next_line() -> None:
    text = "..\n   idealcheck: (h + k)**2 == h**2 + 2*h*k + k**2\n"
    assert _texts(rst_comments(text)) == [(2, 4, "(h + k)**2 == h**2 + 2*h*k + k**2")]


def test_rst_directives_targets_and_literal_blocks_are_no_claims() -> None:
    text = (
        ".. idealcheck:: a == b\n"  # a directive named idealcheck, not a comment
        ".. _idealcheck: https://example.invalid/\n"
        "Example::\n\n   .. idealcheck: c == d\n\n"
        ".. code-block:: rst\n\n   .. idealcheck: e == f\n\n"
        ".. note::\n\n   .. idealcheck: m == m\n"
    )
    assert [c.text for c in rst_comments(text)] == ["m == m"]


def test_dispatch_by_extension_gives_expression_claims() -> None:
    md = extract("docs/notes.md", "<!-- idealcheck: x**2 - 1 == (x - 1)*(x + 1) -->\n")
    rst = extract("docs/theory.RST", ".. idealcheck: x**2 - 1 == (x - 1)*(x + 1)\n")
    for claims, path in ((md, "docs/notes.md"), (rst, "docs/theory.RST")):
        assert len(claims) == 1 and claims[0].kind == "expression" and claims[0].problem is None
        assert claims[0].location.path == path and claims[0].location.cell is None
        assert claims[0].dependencies == (path,)


def test_function_claims_in_prose_files_are_errors_that_say_why() -> None:
    claims = extract("notes.md", "<!-- idealcheck: returns x + 1 -->\n")
    assert len(claims) == 1 and claims[0].problem is not None
    assert claims[0].problem.verdict == "error" and "Python-only" in claims[0].problem.message


def test_a_markdown_bullet_is_not_read_as_a_comment() -> None:
    # before Markdown had its own reader, unknown types were scanned for leaders such as "*" at line start
    assert extract("notes.md", "* idealcheck: a == b\n") == []
