"""The strict JSON codec of certificates, witnesses and obligation results.

Writing turns a frozen dataclass into a JSON object field by field (tuples become lists; a certificate
also gets its ``kind``).  Reading is driven by the declared type of each field and accepts nothing else:
an object must have exactly the expected keys, a string must be a string, an integer a non-negative one
of bounded size, a tuple a list of the right length or of bounded length, a union of certificate classes
an object whose ``kind`` names one of them.  Depth is bounded by the types, so deep nesting or a huge
value fails with ``CodecError`` at once.  Nothing is evaluated; what is read is only well-shaped - whether
a certificate proves anything is for ``checkers.py`` and ``tie.py`` to say.

A new certificate class needs no change here: its fields are read by their types, and it is found in
the ``Certificate`` union by its ``kind``.
"""
from __future__ import annotations

import functools
import json
import types
from dataclasses import fields, is_dataclass
from typing import Any, Literal, Union, get_args, get_origin, get_type_hints

from verifier.model.certificate import Certificate
from verifier.model.verdict import ObligationResult, Witness

MAX_TEXT = 1_000_000  # characters in one string
MAX_ITEMS = 100_000  # elements in one list
MAX_INTEGER = 1_000_000  # every integer in these records is an exponent or a power
_KINDS: dict[str, type] = {cls.kind: cls for cls in get_args(Certificate)}


class CodecError(ValueError):
    """A JSON value that is not of the expected shape."""


@functools.cache
def _field_types(cls: type) -> tuple[tuple[str, Any], ...]:
    hints = get_type_hints(cls)
    return tuple((f.name, hints[f.name]) for f in fields(cls))


def to_json(value: Any) -> Any:
    """A record (certificate, witness, obligation result) as JSON-ready lists, dicts and scalars."""
    if is_dataclass(value) and not isinstance(value, type):
        data: dict[str, Any] = {"kind": getattr(value, "kind")} if type(value) in _KINDS.values() else {}
        for name, _ in _field_types(type(value)):
            data[name] = to_json(getattr(value, name))
        return data
    if isinstance(value, tuple):
        return [to_json(v) for v in value]
    return value


def from_json(value: Any, shape: Any) -> Any:
    """``value`` read as the type ``shape``; CodecError on anything else."""
    origin, args = get_origin(shape), get_args(shape)
    if shape is str:
        if not isinstance(value, str) or len(value) > MAX_TEXT:
            raise CodecError("expected a string of bounded length")
        return value
    if shape is bool:
        if not isinstance(value, bool):
            raise CodecError("expected a boolean")
        return value
    if shape is int:
        if not isinstance(value, int) or isinstance(value, bool) or not 0 <= value <= MAX_INTEGER:
            raise CodecError("expected a small non-negative integer")
        return value
    if origin is Literal:
        if not any(type(value) is type(a) and value == a for a in args):
            raise CodecError(f"expected one of {args}")
        return value
    if origin is Union or origin is types.UnionType:
        return _from_union(value, args)
    if origin is tuple:
        return _from_list(value, args)
    if isinstance(shape, type) and is_dataclass(shape):
        return _from_object(value, shape)
    raise CodecError(f"no JSON form for {shape!r}")  # a record field of a type this codec does not read


def _from_union(value: Any, options: tuple[Any, ...]) -> Any:
    if value is None:
        if type(None) not in options:
            raise CodecError("unexpected null")
        return None
    rest = [o for o in options if o is not type(None)]
    if len(rest) == 1:
        return from_json(value, rest[0])
    if not all(o in _KINDS.values() for o in rest):
        raise CodecError("only unions of certificate classes are read")  # a programming error
    kind = value.get("kind") if isinstance(value, dict) else None
    cls = _KINDS.get(kind) if isinstance(kind, str) else None
    if cls is None or cls not in rest:
        raise CodecError("unknown certificate kind")
    return _from_object(value, cls)


def _from_list(value: Any, args: tuple[Any, ...]) -> tuple:
    if not isinstance(value, list):
        raise CodecError("expected a list")
    if len(args) == 2 and args[1] is Ellipsis:
        if len(value) > MAX_ITEMS:
            raise CodecError("a list too long")
        return tuple(from_json(v, args[0]) for v in value)
    if len(value) != len(args):
        raise CodecError(f"expected a list of {len(args)}")
    return tuple(from_json(v, a) for v, a in zip(value, args))


def _from_object(value: Any, cls: type) -> Any:
    if not isinstance(value, dict):
        raise CodecError(f"expected an object for {cls.__name__}")
    types_of = _field_types(cls)
    expected = {name for name, _ in types_of} | ({"kind"} if cls in _KINDS.values() else set())
    if set(value) != expected:
        raise CodecError(f"{cls.__name__}: unexpected or missing keys {sorted(set(value) ^ expected)}")
    return cls(**{name: from_json(value[name], shape) for name, shape in types_of})


def certificate_from_json(value: Any) -> Certificate:
    return from_json(value, Certificate)  # type: ignore[no-any-return]


def witness_from_json(value: Any) -> Witness:
    return from_json(value, Witness)  # type: ignore[no-any-return]


def result_from_json(value: Any) -> ObligationResult:
    return from_json(value, ObligationResult)  # type: ignore[no-any-return]


def _reject_constant(name: str) -> Any:
    raise CodecError(f"{name} is not a JSON number")


def parse(text: str) -> Any:
    """JSON text -> value, rejecting NaN and infinities and turning too deep nesting into CodecError."""
    if len(text) > 64 * MAX_TEXT:
        raise CodecError("the text is too long")
    try:
        return json.loads(text, parse_constant=_reject_constant)
    except RecursionError as exc:
        raise CodecError("nested too deeply") from exc
    except json.JSONDecodeError as exc:
        raise CodecError(f"not JSON: {exc.msg}") from exc
