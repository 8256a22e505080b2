"""A scratch project with claims in Python, a notebook, Markdown and reStructuredText (for end-to-end tests).

Every identity is common practice (binomial square, difference of squares, sin^2 + cos^2 = 1, sum of a
geometric series of three terms); the false ones drop a term of the binomial square or of the difference
of squares, so each side is computed here with plain rational arithmetic to check a reported witness.
"""
from __future__ import annotations

import json
from collections.abc import Callable
from dataclasses import dataclass
from fractions import Fraction
from pathlib import Path

PYPROJECT = """\
[tool.idealcheck]
paths = ["src", "docs"]

[tool.pytest.ini_options]
testpaths = ["tests"]
"""

KERNELS_PY = """\
def square(x):
    return x * x


# idealcheck: returns x**2 + 2*x + 1
def shifted_square(x):
    return square(x) + 2*x + 1


def blend(a, b):
    # idealcheck: (a + b)**2 == a**2 + b**2
    return a + b


# idealcheck: (u - v)*(u + v) == u**2 - v**2
"""

NOTEBOOK_CELLS = [
    ("markdown", "# Derivation\n\n<!-- idealcheck: (1 - r)*(1 + r + r**2) == 1 - r**3 -->\n"),
    ("code", "%matplotlib inline\nimport math\n\ndef cube(t):\n    return t * t * t\n"),
    ("code", "# idealcheck: returns t**3 - t\ndef cube_minus(t):\n    return cube(t) - t\n"),
    ("code", "# idealcheck: (p - q)*(p + q) == p**2 + q**2\nvalue = 1\n"),
]

NOTES_MD = """\
# Notes

<!--
idealcheck: sin(t)**2 + cos(t)**2
  == 1
-->

```
<!-- idealcheck: 1 == 2 (inside a code block: not a claim) -->
```

<!-- idealcheck: (m + n)**2 == m**2 + n**2 -->
"""

THEORY_RST = """\
Theory
======

.. idealcheck: (h + k)**2 == h**2 + 2*h*k + k**2

A literal block::

   .. idealcheck: 1 == 2
"""

TEST_PLAIN = "def test_plain():\n    assert 1 + 1 == 2\n"


@dataclass(frozen=True)
class Expected:
    path: str
    cell: int | None
    line: int
    verdict: str
    item: str  # the pytest item name
    sides: Callable[[dict[str, Fraction]], tuple[Fraction, Fraction]] | None = None  # for refuted claims


EXPECTED: tuple[Expected, ...] = (
    Expected("docs/notes.md", None, 4, "proved", "sin(t)**2 + cos(t)**2 == 1"),
    Expected("docs/notes.md", None, 12, "refuted", "(m + n)**2 == m**2 + n**2",
             lambda v: ((v["m"] + v["n"]) ** 2, v["m"] ** 2 + v["n"] ** 2)),
    Expected("docs/theory.rst", None, 4, "proved", "(h + k)**2 == h**2 + 2*h*k + k**2"),
    Expected("src/derivation.ipynb", 1, 3, "proved", "cell 1: (1 - r)*(1 + r + r**2) == 1 - r**3"),
    Expected("src/derivation.ipynb", 3, 1, "proved", "cell 3: cube_minus"),
    Expected("src/derivation.ipynb", 4, 1, "refuted", "cell 4: (p - q)*(p + q) == p**2 + q**2",
             lambda v: ((v["p"] - v["q"]) * (v["p"] + v["q"]), v["p"] ** 2 + v["q"] ** 2)),
    Expected("src/kernels.py", None, 5, "proved", "shifted_square"),
    Expected("src/kernels.py", None, 11, "refuted", "blend: (a + b)**2 == a**2 + b**2",
             lambda v: ((v["a"] + v["b"]) ** 2, v["a"] ** 2 + v["b"] ** 2)),
    Expected("src/kernels.py", None, 15, "proved", "(u - v)*(u + v) == u**2 - v**2"),
)


def notebook_json(cells: list[tuple[str, str]]) -> str:
    """An nbformat 4 notebook with these (cell type, source) cells; sources as lists of lines, as Jupyter saves."""
    document = {
        "cells": [
            {"cell_type": kind, "metadata": {}, "source": source.splitlines(keepends=True),
             **({"outputs": [], "execution_count": None} if kind == "code" else {})}
            for kind, source in cells
        ],
        "metadata": {"kernelspec": {"name": "python3", "language": "python", "display_name": "Python 3"}},
        "nbformat": 4,
        "nbformat_minor": 5,
    }
    return json.dumps(document, indent=1)


def write_project(root: Path) -> Path:
    (root / "src").mkdir(parents=True)
    (root / "docs").mkdir()
    (root / "tests").mkdir()
    (root / "pyproject.toml").write_text(PYPROJECT)
    (root / "src" / "kernels.py").write_text(KERNELS_PY)
    (root / "src" / "derivation.ipynb").write_text(notebook_json(NOTEBOOK_CELLS))
    (root / "docs" / "notes.md").write_text(NOTES_MD)
    (root / "docs" / "theory.rst").write_text(THEORY_RST)
    (root / "tests" / "test_plain.py").write_text(TEST_PLAIN)
    return root


def witness_values(values: dict[str, str]) -> dict[str, Fraction]:
    return {name: Fraction(value) for name, value in values.items()}
