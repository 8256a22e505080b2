"""Claims in Python docstrings through ``idealcheck check``: an ``idealcheck:`` line of a function's docstring
is a claim about that function, reported at the line and column of its ``idealcheck:`` text.

The identities are common practice: (a + b)**2 = a**2 + 2ab + b**2, (x - 1)(x + 1) = x**2 - 1.
"""
from __future__ import annotations

import json
from fractions import Fraction
from pathlib import Path
from typing import TYPE_CHECKING

from prose_project import notebook_json

if TYPE_CHECKING:
    from conftest import Cli

SOURCE = '''\
import math


def square_of_sum(a, b):
    """idealcheck: returns a**2 + 2*a*b + b**2"""
    return (a + b) * (a + b)


def sum_of_squares(a, b):
    """Not the square of the sum.

    idealcheck: returns (a + b)**2
    """
    return a * a + b * b


def difference_of_squares(x):
    """Shown in three lines.

    idealcheck: (x - 1)*(x + 1) == x**2 - 1
    idealcheck: (x - 1)**2 == x**2 - 1
    """
    return x


def expanded(a, b):
    # a docstring claim and a comment claim on one function: two claims
    """idealcheck: same as square_of_sum"""
    return a * a + 2 * a * b + b * b


class Polar:
    def norm2(self, c, s, r):
        """Squared length of (r c, r s).

        idealcheck: returns r**2 given c**2 + s**2 == 1
        """
        return (r * c) ** 2 + (r * s) ** 2


LABEL = "idealcheck: x == y"


def not_a_docstring(t):
    note = "idealcheck: returns t + 1"
    """idealcheck: returns t + 2"""
    return t
'''


def _run(cli: Cli, root: Path, name: str) -> dict:  # type: ignore[type-arg]
    done = cli("check", "--no-cache", name, "--format", "json", cwd=root)
    assert done.code == 1, done.err  # some claims are deliberately wrong
    return json.loads(done.out)


def _line_of(text: str, needle: str) -> int:
    (index,) = [i for i, line in enumerate(text.splitlines()) if needle in line]
    return index + 1


def test_docstring_claims_are_decided_at_their_docstring_line(cli: Cli, tmp_path: Path) -> None:
    (tmp_path / "forms.py").write_text(SOURCE)
    document = _run(cli, tmp_path, "forms.py")
    found = {(c["line"], c["column"]): c for c in document["claims"]}
    expected = {
        ("returns a**2 + 2*a*b + b**2", "function", "proved"),
        ("returns (a + b)**2", "function", "refuted"),
        ("(x - 1)*(x + 1) == x**2 - 1", "expression", "proved"),
        ("(x - 1)**2 == x**2 - 1", "expression", "refuted"),
        ("same as square_of_sum", "function", "proved"),
        ("returns r**2 given c**2 + s**2 == 1", "function", "proved"),
    }
    assert {(c["text"], c["kind"], c["verdict"]) for c in found.values()} == expected
    by_text = {c["text"]: place for place, c in found.items()}
    assert by_text["returns a**2 + 2*a*b + b**2"] == (5, 8)  # after the opening quotes
    # the multi-line docstring: its third line is line 12 of the file
    assert by_text["returns (a + b)**2"] == (_line_of(SOURCE, "idealcheck: returns (a + b)**2"), 5)
    assert by_text["returns (a + b)**2"] == (12, 5)
    assert by_text["returns r**2 given c**2 + s**2 == 1"][1] == 9  # a method's docstring, indented deeper
    # only docstrings are claims: neither the assignments nor the string after the first statement
    assert not any("t + 1" in text or "t + 2" in text or "x == y" in text for text in by_text)


def test_a_wrong_docstring_claim_has_a_witness_that_really_differs(cli: Cli, tmp_path: Path) -> None:
    (tmp_path / "forms.py").write_text(SOURCE)
    (claim,) = [c for c in _run(cli, tmp_path, "forms.py")["claims"] if c["text"] == "returns (a + b)**2"]
    assert claim["verdict"] == "refuted" and claim["counter_normal_form"]
    values = {name: Fraction(value) for name, value in claim["witness"]["values"].items()}
    a, b = values["a"], values["b"]
    assert a * a + b * b != (a + b) ** 2  # checked here in exact arithmetic


def test_the_text_report_names_the_docstring_line(cli: Cli, tmp_path: Path) -> None:
    (tmp_path / "forms.py").write_text(SOURCE)
    out = cli("check", "--no-cache", "forms.py", cwd=tmp_path).out
    assert "forms.py:12:5: refuted: returns (a + b)**2" in out
    assert "forms.py:5:8: proved: returns a**2 + 2*a*b + b**2" in out


def test_a_string_assignment_alone_is_no_claim(cli: Cli, tmp_path: Path) -> None:
    (tmp_path / "plain.py").write_text('s = "idealcheck: x == y"\n\n\ndef f(x):\n    t = "idealcheck: returns x"\n'
                                       '    return x\n')
    done = cli("check", "--no-cache", "plain.py", "--format", "json", cwd=tmp_path)
    assert done.code == 0, done.err
    assert json.loads(done.out)["claims"] == []


def test_notebook_functions_get_their_docstring_claims(cli: Cli, tmp_path: Path) -> None:
    (tmp_path / "nb.ipynb").write_text(notebook_json([
        ("markdown", "# Squares"),
        ("code", "def square(t):\n    return t * t\n"),
        ("code", 'def shifted(t):\n    """The square of t + 1.\n\n    idealcheck: returns t**2 + 2*t + 1\n    """\n'
                 '    return square(t) + 2*t + 1\n\n\ndef shifted_wrong(t):\n'
                 '    """idealcheck: returns t**2 + 1"""\n    return square(t + 1)\n'),
    ]))
    document = _run(cli, tmp_path, "nb.ipynb")
    assert {(c["cell"], c["line"], c["column"], c["verdict"]) for c in document["claims"]} == {
        (3, 4, 5, "proved"), (3, 10, 8, "refuted")}
