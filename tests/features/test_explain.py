"""``idealcheck explain FILE:LINE`` end to end, and the explanation of single obligations."""
from __future__ import annotations

import re
from fractions import Fraction
from pathlib import Path

import pytest
from exprs import expr
from sympy import QQ, groebner, symbols
from sympy.polys.orderings import grevlex
from sympy.polys.rings import PolyRing

from verifier.algebra.translate import format_poly
from verifier.model.claim import Obligation
from verifier.model.expr import Pow, Var
from verifier.features.explain import ExplainError, explain_obligation, parse_target

ROOT = Path(__file__).resolve().parents[2]
SYSTEMS = "fixtures/explain/systems.py"
CYCLIC3_LINE, CYCLIC4_LINE, CYCLIC5_LINE, KATSURA3_LINE, WRONG_LINE, QUADRATIC_LINE = 8, 11, 15, 22, 27, 30


def section(output: str, title: str) -> list[str]:
    """The indented lines after a heading line that starts with ``title``."""
    lines = output.splitlines()
    start = next(i for i, line in enumerate(lines) if line.strip().startswith(title))
    indent = len(lines[start]) - len(lines[start].lstrip())
    body = []
    for line in lines[start + 1:]:
        if len(line) - len(line.lstrip()) <= indent:
            break
        body.append(line.strip())
    return body


def standard_count(output: str) -> int:
    match = re.search(r"standard monomials: (\d+)", output)
    assert match, output
    return int(match.group(1))


def sympy_basis_texts(equations, names: str) -> set[str]:
    """sympy's reduced grevlex basis of ``equations`` (sympy expressions), monic, printed like the tool prints.

    Over integer inputs sympy returns primitive integer polynomials; the reduced basis is unique up to the
    scaling of each element, so both are compared monic.
    """
    gens = symbols(names)
    basis = groebner(equations, *gens, order="grevlex")
    ring = PolyRing(gens, QQ, grevlex)
    return {format_poly(ring.from_expr(g.as_expr()).monic()) for g in basis.exprs}


def test_cyclic_3_basis_equals_sympys_and_counts_six_solutions(cli):
    result = cli("explain", f"{SYSTEMS}:{CYCLIC3_LINE}", cwd=ROOT, fresh_process=True)
    assert result.code == 0, result.err
    out = result.out
    x0, x1, x2 = symbols("x0 x1 x2")
    equations = [x0 + x1 + x2, x0*x1 + x1*x2 + x2*x0, x0*x1*x2 - 1]
    printed = section(out, "reduced Groebner basis")
    assert len(printed) == len(set(printed))
    # the reference library: sympy's groebner for the same ideal and order
    assert set(printed) == sympy_basis_texts(equations, "x0 x1 x2")
    # Björck and Fröberg, J. Symbolic Computation 12 (1991): cyclic 3-roots has 6 solutions (from memory);
    # here also 3! = 6 orderings of the cube roots of unity (common practice)
    assert standard_count(out) == 6
    listed = section(out, "standard monomials")[0].split(", ")
    assert len(listed) == 6 and "1" in listed
    assert "leading-term ideal, minimal generators: x2**3, x1**2, x0" in out
    assert "monomial order: grevlex" in out
    assert "certificate: LEFT - RIGHT = sum of cofactor * generator:" in out


def test_cyclic_5_has_the_published_count(cli):
    # Björck and Fröberg, "A faster way to count the solutions of inhomogeneous systems of algebraic
    # equations, with applications to cyclic n-roots", J. Symbolic Computation 12 (1991): 70 solutions for
    # n = 5 (from memory)
    result = cli("explain", f"{SYSTEMS}:{CYCLIC5_LINE}", cwd=ROOT, fresh_process=True)
    assert result.code == 0, result.err
    assert standard_count(result.out) == 70
    assert "dimension 0 in 5 variables" in result.out
    xs = symbols("x0:5")
    n = 5
    equations = []
    for k in range(1, n):
        total = 0
        for i in range(n):
            term = 1
            for j in range(k):
                term *= xs[(i + j) % n]
            total += term
        equations.append(total)
    equations.append(xs[0] * xs[1] * xs[2] * xs[3] * xs[4] - 1)
    printed = section(result.out, "reduced Groebner basis")
    assert set(printed) == sympy_basis_texts(equations, "x0 x1 x2 x3 x4")
    # more than ~30 standard monomials are counted, not listed
    assert not section(result.out, "standard monomials")


def test_cyclic_4_is_not_zero_dimensional(cli):
    # Björck and Fröberg (1991, from memory): cyclic 4-roots has infinitely many solutions; sympy agrees
    x = symbols("x0:4")
    equations = [x[0] + x[1] + x[2] + x[3], x[0]*x[1] + x[1]*x[2] + x[2]*x[3] + x[3]*x[0],
                 x[0]*x[1]*x[2] + x[1]*x[2]*x[3] + x[2]*x[3]*x[0] + x[3]*x[0]*x[1], x[0]*x[1]*x[2]*x[3] - 1]
    assert not groebner(equations, *x, order="grevlex").is_zero_dimensional
    code, out, err = cli("explain", f"{SYSTEMS}:{CYCLIC4_LINE}", cwd=ROOT)
    assert code == 0, err
    assert "condition variety: dimension 1 in 4 variables" in out
    assert "standard monomials" not in out
    assert set(section(out, "reduced Groebner basis")) == sympy_basis_texts(equations, "x0 x1 x2 x3")


def test_katsura_3_meets_the_bezout_bound(cli):
    # Katsura's system with n = 3 has 2**3 = 8 solutions, its Bezout bound (from memory)
    code, out, err = cli("explain", f"{SYSTEMS}:{KATSURA3_LINE}", cwd=ROOT)
    assert code == 0, err
    assert standard_count(out) == 8
    assert len(section(out, "standard monomials")[0].split(", ")) == 8


def test_refuted_claim_shows_normal_forms_witness_and_plain_terms(cli):
    code, out, _ = cli("explain", f"{SYSTEMS}:{WRONG_LINE}", cwd=ROOT)
    assert code == 1
    assert "refuted" in out
    assert "normal form of the left side:  a**2 + 2*a*b + b**2" in out
    assert "normal form of the right side: a**2 + b**2" in out
    assert "normal form of LEFT - RIGHT:   2*a*b" in out
    assert "in plain terms: the right side lacks 2*a*b" in out
    witness = re.search(r"witness: a = (\S+), b = (\S+) \(checked exactly\)", out)
    assert witness, out
    a, b = (float(v) for v in witness.groups())
    assert (a + b) ** 2 != a**2 + b**2
    assert "condition ideal: the zero ideal" in out
    assert "dimension 2 in 2 variables" in out


def test_auxiliary_variables_are_listed_with_their_meaning(cli):
    code, out, err = cli("explain", f"{SYSTEMS}:{QUADRATIC_LINE}", cwd=ROOT)
    assert code == 0, err
    aux = section(out, "auxiliary variables")
    assert any(line.startswith("$r1 = sqrt(b**2 - 4*a*c)") for line in aux)
    assert any("= 1/a" in line for line in aux)
    assert "proved (saturation)" in out
    assert section(out, "certificate")


def test_explain_with_accuracy_ranks_the_naive_root_lower(cli):
    # Goldberg, "What Every Computer Scientist Should Know About Floating-Point Arithmetic", ACM Computing
    # Surveys 23(1), 1991, section 1.4: the naive root cancels catastrophically when b*b >> 4*a*c
    code, out, err = cli("explain", f"{SYSTEMS}:{QUADRATIC_LINE}", "--accuracy", "--accuracy-samples", "200",
                         "--accuracy-range", "a=0.5:2", "--accuracy-range", "b=1e3:1e6", "--accuracy-range", "c=0.5:2",
                         cwd=ROOT)
    assert code == 0, err
    assert "the right side is more accurate on these samples" in out
    assert "sampled estimate" in out and "not a bound" in out


def test_no_claim_on_the_line_is_a_usage_error(monkeypatch, cli):
    monkeypatch.chdir(ROOT)
    run = cli("explain", f"{SYSTEMS}:3")
    assert run.code == 2
    err = run.err
    assert "no idealcheck claim starts on line 3" in err
    assert str(CYCLIC3_LINE) in err
    run = cli("explain", "fixtures/explain/no_such_file.py:1")
    assert run.code == 2
    assert "no such file" in run.err
    run = cli("explain", SYSTEMS)
    assert run.code == 2
    assert "FILE:LINE" in run.err


def test_parse_target():
    assert parse_target("a/b.py:12") == ("a/b.py", 12)
    assert parse_target("C:/x.py:3") == ("C:/x.py", 3)
    with pytest.raises(ExplainError):
        parse_target("a.py:0")


def test_explain_obligation_with_a_nonzero_condition():
    ob = Obligation(expr("(x*x - y*y)/(x - y)"), expr("x + y"))
    item = explain_obligation(ob, None)
    assert item.problem is None
    assert [a.meaning for a in item.aux] == ["1/(x - y)"]
    assert item.difference_normal_form == "0"
    # x, y free and the inverse variable determined by them: a surface in three variables
    assert item.structure is not None and item.structure.dimension == 2


def test_explain_obligation_reports_an_unrepresentable_claim():
    # a cube root has no polynomial translation (the claim language parser refuses it too)
    ob = Obligation(Pow(Var("x"), Fraction(1, 3)), Var("x"))
    item = explain_obligation(ob, None)
    assert item.problem is not None and "cannot be represented" in item.problem


def test_a_sign_argument_certificate_shows_its_multiplier(tmp_path, monkeypatch, cli):
    # sqrt(x**2) = |x| = x for x >= 0 (principal square root, common practice)
    (tmp_path / "s.py").write_text("# idealcheck: sqrt(x**2) == x given x >= 0\n")
    monkeypatch.chdir(tmp_path)
    run = cli("explain", "s.py:1")
    assert run.code == 0
    out = run.out
    assert "verdict: proved (sign)" in out
    assert "certificate: (LEFT - RIGHT) * ($r1 + x) = sum of cofactor * generator:" in out
    assert "sign argument:" in out


@pytest.mark.parametrize("claim,headline", [
    # a real sum of squares vanishes only where every term does (common practice)
    ("x == 0 given x**2 + y**2 == 0", "certificate: (LEFT - RIGHT)**2 + P = sum of cofactor * generator:"),
    # a > b and a <= b cannot hold together
    ("x == 1 given a > b, a <= b", "certificate: F - ratio*S - constant expands to 0"),
    # r > 1 makes r*r > 1
    ("y == 5 given r > 1, r*r <= 1", "certificate: no equation is needed"),
])
def test_each_real_proof_kind_shows_its_own_identity(tmp_path, cli, claim, headline):
    (tmp_path / "s.py").write_text(f"# idealcheck: {claim}\n")
    code, out, _ = cli("explain", "s.py:1", cwd=tmp_path)
    assert code == 0
    assert headline in out and "sign argument:" in out
    assert "certificate: LEFT - RIGHT" not in out  # the identity is not LEFT - RIGHT in the ideal
