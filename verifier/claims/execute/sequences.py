"""Parameters used as whole sequences: their shapes (from the claim, the code's indexing, ``len(q) == 4``)
and the sequences of variables ``q[0]``, ``q[1]`` ... that stand for them at the top level.

A parameter that the code passes whole to numpy (``np.dot(q, q)``, ``q @ w``, ``v[1:]``) can only be
followed when its length is known; a claim that spells ``q[3]`` or code that reads ``q[3]`` fixes the
length at 4 (the shortest sequence for which the claim and the code make sense; the report says so),
``len(q) == 4`` in the conditions fixes it outright.
"""
from __future__ import annotations

import dataclasses
import re
from collections.abc import Iterable, Iterator, Mapping

from verifier.claims.execute.values import ARRAY, Seq, Value
from verifier.model import ir
from verifier.model.expr import Num, Var

Shape = tuple[int, ...]
MAX_LENGTH = 64  # longer sequences are left as they are (a variable): unrolling them would be slow
_SPELLED = re.compile(r"([A-Za-z_][A-Za-z_0-9]*)((?:\[-?[0-9]+(?:\s*,\s*-?[0-9]+)*\])+)")
_LENGTH = re.compile(r"len\(([A-Za-z_][A-Za-z_0-9]*)\)")


def _merge(shapes: dict[str, Shape], name: str, indices: Iterable[int]) -> None:
    extent = tuple(i + 1 if i >= 0 else -i for i in indices)
    old = shapes.get(name, ())
    depth = max(len(old), len(extent))
    shapes[name] = tuple(max(old[d] if d < len(old) else 0, extent[d] if d < len(extent) else 0)
                         for d in range(depth))


def spelled_shapes(names: Iterable[str]) -> dict[str, Shape]:
    """Shapes that a claim's variable spellings imply: ``q[3]`` -> (4,), ``m[1][2]`` / ``m[1, 2]`` -> (2, 3)."""
    shapes: dict[str, Shape] = {}
    for name in names:
        match = _SPELLED.fullmatch(name)
        if match is None:
            continue
        indices = [int(i) for i in re.findall(r"-?[0-9]+", match.group(2))]
        _merge(shapes, match.group(1), indices)
    return shapes


def stated_lengths(conditions: Iterable[tuple[str, int | None]]) -> dict[str, int]:
    """``len(q) == 4`` among the conditions, given as (left variable name, right integer or None)."""
    lengths: dict[str, int] = {}
    for name, value in conditions:
        match = _LENGTH.fullmatch(name)
        if match is not None and value is not None and value >= 0:
            lengths[match.group(1)] = value
    return lengths


def _nodes(node: object) -> Iterator[object]:
    """Every node in pre-order, with a stack (nested generators cost the depth at every item)."""
    stack = [node]
    while stack:
        current = stack.pop()
        yield current
        if isinstance(current, tuple):
            stack.extend(reversed(current))
        elif dataclasses.is_dataclass(current) and not isinstance(current, type):
            stack.extend(getattr(current, field.name) for field in reversed(dataclasses.fields(current)))


def _constant(node: object) -> int | None:
    if isinstance(node, Num) and node.value.denominator == 1:
        return int(node.value)
    if isinstance(node, ir.Unary) and node.op == "-" and isinstance(node.operand, Num):
        value = _constant(node.operand)
        return None if value is None else -value
    return None


def _chain(node: ir.Element) -> tuple[str, list[int]] | None:
    """``q[1][2]`` or ``q[1, 2]`` on a name: the name and the constant indices, outermost first."""
    indices: list[int] = []
    current: ir.Expr = node
    while isinstance(current, ir.Element):
        found = [_constant(i) for i in current.indices]
        if any(i is None for i in found):
            return None
        indices = [i for i in found if i is not None] + indices
        current = current.base
    return (current.name, indices) if isinstance(current, ir.Name) else None


def indexed_shapes(function: ir.Function) -> dict[str, Shape]:
    """Shapes of the parameters that ``function`` reads or writes at constant indices (``q[3]``, ``m[1, 2]``)."""
    params = {p.name for p in function.parameters}
    shapes: dict[str, Shape] = {}
    for node in _nodes(function.body):
        if isinstance(node, ir.Element):
            chain = _chain(node)
            if chain is not None and chain[0] in params:
                _merge(shapes, chain[0], chain[1])
        elif (isinstance(node, ir.Assign) and len(node.targets) == 1 and isinstance(node.targets[0], ir.Unpack)
              and isinstance(node.value, ir.Name) and node.value.name in params):
            _merge(shapes, node.value.name, [len(node.targets[0].items) - 1])  # w, x, y, z = q
        elif isinstance(node, ir.ToElement) and node.name in params:
            found = [_constant(i) for i in node.indices]
            if all(i is not None for i in found):
                _merge(shapes, node.name, [i for i in found if i is not None])
    return shapes


def combined_shapes(*sources: Mapping[str, Shape]) -> dict[str, Shape]:
    shapes: dict[str, Shape] = {}
    for source in sources:
        for name, shape in source.items():
            _merge(shapes, name, [n - 1 for n in shape])
    return shapes


def parameter_sequence(name: str, shape: Shape, fresh: "Iterator[int]", owner: int) -> Value:
    """The array of variables ``name[0]``, ``name[1]`` ... (rows of ``name[i][j]`` for a matrix)."""
    def build(spelled: str, rest: Shape) -> Value:
        if not rest:
            return Var(spelled)
        items = tuple(build(f"{spelled}[{i}]", rest[1:]) for i in range(rest[0]))
        return Seq(items, ARRAY, next(fresh), owner)
    return build(name, shape)


def usable(shape: Shape) -> bool:
    total = 1
    for n in shape:
        total *= n
    return bool(shape) and all(n > 0 for n in shape) and total <= MAX_LENGTH


def whole_uses(function: ir.Function) -> frozenset[str]:
    """Parameters that ``function`` uses other than by constant or computed subscripts (``np.dot(q, q)``,
    ``len(q)``, ``q[1:]``, ``for x in q``): only those need to be sequences."""
    params = {p.name for p in function.parameters}
    bases: set[int] = set()
    used: set[str] = set()
    nodes = list(_nodes(function.body))
    for node in nodes:
        if isinstance(node, ir.Element):
            bases.add(id(node.base))
    for node in nodes:
        if isinstance(node, ir.Name) and node.name in params and id(node) not in bases:
            used.add(node.name)
    return frozenset(used)
