"""The strict JSON codec: every record round-trips; anything of another shape is a clean CodecError."""
from __future__ import annotations

import copy
import json
from typing import get_args

import pytest

from certificate_samples import CLAIMS, sample
from verifier.algebra.kernel.codec import (
    CodecError,
    certificate_from_json,
    parse,
    result_from_json,
    to_json,
    witness_from_json,
)
from verifier.model.certificate import Certificate
from verifier.model.verdict import ObligationResult, Witness

KINDS = sorted(CLAIMS)
WITNESS = Witness((("x", "3/4"), ("y", "-2")), "1.5", "1.25", True)


def through_text(value):
    return parse(json.dumps(to_json(value)))


def test_every_certificate_class_is_sampled() -> None:
    assert {cls.kind for cls in get_args(Certificate)} == set(KINDS)


@pytest.mark.parametrize("kind", KINDS)
def test_every_certificate_kind_round_trips(kind) -> None:
    cert = sample(kind).certificate
    data = through_text(cert)
    assert data["kind"] == kind
    back = certificate_from_json(data)
    assert type(back) is type(cert) and back == cert


def test_a_witness_and_results_round_trip() -> None:
    assert witness_from_json(through_text(WITNESS)) == WITNESS
    refuted = ObligationResult("x", "refuted", None, "differ", "x - 1", WITNESS, ("y != 0",))
    assert result_from_json(through_text(refuted)) == refuted
    for kind in KINDS:
        proved = ObligationResult("", "proved", "sign", "r", None, None, (), sample(kind).certificate, True)
        assert result_from_json(through_text(proved)) == proved


def certificate_json(kind: str = "conjugate") -> dict:
    return to_json(sample(kind).certificate)


def _set(data: dict, path: tuple, value) -> dict:
    data = copy.deepcopy(data)
    target = data
    for key in path[:-1]:
        target = target[key]
    target[path[-1]] = value
    return data


def nested(depth: int):
    value: object = "1"
    for _ in range(depth):
        value = [value]
    return value


MALFORMED = {
    "power as text": ("ideal", ("power",), "2"),
    "power as boolean": ("ideal", ("power",), True),
    "power as float": ("ideal", ("power",), 2.0),
    "huge power": ("ideal", ("power",), 10**30),
    "negative power": ("ideal", ("power",), -1),
    "huge exponent": ("conjugate", ("target", 0, 1, 0), 10**400),
    "exponent as text": ("conjugate", ("target", 0, 1, 0), "1"),
    "coefficient as number": ("conjugate", ("target", 0, 0), 1),
    "symbols as text": ("conjugate", ("symbols",), "x"),
    "symbol as number": ("conjugate", ("symbols", 0), 7),
    "term of three": ("conjugate", ("target", 0), ["1", [1, 0], "extra"]),
    "term as object": ("conjugate", ("target", 0), {"c": "1"}),
    "flag as number": ("sign_contradiction", ("first_strict",), 1),
    "ratio as number": ("sign_contradiction", ("ratio",), -1),
    "null polynomial": ("real_square", ("remainder",), None),
    "deep nesting in a coefficient": ("real_square", ("remainder", 0, 0), nested(100_000)),
    "deep nesting in a list": ("shift_contradiction", ("generators",), nested(100_000)),
    "huge text": ("shift_contradiction", ("shift",), "1" * 2_000_000),
    "unknown kind": ("ideal", ("kind",), "oracle"),
    "kind of another class": ("ideal", ("kind",), "conjugate"),
    "kind as list": ("ideal", ("kind",), ["ideal"]),
}


@pytest.mark.parametrize("name", sorted(MALFORMED))
def test_malformed_certificates_are_rejected(name) -> None:
    kind, path, value = MALFORMED[name]
    with pytest.raises(CodecError):
        certificate_from_json(_set(certificate_json(kind), path, value))


@pytest.mark.parametrize("kind", KINDS)
def test_extra_and_missing_keys_are_rejected(kind) -> None:
    data = certificate_json(kind)
    with pytest.raises(CodecError):
        certificate_from_json({**data, "proved": True})
    for key in data:
        with pytest.raises(CodecError):
            certificate_from_json({k: v for k, v in data.items() if k != key})


@pytest.mark.parametrize("value", [None, [], "ideal", 3, {"kind": "ideal"}])
def test_values_that_are_no_certificate_at_all(value) -> None:
    with pytest.raises(CodecError):
        certificate_from_json(value)


def test_malformed_witnesses_and_results_are_rejected() -> None:
    witness = to_json(WITNESS)
    for bad in (_set(witness, ("exact",), "yes"), _set(witness, ("values", 0), ["x"]),
                _set(witness, ("values",), {"x": "1"}), {**witness, "note": ""}, _set(witness, ("left",), 1.5)):
        with pytest.raises(CodecError):
            witness_from_json(bad)
    result = to_json(ObligationResult("", "proved", "ideal", "r", certificate=sample("ideal").certificate))
    for bad in (_set(result, ("verdict",), "certainly"), _set(result, ("method",), "oracle"),
                _set(result, ("vacuous",), 0), _set(result, ("assumed",), "y != 0"),
                {k: v for k, v in result.items() if k != "vacuous"}, {**result, "cached": True}):
        with pytest.raises(CodecError):
            result_from_json(bad)


@pytest.mark.parametrize("text", ["[" * 200_000, '{"a": NaN}', '[Infinity]', "{", "[1,]"])
def test_unreadable_json_text_is_a_codec_error(text) -> None:
    with pytest.raises(CodecError):
        parse(text)
