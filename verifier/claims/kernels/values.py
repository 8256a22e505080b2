"""From executed kernel paths to obligations: claim names resolved in the code's scope, components paired.

Also runs a Python reference function (``same as reference.py::f``) with the Python front end's executor,
so a kernel in any language can be checked against Python.
"""
from __future__ import annotations

import re
from collections.abc import Sequence
from typing import TYPE_CHECKING

from verifier.claims.decoding import read_helper_text
from verifier.claims.kernels.run import Agg, SymInt, Unknown, Value, as_real, flatten
from verifier.claims.language import ParsedClaim
from verifier.model.claim import Condition, ExtractionContext, Obligation
from verifier.model.expr import BinOp, Call, Expr, Neg, Num, Opaque, Pow, Var

if TYPE_CHECKING:  # for annotations only: the executor is loaded when a kernel names a Python reference
    from verifier.claims.execute import Value as PythonValue

MAX_OBLIGATIONS = 2048
_HEAD = re.compile(r"[A-Za-z_][A-Za-z_0-9!]*")
_ACCESSOR = re.compile(r"\.([A-Za-z_][A-Za-z_0-9]*)|\[(-?[0-9]+)\]")

PathResult = tuple  # (results: tuple[Value, ...] | Value, conditions: tuple[Condition, ...])


class ClaimProblem(Exception):
    def __init__(self, verdict: str, message: str):
        super().__init__(message)
        self.verdict = verdict
        self.message = message


def _resolve(name: str, scope: dict[str, Value], constants: dict[str, Value]) -> Value:
    head = _HEAD.match(name)
    if head is None:
        return Var(name)
    base = head.group(0)
    if base in scope:
        value = scope[base]
    elif base in constants:
        value = constants[base]
    else:
        return Var(name)
    position = head.end()
    while position < len(name):
        match = _ACCESSOR.match(name, position)
        if match is None:
            return Unknown(f"cannot read the name {name}")
        position = match.end()
        if not isinstance(value, Agg):
            return Unknown(f"{name[:position]} is not a component of an array or struct")
        value = value.get(match.group(1) if match.group(1) is not None else int(match.group(2)))
    return value


def substitute(expr: Expr, scope: dict[str, Value], constants: dict[str, Value]) -> Value:
    """The claim expression with the code's names replaced by their values (free names stay variables)."""
    if isinstance(expr, Var):
        return _resolve(expr.name, scope, constants)
    if isinstance(expr, Num):
        return expr
    if isinstance(expr, Neg):
        inner = _real(substitute(expr.operand, scope, constants))
        return inner if isinstance(inner, Unknown) else Neg(inner)
    if isinstance(expr, BinOp):
        left = _real(substitute(expr.left, scope, constants))
        right = _real(substitute(expr.right, scope, constants))
        for side in (left, right):
            if isinstance(side, Unknown):
                return side
        return BinOp(expr.op, left, right)  # type: ignore[arg-type]
    if isinstance(expr, Pow):
        base = _real(substitute(expr.base, scope, constants))
        return base if isinstance(base, Unknown) else Pow(base, expr.exponent)
    if isinstance(expr, (Call, Opaque)):
        args = [_real(substitute(a, scope, constants)) for a in expr.args]
        for arg in args:
            if isinstance(arg, Unknown):
                return arg
        if isinstance(expr, Call):
            return Call(expr.function, tuple(args))  # type: ignore[arg-type]
        return Opaque(expr.name, tuple(args))  # type: ignore[arg-type]
    return Unknown(f"cannot read {expr!r}")


def _real(value: Value) -> Expr | Unknown:
    return as_real(value)


def _components(value: Value | tuple) -> list[Value]:
    if isinstance(value, tuple):
        out: list[Value] = []
        for item in value:
            out.extend(flatten(item))
        return out
    return flatten(value)


def _label(conditions: tuple[Condition, ...], component: str, extra: str = "") -> str:
    path = "path where " + " and ".join(c.text for c in conditions) if conditions else ""
    return ", ".join(part for part in (extra, path, component) if part)


def _condition(condition: Condition, scope: dict[str, Value], constants: dict[str, Value]) -> Condition:
    left = _real(substitute(condition.left, scope, constants))
    right = _real(substitute(condition.right, scope, constants))
    for side in (left, right):
        if isinstance(side, Unknown):
            raise ClaimProblem("inconclusive", f"the condition {condition.text} cannot be followed: {side.reason}")
    if left == condition.left and right == condition.right:
        return condition
    return Condition(condition.relation, left, right, condition.text, condition.origin)  # type: ignore[arg-type]


def obligations_for(name: str, paths: Sequence[PathResult], other_name: str, other_paths: Sequence[PathResult] | None,
                    parsed: ParsedClaim, constants: dict[str, Value], scope: dict[str, Value] | None = None,
                    extra_label: str = "") -> list[Obligation]:
    """One obligation per path (pair of paths for `same as`) and component."""
    scope = scope or {}
    given = tuple(_condition(c, scope, constants) for c in parsed.conditions)
    if other_paths is None:
        target: list[Value] = []
        for side in parsed.sides:
            target.extend(flatten(substitute(side, scope, constants)))
        other_paths = [(tuple(target), ())]
        other_label = "the claim"
    else:
        other_label = other_name
    obligations: list[Obligation] = []
    for results, conditions in paths:
        mine = _components(results)
        for other_results, other_conditions in other_paths:
            theirs = _components(other_results)
            if len(mine) != len(theirs):
                verb = "gives" if other_label == "the claim" else "returns"
                raise ClaimProblem("error", f"{name} gives {_count(len(mine))}, {other_label} {verb} "
                                            f"{_count(len(theirs))}")
            combined = tuple(conditions) + tuple(c for c in other_conditions if c not in conditions)
            for index, (left, right) in enumerate(zip(mine, theirs), start=1):
                lhs, rhs = _followed(left, name), _followed(right, other_label)
                component = f"component {index}" if len(mine) > 1 else ""
                obligations.append(Obligation(lhs, rhs, given + combined,
                                              _label(combined, component, extra_label)))
                if len(obligations) > MAX_OBLIGATIONS:
                    raise ClaimProblem("inconclusive", f"more than {MAX_OBLIGATIONS} path obligations")
    return obligations


def _followed(value: Value, who: str) -> Expr:
    real = _real(value)
    if isinstance(real, Unknown):
        raise ClaimProblem("inconclusive", f"a value of {who} cannot be followed: {real.reason}")
    return real


def _count(n: int) -> str:
    return "1 value" if n == 1 else f"{n} values"


def python_reference(path: str, name: str, args: list[Value], context: ExtractionContext) -> list[PathResult]:
    """The paths of the Python function ``name`` of ``path`` for the kernel's arguments (Python front end)."""
    # The Python front end needs libcst; it is imported only when a kernel names a Python reference.
    import libcst as cst

    from verifier.claims.execute import Executor, Status
    # (libcst, as above: only when a kernel names a Python reference)
    from verifier.claims.frontends.python.modules import ModuleLoader, parse_module_text
    # (libcst, as above)
    from verifier.claims.frontends.python.scope import PythonScope

    text = read_helper_text(path)
    if text is None:
        raise ClaimProblem("error", f"cannot read {path}")
    try:
        module = parse_module_text(path, text)
    except (cst.ParserSyntaxError, RecursionError):
        raise ClaimProblem("error", f"cannot parse {path} as Python") from None
    node = module.functions.get(name)
    if node is None:
        raise ClaimProblem("error", f"cannot find the function `{name}` in {path}")
    loader = ModuleLoader(context.roots)
    loader.add(module)
    scope = PythonScope(loader)
    function = scope.lower(module, node, name, None)
    parameters = function.positional_names()
    if len(parameters) != len(args):
        raise ClaimProblem("error", f"{name} in {path} takes {len(parameters)} arguments, the kernel passes "
                                    f"{len(args)}: `same as` compares them for the same arguments")
    executor = Executor(scope, unroll_limit=context.unroll_limit, inline_depth=context.inline_depth)
    out: list[PathResult] = []
    for outcome in executor.run_function(function, args=[_to_python(a) for a in args]):
        if outcome.status is Status.STUCK:
            raise ClaimProblem("inconclusive", f"{outcome.reason} (in {name}, {path})")
        if outcome.status is Status.RETURN and outcome.value is not None:
            out.append((_from_python(outcome.value), outcome.state.conditions))
        elif outcome.status in (Status.RETURN, Status.NEXT):
            raise ClaimProblem("inconclusive", f"{name} in {path} returns None on a path")
    if not out:
        raise ClaimProblem("inconclusive", f"{name} in {path} never returns a value")
    return out


def _to_python(value: Value) -> PythonValue:
    from verifier.claims import execute

    if isinstance(value, Agg):
        return execute.Seq(tuple(_to_python(v) for v in flatten(value)))
    if isinstance(value, SymInt):
        return Var(value.name)
    real = as_real(value)
    if isinstance(real, Unknown):
        return execute.Unknown(real.reason)
    return real


def _from_python(value: object) -> tuple:
    from verifier.claims import execute

    if isinstance(value, execute.Seq):
        out: list = []
        for item in value.items:
            out.extend(_from_python(item))
        return tuple(out)
    if isinstance(value, execute.Unknown):
        return (Unknown(value.reason),)
    if isinstance(value, execute.NoneValue):
        return (Unknown("None is not a number"),)
    return (value,)
