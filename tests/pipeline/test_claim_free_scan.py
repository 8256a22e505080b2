"""A tree without claims is scanned at the speed of reading its bytes: nothing heavy is imported, no worker
is started, and a file is decoded only when its bytes may hold a claim (``decoding.decode_if_claimed``).

The probes run the command line in a fresh interpreter and print which heavy modules it loaded and whether
it started the worker fork server; a file with the marker in the same tree is still checked end to end.
"""
from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

from conftest import write_file
from verifier.claims.decoding import decode_if_claimed

# the parsers and the algebra, mpmath (the high-precision evaluator), the worker pool's multiprocessing, the
# other subcommands and their features
HEAVY = ("sympy", "libcst", "tree_sitter", "mpmath", "multiprocessing", "verifier.algebra", "verifier.claims.python",
         "verifier.pipeline.workers", "verifier.cli.audit", "verifier.cli.explain", "verifier.features")

PROBE = (
    "import contextlib, io, json, sys\n"
    "from verifier.cli.main import main\n"
    "out = io.StringIO()\n"
    "with contextlib.redirect_stdout(out):\n"
    "    code = main(sys.argv[1:])\n"
    f"heavy = sorted(name for name in {HEAVY!r} if name in sys.modules)\n"
    "forkserver = sys.modules.get('multiprocessing.forkserver')\n"
    "server = forkserver is not None and getattr(forkserver._forkserver, '_forkserver_pid', None) is not None\n"
    "print(json.dumps({'code': code, 'heavy': heavy, 'server': server, 'report': json.loads(out.getvalue())}))\n"
)


def probe(tree: Path) -> dict:
    done = subprocess.run([sys.executable, "-c", PROBE, "check", "--no-cache", "--format", "json", "."],
                          cwd=tree, capture_output=True, text=True, timeout=300)
    assert done.returncode == 0, done.stderr
    return json.loads(done.stdout.strip().splitlines()[-1])


def claim_free_tree(root: Path) -> Path:
    """One file of each kind the scanner reads claims from, none holding the marker."""
    write_file(root, "pkg/model.py", "def area(r):\n    '''The area of a disc.'''\n    return 3.14159 * r * r\n")
    write_file(root, "pkg/solver.jl", '"""\n    step(x)\n\nOne step.\n"""\nfunction step(x)\n    x + 1\nend\n')
    write_file(root, "src/kernel.c", "/* a kernel */\ndouble f(double x) { return x * x; }\n")
    write_file(root, "src/flux.f90", "! fluxes\nreal function g(x)\n  g = 2*x\nend function\n")
    write_file(root, "docs/notes.md", "# Notes\n<!-- nothing to check -->\n")
    write_file(root, "notebook.ipynb", json.dumps({"cells": [], "metadata": {}, "nbformat": 4, "nbformat_minor": 5}))
    write_file(root, "pyproject.toml", "[tool.idealcheck]\nexclude = []\n")
    return root


def test_a_claim_free_tree_loads_neither_the_parsers_nor_the_algebra_and_starts_no_worker(tmp_path: Path) -> None:
    outcome = probe(claim_free_tree(tmp_path))
    assert outcome["report"]["claims"] == []
    assert outcome["heavy"] == [] and outcome["server"] is False


def test_a_file_with_the_marker_in_the_same_tree_is_still_checked_end_to_end(tmp_path: Path) -> None:
    tree = claim_free_tree(tmp_path)
    # (a + b)^2 = a^2 + 2ab + b^2, common practice; the second claim is false at a = b = 1
    write_file(tree, "src/square.c", "// idealcheck: (a + b)**2 == a**2 + 2*a*b + b**2\n"
                                     "// idealcheck: (a + b)**2 == a**2 + b**2\n")
    outcome = probe(tree)
    verdicts = [(claim["path"], claim["verdict"]) for claim in outcome["report"]["claims"]]
    assert verdicts == [("src/square.c", "proved"), ("src/square.c", "refuted")]
    assert outcome["code"] == 1


def test_a_misspelt_marker_is_still_decoded_and_warned_about(tmp_path: Path) -> None:
    write_file(tmp_path, "a.py", "x = 1  # IdealCheck: x == 1\n")
    done = subprocess.run([sys.executable, "-m", "verifier", "check", "--no-cache", "."], cwd=tmp_path,
                          capture_output=True, text=True, timeout=300)
    assert "a.py:1:" in done.stderr and "is not the claim marker" in done.stderr


def test_only_a_file_whose_bytes_may_hold_a_claim_is_decoded() -> None:
    assert decode_if_claimed(b"x = 1\n", "a.py").claim_free
    assert decode_if_claimed(b"caf\xe9 = 1\n", "a.c").claim_free  # not UTF-8, but no claim: nothing to decode
    assert decode_if_claimed(b"// idealcheck: a == a\n", "a.c").text == "// idealcheck: a == a\n"
    assert decode_if_claimed(b"# IDEALCHECK : a == a\n", "a.py").text is not None  # near miss: warned about
    # a coding declaration is honoured as before: a bad one is still an error of the file
    bad = decode_if_claimed(b"# coding: no-such-codec\nx = 1\n", "bad.py")
    assert bad.text is None and bad.problems and "coding declaration" in bad.problems[0].message
    assert decode_if_claimed(b"\x00\x01idealcheck:", "data.bin").problems  # binary files: as before
    assert decode_if_claimed(b"\x00\x01", "data.bin").skipped is not None
