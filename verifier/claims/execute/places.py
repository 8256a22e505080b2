"""Places of kernel code (``verifier.model.ir_places``) on executor values: reading and writing components
of structs and fixed-size arrays (``values.Compound``), and the results they give.

A variable value stands for a parameter's struct or array of unknown shape: its component ``w`` is the
variable ``q.w`` (the claim language's spelling), as a ``Compound`` with that prefix would give.
"""
from __future__ import annotations

from collections.abc import Callable
from dataclasses import replace

from verifier.claims.execute.values import Compound, Key, Stuck, Unknown, Value
from verifier.model import ir
from verifier.model.expr import Var
from verifier.model.ir_places import Aggregate, Place


def spelled(prefix: str, key: Key) -> str:
    """The claim language's name of the component ``key`` of ``prefix`` (``q.w``, ``v[1]``; ``x`` when the
    prefix is empty: the members of C++ ``this`` are named as the class spells them)."""
    if isinstance(key, str):
        return key if prefix == "" else f"{prefix}.{key}"
    return f"{prefix}[{key}]"


def keys_of(place: Place, index_of: Callable[[ir.Expr], int | None]) -> list[Key]:
    """The place's steps as keys; an index that is not an integer constant stops the path."""
    keys: list[Key] = []
    for step in place.steps:
        if isinstance(step, str):
            keys.append(step)
            continue
        index = index_of(step)
        if index is None:
            raise Stuck(f"an index that is not a constant (line {place.line})")
        keys.append(index)
    return keys


def component(value: Value, key: Key, line: int) -> Value:
    """The component ``key`` of ``value``."""
    if isinstance(value, Var):
        value = Compound(prefix=value.name)
    if isinstance(value, Unknown):
        return value
    if not isinstance(value, Compound):
        return Unknown(f"component {key} of a value that has none (line {line})")
    for held, item in value.items:
        if held == key:
            return item
    if value.prefix is None:
        return Unknown(f"the component {spelled('', key) if isinstance(key, int) else '.' + key} is read before "
                       f"it is set (line {line})")
    return Compound(prefix=spelled(value.prefix, key), base=value.base)


def as_number(value: Value, line: int) -> Value:
    """``value`` where a number is needed: a component without shape is its variable."""
    if isinstance(value, Compound):
        if value.prefix is not None and not (value.items or value.fields or value.size):
            return Var(value.prefix)
        return Unknown(f"an array, struct or pointer is used as a number (line {line})")
    return value


def read(root: Value | None, place: Place, keys: list[Key], whole: bool) -> Value:
    """The value at ``place`` (``root``: the value bound to its root name, None when unbound)."""
    line = place.line
    if root is None:
        return Unknown(f"the name {place.root} is not a parameter or local (line {line})")
    value = root
    for key in keys:
        value = component(value, key, line)
    if whole and not (isinstance(value, Compound) and value.prefix is not None
                      and not (value.items or value.fields or value.size)):
        return value
    return as_number(value, line)


def written(root: Value | None, place: Place, keys: list[Key], value: Value) -> Value:
    """The root's new value once ``value`` is stored at ``place``."""
    line = place.line
    if not keys:
        return value
    if root is None:
        raise Stuck(f"the name {place.root} is not a parameter or local (line {line})")
    return _put(root, keys, value, line)


def _put(container: Value, keys: list[Key], value: Value, line: int) -> Value:
    if not keys:
        return value
    if isinstance(container, Var):
        container = Compound(prefix=container.name)
    if not isinstance(container, Compound):
        raise Stuck(f"assignment to a component of a value that has none (line {line})")
    key = keys[0]
    if container.size and isinstance(key, int) and not container.base <= key < container.base + container.size:
        raise Stuck(f"index {key} is out of range (line {line})")
    inner = _put(component(container, key, line), keys[1:], value, line)
    items = tuple((held, item) for held, item in container.items if held != key) + ((key, inner),)
    return replace(container, items=items)


def aggregate(node: Aggregate, items: tuple[Value, ...]) -> Compound:
    """The value of a struct or array literal whose items have the values ``items``."""
    if node.fields:
        return Compound(tuple(zip(node.fields, items)), fields=node.fields)
    size = max(node.size, len(items))
    return Compound(tuple((node.base + i, item) for i, item in enumerate(items)), size=size, base=node.base)


def flatten(value: Value, line: int = 0) -> list[Value]:
    """A result's numbers: a struct's fields or an array's elements in order (nested ones flattened)."""
    if isinstance(value, Compound) and (value.items or value.size or value.fields):
        out: list[Value] = []
        for key in value.keys():
            out.extend(flatten(component(value, key, line), line))
        return out
    return [as_number(value, line)]
