"""Claims <-> JSON for the extraction cache: our own plain data, read back field by field.

A file's claims become one JSON object.  Expressions are stored once each in a node table (``nodes``),
children before parents, every node naming its children by their earlier index, so the sub-trees that
symbolic execution shares are stored once, deep trees never nest in the JSON, and reading is one pass
forward that rebuilds the same sharing.  Reading accepts only the shapes written here (a string where a
string belongs, an operator among the known ones, an index below the node's own) and raises
``CodecError`` on anything else; nothing is evaluated.  The entry's authenticity is the cache's job
(``extraction_cache``); this module only makes sure that what it reads is well formed.
"""
from __future__ import annotations

from fractions import Fraction
from typing import Any, get_args

from verifier.model.claim import (
    Claim,
    ClaimKind,
    Condition,
    Expectation,
    Location,
    Obligation,
    Problem,
    Relation,
)
from verifier.model.expr import BinaryOperator, BinOp, Call, Expr, Neg, Num, Opaque, Pow, Var, children

MAX_TEXT = 10_000_000  # characters in one string (a claim's text, a long note)
_KINDS = frozenset(get_args(ClaimKind))
_RELATIONS = frozenset(get_args(Relation))
_OPERATORS = frozenset(get_args(BinaryOperator))
_PROBLEMS = frozenset(("error", "inconclusive"))
_EXPECTED = frozenset(("refuted", "inconclusive", "error"))


class CodecError(ValueError):
    """A stored value that is not of the shape this codec writes."""


# ---------------------------------------------------------------- writing


def _number(value: Fraction | int) -> list[Any]:
    # the type is kept: the result cache keys on the repr of the obligations
    if isinstance(value, Fraction):
        return ["q", str(value.numerator), str(value.denominator)]
    if isinstance(value, int) and not isinstance(value, bool):
        return ["i", str(value)]
    raise CodecError(f"not an exact number: {type(value).__name__}")


class _Table:
    """Expression nodes by identity -> their index in the node table."""

    def __init__(self) -> None:
        self.nodes: list[list[Any]] = []
        self.index: dict[int, int] = {}
        self._keep: list[Expr] = []  # the nodes indexed, kept alive so that their ids stay theirs

    def add(self, expr: Expr) -> int:
        stack: list[tuple[Expr, bool]] = [(expr, False)]
        while stack:
            node, expanded = stack.pop()
            if id(node) in self.index:
                continue
            if not expanded:
                stack.append((node, True))
                stack.extend((child, False) for child in reversed(children(node)))
                continue
            self.index[id(node)] = len(self.nodes)
            self._keep.append(node)
            self.nodes.append(self._record(node))
        return self.index[id(expr)]

    def _record(self, node: Expr) -> list[Any]:
        at = self.index
        if isinstance(node, Num):
            return ["num", _number(node.value)]
        if isinstance(node, Var):
            return ["var", node.name]
        if isinstance(node, BinOp):
            return ["bin", node.op, at[id(node.left)], at[id(node.right)]]
        if isinstance(node, Neg):
            return ["neg", at[id(node.operand)]]
        if isinstance(node, Pow):
            return ["pow", at[id(node.base)], _number(node.exponent)]
        if isinstance(node, Call):
            return ["call", node.function, [at[id(a)] for a in node.args]]
        if isinstance(node, Opaque):
            return ["opaque", node.name, [at[id(a)] for a in node.args]]
        raise CodecError(f"not an expression node: {type(node).__name__}")


def _claim_json(claim: Claim, table: _Table) -> dict[str, Any]:
    loc = claim.location
    return {
        "id": claim.id,
        "location": [loc.path, loc.line, loc.column, loc.cell],
        "kind": claim.kind,
        "text": claim.text,
        "obligations": [
            {
                "left": table.add(o.left),
                "right": table.add(o.right),
                "conditions": [[c.relation, table.add(c.left), table.add(c.right), c.text, c.origin]
                               for c in o.conditions],
                "label": o.label,
                "notes": list(o.notes),
            }
            for o in claim.obligations
        ],
        "problem": None if claim.problem is None else [claim.problem.verdict, claim.problem.message],
        "notes": list(claim.notes),
        "dependencies": list(claim.dependencies),
        "expected": None if claim.expected is None else [claim.expected.verdict, claim.expected.reason,
                                                         claim.expected.baseline],
    }


def claims_to_json(claims: list[Claim]) -> dict[str, Any]:
    """A file's claims as JSON-ready data (CodecError for a value of a type it does not know)."""
    table = _Table()
    encoded = [_claim_json(claim, table) for claim in claims]
    return {"nodes": table.nodes, "claims": encoded}


# ---------------------------------------------------------------- reading


def _text(value: Any) -> str:
    if not isinstance(value, str) or len(value) > MAX_TEXT:
        raise CodecError("expected a string of bounded length")
    return value


def _count(value: Any, *, least: int = 0) -> int:
    if not isinstance(value, int) or isinstance(value, bool) or value < least:
        raise CodecError("expected a whole number")
    return value


def _list(value: Any, length: int | None = None) -> list[Any]:
    if not isinstance(value, list) or (length is not None and len(value) != length):
        raise CodecError("expected a list" + ("" if length is None else f" of {length} items"))
    return value


def _texts(value: Any) -> tuple[str, ...]:
    return tuple(_text(v) for v in _list(value))


def _one_of(value: Any, allowed: frozenset[str]) -> Any:
    if not isinstance(value, str) or value not in allowed:
        raise CodecError(f"expected one of {sorted(allowed)}")
    return value


def _integer(text: Any) -> int:
    if not isinstance(text, str) or not 0 < len(text) <= MAX_TEXT or not text.lstrip("-").isdigit() or not text.isascii():
        raise CodecError("expected an integer in decimal")
    return int(text)


def _read_number(value: Any) -> Fraction | int:
    data = _list(value)
    if data[:1] == ["i"] and len(data) == 2:
        return _integer(data[1])
    if data[:1] == ["q"] and len(data) == 3:
        numerator, denominator = _integer(data[1]), _integer(data[2])
        if denominator <= 0:
            raise CodecError("expected a positive denominator")
        return Fraction(numerator, denominator)
    raise CodecError("expected a number record")


def _read_nodes(value: Any) -> list[Expr]:
    nodes: list[Expr] = []

    def ref(index: Any) -> Expr:
        if not isinstance(index, int) or isinstance(index, bool) or not 0 <= index < len(nodes):
            raise CodecError("a node may only name an earlier node")
        return nodes[index]

    for record in _list(value):
        data = _list(record)
        tag = data[0] if data else None
        if tag == "num" and len(data) == 2:
            nodes.append(Num(_read_number(data[1])))  # type: ignore[arg-type]  # the type written is kept
        elif tag == "var" and len(data) == 2:
            nodes.append(Var(_text(data[1])))
        elif tag == "bin" and len(data) == 4:
            nodes.append(BinOp(_one_of(data[1], _OPERATORS), ref(data[2]), ref(data[3])))
        elif tag == "neg" and len(data) == 2:
            nodes.append(Neg(ref(data[1])))
        elif tag == "pow" and len(data) == 3:
            nodes.append(Pow(ref(data[1]), _read_number(data[2])))  # type: ignore[arg-type]
        elif tag == "call" and len(data) == 3:
            nodes.append(Call(_text(data[1]), tuple(ref(i) for i in _list(data[2]))))
        elif tag == "opaque" and len(data) == 3:
            nodes.append(Opaque(_text(data[1]), tuple(ref(i) for i in _list(data[2]))))
        else:
            raise CodecError("unknown expression node")
    return nodes


def _fields(value: Any, names: tuple[str, ...]) -> dict[str, Any]:
    if not isinstance(value, dict) or set(value) != set(names):
        raise CodecError(f"expected an object with the keys {', '.join(names)}")
    return value


_OBLIGATION = ("left", "right", "conditions", "label", "notes")
_CLAIM = ("id", "location", "kind", "text", "obligations", "problem", "notes", "dependencies", "expected")


def _read_claim(value: Any, nodes: list[Expr]) -> Claim:
    def node(index: Any) -> Expr:
        if not isinstance(index, int) or isinstance(index, bool) or not 0 <= index < len(nodes):
            raise CodecError("no such node")
        return nodes[index]

    data = _fields(value, _CLAIM)
    path, line, column, cell = _list(data["location"], 4)
    location = Location(_text(path), _count(line), _count(column), None if cell is None else _count(cell))
    obligations = []
    for item in _list(data["obligations"]):
        o = _fields(item, _OBLIGATION)
        conditions = []
        for entry in _list(o["conditions"]):
            relation, left, right, text, origin = _list(entry, 5)
            conditions.append(Condition(_one_of(relation, _RELATIONS), node(left), node(right), _text(text),
                                        _text(origin)))
        obligations.append(Obligation(node(o["left"]), node(o["right"]), tuple(conditions), _text(o["label"]),
                                      _texts(o["notes"])))
    problem = None
    if data["problem"] is not None:
        verdict, message = _list(data["problem"], 2)
        problem = Problem(_one_of(verdict, _PROBLEMS), _text(message))
    expected = None
    if data["expected"] is not None:
        verdict, reason, baseline = _list(data["expected"], 3)
        expected = Expectation(_one_of(verdict, _EXPECTED), _text(reason), None if baseline is None else _text(baseline))
    return Claim(_text(data["id"]), location, _one_of(data["kind"], _KINDS), _text(data["text"]), tuple(obligations),
                 problem, _texts(data["notes"]), _texts(data["dependencies"]), expected)


def claims_from_json(value: Any) -> list[Claim]:
    """The claims written by ``claims_to_json``; CodecError on any value of another shape."""
    data = _fields(value, ("nodes", "claims"))
    nodes = _read_nodes(data["nodes"])
    return [_read_claim(item, nodes) for item in _list(data["claims"])]
