"""The first run on a project, through the command line: the people's text report, colour, inline
``expect``, errors that teach, ``explain FILE:LINE:COL`` and runs that find no claim.

Claims are textbook identities (common practice): the binomial square, the same square without its
cross term (false at a = b = 1), the cosine of a sum written with the wrong sign, and x == 5 under
Motzkin's polynomial plus 1 equal to 0, a condition with no real solution that is not a sum of squares
(T. S. Motzkin, "The arithmetic-geometric inequality", 1967, from memory), so no witness exists, 1 is not
in the ideal and the claim stays undecided.
"""
from __future__ import annotations

import json
import re
from pathlib import Path

import pytest

from verifier.cli.main import main

TRUE_C = "// idealcheck: (a+b)**2 == a**2 + 2*a*b + b**2\n"
FALSE_C = "int f(void);\n// idealcheck: (a+b)**2 == a**2 + b**2\n"
ANSI = re.compile(r"\x1b\[[0-9;]*m")


@pytest.fixture()
def project(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> Path:
    (tmp_path / "pyproject.toml").write_text("[project]\nname = 'scratch'\n")
    (tmp_path / "src").mkdir()
    (tmp_path / "src" / "a_true.c").write_text(TRUE_C)
    (tmp_path / "src" / "b_false.c").write_text(FALSE_C)
    (tmp_path / "src" / "c_true.c").write_text(TRUE_C)
    monkeypatch.chdir(tmp_path)
    for name in ("NO_COLOR", "FORCE_COLOR"):
        monkeypatch.delenv(name, raising=False)
    return tmp_path


def _run(capsys: pytest.CaptureFixture[str], *argv: str) -> tuple[int, str, str]:
    status = main(["check", "--jobs", "1", "--no-cache", *argv])
    captured = capsys.readouterr()
    return status, captured.out, captured.err


# ---------------------------------------------------------------- the text report


def test_failures_come_first_and_each_proved_claim_is_one_line(project: Path, capsys) -> None:
    status, out, _ = _run(capsys)
    lines = out.splitlines()
    assert status == 1
    assert lines[0] == "src/b_false.c:2:4: refuted: (a+b)**2 == a**2 + b**2"
    assert lines[1] == "    counter-normal-form: 2*a*b (the coefficient of a*b is 2 on the left and 0 on the right)" \
        or lines[1].startswith("    counter-normal-form: 2*a*b")
    assert lines[2].startswith("    witness: a = ") and "left = " in lines[2] and "right = " in lines[2]
    proved = [line for line in lines if ": proved: " in line]
    assert proved == ["src/a_true.c:1:4: proved: (a+b)**2 == a**2 + 2*a*b + b**2 (expansion)",
                      "src/c_true.c:1:4: proved: (a+b)**2 == a**2 + 2*a*b + b**2 (expansion)"]
    assert lines[-1] == "3 claims: 2 proved, 1 refuted, 0 inconclusive, 0 error"
    assert sum("floating-point" in line for line in lines) == 1  # the caution once, before the summary
    assert len(lines) == 3 + 1 + 2 + 2  # failure (3 lines), blank, 2 proved, caution, summary


def test_quiet_counts_the_passing_claims_and_verbose_shows_everything(project: Path, capsys) -> None:
    _, quiet, _ = _run(capsys, "-q")
    assert ": proved: " not in quiet and "floating-point" not in quiet
    assert quiet.splitlines()[0].startswith("src/b_false.c:2:4: refuted:")
    assert quiet.splitlines()[-1] == "3 claims: 2 proved, 1 refuted, 0 inconclusive, 0 error"
    _, verbose, _ = _run(capsys, "-v")
    assert verbose.count("    method: expansion") == 2
    assert "        left  = " in verbose  # the full witness block


def test_colour_follows_the_option_and_the_environment(project: Path, capsys, monkeypatch) -> None:
    _, plain, _ = _run(capsys)  # captured stdout is not a terminal
    assert not ANSI.search(plain)
    _, forced, _ = _run(capsys, "--color", "always")
    assert "\x1b[1;31mrefuted\x1b[0m" in forced and "\x1b[32mproved\x1b[0m" in forced
    assert ANSI.sub("", forced) == plain  # only the verdict words change
    monkeypatch.setenv("FORCE_COLOR", "1")
    assert ANSI.search(_run(capsys)[1])
    monkeypatch.setenv("NO_COLOR", "1")  # NO_COLOR wins over FORCE_COLOR in auto mode
    assert not ANSI.search(_run(capsys)[1])
    assert ANSI.search(_run(capsys, "--color", "always")[1])
    monkeypatch.delenv("NO_COLOR")
    assert not ANSI.search(_run(capsys, "--color", "never")[1])
    _, json_out, _ = _run(capsys, "--color", "always", "--format", "json")
    assert not ANSI.search(json_out)


def test_witness_values_are_rounded_for_people_and_exact_in_json(project: Path, capsys) -> None:
    # sin(1) is irrational: the witness is checked with high precision and has many digits
    (project / "src" / "d_trig.c").write_text("// idealcheck: cos(a + b) == cos(a)*cos(b) + sin(a)*sin(b)\n")
    _, out, _ = _run(capsys, "src/d_trig.c")
    witness = next(line for line in out.splitlines() if "witness:" in line)
    numbers = re.findall(r"-?\d+\.\d+", witness)
    assert numbers and all(len(n.lstrip("-").replace(".", "").lstrip("0")) <= 12 for n in numbers)
    _, json_out, _ = _run(capsys, "src/d_trig.c", "--format", "json")
    exact = json.loads(json_out)["claims"][0]["witness"]["left"]
    assert len(exact.lstrip("-").replace(".", "").lstrip("0")) > 12
    # mpmath (outside the project) agrees with the rounded value: cos(2) at a = b = 1
    import mpmath

    shown = float(re.search(r"left = (-?[\d.]+)", witness).group(1))
    assert abs(shown - float(mpmath.cos(2))) < 1e-11


def test_the_sides_of_a_returns_claim_are_named(project: Path, capsys) -> None:
    (project / "src" / "k.py").write_text("# idealcheck: returns (x - 1)**3\ndef cube(x):\n    return (x + 1)**3\n")
    _, out, _ = _run(capsys, "src/k.py")
    assert "the function = " in out and "the claim = " in out
    _, verbose, _ = _run(capsys, "src/k.py", "-v")
    assert "the function = " in verbose and "the claim    = " in verbose


# ---------------------------------------------------------------- accepting a known result


def test_an_expected_verdict_passes_and_a_changed_one_fails(project: Path, capsys) -> None:
    for name in ("a_true.c", "b_false.c", "c_true.c"):
        (project / "src" / name).unlink()
    (project / "src" / "open.c").write_text(
        "// idealcheck: x == 5 given x**4*y**2 + x**2*y**4 - 3*x**2*y**2 + 2 == 0 expect inconclusive: no real point, kept as a known limit\n")
    status, out, _ = _run(capsys)
    assert status == 0, out
    assert "accepted: expected inconclusive (no real point, kept as a known limit)" in out
    assert out.splitlines()[-1].endswith("(1 as expected)")
    junit_status = main(["check", "--jobs", "1", "--no-cache", "--format", "junit"])
    junit = capsys.readouterr().out
    assert junit_status == 0 and "<skipped" in junit and "<failure" not in junit
    # the claim text is unchanged by the clause (its identity in CI names and the cache)
    assert 'name="x == 5 given x**4*y**2 + x**2*y**4 - 3*x**2*y**2 + 2 == 0"' in junit
    main(["check", "--jobs", "1", "--no-cache", "--format", "json"])
    (item,) = json.loads(capsys.readouterr().out)["claims"]
    assert item["expected"] == {"verdict": "inconclusive", "reason": "no real point, kept as a known limit",
                                "met": True}

    (project / "src" / "open.c").write_text(
        "// idealcheck: x == 5 given x - 5 == 0 expect inconclusive: no real point\n")
    status, out, _ = _run(capsys)
    assert status == 1
    assert "expected inconclusive (no real point), now proved: remove the `expect` marker" in out
    assert out.splitlines()[0].startswith("src/open.c:1:4: proved:")  # a failure: listed first


def test_a_malformed_expect_clause_is_an_error_with_the_syntax(project: Path, capsys) -> None:
    (project / "src" / "bad.c").write_text("// idealcheck: x == x expect maybe: no idea\n"
                                           "// idealcheck: x == y expect refuted\n")
    status, out, _ = _run(capsys, "src/bad.c")
    assert status == 1
    assert "`expect maybe`: unknown verdict; write `expect inconclusive: REASON`" in out
    assert "`expect refuted` needs a reason after a colon" in out


# ---------------------------------------------------------------- errors that teach


def test_an_unknown_name_in_a_returns_claim_is_an_error_naming_it(project: Path, capsys) -> None:
    (project / "src" / "k.py").write_text(
        "SCALE = 3\n\n"
        "# idealcheck: returns SCALE*(x + widht)\n"
        "def scaled(x, width):\n    return SCALE*(x + width)\n\n"
        "# idealcheck: returns r*x given r**2 == x\n"
        "def ok(x):\n    return x\n\n"
        "def local(a, b):\n    total = a + b\n    square = total*total  # idealcheck: == (a + b)*(a + bb)\n"
        "    return square\n")
    status, out, _ = _run(capsys, "src/k.py", "--format", "json")
    claims = {c["line"]: c for c in json.loads(out)["claims"]}
    assert status == 1
    assert claims[3]["verdict"] == "error"
    assert "unknown name `widht`" in claims[3]["reason"] and "did you mean `width`?" in claims[3]["reason"]
    assert claims[7]["verdict"] != "error"  # a variable of the claim's own `given` is not unknown
    assert claims[13]["verdict"] == "error" and "unknown name `bb`" in claims[13]["reason"]
    assert "did you mean `b`?" in claims[13]["reason"]


def test_a_typographic_operator_gets_the_ascii_spelling(project: Path, capsys) -> None:
    (project / "src" / "dot.tex").write_text("% idealcheck: a·b == b·a\n% idealcheck: a×b == b×a\n"
                                             "% idealcheck: a − b == -(b − a)\n")
    _, out, _ = _run(capsys, "src/dot.tex", "--format", "json")
    reasons = [c["reason"] for c in json.loads(out)["claims"]]
    assert [c for c in json.loads(out)["claims"] if c["verdict"] != "error"] == []
    assert "`·` (U+00B7) is not an operator of the claim language; write `*` instead" in reasons[0]
    assert "`×` (U+00D7)" in reasons[1] and "write `-` instead" in reasons[2]


def test_a_misspelt_marker_gets_a_warning_with_the_fix(project: Path, capsys) -> None:
    (project / "src" / "near.py").write_text("x = 1  # IdealCheck: x == 1\n# idealcheck : a == a\n"
                                             "s = '# IdealCheck: not a comment'\n")
    (project / "src" / "near.md").write_text("text <!-- Idealcheck: a == a -->\n")
    status, _, err = _run(capsys)
    assert status == 1  # b_false.c
    warnings = [line for line in err.splitlines() if ": warning: " in line]
    assert [w.split(": warning: ")[0] for w in warnings] == ["src/near.md:1:11", "src/near.py:1:10",
                                                              "src/near.py:2:3"]
    assert "write `idealcheck:` (lower case, the colon right after it)" in warnings[0]


def test_a_run_without_claims_says_so_and_require_claims_fails_it(project: Path, capsys) -> None:
    (project / "empty").mkdir()
    (project / "empty" / "plain.c").write_text("int main(void) { return 0; }\n")
    status, out, err = _run(capsys, "empty")
    assert status == 0 and "no claims found in empty" in err and "--require-claims" in err
    assert out.splitlines()[-1] == "0 claims: 0 proved, 0 refuted, 0 inconclusive, 0 error"
    status, _, err = _run(capsys, "empty", "--require-claims")
    assert status == 1 and "no claims found" in err


def test_explain_takes_the_place_the_report_prints(project: Path, capsys) -> None:
    (project / "src" / "two.c").write_text("int f(int a, int b); // idealcheck: a*b == b*a\n")
    _, out, _ = _run(capsys, "src/two.c")
    place = out.splitlines()[0].split(": proved")[0]
    assert place == "src/two.c:1:25"
    for target in (place, "src/two.c:1"):
        assert main(["explain", target]) == 0
        assert "proved" in capsys.readouterr().out
    assert main(["explain", "src/two.c:1:x"]) == 2
    assert "FILE:LINE" in capsys.readouterr().err
