"""Values of the kernel runs: exact integer constants, integer parameters, aggregates, pointers, unknowns."""
from __future__ import annotations

from dataclasses import dataclass, replace
from fractions import Fraction
from typing import Union

from verifier.model.expr import BinOp, Call, Expr, Neg, Num, Opaque, Pow, Var


@dataclass(frozen=True)
class Int:
    value: int


@dataclass(frozen=True)
class SymInt:
    """An integer parameter: a real variable once converted, unknown under integer arithmetic."""

    name: str


Key = Union[str, int]


@dataclass(frozen=True)
class Agg:
    """An array, struct or tuple: set components, and the variable prefix of the unset ones."""

    items: tuple[tuple[Key, "Value"], ...] = ()
    prefix: str | None = None
    size: int = 0  # arrays of fixed size
    fields: tuple[str, ...] = ()  # structs: the declared field order, when known
    base: int = 0  # the first index of the language (0 or 1)

    def get(self, key: Key) -> "Value":
        for k, v in self.items:
            if k == key:
                return v
        if self.prefix is None:
            return Unknown(f"the component {_spell('', key)} is read before it is set")
        name = key if self.prefix == "" and isinstance(key, str) else self.prefix + _spell("", key)
        return Agg(prefix=name, base=self.base)

    def set(self, key: Key, value: "Value") -> "Agg":
        items = tuple((k, v) for k, v in self.items if k != key) + ((key, value),)
        return replace(self, items=items)

    def keys(self) -> list[Key]:
        if self.fields:
            return list(self.fields)
        if self.size:
            return list(range(self.base, self.base + self.size))
        return [k for k, _ in self.items]


@dataclass(frozen=True)
class Ptr:
    cell: int
    path: tuple[Key, ...] = ()


@dataclass(frozen=True)
class Unknown:
    reason: str


Value = Union[Expr, Int, SymInt, Agg, Ptr, Unknown]
_EXPR_TYPES = (Num, Var, BinOp, Neg, Pow, Call, Opaque)


def _spell(prefix: str, key: Key) -> str:
    return f"{prefix}.{key}" if isinstance(key, str) else f"{prefix}[{key}]"


def as_real(value: Value) -> Expr | Unknown:
    if isinstance(value, _EXPR_TYPES):
        return value  # type: ignore[return-value]
    if isinstance(value, Int):
        return Num(Fraction(value.value))
    if isinstance(value, SymInt):
        return Var(value.name)
    if isinstance(value, Agg) and not value.items and value.prefix is not None:
        return Var(value.prefix)
    if isinstance(value, Unknown):
        return value
    return Unknown("an array, struct or pointer is used as a number")


_NEGATION = {"==": "!=", "!=": "==", "<": ">=", "<=": ">", ">": "<=", ">=": "<"}


def _compare(op: str, a: Fraction | int, b: Fraction | int) -> bool:
    return {"==": a == b, "!=": a != b, "<": a < b, "<=": a <= b, ">": a > b, ">=": a >= b}[op]


def _put(container: Value, keys: tuple[Key, ...], value: Value, line: int) -> Value:
    if not keys:
        return value
    if not isinstance(container, Agg):
        raise Stuck(f"assignment to a component of a value that has none (line {line})", line)
    key = keys[0]
    if container.size and isinstance(key, int) and not container.base <= key < container.base + container.size:
        raise Stuck(f"index {key} is out of range (line {line})", line)
    return container.set(key, _put(container.get(key), keys[1:], value, line))


def flatten(value: Value) -> list[Value]:
    if isinstance(value, Agg) and (value.items or value.size or value.fields):
        out: list[Value] = []
        for key in value.keys():
            out.extend(flatten(value.get(key)))
        return out
    return [value]




class Stuck(Exception):
    def __init__(self, reason: str, line: int):
        super().__init__(reason)
        self.reason = reason
        self.line = line



def binary(op: str, left: Value, right: Value, language: str, line: int) -> Value:
    """``left op right`` on values: integer constants fold exactly (C truncating division), unknown integers
    give unknowns, reals give the claim language's arithmetic."""
    ints = all(isinstance(v, (Int, SymInt)) for v in (left, right))
    if op == "pow":
        exponent = right if isinstance(right, Int) else as_real(right)
        if isinstance(exponent, Int):
            power = Fraction(exponent.value)
        elif isinstance(exponent, Num):
            power = exponent.value
        else:
            return Unknown(f"a power with a non-constant exponent (line {line})")
        if isinstance(left, Int) and power.denominator == 1 and power >= 0:
            return Int(left.value ** int(power))
        if power.denominator not in (1, 2):
            return Unknown(f"the exponent {power} is neither an integer nor a half-integer (line {line})")
        base = as_real(left)
        return base if isinstance(base, Unknown) else Pow(base, power)
    if ints and (op == "idiv" or (op == "/" and language != "julia")):
        if isinstance(left, Int) and isinstance(right, Int) and right.value != 0:
            quotient = abs(left.value) // abs(right.value)
            return Int(quotient if (left.value >= 0) == (right.value >= 0) else -quotient)
        return Unknown(f"integer division truncates (line {line})")
    if ints:
        if isinstance(left, Int) and isinstance(right, Int):
            a, b = left.value, right.value
            return Int(a + b if op == "+" else a - b if op == "-" else a * b)
        if op == "/":
            pass  # Julia: `/` of integers is a floating division
        else:
            return Unknown(f"integer arithmetic may overflow (line {line})")
    if op == "idiv":
        return Unknown(f"integer division of non-integers (line {line})")
    lhs, rhs = as_real(left), as_real(right)
    for side in (lhs, rhs):
        if isinstance(side, Unknown):
            return side
    return BinOp(op, lhs, rhs)  # type: ignore[arg-type]



def convert(value: Value, kind: str, line: int) -> Value:
    """``value`` converted to the kind of a declared local or a cast."""
    if kind == "int":
        if isinstance(value, (Int, SymInt, Unknown)):
            return value
        if isinstance(value, Num) and value.value.denominator == 1:
            return Int(int(value.value))
        return Unknown(f"conversion to an integer truncates (line {line})")
    if kind == "real" and isinstance(value, (Int, SymInt)):
        return as_real(value)
    return value

