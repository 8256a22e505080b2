"""Paths of the symbolic executor: the state of one path, how a statement ends it, the visits of marks."""
from __future__ import annotations

import enum
from collections.abc import Iterable, Iterator
from dataclasses import dataclass
from typing import cast

from verifier.claims.execute.values import Value
from verifier.model.claim import Condition
from verifier.model.ir import Function

Mark = tuple[int, int]  # (line, column) of a marked statement of the top-level function


class Env:
    """The locals of one path: an immutable mapping, iterated as (name, value) pairs in the order of their
    last binding.  Binding a name shares everything but a small recent part with the old mapping, so a
    straight-line function of n assignments costs O(n sqrt n), not O(n^2) (a long unrolled kernel)."""

    __slots__ = ("_base", "_recent")

    def __init__(self, pairs: Iterable[tuple[str, Value]] = ()) -> None:
        self._base: dict[str, Value] = {}
        for name, value in pairs:
            self._base.pop(name, None)
            self._base[name] = value
        self._recent: dict[str, Value] = {}  # bound after everything in ``_base``; never mutated once shared

    def get(self, name: str) -> Value | None:
        value = self._recent.get(name)
        return value if value is not None or name in self._recent else self._base.get(name)

    def bind(self, name: str, value: Value) -> "Env":
        recent = dict(self._recent)
        recent.pop(name, None)
        recent[name] = value
        new = Env.__new__(Env)
        if len(recent) * len(recent) > len(self._base) + 64:  # fold the recent part in: amortised sqrt(n)
            base = {key: held for key, held in self._base.items() if key not in recent}
            base.update(recent)
            new._base, new._recent = base, {}
        else:
            new._base, new._recent = self._base, recent
        return new

    def __iter__(self) -> Iterator[tuple[str, Value]]:
        for name, value in self._base.items():
            if name not in self._recent:
                yield name, value
        yield from self._recent.items()

    def __len__(self) -> int:
        return len(self._base) + sum(1 for name in self._recent if name not in self._base)

    def __eq__(self, other: object) -> bool:
        return isinstance(other, Env) and list(self) == list(other)

    def __hash__(self) -> int:
        return hash(tuple(self))

    def __repr__(self) -> str:
        return f"Env({list(self)!r})"


@dataclass(frozen=True)
class State:
    """One path: the locals, branch conditions, notes.  ``env`` may be given as (name, value) pairs."""

    env: Env | tuple[tuple[str, Value], ...]  # always an Env once built (pairs are converted)
    conditions: tuple[Condition, ...] = ()
    notes: tuple[str, ...] = ()

    def __post_init__(self) -> None:
        if not isinstance(self.env, Env):
            object.__setattr__(self, "env", Env(self.env))

    def get(self, name: str) -> Value | None:
        return cast(Env, self.env).get(name)

    def bind(self, name: str, value: Value) -> "State":
        return State(cast(Env, self.env).bind(name, value), self.conditions, self.notes)

    def with_condition(self, condition: Condition) -> "State":
        return State(self.env, self.conditions + (condition,), self.notes)

    def with_note(self, note: str) -> "State":
        if note in self.notes:
            return self
        return State(self.env, self.conditions, self.notes + (note,))

    def with_env(self, env: Iterable[tuple[str, Value]]) -> "State":
        return State(env if isinstance(env, Env) else Env(env), self.conditions, self.notes)


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
    objects: frozenset[int] = frozenset()  # objects passed in whose changes go back to the caller
