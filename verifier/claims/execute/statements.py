"""The executor: runs IR functions statement by statement, path by path."""
from __future__ import annotations

from collections.abc import Collection, Sequence

from verifier.claims.execute.scope import Scope
from verifier.claims.execute.state import Mark, Outcome, State, Visit
from verifier.claims.execute.values import Value
from verifier.model import ir
from verifier.model.claim import Condition


class Executor:
    """Runs functions symbolically; one executor per claim (it collects the claim's dependencies)."""

    def __init__(self, scope: Scope, *, unroll_limit: int = 256, inline_depth: int = 16,
                 marks: Collection[Mark] = ()):
        self.scope = scope
        self.unroll_limit = unroll_limit
        self.inline_depth = inline_depth
        self.marks = frozenset(marks)
        self.visits: dict[Mark, list[Visit]] = {}
        self.dependencies: list[str] = []
        self.inlined: list[str] = []

    def depend(self, path: str) -> None:
        if path not in self.dependencies:
            self.dependencies.append(path)

    def run_function(self, function: ir.Function, args: Sequence[Value] | None = None,
                     conditions: tuple[Condition, ...] = ()) -> list[Outcome]:
        """Execute ``function`` at the top level: parameters are variables named after them unless ``args``
        gives values.  Returns the outcomes of every path (RETURN, RAISE, STUCK, or NEXT for falling off the
        end); the values assigned at ``marks`` are collected in ``visits``."""
        raise NotImplementedError

    def evaluate_detached(self, expr: ir.Expr, module: str) -> list[tuple[State, Value]]:
        """Every (path, value) of ``expr`` at module level of ``module`` (module constants, defaults)."""
        raise NotImplementedError
