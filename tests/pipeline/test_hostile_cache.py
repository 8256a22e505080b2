"""A hostile cache: it never writes outside its folder, never blocks on an entry, and no stored word
reaches the report.

Facts used (common practice): (a+b)**2 = a**2 + 2ab + b**2; x**3 = x where x**2 = 1; x*y/y = x needs y != 0; x**2 = 0 forces
x = 0 over the reals; x = 1 and x = 2 cannot hold together; sqrt(x**2) = x for x >= 0; a > b and a <= b
cannot hold together.  ``CACHEDIR.TAG`` follows the Cache Directory Tagging Specification.
"""
from __future__ import annotations

import json
import os
from pathlib import Path

import pytest

from verifier.algebra.decide import Limits, decide
from verifier.claims.language import parse_claim_text
from verifier.model.claim import Claim, Location, Obligation
from verifier.pipeline import cache_store
from verifier.pipeline.cache import FORMAT, ResultCache
from verifier.pipeline.config import Config
from verifier.pipeline.runner import CheckRequest, RunOptions, check_run

KINDS = {
    "expansion": "(a+b)**2 == a**2 + 2*a*b + b**2",
    "ideal": "x**3 == x given x**2 == 1",
    "saturation": "x*y/y == x",
    "radical": "x == 0 given x**2 == 0",
    "vacuous": "y == 1 given x == 1, x == 2",
    "sign": "sqrt(x**2) == x given x >= 0",
    "contradiction": "y == 1 given a > b, a <= b",
    "refuted": "(a+b)**2 == a**2 + b**2",
    "refuted-given": "x + y == 3 given x*y == 2",
}


def _claim(line: int, text: str) -> Claim:
    parsed = parse_claim_text(text, {})
    return Claim(f"k.c:{line}:1", Location("k.c", line, 1), "expression", text,
                 (Obligation(parsed.sides[0], parsed.sides[1], parsed.conditions),), dependencies=("k.c",))


CLAIMS = {name: _claim(line, text) for line, (name, text) in enumerate(KINDS.items(), start=1)}


@pytest.fixture(scope="module")
def decided():
    return {name: decide(claim, Limits(timeout=20)) for name, claim in CLAIMS.items()}


def _cache(directory: Path) -> ResultCache:
    return ResultCache(directory, version="1.0")


def _texts(verdict):
    return (verdict.verdict, verdict.method, verdict.reason, verdict.assumed, verdict.counter_normal_form,
            [(r.method, r.reason, r.assumed, r.counter_normal_form, r.vacuous) for r in verdict.obligations])


@pytest.mark.parametrize("name", list(KINDS))
def test_stored_words_never_reach_the_report(tmp_path: Path, decided, name: str) -> None:
    claim, fresh = CLAIMS[name], decided[name]
    assert fresh.verdict in ("proved", "refuted")
    cache = _cache(tmp_path)
    cache.store(claim, fresh)
    path = cache.entry_path(claim)
    document = json.loads(path.read_text(encoding="utf-8"))
    for result in document["obligations"]:  # the words a forger would change; the proof stays intact
        result.update(reason="FORGED reason", assumed=["FORGED assumption"], vacuous=not result["vacuous"])
        if result["verdict"] == "proved":
            result["method"] = "expansion" if result["method"] != "expansion" else "ideal"
        else:
            result["counter_normal_form"] = "FORGED"
    path.write_text(json.dumps(document), encoding="utf-8")
    loaded = cache.load(claim)
    assert loaded is not None and loaded.cached
    assert _texts(loaded) == _texts(fresh)


def test_a_cache_path_that_is_a_link_out_of_the_checkout_is_refused(tmp_path: Path) -> None:
    project = tmp_path / "proj"
    project.mkdir()
    (project / "a.c").write_text("// idealcheck: (a+b)**2 == a**2 + 2*a*b + b**2\n", encoding="utf-8")
    (project / ".idealcheck_cache").symlink_to("..")
    request = CheckRequest(config=Config(path=None, root=project), cwd=str(project), cache_dir=".idealcheck_cache",
                           options=RunOptions(jobs=1))
    result = check_run(request)
    assert [v.verdict for v in result.verdicts] == ["proved"]
    assert sorted(os.listdir(tmp_path)) == ["proj"]  # no CACHEDIR.TAG, .gitignore or v1/ above
    assert any(item.kind == "cache" and "symbolic link" in item.reason for item in result.skipped)


def test_a_foreign_folder_is_never_used_as_the_cache(tmp_path: Path, decided) -> None:
    (tmp_path / "notes.txt").write_text("mine\n", encoding="utf-8")
    (tmp_path / ".gitignore").write_text("build/\n", encoding="utf-8")
    cache = _cache(tmp_path)
    assert cache.refused is not None and "did not create" in cache.refused
    cache.store(CLAIMS["expansion"], decided["expansion"])
    assert (tmp_path / ".gitignore").read_text(encoding="utf-8") == "build/\n"
    assert sorted(os.listdir(tmp_path)) == [".gitignore", "notes.txt"]


def test_a_link_planted_inside_the_cache_is_not_followed(tmp_path: Path, decided) -> None:
    outside = tmp_path / "outside"
    outside.mkdir()
    directory = tmp_path / "cache"
    cache = _cache(directory)
    cache.store(CLAIMS["saturation"], decided["saturation"])  # creates the folder and its tag
    (directory / f"v{FORMAT}").rename(directory / "v-old")
    (directory / f"v{FORMAT}").symlink_to(outside, target_is_directory=True)
    cache.store(CLAIMS["expansion"], decided["expansion"])
    assert os.listdir(outside) == []


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="no FIFOs here")
def test_an_entry_that_is_a_fifo_or_a_device_is_a_miss_and_is_replaced(tmp_path: Path, decided) -> None:
    cache = _cache(tmp_path)
    cache.store(CLAIMS["ideal"], decided["ideal"])
    for claim, plant in ((CLAIMS["expansion"], "fifo"), (CLAIMS["refuted"], "/dev/zero")):
        path = cache.entry_path(claim)
        path.parent.mkdir(parents=True, exist_ok=True)
        if plant == "fifo":
            os.mkfifo(path)
        else:
            path.symlink_to(plant)
        assert cache.load(claim) is None  # neither blocks nor reads forever
        name = "expansion" if claim is CLAIMS["expansion"] else "refuted"
        cache.store(claim, decided[name])
        assert path.is_file() and not path.is_symlink()
        assert cache.load(claim) is not None


def test_a_failed_write_leaves_no_temporary_file(tmp_path: Path, decided, monkeypatch) -> None:
    cache = _cache(tmp_path)
    cache.store(CLAIMS["ideal"], decided["ideal"])

    def full_disk(*args, **kwargs):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(cache_store.os, "replace", full_disk)
    cache.store(CLAIMS["expansion"], decided["expansion"])
    leftovers = [name for _root, _dirs, files in os.walk(tmp_path) for name in files if name.startswith(".tmp-")]
    assert leftovers == [] and not cache.entry_path(CLAIMS["expansion"]).exists()
