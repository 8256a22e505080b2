"""The proof-carrying cache: keys, round trips, and tampered entries that must never yield `proved`."""
from __future__ import annotations

import json
from dataclasses import replace
from fractions import Fraction
from pathlib import Path

import pytest

from verifier.pipeline.cache import ResultCache, claim_key
from verifier.model.expr import BinOp, Num, Pow, Var
from verifier.model.claim import Claim, Condition, Location, NamedConditionSet, Obligation
from verifier.pipeline.runner import RunOptions, decide_guarded, run

a, b, x, y = Var("a"), Var("b"), Var("x"), Var("y")


def _claim(path: str, line: int, left, right, text: str) -> Claim:
    return Claim(id=f"{path}:{line}:1", location=Location(path, line, 1), kind="expression", text=text,
                 obligations=(Obligation(left, right),), dependencies=(path,))


def square(base) -> Pow:
    return Pow(base, Fraction(2))


# (a+b)^2 = a^2 + 2ab + b^2, the binomial square (common practice)
TRUE = _claim("k.c", 1, square(BinOp("+", a, b)),
              BinOp("+", BinOp("+", square(a), BinOp("*", Num(Fraction(2)), BinOp("*", a, b))), square(b)),
              "(a+b)**2 == a**2 + 2*a*b + b**2")
# the same square without the cross term: false at a = b = 1
FALSE = _claim("k.c", 2, square(BinOp("+", a, b)), BinOp("+", square(a), square(b)), "(a+b)**2 == a**2 + b**2")
# x*y/y = x: needs the assumption y != 0 (saturation)
DIVISION = _claim("k.c", 3, BinOp("/", BinOp("*", x, y), y), x, "x*y/y == x")

def _cache(directory: Path, *, version: str = "1.0", conditions: tuple[NamedConditionSet, ...] = ()) -> ResultCache:
    return ResultCache(directory, version=version, conditions=conditions)


def _decided(claim: Claim):
    verdict = decide_guarded(claim, 10.0, 2048)
    assert verdict.verdict in ("proved", "refuted"), verdict
    return verdict


@pytest.fixture(scope="module")
def decided():
    return {c.text: _decided(c) for c in (TRUE, FALSE, DIVISION)}


def _entry(cache: ResultCache, claim: Claim) -> dict:
    return json.loads(cache.entry_path(claim).read_text(encoding="utf-8"))


def _write(cache: ResultCache, claim: Claim, document: dict) -> None:
    cache.entry_path(claim).write_text(json.dumps(document), encoding="utf-8")


def test_expected_verdicts_of_the_sample_claims(decided) -> None:
    assert decided[TRUE.text].verdict == "proved"
    assert decided[FALSE.text].verdict == "refuted"
    assert decided[DIVISION.text].verdict == "proved"


def test_round_trip_is_rechecked_and_marked_cached(tmp_path: Path, decided) -> None:
    cache = _cache(tmp_path)
    for claim in (TRUE, FALSE, DIVISION):
        cache.store(claim, decided[claim.text])
    for claim in (TRUE, FALSE, DIVISION):
        loaded = cache.load(claim)
        fresh = decided[claim.text]
        assert loaded is not None and loaded.cached
        assert (loaded.verdict, loaded.method, loaded.counter_normal_form) == (
            fresh.verdict, fresh.method, fresh.counter_normal_form)
        assert loaded.claim is claim
    assert cache.stats.hits == 3 and cache.stats.rejected == 0
    assert (tmp_path / "CACHEDIR.TAG").is_file() and (tmp_path / ".gitignore").read_text().strip().endswith("*")


def test_flipping_refuted_to_proved_is_rejected(tmp_path: Path, decided) -> None:
    cache = _cache(tmp_path)
    cache.store(FALSE, decided[FALSE.text])
    document = _entry(cache, FALSE)
    document["verdict"] = "proved"
    for result in document["obligations"]:
        result["verdict"] = "proved"
        result["method"] = "expansion"
    _write(cache, FALSE, document)
    assert cache.load(FALSE) is None
    assert cache.stats.rejected == 1


def test_borrowing_the_certificate_of_another_claim_is_rejected(tmp_path: Path, decided) -> None:
    cache = _cache(tmp_path)
    cache.store(TRUE, decided[TRUE.text])
    cache.store(FALSE, decided[FALSE.text])
    stolen = _entry(cache, TRUE)
    document = _entry(cache, FALSE)
    document["obligations"] = stolen["obligations"]
    _write(cache, FALSE, document)
    assert cache.load(FALSE) is None
    # and the whole entry of the true claim copied over, key field included
    stolen["key"] = cache.key(FALSE)
    _write(cache, FALSE, stolen)
    assert cache.load(FALSE) is None


def test_changing_a_certificate_coefficient_is_rejected(tmp_path: Path, decided) -> None:
    cache = _cache(tmp_path)
    cache.store(DIVISION, decided[DIVISION.text])
    document = _entry(cache, DIVISION)
    certificate = document["obligations"][0]["certificate"]
    changed = False
    for polynomial in certificate["cofactors"] + [certificate["target"]]:
        for term in polynomial:
            term[0] = str(Fraction(term[0]) + 1)
            changed = True
            break
        if changed:
            break
    assert changed
    _write(cache, DIVISION, document)
    assert cache.load(DIVISION) is None


def test_a_false_claim_never_comes_back_proved_through_run(tmp_path: Path, decided) -> None:
    cache = _cache(tmp_path)
    cache.store(TRUE, decided[TRUE.text])
    cache.store(FALSE, decided[FALSE.text])
    forged = _entry(cache, TRUE)
    forged["key"] = cache.key(FALSE)
    _write(cache, FALSE, forged)
    verdicts = run([FALSE, TRUE], RunOptions(jobs=1, cache=cache))
    assert verdicts[0].verdict == "refuted" and not verdicts[0].cached
    assert verdicts[1].verdict == "proved" and verdicts[1].cached
    # the recomputed result replaced the forged entry
    assert _entry(cache, FALSE)["obligations"][0]["verdict"] == "refuted"


def test_a_witness_that_does_not_refute_is_rejected(tmp_path: Path, decided) -> None:
    cache = _cache(tmp_path)
    cache.store(FALSE, decided[FALSE.text])
    document = _entry(cache, FALSE)
    # at a = 0 both sides agree, so this point is no counterexample
    document["obligations"][0]["witness"]["values"] = [["a", "0"], ["b", "5"]]
    _write(cache, FALSE, document)
    assert cache.load(FALSE) is None


@pytest.mark.parametrize("content", ["", "not json", "[]", "{\"format\": 1}", "[" * 100000, "{\"format\": 1, \"key\": 5}"])
def test_malformed_entries_are_misses_not_crashes(tmp_path: Path, content: str) -> None:
    cache = _cache(tmp_path)
    path = cache.entry_path(TRUE)
    path.parent.mkdir(parents=True)
    path.write_text(content, encoding="utf-8")
    assert cache.load(TRUE) is None


def test_the_key_covers_obligations_dependencies_version_and_conditions_but_not_the_location() -> None:
    base = claim_key(TRUE, version="1.0", conditions=())
    assert claim_key(FALSE, version="1.0", conditions=()) != base
    other_code = replace(TRUE, obligations=FALSE.obligations)  # same text, the code executes differently
    assert claim_key(other_code, version="1.0", conditions=()) != base
    assert claim_key(TRUE, version="1.1", conditions=()) != base
    named = (NamedConditionSet("unit", ("x",), ("x**2 == 1",)),)
    assert claim_key(TRUE, version="1.0", conditions=named) != base
    with_helper = replace(TRUE, dependencies=("k.c", "other.c"))
    assert claim_key(with_helper, version="1.0", conditions=()) != base
    moved = replace(TRUE, id="k.c:40:1", location=Location("k.c", 40, 1))
    assert claim_key(moved, version="1.0", conditions=()) == base


def test_results_cut_short_by_a_limit_are_not_stored(tmp_path: Path, decided) -> None:
    cache = _cache(tmp_path)
    for limit in ("time", "memory"):
        undecided = replace(decided[TRUE.text], verdict="inconclusive", reason="stopped", limit=limit)
        cache.store(TRUE, undecided)
        assert not cache.entry_path(TRUE).exists() and not cache.entry_path(TRUE, inconclusive=True).exists()
    # the structured field decides, not the words of the reason
    worded = replace(decided[TRUE.text], verdict="inconclusive", reason="no time limit was hit")
    cache.store(TRUE, worded)
    assert cache.entry_path(TRUE, inconclusive=True).exists()


# x = 5 under Motzkin's polynomial x**4*y**2 + x**2*y**4 - 3*x**2*y**2 plus 2 == 0: no real point, but the
# condition is not a sum of squares (T. S. Motzkin 1967, from memory), so there is nothing to refute or prove
_y = Var("y")
_MOTZKIN = BinOp("+", BinOp("-", BinOp("+", BinOp("*", Pow(x, Fraction(4)), Pow(_y, Fraction(2))),
                                          BinOp("*", Pow(x, Fraction(2)), Pow(_y, Fraction(4)))),
                            BinOp("*", Num(Fraction(3)), BinOp("*", Pow(x, Fraction(2)), Pow(_y, Fraction(2))))),
                 Num(Fraction(2)))
OPEN = Claim(id="k.c:4:1", location=Location("k.c", 4, 1), kind="expression",
             text="x == 5 given x**4*y**2 + x**2*y**4 - 3*x**2*y**2 + 2 == 0",
             obligations=(Obligation(x, Num(Fraction(5)), (Condition("==", _MOTZKIN, Num(Fraction(0)),
                                                                     "x**4*y**2 + x**2*y**4 - 3*x**2*y**2 + 2 == 0"),)),),
             dependencies=("k.c",))


def test_inconclusive_results_are_reused_only_when_they_fail_the_run(tmp_path: Path) -> None:
    verdict = decide_guarded(OPEN, 10.0, 2048)
    assert verdict.verdict == "inconclusive"
    _cache(tmp_path).store(OPEN, verdict)
    failing = ResultCache(tmp_path, version="1.0", reuse_inconclusive=True)
    loaded = failing.load(OPEN)
    assert loaded is not None and loaded.verdict == "inconclusive" and loaded.cached
    warning = ResultCache(tmp_path, version="1.0", reuse_inconclusive=False)
    assert warning.load(OPEN) is None
    other_limits = ResultCache(tmp_path, version="1.0", reuse_inconclusive=True,
                               limits=(60.0, 2048))
    assert other_limits.load(OPEN) is None


def test_a_forged_inconclusive_entry_cannot_pass_a_false_claim(tmp_path: Path, decided) -> None:
    cache = ResultCache(tmp_path, version="1.0", reuse_inconclusive=True)
    cache.store(FALSE, decided[FALSE.text])
    document = _entry(cache, FALSE)
    document["obligations"][0].update(verdict="inconclusive", witness=None, counter_normal_form=None)
    path = cache.entry_path(FALSE, inconclusive=True)
    path.parent.mkdir(parents=True, exist_ok=True)
    document["key"] = path.stem
    path.write_text(json.dumps(document), encoding="utf-8")
    cache.entry_path(FALSE).unlink()
    loaded = cache.load(FALSE)  # read back only because inconclusive fails the run anyway
    assert loaded is not None and loaded.verdict == "inconclusive"
    warning = ResultCache(tmp_path, version="1.0", reuse_inconclusive=False)
    assert warning.load(FALSE) is None


def test_a_warm_run_answers_from_the_cache(tmp_path: Path) -> None:
    cache = _cache(tmp_path)
    cold = run([TRUE, FALSE, DIVISION], RunOptions(jobs=1, cache=cache))
    warm_cache = _cache(tmp_path)
    warm = run([TRUE, FALSE, DIVISION], RunOptions(jobs=1, cache=warm_cache))
    assert [v.verdict for v in warm] == [v.verdict for v in cold] == ["proved", "refuted", "proved"]
    assert all(v.cached for v in warm) and warm_cache.stats.hits == 3
