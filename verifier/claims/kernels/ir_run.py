"""Kernel function claims run on the shared executor (``verifier.claims.execute``) when ``to_ir`` converts
the function and its callees; the results have the kernel runner's shape, so the claims read the same."""
from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass

from verifier.claims.execute import (Callee, Executor, Host, InlineCallee, MathCallee, OpaqueCallee, Seq, Status,
                                     UnknownCallee)
from verifier.claims.execute import Unknown as IrUnknown
from verifier.claims.execute import places
from verifier.claims.execute.scope import IsBound
from verifier.claims.execute.values import Compound
from verifier.claims.execute.values import Value as IrValue
from verifier.claims.kernels import tree as t
from verifier.claims.kernels.kvalues import Agg, Stuck, Unknown, Value
from verifier.claims.kernels.to_ir import MATH_PREFIX, UNKNOWN_PREFIX, convert_function
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
        if name.startswith(UNKNOWN_PREFIX):
            return IrUnknown(name[len(UNKNOWN_PREFIX):])
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
    functions = convert_function(function, resolve)
    if functions is None:
        return None
    top = functions.pop("")
    ir_args = _arguments(function, args)
    if ir_args is None:
        return None
    executor = Executor(KernelScope(functions), unroll_limit=unroll_limit, inline_depth=inline_depth)
    results: Results = []
    for outcome in executor.run_function(top, ir_args):
        if outcome.status is Status.STUCK:  # a statement the front end did not lower: the runner's words
            raise Stuck(outcome.reason.removesuffix(f" at line {outcome.line} is not supported"), outcome.line)
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


def _arguments(function: t.Function, args: list[Value] | None) -> list[IrValue] | None:
    """The top-level parameters' values as the kernel runner gives them: ``args`` for the inputs of a `same
    as`, otherwise variables (``x``) and structs and arrays whose components are variables (``q.w``)."""
    inputs = iter(args or [])
    values: list[IrValue] = []
    for param in function.params:
        if args is not None and param.mode != "out" and not param.out_only:
            given = next(inputs, None)
            if isinstance(given, Agg) and given.prefix is not None and not given.items:
                values.append(Compound(prefix=given.prefix, fields=given.fields, size=given.size, base=given.base))
            elif isinstance(given, _EXPRESSIONS):
                values.append(given)
            else:
                return None  # integers and other values stay on the kernel runner
        elif param.size or param.struct:
            fields = function.structs.get(param.struct or "", ())
            # C++ `this`: the members are named as the code spells them inside the class (`x`)
            prefix = "" if param.name == "this" and function.language in ("cpp", "cuda") else param.name
            values.append(Compound(prefix=prefix, fields=fields, size=param.size, base=function.index_base))
        else:
            values.append(Var(param.name))
    return values


def _flatten(value: IrValue) -> list[Value]:
    if isinstance(value, Seq):
        return [part for item in value.items for part in _flatten(item)]
    if isinstance(value, Compound):
        return [part for item in places.flatten(value) for part in _flatten(item)]
    if isinstance(value, _EXPRESSIONS):
        return [value]
    if isinstance(value, IrUnknown):
        return [Unknown(value.reason)]
    return [Unknown("a value that is not a number")]
