"""Finding `idealcheck:` comments in many languages, continuation lines, and expression claims from them.

Comment syntax per language is common practice (each language's reference: C/C++ `//` and `/* */`,
Fortran free form `!` and fixed form `C`/`*` in column 1, Julia `#` and `#= =#`, MATLAB `%`/`%{ %}` and
Octave `#`, LaTeX `%` with `\\%` a literal percent sign, SQL/Haskell/Lua/Ada `--`, Lisp `;`).  The sample
files live in fixtures/languages/ and hold decoys in string literals that must not be read.
"""
from __future__ import annotations

import os
from pathlib import Path

import pytest

from verifier.claims import extract
from verifier.claims.comments import find_comments, syntax_for
from verifier.claims.expression import expression_claims
from verifier.model.expr import BinOp, Var
from verifier.model.claim import ExtractionContext, NamedConditionSet

FIXTURES = Path(__file__).resolve().parents[2] / "fixtures" / "languages"

# file -> [(line, column of "idealcheck:", text, end_line, trailing)]
EXPECTED = {
    "sample.py": [
        (6, 3, "(x + 1)**2 == x**2 + 2*x + 1", 6, False),
        (7, 10, "a*b == b*a", 7, True),
        (8, 3, "(a + b)*(a - b) == a**2 - b**2", 9, False),
    ],
    "sample.c": [
        (3, 22, "(x - 1)*(x + 1) == x*x - 1", 3, True),
        (4, 4, "2*(a + b) == 2*a + 2*b", 4, False),
        (6, 4, "(a + b)**3 == a**3 + 3*a**2*b + 3*a*b**2 + b**3", 7, False),
        (9, 15, "a*b*c == c*b*a", 9, True),
    ],
    "sample.cu": [(2, 8, "fma(a, b, c) == a*b + c", 2, False)],
    "sample.hpp": [(2, 5, "hypot(a, b)**2 == a**2 + b**2", 2, False)],
    "sample.f90": [
        (3, 13, "(x + y)**2 == x**2 + 2*x*y + y**2", 3, True),
        (4, 5, "x*(y + z) == x*y + x*z", 4, False),
    ],
    "sample.f": [
        (1, 7, "(a + b)*c == a*c + b*c", 1, False),
        (2, 7, "a - a == 0", 2, False),
        (3, 7, "2*a == a + a", 3, False),
        (4, 17, "a*a == a**2", 4, True),
    ],
    "sample.jl": [
        (2, 15, "(1 + x)^2 == 1 + 2*x + x^2", 2, True),
        (3, 4, "a + b == b + a", 3, False),
        (5, 1, "a*b == b*a", 5, False),
    ],
    "sample.rs": [
        (1, 39, "x*x == x**2", 1, True),
        (2, 5, "(w + 1)*(w - 1) == w**2 - 1", 2, False),
        (3, 5, "3*q == q + q + q", 3, False),
    ],
    "sample.go": [(7, 4, "(p + q)**2 - (p - q)**2 == 4*p*q", 7, False)],
    "sample.java": [
        (3, 8, "a*(b + c) == a*b + a*c", 3, False),
        (4, 8, "a/b == a*b**-1 given b != 0", 4, False),
    ],
    "sample.ts": [(4, 49, "u*u == u**2", 4, True)],
    "sample.js": [(1, 4, "Math_x + 0 == Math_x", 1, False)],
    "sample.m": [
        (1, 15, "(x + z)^2 == x^2 + 2*x*z + z^2", 1, True),
        (3, 3, "2*x == x + x", 3, False),
        (5, 1, "x - 0 == x", 5, False),
    ],
    "sample.R": [(2, 25, "x^2 - 1 == (x - 1)*(x + 1)", 2, True)],
    "sample.tex": [
        (2, 3, "(a + b)^2 == a^2 + 2*a*b + b^2", 2, False),
        (3, 7, "a^2 - b^2 == (a - b)*(a + b)", 3, True),
    ],
    "sample.sh": [(2, 3, "n*(n + 1) == n**2 + n", 2, False)],
    "sample.toml": [(1, 3, "0.1 + 0.2 == 0.3", 1, False)],
    "sample.yaml": [(1, 14, "1/2 + 1/3 == 5/6", 1, True)],
    "sample.lisp": [(1, 25, "x*x == x**2", 1, True), (2, 4, "x + x == 2*x", 2, False)],
    "sample.sql": [(1, 46, "a + 0 == a", 1, True)],
    "sample.hs": [(1, 6, "(a + b)*(a + b) == a*a + 2*a*b + b*b", 1, False), (2, 4, "a*1 == a", 2, False)],
    "sample.lua": [(1, 48, "s1 - s1 == 0", 1, True), (2, 6, "s2*0 == 0", 2, False)],
    "sample.adb": [(1, 18, "y*2 == 2*y", 1, True)],
    "sample.txt": [(1, 3, "t*(t - 1) == t**2 - t", 1, False)],
    "sample.unknownext": [(2, 7, "g1 + g2 == g2 + g1", 2, False), (3, 3, "g1*g2 == g2*g1", 3, False)],
    "sample_bom_crlf.c": [(1, 4, "bom_x == bom_x", 1, False), (2, 4, "crlf_y == crlf_y", 2, False)],
    "README.md": [],
}


def _read(name: str) -> str:
    # newline="" keeps CRLF line ends as they are on disk; utf-8 keeps a byte-order mark as U+FEFF.
    with open(FIXTURES / name, encoding="utf-8", newline="") as handle:
        return handle.read()


def test_every_fixture_has_an_expectation() -> None:
    assert sorted(os.listdir(FIXTURES)) == sorted(EXPECTED)


@pytest.mark.parametrize("name", sorted(EXPECTED))
def test_comment_forms_per_language(name: str) -> None:
    found = find_comments(f"fixtures/languages/{name}", _read(name))
    assert [(c.line, c.column, c.text, c.end_line, c.trailing) for c in found] == EXPECTED[name]


@pytest.mark.parametrize("name", sorted(EXPECTED))
def test_columns_point_at_the_marker(name: str) -> None:
    lines = _read(name).lstrip("\ufeff").splitlines()
    for claim in find_comments(name, _read(name)):
        assert lines[claim.line - 1][claim.column - 1 :].startswith("idealcheck:")


def test_decoys_in_strings_are_not_claims() -> None:
    for name in EXPECTED:
        assert all("not_a_claim" not in c.text for c in find_comments(name, _read(name)))


def test_extension_lookup_is_case_insensitive_and_covers_headers() -> None:
    # C headers and CUDA sources share the C comment syntax (common practice).
    assert syntax_for("A.CPP") is syntax_for("x.c") is syntax_for("k.cuh") is syntax_for("h.hh")
    assert syntax_for("x.F90") is syntax_for("y.f08")
    assert syntax_for("notes.unknownext") is None


def test_continuation_over_several_lines_and_position_of_each_piece() -> None:
    text = "x = 1\n// idealcheck: a == \\\n//   b + \\\n//   c\n// idealcheck: d == e\n"
    first, second = find_comments("k.c", text)
    assert (first.text, first.line, first.end_line) == ("a == b + c", 2, 4)
    assert first.position(first.text.index("c")) == (4, 6)
    assert first.position(first.text.index("b")) == (3, 6)
    assert (second.text, second.line) == ("d == e", 5)


def test_continuation_keeps_a_leading_minus_sign() -> None:
    # "--" leader: the minus sign of the next line is part of the expression, not decoration.
    (claim,) = find_comments("q.sql", "-- idealcheck: a == b \\\n--   - c\n")
    assert claim.text == "a == b - c"
    (claim,) = find_comments("q.c", "// idealcheck: a == b \\\n//- c\n")
    assert claim.text == "a == b - c"


def test_dangling_continuation_at_end_of_file() -> None:
    (claim,) = find_comments("k.c", "// idealcheck: a == b \\\nint x;\n")
    assert (claim.text, claim.end_line) == ("a == b", 1)


def test_marker_must_start_the_comment() -> None:
    assert find_comments("k.c", "// see idealcheck: a == b\n") == []
    assert find_comments("k.py", "# IDEALCHECK: a == b\n") == []


def test_python_falls_back_to_a_line_scan_when_tokenize_fails() -> None:
    text = 'def f(:\n    """unterminated\n# idealcheck: a == a\n'
    (claim,) = find_comments("broken.py", text)
    assert (claim.line, claim.text) == (3, "a == a")


# ---------------------------------------------------------------- expression claims


def _context() -> ExtractionContext:
    return ExtractionContext((NamedConditionSet("unit", ("c", "s"), ("c**2 + s**2 == 1",)),))


def test_chain_gives_one_claim_per_link_with_ids() -> None:
    (comment,) = find_comments("k.c", "// idealcheck: a == b == c given x != 0\n")
    claims = expression_claims(comment, "k.c", _context())
    assert [c.id for c in claims] == ["k.c:1:4#1", "k.c:1:4#2"]
    assert [c.text for c in claims] == ["a == b given x != 0", "b == c given x != 0"]
    assert [(o.left, o.right) for c in claims for o in c.obligations] == [(Var("a"), Var("b")), (Var("b"), Var("c"))]
    assert all(c.obligations[0].conditions[0].relation == "!=" for c in claims)
    assert all(c.kind == "expression" and c.dependencies == ("k.c",) for c in claims)


def test_lone_claim_id_and_obligation() -> None:
    (claim,) = extract("src/k.rs", "   // idealcheck: x*y == y*x given unit\n", _context())
    assert claim.id == "src/k.rs:1:7" and claim.problem is None
    (obligation,) = claim.obligations
    assert obligation.left == BinOp("*", Var("x"), Var("y"))
    assert obligation.conditions[0].origin == "named:unit"


def test_error_claim_points_at_the_error_column() -> None:
    text = "x = 1 // idealcheck: a == foo(b)\n"
    (claim,) = extract("k.c", text, _context())
    assert claim.problem is not None and claim.problem.verdict == "error"
    assert "unknown function `foo`" in claim.problem.message
    assert claim.location.column == text.index("foo") + 1
    assert f"(column {text.index('foo') + 1})" in claim.problem.message
    assert claim.id == "k.c:1:10"


def test_error_on_a_continuation_line_names_that_line() -> None:
    (claim,) = extract("k.c", "// idealcheck: a == \\\n//   b +\n", _context())
    assert claim.problem is not None and claim.location.line == 2
    assert "line 2" in claim.problem.message


@pytest.mark.parametrize("text", ["returns x + 1", "same as other_function", "== x + 1"])
def test_code_tied_forms_are_errors_in_languages_without_a_front_end(text: str) -> None:
    (claim,) = extract("k.go", f"// idealcheck: {text}\n", _context())
    assert claim.problem is not None and "Python-only" in claim.problem.message


@pytest.mark.parametrize("text", ["returns x + 1", "same as other_function", "== x + 1"])
def test_misplaced_code_tied_forms_in_kernel_files_are_errors(text: str) -> None:
    # Kernel languages have front ends: the claim must sit above a function or trail an assignment.
    (claim,) = extract("k.f90", f"! idealcheck: {text}\n", _context())
    assert claim.problem is not None and claim.problem.verdict == "error"
    assert "above a function" in claim.problem.message or "trail an assignment" in claim.problem.message


def test_unknown_named_condition_is_an_error_naming_it() -> None:
    (claim,) = extract("k.jl", "# idealcheck: a == a given no_such_set\n", _context())
    assert claim.problem is not None and "`no_such_set`" in claim.problem.message
    assert claim.location.column == len("# idealcheck: a == a given ") + 1


def test_escaped_quote_char_literal_does_not_open_a_string() -> None:
    # C: '\'' is one character literal (ISO C, character constants; common practice).
    (claim,) = find_comments("q.c", "char q = '\\''; // idealcheck: a == a\n")
    assert claim.column == len("char q = '\\''; // ") + 1


def test_objective_c_m_files_use_c_comments() -> None:
    text = "#import <Foundation/Foundation.h>\n// idealcheck: a == a\n% idealcheck: not_a_claim == 1\n"
    assert [c.text for c in find_comments("view.m", text)] == ["a == a"]


def test_files_without_the_marker_are_skipped_quickly() -> None:
    assert find_comments("big.c", "/* no claims */\n" * 1000) == []
