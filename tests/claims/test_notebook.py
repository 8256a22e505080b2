"""Notebooks (verifier/claims/notebook.py): read as JSON (nbformat 4, the format Jupyter saves), never run.

The notebook layout (``cells`` with ``cell_type`` and ``source`` as a string or a list of lines,
``metadata.kernelspec.language``) is that of the nbformat 4 specification, from memory.
"""
from __future__ import annotations

import json

from prose_project import notebook_json
from verifier.claims import extract
from verifier.claims.notebook import build_module, read_cells


def _places(claims) -> list[tuple[int | None, int, int, str]]:  # type: ignore[no-untyped-def]
    return [(c.location.cell, c.location.line, c.location.column, c.text) for c in claims]


def test_code_and_markdown_cells_with_their_cell_and_line() -> None:
    text = notebook_json([
        ("markdown", "# Title\n<!-- idealcheck: (a+b)**2 == a**2 + 2*a*b + b**2 -->\n"),
        ("code", "x = 1\n\n# idealcheck: (x-1)*(x+1) == x**2 - 1\n"),
        ("raw", "# idealcheck: 1 == 2\n"),
    ])
    claims = extract("nb/derivation.ipynb", text)
    assert _places(claims) == [
        (1, 2, 6, "(a+b)**2 == a**2 + 2*a*b + b**2"),
        (2, 3, 3, "(x-1)*(x+1) == x**2 - 1"),
    ]
    assert [c.id for c in claims] == ["nb/derivation.ipynb:cell 1:2:6", "nb/derivation.ipynb:cell 2:3:3"]
    assert str(claims[1].location) == "nb/derivation.ipynb:cell 2:3:3"
    assert all(c.dependencies == ("nb/derivation.ipynb",) for c in claims)


def test_function_claims_see_the_earlier_cells_as_one_module() -> None:
    text = notebook_json([
        ("code", "%matplotlib inline\n!pip list\ndef square(t):\n    return t * t\n"),
        ("markdown", "Next, the shifted square."),
        ("code", "# idealcheck: returns t**2 + 2*t + 1\ndef shifted(t):\n    return square(t) + 2*t + 1\n"),
    ])
    claims = extract("nb.ipynb", text)
    assert len(claims) == 1
    claim = claims[0]
    assert claim.kind == "function" and claim.problem is None, claim.problem
    assert (claim.location.cell, claim.location.line) == (3, 1)
    assert any("square" in note for note in claim.notes)  # the helper of cell 1 was inlined


def test_the_module_text_and_its_line_map() -> None:
    cells, language = read_cells(notebook_json([
        ("code", "a = 1\nb = 2"),
        ("markdown", "text"),
        ("code", "%%bash\necho not python\n"),
        ("code", "for i in range(2):\n    %time f(i)\nc = (a\n    % 3)\n"),
    ]))
    assert language == "python"
    module, line_map = build_module(cells)
    assert module == "a = 1\nb = 2\n\nfor i in range(2):\n    pass\nc = (a\n    % 3)\n\n"
    assert line_map.place(2) == (1, 2)
    assert line_map.place(3) is None  # the separator between cells
    assert line_map.place(5) == (4, 2)


def test_a_parse_error_names_the_cell_and_its_line() -> None:
    text = notebook_json([
        ("code", "def f(x):\n    return x\n"),
        ("code", "# idealcheck: returns x\ndef g(x):\n    return (x\n"),
    ])
    claims = extract("nb.ipynb", text)
    assert len(claims) == 1 and claims[0].problem is not None
    assert claims[0].problem.verdict == "error"
    assert "cell 2 line" in claims[0].problem.message, claims[0].problem.message


def test_malformed_json_is_an_error_on_the_file() -> None:
    claims = extract("broken.ipynb", '{"cells": [ {"cell_type": "code", "source": "# idealcheck: a == a"\n')
    assert len(claims) == 1
    assert claims[0].location.path == "broken.ipynb" and claims[0].problem is not None
    assert claims[0].problem.verdict == "error" and "not valid notebook JSON" in claims[0].problem.message


def test_other_malformed_notebooks_are_errors_too() -> None:
    cases = {
        '["idealcheck: a == a"]': "not an object",
        '{"worksheets": [], "x": "idealcheck: a == a"}': "format 3",
        '{"cells": [{"cell_type": "code", "source": 3}], "x": "idealcheck:"}': "cell 1",
        '{"cells": "idealcheck: a == a"}': "no `cells` list",
    }
    for text, words in cases.items():
        claims = extract("nb.ipynb", text)
        assert len(claims) == 1 and claims[0].problem is not None, text
        assert words in claims[0].problem.message, claims[0].problem.message


def test_a_notebook_without_claims_is_not_parsed() -> None:
    assert extract("nb.ipynb", "{ not json at all") == []


def test_a_julia_notebook_reads_its_comments_in_julia_syntax() -> None:
    document = json.loads(notebook_json([("code", 'x = "# idealcheck: no"\n# idealcheck: (y+1)^2 == y^2 + 2*y + 1\n')]))
    document["metadata"] = {"kernelspec": {"language": "julia"}}
    claims = extract("nb.ipynb", json.dumps(document))
    assert _places(claims) == [(1, 2, 3, "(y+1)^2 == y^2 + 2*y + 1")]
    assert claims[0].kind == "expression" and claims[0].problem is None
