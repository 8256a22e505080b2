"""The small helpers every layer shares: fraction text, report paths, substitution."""
from __future__ import annotations

import os
from fractions import Fraction
from pathlib import Path

from exprs import expr

from verifier.model.expr import Var
from verifier.model.numbers import fraction_text
from verifier.model.paths import relative_path
from verifier.model.expr import substitute


def test_fraction_text_is_lowest_terms_with_the_sign_in_front() -> None:
    # Fraction normalises to lowest terms with a positive denominator (Python's fractions module)
    assert fraction_text(Fraction(6, -4)) == "-3/2"
    assert fraction_text(Fraction(10, 5)) == "2"
    assert fraction_text(Fraction(0)) == "0"


def test_relative_path_uses_forward_slashes_and_dot_dot(tmp_path: Path) -> None:
    (tmp_path / "a" / "b").mkdir(parents=True)
    assert relative_path("a/b/c.py", tmp_path) == "a/b/c.py"
    assert relative_path(tmp_path / "a" / "b" / "c.py", tmp_path / "a") == "b/c.py"
    assert relative_path(tmp_path / "x.py", tmp_path / "a" / "b") == "../../x.py"
    assert relative_path(".", tmp_path) == "."


def test_relative_path_names_a_file_by_the_link_it_was_reached_through(tmp_path: Path) -> None:
    (tmp_path / "real").mkdir()
    (tmp_path / "real" / "m.py").write_text("")
    os.symlink(tmp_path / "real", tmp_path / "linked")
    assert relative_path("linked/m.py", tmp_path) == "linked/m.py"


def test_substitute_replaces_all_at_once() -> None:
    # simultaneous substitution: x -> y and y -> x swap, they do not chain
    assert substitute(expr("x + 2*y"), {"x": Var("y"), "y": Var("x")}) == expr("y + 2*x")
    assert substitute(expr("sqrt(x)**-2"), {"x": expr("a*b")}) == expr("sqrt(a*b)**-2")
