"""Hostile input at the command line: every report format survives odd names and text, and broken
machines give a message and exit status 2, never a traceback.

Facts used (common practice): ESC (0x1b) starts a terminal escape sequence; byte 0xff is never valid
UTF-8; XML 1.0 cannot hold most control characters; writing to /dev/full fails with ENOSPC; Ctrl-C sends
SIGINT to every process of the terminal's foreground group.
"""
from __future__ import annotations

import json
import os
import signal
import subprocess
import sys
import time
import xml.etree.ElementTree as ET
from pathlib import Path

import jsonschema
import pytest

ROOT = Path(__file__).resolve().parents[2]
SCHEMA = ROOT / "tests" / "data" / "sarif-schema-2.1.0.json"
BAD_NAME = b"bad\xff\x1b[2J.c"  # not UTF-8, with an escape sequence in it


def _run(cwd: Path, *argv: str, stdout=subprocess.PIPE, **kwargs) -> subprocess.CompletedProcess:
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    env.pop("PYTHONIOENCODING", None)
    return subprocess.run([sys.executable, "-m", "verifier", *argv], cwd=cwd, stdout=stdout,
                          stderr=subprocess.PIPE, env=env, check=False, **kwargs)


@pytest.fixture()
def hostile(tmp_path: Path) -> Path:
    with open(os.path.join(os.fsencode(tmp_path), BAD_NAME), "wb") as handle:
        handle.write(b"// idealcheck: x == y\n// idealcheck: \x1b[31mz\x1b[0m == z\n")
    (tmp_path / "ok.c").write_text("// idealcheck: a == a\n", encoding="utf-8")
    (tmp_path / "vendored").mkdir()
    (tmp_path / "vendored" / "CACHEDIR.TAG").touch()
    (tmp_path / "vendored" / "hidden.c").write_text("// idealcheck: p == q\n", encoding="utf-8")
    return tmp_path


def test_the_terminal_report_escapes_control_characters_and_odd_bytes(hostile: Path) -> None:
    out = _run(hostile, "check", "--no-cache", "--jobs", "1", ".")
    assert out.returncode == 1
    text = out.stdout.decode("utf-8")  # valid UTF-8
    assert "\x1b" not in text
    assert "bad\\xff\\x1b[2J.c:1:4: refuted: x == y" in text
    assert "\\x1b[31mz\\x1b[0m == z" in text
    assert "vendored/: cache folder (it holds CACHEDIR.TAG), not walked into" in text


@pytest.mark.parametrize("shard", ["1/2", "2/2"])
def test_every_format_survives_a_name_that_is_not_utf8(hostile: Path, shard: str) -> None:
    for fmt in ("json", "sarif", "junit", "github"):
        report = hostile / f"report.{fmt}"
        out = _run(hostile, "check", "--no-cache", "--jobs", "1", "--shard", shard, "--format", fmt,
                   "--output", str(report), ".")
        assert out.returncode in (0, 1), out.stderr.decode()
        assert b"Traceback" not in out.stderr
        data = report.read_bytes().decode("utf-8")
        if fmt == "json":
            document = json.loads(data)
            assert document["skipped"] == [{"path": "vendored/", "kind": "folder",
                                            "reason": "cache folder (it holds CACHEDIR.TAG), not walked into"}]
            assert all("\udcff" not in c["path"] for c in document["claims"])
        elif fmt == "sarif":
            document = json.loads(data)
            schema = json.loads(SCHEMA.read_text(encoding="utf-8"))
            jsonschema.validate(document, schema, cls=jsonschema.Draft4Validator)
            uris = [r["locations"][0]["physicalLocation"]["artifactLocation"]["uri"] for r in document["runs"][0]["results"]]
            assert all(u.startswith("bad%FF%1B") for u in uris)
            notes = document["runs"][0]["invocations"][0]["toolExecutionNotifications"]
            assert "vendored/" in notes[0]["message"]["text"]
        elif fmt == "junit":
            tree = ET.fromstring(data.encode("utf-8"))  # well-formed XML 1.0
            assert any(p.get("name") == "idealcheck.not-read" for p in tree.iter("property"))
        else:
            assert "\x1b" not in data and "vendored/" in data


def test_a_full_output_device_is_a_message_and_exit_status_2(tmp_path: Path) -> None:
    if not os.path.exists("/dev/full"):
        pytest.skip("no /dev/full here")
    (tmp_path / "ok.c").write_text("// idealcheck: a == a\n", encoding="utf-8")
    with open("/dev/full", "w") as full:
        out = _run(tmp_path, "check", "--no-cache", "--jobs", "1", ".", stdout=full)
    assert out.returncode == 2
    stderr = out.stderr.decode()
    assert "cannot write the report" in stderr and "Traceback" not in stderr and "Exception ignored" not in stderr


@pytest.mark.parametrize("table,message", [
    ("x = " + "[" * 20000 + "]" * 20000, "nested too deeply"),
    ("memory_mb = 9223372036854775807", "memory_mb` must be at most"),
    ("accuracy = { samples = 100000000 }", "samples` must be at most"),
    ("conditions = { deep = { vars = [\"x\"], given = [\"x == " + "-" * 450 + "x\"] } }", "nested too deeply"),
])
def test_hostile_config_values_are_configuration_errors(tmp_path: Path, table: str, message: str) -> None:
    (tmp_path / "pyproject.toml").write_text(f"[tool.idealcheck]\n{table}\n", encoding="utf-8")
    (tmp_path / "ok.c").write_text("// idealcheck: a == a\n", encoding="utf-8")
    out = _run(tmp_path, "check", "--no-cache", ".")
    stderr = out.stderr.decode()
    assert out.returncode == 2 and message in stderr and "Traceback" not in stderr, stderr


@pytest.mark.parametrize("option", [["--memory-mb", "9223372036854775807"], ["--accuracy", "--accuracy-samples", "100000000"]])
def test_hostile_option_values_are_usage_errors(tmp_path: Path, option: list[str]) -> None:
    (tmp_path / "ok.c").write_text("// idealcheck: a == a\n", encoding="utf-8")
    out = _run(tmp_path, "check", "--no-cache", *option, ".")
    assert out.returncode == 2 and "at most" in out.stderr.decode()


@pytest.mark.skipif(not hasattr(os, "killpg"), reason="needs process groups")
def test_ctrl_c_ends_the_run_with_one_message(tmp_path: Path) -> None:
    loop = ("# idealcheck: returns x\ndef f(x):\n    for i in range(256):\n        for j in range(256):\n"
            "            for k in range(256):\n                x = x\n    return x\n")
    for index in range(3):
        (tmp_path / f"k{index}.py").write_text(loop, encoding="utf-8")
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    process = subprocess.Popen([sys.executable, "-m", "verifier", "check", "--no-cache", "--jobs", "3",
                                "--timeout", "60", "."], cwd=tmp_path, stdout=subprocess.PIPE,
                               stderr=subprocess.PIPE, env=env, start_new_session=True)
    _wait_for_workers(process.pid)  # a signal before the handlers are in place would test nothing
    os.killpg(process.pid, signal.SIGINT)  # what a terminal does on Ctrl-C
    try:
        _out, err = process.communicate(timeout=60)
    finally:
        if process.poll() is None:
            os.killpg(process.pid, signal.SIGKILL)
    stderr = err.decode()
    assert "Traceback" not in stderr and "KeyboardInterrupt" not in stderr, stderr
    assert stderr.count("interrupted") == 1 and process.returncode == 130, (process.returncode, stderr)


def _wait_for_workers(pid: int) -> None:
    """Until the run has started a worker process (Linux: /proc lists children), or 30 s have passed."""
    children = Path(f"/proc/{pid}/task/{pid}/children")
    deadline = time.monotonic() + 30
    while time.monotonic() < deadline:
        if not children.exists():  # no /proc: fall back to a fixed pause
            time.sleep(4)
            return
        if children.read_text().split():
            time.sleep(0.5)  # the worker has been forked; let it take its first job
            return
        time.sleep(0.05)
