"""Paths of the symbolic executor: the state of one path, how a statement ends it, the visits of marks."""
from __future__ import annotations

import enum
from dataclasses import dataclass

from verifier.claims.execute.values import Value
from verifier.model.claim import Condition
from verifier.model.ir import Function

Mark = tuple[int, int]  # (line, column) of a marked statement of the top-level function


@dataclass(frozen=True)
class State:
    """One path: the locals (as ordered pairs; small functions keep this cheap), branch conditions, notes."""

    env: tuple[tuple[str, Value], ...]
    conditions: tuple[Condition, ...] = ()
    notes: tuple[str, ...] = ()

    def get(self, name: str) -> Value | None:
        for key, value in reversed(self.env):
            if key == name:
                return value
        return None

    def bind(self, name: str, value: Value) -> "State":
        env = tuple((k, v) for k, v in self.env if k != name) + ((name, value),)
        return State(env, self.conditions, self.notes)

    def with_condition(self, condition: Condition) -> "State":
        return State(self.env, self.conditions + (condition,), self.notes)

    def with_note(self, note: str) -> "State":
        if note in self.notes:
            return self
        return State(self.env, self.conditions, self.notes + (note,))

    def with_env(self, env: tuple[tuple[str, Value], ...]) -> "State":
        return State(env, self.conditions, self.notes)


class Status(enum.Enum):
    """How a statement (or a whole body) left its path."""

    NEXT = "next"  # falls through to the next statement (or off the end of the body)
    RETURN = "return"
    BREAK = "break"
    CONTINUE = "continue"
    RAISE = "raise"  # the path ends without a value
    STUCK = "stuck"  # the path cannot be followed; ``reason`` says why


@dataclass(frozen=True)
class Outcome:
    state: State
    status: Status
    value: Value | None = None
    reason: str = ""
    line: int = 0
    loops: tuple[tuple[int, int], ...] = ()  # line ranges of the loops around a stuck statement
    outputs: tuple[tuple[str, Value], ...] = ()  # out-parameters' values when a top-level path ends


@dataclass(frozen=True)
class Visit:
    """A marked statement reached on one path: the value it assigns or returns there."""

    state: State  # the path (conditions, notes) and the locals before the statement
    value: Value


@dataclass(frozen=True)
class Frame:
    """One function activation: its module (for name resolution), inlining depth and call stack."""

    module: str
    function: Function | None
    depth: int
    stack: tuple[tuple[str, str], ...]
    ident: int
    loops: tuple[tuple[int, int], ...] = ()
