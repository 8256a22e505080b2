"""The extraction cache end to end (through the command line; most runs ``--in-process`` to stay fast,
the helper-edit scenario through the worker processes): a warm run reads no file, an edit to anything a claim read is seen,
and an entry that was altered (or signed with another secret) is ignored with a note.

The algebra in the scenarios is schoolbook (common practice): x*x + 2*x is x**2 + 2*x; adding 1 to one
side makes the difference the constant 1, which no point can make zero; checked with sympy's ``expand``.
"""
from __future__ import annotations

import json
import os
import shutil
from pathlib import Path

import pytest
import sympy

from tests.conftest import write_file
from verifier.claims import extract
from verifier.claims.file_reads import recording, walk_files
from verifier.model.claim import ExtractionContext
from verifier.pipeline.extraction_cache import ExtractionCache
from verifier.pipeline.extraction_codec import CodecError, claims_from_json, claims_to_json

ROOT = Path(__file__).resolve().parents[2]
HELPER = "def square(x):\n    return x * x\n"
MAIN = (
    "from geo.helpers import square\n"
    "from geo.extra import triple\n\n\n"
    "# idealcheck: returns x**2 + 2*x\n"
    "def curve(x):\n"
    "    return square(x) + 2 * x\n\n\n"
    "# idealcheck: returns 3*x\n"
    "def line(x):\n"
    "    return triple(x)\n"
)


@pytest.fixture()
def secret(monkeypatch: pytest.MonkeyPatch) -> str:
    value = "0123456789abcdef" * 4
    monkeypatch.setenv("IDEALCHECK_CACHE_SECRET", value)
    return value


def _project(root: Path) -> None:
    write_file(root, "geo/__init__.py", "")
    write_file(root, "geo/helpers.py", HELPER)
    write_file(root, "geo/main.py", MAIN)


def _verdicts(out: str) -> dict[str, str]:
    return {c["id"]: c["verdict"] for c in json.loads(out)["claims"]}


def _entries(cache: Path) -> list[Path]:
    return sorted((cache / "x1").glob("*/*.json"))


def _without_seconds(out: str) -> list[dict]:
    claims = json.loads(out)["claims"]
    for claim in claims:
        claim.pop("seconds")
    return claims


def test_the_schoolbook_facts_behind_the_scenarios() -> None:
    x = sympy.Symbol("x")
    assert sympy.expand(x * x + 2 * x - (x**2 + 2 * x)) == 0
    assert sympy.expand((x * x + 1) + 2 * x - (x**2 + 2 * x)) == 1


def test_a_warm_run_reads_no_file_and_reports_the_same(git_repo, cli, secret, monkeypatch) -> None:
    root = git_repo.path
    _project(root)
    write_file(root, "geo/extra.py", "def triple(x):\n    return 3 * x\n")
    cold = cli("check", "--format", "json", "--in-process", ".", cwd=root)
    assert _verdicts(cold.out) == {"geo/main.py:5:3": "proved", "geo/main.py:10:3": "proved"}, cold
    assert len(_entries(root / ".idealcheck_cache")) == 1  # one file holds claims: one entry
    shutil.rmtree(root / ".idealcheck_cache" / "x1")
    text_read = cli("check", "--in-process", ".", cwd=root)  # results from the cache, the file read again

    def no_reading(*args: object, **kwargs: object) -> None:
        raise AssertionError("a file was read although its cached claims were valid")

    monkeypatch.setattr("verifier.claims.extract", no_reading)
    warm = cli("check", "--format", "json", "--in-process", ".", cwd=root)
    assert warm.code == cold.code == 0
    assert _without_seconds(warm.out) == _without_seconds(cold.out)
    assert "note:" not in warm.err
    text_warm = cli("check", "--in-process", ".", cwd=root)  # the file not read: the same words
    assert text_warm.out == text_read.out and "from cache" in text_warm.out


def test_editing_a_helper_module_reads_its_importer_again(git_repo, cli, secret) -> None:
    root = git_repo.path
    _project(root)
    first = cli("check", "--format", "json", ".", cwd=root)
    # the missing module makes `line` undecided; the inlined helper makes `curve` proved
    assert _verdicts(first.out) == {"geo/main.py:5:3": "proved", "geo/main.py:10:3": "inconclusive"}, first
    main_bytes = (root / "geo/main.py").read_bytes()
    write_file(root, "geo/helpers.py", "def square(x):\n    return x * x + 1\n")
    write_file(root, "geo/extra.py", "def triple(x):\n    return 3 * x\n")  # a module that was not there
    second = cli("check", "--format", "json", ".", cwd=root)
    assert (root / "geo/main.py").read_bytes() == main_bytes  # the claim's own file is unchanged
    assert _verdicts(second.out) == {"geo/main.py:5:3": "refuted", "geo/main.py:10:3": "proved"}, second
    write_file(root, "geo/helpers.py", HELPER)  # and back: proved again, from a fresh reading
    assert _verdicts(cli("check", "--format", "json", ".", cwd=root).out)["geo/main.py:5:3"] == "proved"


def test_editing_a_kernel_of_another_file_reads_the_caller_again(git_repo, cli, secret) -> None:
    root = git_repo.path
    write_file(root, "src/shape.c", "// idealcheck: returns x*x + 2*x\ndouble curve(double x) { return sq(x) + 2.0*x; }\n")
    write_file(root, "src/sq.c", "double sq(double x) { return x*x; }\n")
    assert _verdicts(cli("check", "--format", "json", "--in-process", ".", cwd=root).out) == {"src/shape.c:1:4": "proved"}
    write_file(root, "src/sq.c", "double sq(double x) { return x*x + 1.0; }\n")
    assert _verdicts(cli("check", "--format", "json", "--in-process", ".", cwd=root).out) == {"src/shape.c:1:4": "refuted"}


def _forge(entry: Path, change) -> None:
    """Rewrite the body of an entry with ``change`` applied, keeping its signature line."""
    header, _, body = entry.read_text(encoding="ascii").partition("\n")
    document = json.loads(body)
    change(document)
    entry.write_text(header + "\n" + json.dumps(document), encoding="ascii")


def _make_true(document: dict) -> None:
    # every obligation becomes "left == left": the false claim would be proved if this were believed
    for claim in document["claims"]["claims"]:
        for obligation in claim["obligations"]:
            obligation["right"] = obligation["left"]


def test_an_altered_entry_is_ignored_with_a_note(git_repo, cli, secret) -> None:
    root = git_repo.path
    _project(root)
    write_file(root, "geo/helpers.py", "def square(x):\n    return x * x + 1\n")  # `curve` is now false
    first = cli("check", "--format", "json", "--in-process", ".", cwd=root)
    assert _verdicts(first.out)["geo/main.py:5:3"] == "refuted"
    (entry,) = _entries(root / ".idealcheck_cache")
    _forge(entry, _make_true)
    second = cli("check", "--format", "json", "--in-process", ".", cwd=root)
    assert _verdicts(second.out) == _verdicts(first.out)
    assert "geo/main.py: the cached reading of this file was not used (its signature does not match" in second.err
    third = cli("check", "--format", "json", "--in-process", ".", cwd=root)  # the entry was written again: no note now
    assert "note:" not in third.err and _verdicts(third.out) == _verdicts(first.out)


def test_an_entry_signed_with_another_secret_is_ignored(git_repo, cli, secret, monkeypatch) -> None:
    root = git_repo.path
    _project(root)
    write_file(root, "geo/helpers.py", "def square(x):\n    return x * x + 1\n")
    cli("check", "--format", "json", "--in-process", ".", cwd=root)
    (entry,) = _entries(root / ".idealcheck_cache")
    # an attacker with their own secret signs a made-up entry (as a pull request could commit one)
    cache = ExtractionCache(root / ".idealcheck_cache", b"a secret of the attacker")
    header, _, body = entry.read_text(encoding="ascii").partition("\n")
    document = json.loads(body)
    _make_true(document)
    forged = json.dumps(document)
    entry.write_text(f"idealcheck-extraction 1 {cache._sign(forged)}\n{forged}", encoding="ascii")
    second = cli("check", "--format", "json", "--in-process", ".", cwd=root)
    assert _verdicts(second.out)["geo/main.py:5:3"] == "refuted"
    assert "its signature does not match" in second.err
    # the control: the same body signed with this user's secret is taken as it is, so it is the
    # signature (and nothing else) that kept the forgery out
    os.chdir(root)
    try:
        ours = ExtractionCache(root / ".idealcheck_cache", secret.encode())
        entry.write_text(f"idealcheck-extraction 1 {ours._sign(forged)}\n{forged}", encoding="ascii")
        text = (root / "geo/main.py").read_text()
        context = ExtractionContext(roots=(".",))
        taken = ours.load("geo/main.py", text, context)
    finally:
        os.chdir(ROOT)
    assert taken is not None and taken[0].obligations[0].right == taken[0].obligations[0].left


@pytest.mark.parametrize("content", ["", "not an entry", "idealcheck-extraction 1 00\n{}", "\x00" * 10])
def test_garbage_entries_are_notes_not_crashes(git_repo, cli, secret, content: str) -> None:
    root = git_repo.path
    _project(root)
    first = cli("check", "--format", "json", "--in-process", ".", cwd=root)
    (entry,) = _entries(root / ".idealcheck_cache")
    entry.write_text(content, encoding="utf-8")
    second = cli("check", "--format", "json", "--in-process", ".", cwd=root)
    assert second.code == first.code and _verdicts(second.out) == _verdicts(first.out)
    assert "note: geo/main.py: the cached reading of this file was not used" in second.err


def test_without_a_secret_nothing_is_cached_and_the_run_is_the_same(git_repo, cli, monkeypatch, tmp_path) -> None:
    root = git_repo.path
    _project(root)
    monkeypatch.delenv("IDEALCHECK_CACHE_SECRET", raising=False)
    blocked = tmp_path / "blocked"
    blocked.write_text("a file where the user cache folder should be")
    monkeypatch.setenv("XDG_CACHE_HOME", str(blocked))
    result = cli("check", "--format", "json", "--in-process", ".", cwd=root)
    assert _verdicts(result.out) == {"geo/main.py:5:3": "proved", "geo/main.py:10:3": "inconclusive"}
    assert _entries(root / ".idealcheck_cache") == []  # the result cache is still written (v2/)


def test_the_user_secret_is_made_once_private(git_repo, cli, monkeypatch, tmp_path) -> None:
    monkeypatch.delenv("IDEALCHECK_CACHE_SECRET", raising=False)
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path / "home-cache"))
    root = git_repo.path
    _project(root)
    cli("check", "--in-process", ".", cwd=root)
    secret_file = tmp_path / "home-cache" / "idealcheck" / "extraction-secret"
    assert secret_file.stat().st_mode & 0o777 == 0o600
    made = secret_file.read_text()
    cli("check", "--in-process", ".", cwd=root)
    assert secret_file.read_text() == made and len(_entries(root / ".idealcheck_cache")) == 1


# ---------------------------------------------------------------- the codec and the record of reads


def _corpus_claims(corpus: str) -> list:
    os.chdir(ROOT / "fixtures" / corpus)
    try:
        found = []
        for path in sorted(Path(".").rglob("*")):
            if path.is_file() and b"idealcheck:" in path.read_bytes():
                found.append(extract(path.as_posix(), path.read_text(encoding="utf-8"), ExtractionContext()))
        return found
    finally:
        os.chdir(ROOT)


@pytest.mark.parametrize("corpus", ["py_numpy", "kernels_lang"])
def test_claims_round_trip_through_json_equal_and_with_the_same_repr(corpus: str) -> None:
    files = _corpus_claims(corpus)
    assert sum(len(claims) for claims in files) > 30
    for claims in files:
        back = claims_from_json(json.loads(json.dumps(claims_to_json(claims))))
        assert back == claims
        assert repr(back) == repr(claims)  # the result cache keys on this repr


def test_shared_subtrees_are_stored_once() -> None:
    text = ("# idealcheck: returns x**4096\ndef power(x):\n    for _ in range(12):\n        x = x * x\n"
            "    return x\n")
    (claim,) = extract("power.py", text, ExtractionContext())
    data = claims_to_json([claim])
    assert len(data["nodes"]) < 40  # a tree of 2**12 leaves, stored as its 12 squarings
    assert claims_from_json(data) == [claim]


@pytest.mark.parametrize("nodes", [
    [["var", "x"], ["bin", "+", 0, 2]],  # names a later node
    [["var", "x"], ["bin", "%", 0, 0]],  # an operator that does not exist
    [["num", ["q", "1", "0"]]],  # a zero denominator
    [["num", ["q", "1e9", "1"]]],  # not a decimal integer
    [["var", 7]],
    [["neg", True]],  # a boolean is no index
])
def test_malformed_node_tables_are_codec_errors(nodes) -> None:
    with pytest.raises(CodecError):
        claims_from_json({"nodes": nodes, "claims": []})


def test_the_walk_lists_what_os_walk_lists(tmp_path: Path) -> None:
    for name in ("a/x.c", "a/b/y.c", "a/.hidden/z.c", "a/build/w.c", "c/v.rs", "top.c", "a/notes.txt"):
        write_file(tmp_path, name, "")
    os.symlink(tmp_path / "a", tmp_path / "link")
    expected = []
    for directory, dirs, names in os.walk(tmp_path):
        dirs[:] = sorted(d for d in dirs if d not in {"build"} and not d.startswith("."))
        expected += [os.path.join(directory, n) for n in sorted(names) if not n.endswith(".txt")]
    with recording() as reads:
        found = walk_files(str(tmp_path), lambda n: not n.endswith(".txt"), {"build"}, 100)
    assert found == expected
    assert {r.kind for r in reads} == {"isfile", "folder"}


def test_changing_a_named_condition_set_reads_the_file_again(git_repo, cli, secret) -> None:
    # under c**2 + s**2 == 1 the claim holds; under c**2 == 1 alone, c = s = 1 gives 2 != 1 (schoolbook)
    root = git_repo.path
    config = '[tool.idealcheck.conditions]\nunit = {{ vars = ["c", "s"], given = ["{given}"] }}\n'
    write_file(root, "pyproject.toml", config.format(given="c**2 + s**2 == 1"))
    write_file(root, "rot.py", "# idealcheck: c**2 + s**2 == 1 given unit\n")
    first = cli("check", "--format", "json", "--in-process", ".", cwd=root)
    assert _verdicts(first.out) == {"rot.py:1:3": "proved"}, first
    write_file(root, "pyproject.toml", config.format(given="c**2 == 1"))
    second = cli("check", "--format", "json", "--in-process", ".", cwd=root)
    assert _verdicts(second.out) == {"rot.py:1:3": "refuted"}, second
