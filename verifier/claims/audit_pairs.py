"""Equivalence claims between same-named functions of two Python modules (for ``idealcheck audit``).

Both functions are executed symbolically (``verifier.claims.execute``), never run: the optimized one with its parameters
as variables, the reference one with the optimized one's parameters passed by position.  Every pair of
paths (the reference is executed under each optimized path's conditions, so a branch that tests the same
thing is not split twice) gives one obligation per returned component: optimized value == reference value
under both paths' conditions and the audit's ``given`` conditions.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Literal, Sequence

import libcst as cst

from verifier.claims.execute import NONE, Executor, NoneValue, Outcome, Seq, Status, Value, first_unknown
from verifier.claims.execute.values import as_expr
from verifier.claims.frontends.python.modules import FunctionRef, ModuleInfo, ModuleLoader, parse_module_text
from verifier.claims.frontends.python.scope import PythonScope
from verifier.model.claim import (
    Claim,
    Condition,
    ExtractionContext,
    Location,
    Obligation,
    Problem,
)
from verifier.model.expr import Var

MAX_OBLIGATIONS = 256  # path pairs times components; more is reported as inconclusive


@dataclass(frozen=True)
class ModuleSource:
    path: str  # relative to the working directory
    text: str


@dataclass(frozen=True)
class FunctionSite:
    name: str
    line: int
    column: int


class ModuleUnreadable(Exception):
    """A module that cannot be parsed (syntax error); the message names the file and the place."""


def parse_module(source: ModuleSource) -> ModuleInfo:
    try:
        return parse_module_text(source.path, source.text)
    except cst.ParserSyntaxError as exc:
        raise ModuleUnreadable(f"{source.path}:{exc.raw_line}:{exc.raw_column + 1}: cannot parse: {exc.message}") from None
    except RecursionError:
        raise ModuleUnreadable(f"{source.path}: the file is nested too deeply to read") from None


def top_level_functions(info: ModuleInfo) -> dict[str, FunctionSite]:
    """The module's top-level functions (a name defined twice counts once, at its last definition)."""
    sites: dict[str, FunctionSite] = {}
    for name, node in info.functions.items():
        pos = info.positions.get(node)
        line = pos.start.line if pos is not None else 1
        column = pos.start.column + 1 if pos is not None else 1
        sites[name] = FunctionSite(name, line, column)
    return sites


def _flatten(value: Value) -> list[Value]:
    if isinstance(value, Seq):
        out: list[Value] = []
        for item in value.items:
            out.extend(_flatten(item))
        return out
    return [value]


def _shape(value: Value) -> object:
    if isinstance(value, Seq):
        return tuple(_shape(item) for item in value.items)
    return "None" if isinstance(value, NoneValue) else "value"


def _returned(outcome: Outcome) -> Value:
    if outcome.status is Status.RETURN:
        return outcome.value if outcome.value is not None else NONE
    return NONE  # fell off the end


def _path_text(conditions: Sequence[Condition], given: Sequence[Condition]) -> str:
    own = [c.text for c in conditions if c not in given]
    return "path where " + " and ".join(own) if own else ""


def function_pair_claim(
    optimized: ModuleSource,
    reference: ModuleSource,
    name: str,
    context: ExtractionContext,
    given: Sequence[Condition] = (),
    *,
    optimized_info: ModuleInfo | None = None,
    reference_info: ModuleInfo | None = None,
) -> Claim:
    """A claim that ``name`` of ``optimized`` returns what ``name`` of ``reference`` returns.

    The claim sits at the optimized function's ``def``; a function the executor cannot follow gives a
    claim with an ``inconclusive`` problem that names the construct.
    """
    a_info = optimized_info or parse_module(optimized)
    b_info = reference_info or parse_module(reference)
    site = top_level_functions(a_info)[name]
    location = Location(optimized.path, site.line, site.column)
    reference_site = top_level_functions(b_info)[name]
    text = f"same as {name} in {reference.path}:{reference_site.line}"
    if given:
        text += " given " + ", ".join(c.text for c in given)
    dependencies = tuple(dict.fromkeys([optimized.path, reference.path]))

    def problem(verdict: Literal["inconclusive"], message: str, deps: Sequence[str] = dependencies) -> Claim:
        return Claim(f"{location}", location, "function", text, (), Problem(verdict, message),
                     dependencies=tuple(dict.fromkeys(deps)))

    loader = ModuleLoader(context.roots)
    loader.add(a_info)
    loader.add(b_info)
    scope = PythonScope(loader)
    executor = Executor(scope, unroll_limit=context.unroll_limit, inline_depth=context.inline_depth)
    a_ref = FunctionRef(a_info, a_info.functions[name], name)
    b_ref = FunctionRef(b_info, b_info.functions[name], name)
    a_function = scope.lower(a_info, a_ref.node, name)
    b_function = scope.lower(b_info, b_ref.node, name)
    a_params = a_ref.positional_names()
    b_params = b_ref.positional_names()
    if len(a_params) != len(b_params):
        return problem("inconclusive", f"{name} takes {len(a_params)} positional parameters in {optimized.path} "
                                       f"and {len(b_params)} in {reference.path}; they are matched by position")
    given = tuple(given)
    obligations: list[Obligation] = []
    notes: list[str] = []
    for a_out in executor.run_function(a_function, None, given):
        if a_out.status is Status.STUCK:
            return problem("inconclusive", f"{optimized.path}: {a_out.reason}", executor.dependencies)
        if a_out.status is Status.RAISE:
            notes.append(f"a path of {name} in {optimized.path} raises (line {a_out.line}); it is not compared")
            continue
        args: list[Value] = [Var(p) for p in a_params]
        for b_out in executor.run_function(b_function, args, a_out.state.conditions):
            if b_out.status is Status.STUCK:
                return problem("inconclusive", f"{reference.path}: {b_out.reason}", executor.dependencies)
            if b_out.status is Status.RAISE:
                notes.append(f"a path of {name} in {reference.path} raises (line {b_out.line}); it is not compared")
                continue
            a_value, b_value = _returned(a_out), _returned(b_out)
            for value, where in ((a_value, optimized.path), (b_value, reference.path)):
                unknown = first_unknown(value)
                if unknown is not None:
                    return problem("inconclusive", f"{where}: {unknown.reason}", executor.dependencies)
            conditions = b_out.state.conditions
            path = _path_text(conditions, given)
            if _shape(a_value) != _shape(b_value):
                return problem("inconclusive",
                               f"{name} returns values of different shapes"
                               + (f" on the {path}" if path else "")
                               + f": {_describe_shape(a_value)} in {optimized.path}, "
                               f"{_describe_shape(b_value)} in {reference.path}", executor.dependencies)
            a_items, b_items = _flatten(a_value), _flatten(b_value)
            several = len(a_items) > 1
            for index, (left, right) in enumerate(zip(a_items, b_items), start=1):
                if isinstance(left, NoneValue):
                    continue  # both None (the shapes matched)
                left_expr, right_expr = as_expr(left), as_expr(right)
                assert left_expr is not None and right_expr is not None  # no unknowns, same shapes
                parts = [p for p in (f"component {index}" if several else "", path) if p]
                label = ", ".join(parts)
                obligations.append(Obligation(left_expr, right_expr, conditions, label,
                                              tuple(dict.fromkeys(a_out.state.notes + b_out.state.notes))))
                if len(obligations) > MAX_OBLIGATIONS:
                    return problem("inconclusive", f"more than {MAX_OBLIGATIONS} path and component pairs to "
                                                   "compare", executor.dependencies)
    deps = tuple(dict.fromkeys(list(dependencies) + list(executor.dependencies)))
    if not obligations:
        return problem("inconclusive", f"no path of {name} returns in both versions", deps)
    claim_notes = tuple(dict.fromkeys(notes + list(executor.inlined)))
    return Claim(f"{location}", location, "function", text, tuple(obligations), None, claim_notes, deps)


def _describe_shape(value: Value) -> str:
    if isinstance(value, Seq):
        return f"a {value.kind.value} of {len(value.items)}"
    if isinstance(value, NoneValue):
        return "None"
    return "one value"


__all__ = ["FunctionSite", "ModuleSource", "ModuleUnreadable", "function_pair_claim", "parse_module",
           "top_level_functions"]
