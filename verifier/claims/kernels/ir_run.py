"""Kernel function claims run on the shared executor (``verifier.claims.execute``) when ``to_ir`` converts
the function and its callees; the results have the kernel runner's shape, so the claims read the same."""
from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass

from verifier.claims.execute import (Callee, Executor, Host, InlineCallee, MathCallee, OpaqueCallee, Seq, Status,
                                     UnknownCallee)
from verifier.claims.execute import Unknown as IrUnknown
from verifier.claims.execute.scope import IsBound
from verifier.claims.execute.values import Value as IrValue
from verifier.claims.kernels import tree as t
from verifier.claims.kernels.kvalues import Stuck, Unknown, Value
from verifier.claims.kernels.to_ir import MATH_PREFIX, convert_function
from verifier.model import ir
from verifier.model.claim import Condition
from verifier.model.expr import BinOp, Call, Neg, Num, Opaque, Pow, Var

Results = list[tuple[tuple[Value, ...], tuple[Condition, ...]]]
_EXPRESSIONS = (Num, Var, BinOp, Neg, Pow, Call, Opaque)


@dataclass
class KernelScope:
    """Callees of converted kernel functions: the project's functions by name, the math functions, and
    opaque values of every other call; a name that is not a parameter or local has no value."""

    functions: Mapping[str, ir.Function]

    def global_value(self, host: Host, module: str, name: str, line: int) -> IrValue:
        return IrUnknown(f"the name {name} is not a parameter or local (line {line})")

    def member_value(self, host: Host, module: str, node: ir.Field, is_bound: IsBound, line: int) -> IrValue | None:
        return None

    def callee(self, host: Host, module: str, caller: ir.Function | None, node: ir.Expr, is_bound: IsBound,
               line: int) -> Callee:
        if not isinstance(node, ir.Name):
            return UnknownCallee(f"the call at line {line} is not supported")
        if node.name.startswith(MATH_PREFIX):
            return MathCallee(node.name[len(MATH_PREFIX):])
        function = self.functions.get(node.name)
        return InlineCallee(function) if function is not None else OpaqueCallee(node.name)


def run_on_ir(function: t.Function, resolve: Callable[[str], t.Function | None], unroll_limit: int,
              inline_depth: int, args: list[Value] | None, inlined: list[str]) -> Results | None:
    """Every path's results and conditions, or None when the function does not convert (the kernel runner
    keeps it).  Raises Stuck as the kernel runner does when a path cannot be followed."""
    if args is not None and not all(isinstance(a, _EXPRESSIONS) for a in args):
        return None
    functions = convert_function(function, resolve)
    if functions is None:
        return None
    top = functions.pop("")
    if args is not None and any(p.kind is not ir.ParameterKind.VALUE for p in top.parameters):
        return None  # `same as` passes the inputs only: the kernel runner binds them
    executor = Executor(KernelScope(functions), unroll_limit=unroll_limit, inline_depth=inline_depth)
    ir_args: list[IrValue] | None = None if args is None else [a for a in args if isinstance(a, _EXPRESSIONS)]
    results: Results = []
    for outcome in executor.run_function(top, ir_args):
        if outcome.status is Status.STUCK:
            raise Stuck(outcome.reason, outcome.line)
        values: list[Value] = []
        if function.returns_value or function.result_name is not None:
            if outcome.status is not Status.RETURN or outcome.value is None:
                raise Stuck(f"a path of {function.name} ends without returning a value", function.line)
            values = _flatten(outcome.value)
        elif outcome.status not in (Status.RETURN, Status.NEXT):
            raise Stuck(f"a path of {function.name} ends without a result", function.line)
        for _, output in outcome.outputs:  # the out-parameters, in their order
            values.extend(_flatten(output))
        results.append((tuple(values), outcome.state.conditions))
    inlined.extend(note for note in executor.inlined if note not in inlined)
    return results


def _flatten(value: IrValue) -> list[Value]:
    if isinstance(value, Seq):
        return [part for item in value.items for part in _flatten(item)]
    if isinstance(value, _EXPRESSIONS):
        return [value]
    if isinstance(value, IrUnknown):
        return [Unknown(value.reason)]
    return [Unknown("a value that is not a number")]
