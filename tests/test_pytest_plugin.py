"""The pytest plugin end to end: pytest runs in a subprocess on a scratch project (tests/prose_project.py).

The plugin is loaded by its entry point name (``-p idealcheck``), as an installed project sees it.
"""
from __future__ import annotations

import os
import re
import subprocess
import sys
from pathlib import Path

import pytest

from prose_project import EXPECTED, write_project

CHECKOUT = Path(__file__).resolve().parents[1]


def _pytest(project: Path, *args: str) -> subprocess.CompletedProcess[str]:
    env = dict(os.environ)
    env.pop("PYTEST_ADDOPTS", None)
    env.pop("PYTEST_XDIST_WORKER", None)
    command = [sys.executable, "-m", "pytest", "-p", "idealcheck", "-rA", "-v", "--color=no", *args]
    return subprocess.run(command, cwd=project, env=env, capture_output=True, text=True, timeout=600)


KNOWN_IDS = [f"{e.path}::{e.item}" for e in EXPECTED] + [
    "tests/test_plain.py::test_plain", "docs/notes.md::(m + n)**2 == m**2 + 2*m*n + n**2"]


def _outcomes(output: str) -> dict[str, str]:
    """node id -> PASSED/FAILED/... from the ``-rA`` short summary (one line per test, whatever the order).

    A failure's line goes on with `` - message``; ids are matched against the known ones (claim texts
    contain `` - `` too), and an unknown id is kept whole so that an unexpected item shows up.
    """
    found: dict[str, str] = {}
    for line in output.splitlines():
        match = re.match(r"^(PASSED|FAILED|SKIPPED|ERROR) (\S.*)$", line)
        if not match:
            continue
        rest = match.group(2)
        known = [k for k in KNOWN_IDS if rest == k or rest.startswith(k + " - ")]
        found[max(known, key=len) if known else rest] = match.group(1)
    return found


def _node(expected) -> str:  # type: ignore[no-untyped-def]
    return f"{expected.path}::{expected.item}"


@pytest.fixture()
def project(tmp_path: Path) -> Path:
    return write_project(tmp_path / "project")


def test_each_claim_is_an_item_and_exactly_the_false_ones_fail(project: Path) -> None:
    result = _pytest(project, "--idealcheck")
    output = result.stdout + result.stderr
    assert result.returncode == 1, output
    outcomes = _outcomes(output)
    wanted = {_node(e): "FAILED" if e.verdict == "refuted" else "PASSED" for e in EXPECTED}
    wanted["tests/test_plain.py::test_plain"] = "PASSED"
    assert outcomes == wanted, output
    # the failure shows the report's details: the claim's place, counter-normal-form and witness
    assert "src/kernels.py:11:7: refuted: (a + b)**2 == a**2 + b**2" in output
    assert "counter-normal-form: 2*a*b" in output
    assert re.search(r"witness: a = -?\d+, b = -?\d+ \(checked exactly\)", output), output
    assert "src/derivation.ipynb:cell 4:1:3: refuted" in output


def test_item_ids_carry_no_line_numbers(project: Path) -> None:
    result = _pytest(project, "--idealcheck", "--collect-only", "-q", "-q")  # -v -q -q: one id a line
    ids = [line for line in result.stdout.splitlines() if "::" in line]
    assert len(ids) == len(EXPECTED) + 1, result.stdout
    for node_id in ids:
        assert not re.search(r":\d+", node_id.replace("**2", "")), node_id


def test_off_unless_asked_for(project: Path) -> None:
    result = _pytest(project)
    assert result.returncode == 0, result.stdout + result.stderr
    assert _outcomes(result.stdout) == {"tests/test_plain.py::test_plain": "PASSED"}


def test_enabled_from_the_ini_options_with_its_own_paths(project: Path) -> None:
    pyproject = project / "pyproject.toml"
    pyproject.write_text(pyproject.read_text() + 'idealcheck = true\nidealcheck_paths = ["docs/theory.rst"]\n')
    result = _pytest(project)
    outcomes = _outcomes(result.stdout)
    assert outcomes == {
        "tests/test_plain.py::test_plain": "PASSED",
        "docs/theory.rst::(h + k)**2 == h**2 + 2*h*k + k**2": "PASSED",
    }, result.stdout + result.stderr


def test_keyword_selection(project: Path) -> None:
    result = _pytest(project, "--idealcheck", "-k", "blend or shifted_square")
    outcomes = _outcomes(result.stdout)
    assert outcomes == {
        "src/kernels.py::blend: (a + b)**2 == a**2 + b**2": "FAILED",
        "src/kernels.py::shifted_square": "PASSED",
    }, result.stdout + result.stderr


def test_last_failed_reruns_only_the_failed_claims(project: Path) -> None:
    first = _pytest(project, "--idealcheck")
    assert first.returncode == 1
    again = _pytest(project, "--idealcheck", "--lf")
    outcomes = _outcomes(again.stdout)
    assert outcomes == {_node(e): "FAILED" for e in EXPECTED if e.verdict == "refuted"}, again.stdout
    # moving the claims (new lines above them) keeps their ids: --lf still finds the same two
    kernels = project / "src" / "kernels.py"
    kernels.write_text('"""Kernels."""\n\n\n' + kernels.read_text())
    moved = _pytest(project, "--idealcheck", "--lf")
    assert _outcomes(moved.stdout) == outcomes, moved.stdout
    # a claim made true passes once and then drops out of the last-failed set
    notes = project / "docs" / "notes.md"
    notes.write_text(notes.read_text().replace("(m + n)**2 == m**2 + n**2", "(m + n)**2 == m**2 + 2*m*n + n**2"))
    full = _pytest(project, "--idealcheck")
    assert _outcomes(full.stdout)["docs/notes.md::(m + n)**2 == m**2 + 2*m*n + n**2"] == "PASSED"
    rerun = _pytest(project, "--idealcheck", "--lf")
    assert set(_outcomes(rerun.stdout)) == {_node(e) for e in EXPECTED if e.verdict == "refuted"
                                            and e.path != "docs/notes.md"}, rerun.stdout


def test_stop_at_first_failure(project: Path) -> None:
    result = _pytest(project, "--idealcheck", "-x", "-p", "no:randomly")
    outcomes = _outcomes(result.stdout)
    assert list(outcomes.values()).count("FAILED") == 1, result.stdout
    assert len(outcomes) < len(EXPECTED) + 1


def test_parallel_with_xdist(project: Path) -> None:
    pytest.importorskip("xdist")
    result = _pytest(project, "--idealcheck", "-n", "2")
    output = result.stdout + result.stderr
    assert result.returncode == 1, output
    wanted = {_node(e): "FAILED" if e.verdict == "refuted" else "PASSED" for e in EXPECTED}
    wanted["tests/test_plain.py::test_plain"] = "PASSED"
    assert _outcomes(output) == wanted, output
    assert "counter-normal-form: 2*m*n" in output


def test_a_bad_configuration_is_a_usage_error(project: Path) -> None:
    (project / "pyproject.toml").write_text('[tool.idealcheck]\ntimeout = "soon"\n')
    result = _pytest(project, "--idealcheck")
    assert result.returncode == 4, result.stdout + result.stderr  # pytest's exit status for usage errors
    assert "idealcheck:" in result.stderr and "timeout" in result.stderr


def test_importing_the_plugin_loads_neither_sympy_nor_libcst() -> None:
    code = "import sys, verifier.pytest_plugin; print('sympy' in sys.modules, 'libcst' in sys.modules)"
    result = subprocess.run([sys.executable, "-c", code], cwd=CHECKOUT, capture_output=True, text=True)
    assert result.stdout.split() == ["False", "False"], result.stderr


def test_the_entry_point_is_registered() -> None:
    from importlib.metadata import entry_points

    points = entry_points(group="pytest11")
    assert any(p.name == "idealcheck" and p.value == "verifier.pytest_plugin" for p in points)


def test_a_claim_accepted_by_its_expect_clause_is_skipped_and_a_changed_one_fails(tmp_path: Path) -> None:
    # x == 5 under Motzkin's polynomial plus 1 == 0: no real point, not a sum of squares, so undecided; under x - 5 == 0 it is proved
    project = tmp_path / "accepted"
    (project / "src").mkdir(parents=True)
    (project / "pyproject.toml").write_text("[project]\nname = 'accepted'\n")
    (project / "src" / "open.c").write_text(
        "// idealcheck: x == 5 given x**4*y**2 + x**2*y**4 - 3*x**2*y**2 + 2 == 0 expect inconclusive: no real point\n"
        "// idealcheck: y == 5 given y - 5 == 0 expect inconclusive: was undecided once\n")
    result = _pytest(project, "--idealcheck", "--idealcheck-no-cache")
    output = result.stdout + result.stderr
    assert re.search(r"^SKIPPED .*inconclusive as expected: no real point", output, re.MULTILINE), output
    assert re.search(r"^FAILED src/open.c::y == 5 given y - 5 == 0", output, re.MULTILINE), output
    assert "now proved: remove the `expect` marker" in output


def test_the_baseline_accepts_known_results_and_warns_of_stale_entries(project: Path) -> None:
    refuted = [e for e in EXPECTED if e.path == "src/kernels.py" and e.verdict == "refuted"]
    entries = [{"path": "src/kernels.py", "claim": "(a + b)**2 == a**2 + b**2", "verdict": "refuted"},
               {"path": "src/kernels.py", "claim": "q == q + 1", "verdict": "refuted"}]
    (project / ".idealcheck-baseline.json").write_text(
        '{"idealcheck_baseline": 1, "claims": [\n' + ",\n".join(
            "{" + ", ".join(f'"{k}": "{v}"' for k, v in e.items()) + "}" for e in entries) + "\n]}\n")
    result = _pytest(project, "--idealcheck")
    output = result.stdout + result.stderr
    assert result.returncode == 1, output  # the other refuted claims still fail
    assert f"PASSED {_node(refuted[0])}" not in output and f"FAILED {_node(refuted[0])}" not in output
    assert re.search(r"^SKIPPED .*idealcheck refuted, accepted by the baseline .idealcheck-baseline.json$",
                     output, re.MULTILINE), output
    assert "stale baseline entry: no claim `q == q + 1` in src/kernels.py" in output
    (project / ".idealcheck-baseline.json").write_text("{not json")
    broken = _pytest(project, "--idealcheck")
    assert broken.returncode != 0 and "idealcheck: baseline error:" in broken.stdout + broken.stderr
