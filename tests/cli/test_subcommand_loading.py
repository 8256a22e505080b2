"""The command line imports only the module of the subcommand it runs; ``--help`` still lists them all.

Each probe runs in a fresh interpreter and prints which subcommand modules it loaded.
"""
from __future__ import annotations

import json
import subprocess
import sys

import pytest

from verifier.cli.main import SUBCOMMANDS, named_subcommand

MODULES = sorted(module for module, _summary in SUBCOMMANDS.values())

PROBE = (
    "import contextlib, io, json, sys\n"
    "from verifier.cli.main import main\n"
    "out = io.StringIO()\n"
    "with contextlib.redirect_stdout(out), contextlib.redirect_stderr(io.StringIO()):\n"
    "    try:\n"
    "        main(sys.argv[1:])\n"
    "    except SystemExit:\n"
    "        pass\n"
    f"print(json.dumps({{'loaded': sorted(m for m in {MODULES!r} if m in sys.modules), 'help': out.getvalue()}}))\n"
)


def probe(*argv: str) -> dict:
    done = subprocess.run([sys.executable, "-c", PROBE, *argv], capture_output=True, text=True, timeout=120)
    assert done.returncode == 0, done.stderr
    return json.loads(done.stdout.strip().splitlines()[-1])


def test_the_top_level_help_lists_every_subcommand_with_its_summary_and_loads_none() -> None:
    outcome = probe("--help")
    assert outcome["loaded"] == []
    listed = " ".join(outcome["help"].split()).replace("- ", "-")  # argparse wraps long summaries (also at hyphens)
    for name, (_module, summary) in SUBCOMMANDS.items():
        assert f"{name} {summary}" in listed


@pytest.mark.parametrize("name", sorted(SUBCOMMANDS))
def test_a_subcommand_loads_its_own_module_and_no_other_and_has_its_full_options(name: str) -> None:
    outcome = probe(name, "--help")
    module = SUBCOMMANDS[name][0]
    # baseline reuses check's path and cache options (cli/baseline.py imports cli/check.py)
    expected = sorted({module} | ({"verifier.cli.check"} if name == "baseline" else set()))
    assert outcome["loaded"] == expected
    assert outcome["help"].startswith(f"usage: idealcheck {name}") and "--config FILE" in outcome["help"]


def test_the_named_subcommand_is_the_first_word_that_is_not_an_option() -> None:
    assert named_subcommand(["--version"]) is None
    assert named_subcommand(["check", "--format", "json", "audit"]) == "check"
    assert named_subcommand(["-h", "explain", "a.py:3"]) == "explain"
