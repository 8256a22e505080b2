"""The text and JSON reports (layout fixed by design.md)."""
from __future__ import annotations

import json

from report_samples import every_kind, proved, refuted, several_obligations
from verifier.report import render


def test_text_header_and_details_of_a_refuted_claim() -> None:
    out = render([refuted()], "text", version="9.9", detail="verbose")
    lines = out.splitlines()
    assert lines[0] == "src/b.c:10:4: refuted: (a+b)**2 == a**2 + b**2"
    assert "    counter-normal-form: 2*a*b" in lines
    assert any(line.strip().startswith("witness: a = 1, b = 2") for line in lines)
    assert "        left  = 9" in lines and "        right = 5" in lines
    assert "    assumed: b != 0" in lines


def test_text_summary_closes_the_report_after_one_brief_caution() -> None:
    lines = render(every_kind(), "text", version="9.9").splitlines()
    assert lines[-1] == "5 claims: 1 proved, 2 refuted, 1 inconclusive, 1 error"
    cautions = [line for line in lines if "floating-point rounding" in line]
    assert cautions == [lines[-2]] and len(lines[-2]) <= 100


def test_text_lists_each_obligation_when_a_claim_has_several() -> None:
    out = render([several_obligations()], "text", version="9.9", detail="verbose")
    assert "    - component 1: proved (ideal)" in out
    assert "    - component 2: refuted" in out
    assert "      counter-normal-form: x - y" in out


def test_text_orders_by_path_then_line() -> None:
    lines = render([proved("z.py", 1), proved("a.py", 9), proved("a.py", 2)], "text", version="1").splitlines()
    headers = [line.split(": ")[0] for line in lines if not line.startswith(" ")][:3]
    assert headers == ["a.py:2:3", "a.py:9:3", "z.py:1:3"]


def test_json_has_the_documented_keys_in_order() -> None:
    document = json.loads(render(every_kind(), "json", version="9.9"))
    assert list(document) == ["tool", "claims", "summary", "skipped"]
    assert document["tool"] == {"name": "idealcheck", "version": "9.9"}
    keys = ["id", "path", "line", "column", "kind", "text", "verdict", "method", "reason",
            "counter_normal_form", "witness", "assumed", "seconds"]
    for item in document["claims"]:
        assert list(item) == keys
    assert document["summary"] == {"proved": 1, "refuted": 2, "inconclusive": 1, "error": 1}


def test_json_values_order_and_rounding() -> None:
    document = json.loads(render(every_kind(), "json", version="9.9"))
    paths = [c["path"] for c in document["claims"]]
    assert paths == sorted(paths)
    by_path = {c["path"]: c for c in document["claims"]}
    wrong = by_path["src/b.c"]
    assert wrong["witness"] == {"values": {"a": "1", "b": "2"}, "left": "9", "right": "5"}
    assert wrong["counter_normal_form"] == "2*a*b" and wrong["seconds"] == 0.568
    assert by_path["src/a.py"]["witness"] is None and by_path["src/a.py"]["method"] == "expansion"
    assert by_path["src/e.py"]["kind"] == "function"


def test_json_is_deterministic_whatever_the_input_order() -> None:
    items = every_kind()
    assert render(items, "json", version="1") == render(list(reversed(items)), "json", version="1")


def test_witness_values_are_rounded_to_twelve_significant_digits_for_people() -> None:
    from verifier.report.common import rounded_for_people

    # the digits of cos(2) (mpmath, outside the project) and of an exact small fraction
    import mpmath

    with mpmath.workdps(40):
        long = mpmath.nstr(mpmath.cos(2), 30)
        assert rounded_for_people(long) == mpmath.nstr(mpmath.cos(2), 12)
    assert rounded_for_people("3/4") == "3/4" and rounded_for_people("12") == "12"
    assert rounded_for_people("0.25") == "0.25"


def test_on_a_terminal_a_long_proved_claim_is_cut_to_the_width() -> None:
    long_text = " + ".join(f"x{i}" for i in range(40)) + " == 0 + " + " + ".join(f"x{i}" for i in range(40))
    line = render([proved(text=long_text)], "text", version="1", width=80).splitlines()[0]
    assert len(line) <= 80 and line.endswith("... (expansion)") and line.startswith("src/a.py:3:3: proved: x0 + x1")
    full = render([proved(text=long_text)], "text", version="1").splitlines()[0]
    assert long_text in full  # files and pipes get the whole text
