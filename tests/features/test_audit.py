"""``idealcheck audit OPTIMIZED --against REFERENCE`` end to end, and the pairing of modules and functions."""
from __future__ import annotations

import json
import os
from pathlib import Path

import pytest

from verifier.features.audit import AuditError, module_pairs, plan_audit
from verifier.model.claim import ExtractionContext

ROOT = Path(__file__).resolve().parents[2]
OPTIMIZED = "fixtures/audit/optimized"
REFERENCE = "fixtures/audit/reference"
# the fixture is invented demo data: every shared function is equivalent except cubic_spread
EQUIVALENT = {"combined_power", "rotate", "soft_clip", "aperture_area_sq", "falloff", "blend"}


def table_rows(output: str) -> dict[str, tuple[str, str]]:
    """function -> (verdict, detail) from the audit table."""
    lines = output.splitlines()
    start = next(i for i, line in enumerate(lines) if line.startswith("function "))
    rows = {}
    for line in lines[start + 2:]:
        if not line.strip():
            break
        name, verdict, *detail = line.split(None, 2)
        rows[name] = (verdict, detail[0] if detail else "")
    return rows


def test_audit_of_two_packages_reports_exactly_the_wrong_function_with_a_witness(tmp_path, cli):
    report = tmp_path / "audit.json"
    # a fresh interpreter: `python -m verifier` with real worker processes, as a user runs it
    result = cli("audit", OPTIMIZED, "--against", REFERENCE, "--format", "json", "--output", str(report), cwd=ROOT,
                 fresh_process=True)
    assert result.code == 1, result.err
    rows = table_rows(result.out)
    refuted = [name for name, (verdict, _) in rows.items() if verdict != "proved"]
    assert refuted == ["lumen/shapes.py::cubic_spread"]
    verdict, detail = rows["lumen/shapes.py::cubic_spread"]
    assert verdict == "refuted" and detail.startswith("witness a = ")
    assert {name.split("::")[1] for name in rows} == EQUIVALENT | {"cubic_spread"}
    # the optimized version has 3*a*b where the expansion of (a + b)**3 has 3*a*b**2
    assert "details (left side: the optimized version, right side: the reference):" in result.out
    assert "the left side lacks 3*a*b**2; the right side lacks 3*a*b" in result.out
    assert "only in fixtures/audit/optimized (1):" in result.out
    assert "lumen/shapes.py::inverse_length" in result.out
    assert "lumen/shapes.py::legacy_gain" in result.out
    data = json.loads(report.read_text())
    wrong = [c for c in data["claims"] if c["verdict"] != "proved"]
    assert len(wrong) == 1 and wrong[0]["path"] == "fixtures/audit/optimized/lumen/shapes.py"
    assert wrong[0]["witness"] is not None and wrong[0]["kind"] == "function"
    values = {name: float(value) for name, value in wrong[0]["witness"]["values"].items()}
    a, b = values["a"], values["b"]
    # the witness really separates the two versions (evaluated here, outside the tool)
    assert a**3 + 3 * a**2 * b + 3 * a * b + b**3 != (a + b) ** 3
    assert data["summary"] == {"proved": 6, "refuted": 1, "inconclusive": 0, "error": 0}


def test_audit_of_two_single_files(monkeypatch, cli):
    monkeypatch.chdir(ROOT)
    run = cli("audit", f"{OPTIMIZED}/lumen/lenses.py", "--against", f"{REFERENCE}/lumen/lenses.py",
              "--in-process")
    code = run.code
    out = run.out
    assert code == 0, out
    rows = table_rows(out)
    assert set(rows) == {"combined_power", "rotate", "soft_clip"}
    assert all(verdict == "proved" for verdict, _ in rows.values())
    assert rows["combined_power"][1] == "saturation"  # 1/f1 and 1/f2 need f1, f2 != 0


def _write(folder: Path, name: str, text: str) -> Path:
    folder.mkdir(parents=True, exist_ok=True)
    path = folder / name
    path.write_text(text)
    return path


def test_given_conditions_apply_to_every_function(tmp_path, monkeypatch, cli):
    monkeypatch.chdir(tmp_path)
    _write(tmp_path / "new", "m.py", "def area(r, q):\n    return q\n")
    _write(tmp_path / "old", "m.py", "def area(r, q):\n    return r * r\n")
    run = cli("audit", "new/m.py", "--against", "old/m.py", "--in-process")
    assert run.code == 1
    assert table_rows(run.out)["area"][0] == "refuted"
    run = cli("audit", "new/m.py", "--against", "old/m.py", "--given", "q == r**2", "--in-process")
    assert run.code == 0
    assert table_rows(run.out)["area"] == ("proved", "ideal")


def test_named_condition_sets_from_the_config_can_be_given(tmp_path, monkeypatch, cli):
    monkeypatch.chdir(tmp_path)
    (tmp_path / "pyproject.toml").write_text(
        '[tool.idealcheck.conditions]\nunit = { vars = ["c", "s"], given = ["c**2 + s**2 == 1"] }\n')
    _write(tmp_path / "new", "m.py", "def norm2(c, s):\n    return 1\n")
    _write(tmp_path / "old", "m.py", "def norm2(c, s):\n    return c*c + s*s\n")
    run = cli("audit", "new/m.py", "--against", "old/m.py", "--given", "unit(c, s)", "--in-process")
    assert run.code == 0
    assert table_rows(run.out)["norm2"][0] == "proved"


def test_usage_errors(tmp_path, monkeypatch, cli):
    monkeypatch.chdir(ROOT)
    run = cli("audit", OPTIMIZED, "--against", f"{REFERENCE}/lumen/shapes.py")
    assert run.code == 2
    assert "both be Python files or both be folders" in run.err
    run = cli("audit", OPTIMIZED, "--against", "fixtures/audit/missing")
    assert run.code == 2
    assert "no such file or folder" in run.err
    run = cli("audit", OPTIMIZED, "--against", REFERENCE, "--given", "x >")
    assert run.code == 2
    assert "--given" in run.err


def test_functions_that_cannot_be_followed_are_inconclusive_not_proved(tmp_path, monkeypatch, cli):
    monkeypatch.chdir(tmp_path)
    _write(tmp_path / "new", "m.py", "def f(x):\n    return x\n\ndef g(x):\n    return (x, x)\n")
    _write(tmp_path / "old", "m.py", "def f(x, y):\n    return x\n\ndef g(x):\n    return x\n")
    run = cli("audit", "new/m.py", "--against", "old/m.py", "--in-process")
    assert run.code == 1
    rows = table_rows(run.out)
    assert rows["f"][0] == "inconclusive" and "positional parameters" in rows["f"][1]
    assert rows["g"][0] == "inconclusive" and "shapes" in rows["g"][1]


def test_an_unparsable_module_is_an_error_row(tmp_path, monkeypatch, cli):
    monkeypatch.chdir(tmp_path)
    _write(tmp_path / "new", "m.py", "def f(x):\n    return x +\n")
    _write(tmp_path / "old", "m.py", "def f(x):\n    return x\n")
    run = cli("audit", "new", "--against", "old", "--in-process")
    assert run.code == 1
    out = run.out
    assert "error" in out and "cannot parse" in out


def test_module_pairing_by_relative_path(tmp_path):
    _write(tmp_path / "a" / "pkg", "x.py", "")
    _write(tmp_path / "a" / "pkg", "only_a.py", "def h():\n    return 1\n")
    _write(tmp_path / "b" / "pkg", "x.py", "")
    _write(tmp_path / "b", "x.py", "")  # same file name, different module path: not matched with pkg/x.py
    matched, only_a, only_b = module_pairs(tmp_path / "a", tmp_path / "b")
    assert [key for key, _, _ in matched] == ["pkg/x.py"]
    assert [key for key, _ in only_a] == ["pkg/only_a.py"]
    assert [key for key, _ in only_b] == ["x.py"]
    plan = plan_audit("a", "b", ExtractionContext(), cwd=str(tmp_path))
    assert [(o.module, o.name) for o in plan.only_optimized] == [("pkg/only_a.py", "h")]
    with pytest.raises(AuditError):
        module_pairs(tmp_path / "a", tmp_path / "b" / "x.py")


def test_audit_accuracy_names_the_sides(tmp_path, monkeypatch, cli):
    # Goldberg (ACM Computing Surveys, 1991, section 1.4): the naive quadratic root loses accuracy by
    # cancellation when b*b >> 4*a*c; the conjugate form does not
    monkeypatch.chdir(tmp_path)
    _write(tmp_path / "new", "q.py", "import math\n\ndef root(a, b, c):\n"
                                      "    return 2*c/(-b - math.sqrt(b*b - 4*a*c))\n")
    _write(tmp_path / "old", "q.py", "import math\n\ndef root(a, b, c):\n"
                                      "    return (-b + math.sqrt(b*b - 4*a*c))/(2*a)\n")
    run = cli("audit", "new/q.py", "--against", "old/q.py", "--in-process", "--accuracy",
              "--accuracy-samples", "100", "--accuracy-range", "a=0.5:2", "--accuracy-range", "b=1e3:1e6",
              "--accuracy-range", "c=0.5:2")
    code = run.code
    out = run.out
    assert code == 0, out
    assert "the optimized side is more accurate on these samples" in out
    assert "not a bound" in out


def test_a_folder_reached_through_a_link_is_named_by_the_link(tmp_path, monkeypatch, cli):
    # the same naming as `check`: paths relative to the working folder as given, links not followed
    monkeypatch.chdir(tmp_path)
    _write(tmp_path / "real_new", "m.py", "def f(x):\n    return x*x - 1\n")
    _write(tmp_path / "old", "m.py", "def f(x):\n    return (x - 1)*(x + 1)\n")
    os.symlink(tmp_path / "real_new", tmp_path / "new")
    run = cli("audit", "new", "--against", "old", "--in-process")
    assert run.code == 0, run.out + run.err
    assert "audit of new against old" in run.out
    assert "../" not in run.out and "real_new" not in run.out
