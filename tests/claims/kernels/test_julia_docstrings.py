"""Claims in Julia docstrings, the string literal directly above a definition (Julia's own convention for
documentation, common practice).  Horner's rule and the complex product are common practice too."""
from __future__ import annotations

import json

from verifier.claims.julia_docstrings import julia_docstring_claims

SOURCE = '''\
"""
    poly(x)

Evaluates 1 + 2x + 3x^2 by Horner's rule.

idealcheck: returns 1 + 2*x + 3*x^2
"""
function poly(x)
    return 1.0 + x * (2.0 + x * 3.0)
end

"""
idealcheck: returns 1 + 2*x + 3*x^3
"""
poly_bug(x) = 1.0 + x * (2.0 + x * 3.0)

@doc raw"""
idealcheck: returns a*c - b*d
"""
@inline product_real(a, b, c, d) = a * c - b * d

"""
idealcheck: same as poly \\
    given x >= 0
"""
function poly_again(x::Float64)::Float64
    return 1.0 + x * (2.0 + 3.0 * x)
end

"""
idealcheck: returns 2
"""
const SCALE = 2.0

function label()
    s = """
idealcheck: returns 3
"""
    return s
end

"""
idealcheck: returns -x
"""
negated(x) = -x
'''


def test_docstring_claims_are_checked_against_the_function_below(cli, tmp_path):
    (tmp_path / "poly.jl").write_text(SOURCE)
    result = cli("check", "--no-cache", "--format", "json", "poly.jl", cwd=tmp_path)
    verdicts = {(c["line"], c["text"]): c["verdict"] for c in json.loads(result.out)["claims"]}
    assert verdicts == {
        (6, "returns 1 + 2*x + 3*x^2"): "proved",
        (13, "returns 1 + 2*x + 3*x^3"): "refuted",
        (18, "returns a*c - b*d"): "proved",
        (23, "same as poly given x >= 0"): "proved",
        (31, "returns 2"): "error",  # documents a constant, not a function
        (43, "returns -x"): "proved",  # after a string assigned in code
    }


def test_the_error_says_where_a_function_claim_belongs(cli, tmp_path):
    (tmp_path / "poly.jl").write_text(SOURCE)
    result = cli("check", "--no-cache", "poly.jl", cwd=tmp_path)
    assert "poly.jl:31:1: error: returns 2" in result.out
    assert "directly above a function definition" in result.out


def test_only_strings_on_their_own_lines_are_read():
    claims = julia_docstring_claims(SOURCE)
    assert [c.line for c in claims] == [6, 13, 18, 23, 31, 43]  # not the string assigned inside `label`
    assert [c.subject_line for c in claims] == [8, 15, 20, 26, None, 45]
    continued = claims[3]
    assert continued.text == "same as poly given x >= 0" and continued.end_line == 24
    assert continued.position(len("same as poly ")) == (24, 5)
