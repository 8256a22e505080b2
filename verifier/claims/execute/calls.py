"""Calls: the callee the scope names, its arguments, and its value (inlined, math, built-in or opaque)."""
from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

from verifier.claims.execute.arrays import ROUTED, array_method, harmless_keywords
from verifier.claims.execute.expressions import Alternatives, Evaluator
from verifier.claims.execute.functions import opaque_note
from verifier.claims.execute.piecewise import PIECEWISE, pieces
from verifier.claims.execute.scope import (
    BuiltinCallee,
    Callee,
    ConstructCallee,
    InlineCallee,
    MathCallee,
    MethodCallee,
    OpaqueCallee,
    UnknownCallee,
)
from verifier.claims.execute.sharing import adopted, current, fields_written, replace_object, writes_attributes
from verifier.claims.execute.state import Frame, Outcome, State, Status
from verifier.claims.execute.values import (
    ARRAY,
    NONE,
    FunctionValue,
    Record,
    Seq,
    Stuck,
    Unknown,
    Value,
    as_expr,
)
from verifier.model import ir
from verifier.model.ir_keys import DICT_LITERAL, LAMBDA_PREFIX
from verifier.model.expr import Expr, Opaque, Var

Arguments = list[tuple[State, list[Value], dict[str, Value]]]
OUTPUT_KINDS = (ir.ParameterKind.OUT, ir.ParameterKind.INOUT)

_IMPURE_PREFIXES = ("random.", "np.random.", "numpy.random.", "time.", "os.", "sys.", "secrets.", "uuid.",
                    "datetime.", "io.", "socket.", "subprocess.", "rng.", "self.rng.")
_IMPURE_NAMES = frozenset({"random", "rand", "randn", "randint", "uniform", "normal", "gauss", "input", "open",
                           "print", "time", "perf_counter", "monotonic", "next", "id", "hash"})


PARAMETER_FUNCTION = "parameter "  # the prefix of the opaque name of a function passed as a parameter


def impure(name: str) -> bool:
    """Calls whose value may differ between two calls with the same arguments (by name, conservatively)."""
    return name.startswith(_IMPURE_PREFIXES) or name.rsplit(".", 1)[-1] in _IMPURE_NAMES


def _noted(state: State, value: Value, line: int) -> tuple[State, Value]:
    note = opaque_note(value, line)
    return (state.with_note(note) if note else state), value

@dataclass(frozen=True)
class FunctionCallee:
    """A local or global holding a function value: called by inlining it."""

    value: FunctionValue


_RUNNING, _ITEM = "\0running", "\0item"  # names of reduce's step call


class CallEvaluator(Evaluator):
    """Evaluates calls; running an inlined body is left to ``Executor.exec_block``."""

    def exec_block(self, statements: Sequence[ir.Statement], states: list[State], frame: Frame) -> list[Outcome]:
        raise NotImplementedError  # Executor

    def construct(self, callee: ConstructCallee, node: ir.Invoke, state: State, frame: Frame,
                  label: str = "") -> list[tuple[State, Record]]:
        raise NotImplementedError  # ObjectCalls

    def object_method(self, record: Record, node: ir.Invoke, name: str, state: State, frame: Frame
                      ) -> Alternatives:
        raise NotImplementedError  # ObjectCalls

    def mapping(self, node: ir.Invoke, state: State, frame: Frame) -> Alternatives:
        raise NotImplementedError  # ObjectCalls

    def resolve(self, node: ir.Invoke, state: State, frame: Frame) -> Callee | FunctionCallee:
        """What ``node`` calls; a name bound on the path is a local value, which is not called."""
        line = node.line
        if isinstance(node.callee, ir.Name):
            bound = state.get(node.callee.name)
            if isinstance(bound, Unknown):
                return UnknownCallee(bound.reason)
            if isinstance(bound, Var) and bound.name.isidentifier():
                # a function passed as a parameter: any pure function, the same arguments give the same value;
                # named apart from module functions of the same name, which are other functions
                return OpaqueCallee(f"{PARAMETER_FUNCTION}{bound.name}")
            if bound is None and node.callee.name.startswith(LAMBDA_PREFIX):  # `(lambda t: ...)(x)`, reduce
                bound = self.name_value(node.callee.name, state, frame, line)
            if isinstance(bound, FunctionValue):
                return FunctionCallee(bound)
            if isinstance(bound, Record):
                return UnknownCallee(f"calling the object {node.callee.name} at line {line} is not supported")
            if bound is not None:
                return UnknownCallee(f"calling the local value {node.callee.name} at line {line} is not supported")
        return self.scope.callee(self, frame.module, frame.function, node.callee,
                                 lambda name: state.get(name) is not None, line)

    def call(self, node: ir.Invoke, state: State, frame: Frame, iterable: bool) -> Alternatives:
        line = node.line
        if isinstance(node.callee, ir.Name) and node.callee.name == DICT_LITERAL:
            return self.mapping(node, state, frame)
        callee = self.resolve(node, state, frame)
        if isinstance(callee, BuiltinCallee):
            if callee.name in PIECEWISE:
                return self._piecewise_call(callee.name, node, state, frame, builtin=True)
            return [_noted(after, self.builtin_value(callee.name, args, keywords, line, iterable, frame.ident), line)
                    for after, args, keywords in self.arguments(node, state, frame)]
        if isinstance(callee, MathCallee):
            return self._math_call(callee.name, node, state, frame)
        if isinstance(callee, FunctionCallee):
            return self.call_function_value(callee.value, node, state, frame)
        if isinstance(callee, InlineCallee):
            receiver = state.get(callee.receiver) if callee.receiver is not None else None
            return self.inline(callee.function, node, state, frame, receiver)
        if isinstance(callee, MethodCallee):
            return self._method_call(callee, node, state, frame)
        if isinstance(callee, ConstructCallee):
            return [(after, record) for after, record in self.construct(callee, node, state, frame)]
        if isinstance(callee, UnknownCallee):
            return [(state, Unknown(callee.reason))]
        routed = ROUTED.get(callee.name)  # np.linalg.norm, functools.reduce: known, not opaque
        if routed == "reduce":
            return self._reduce(node, state, frame)
        if routed is not None:
            return self._math_call(routed, node, state, frame)
        return self.opaque(callee.name, node, state, frame, prefix=())

    def _reduce(self, node: ir.Invoke, state: State, frame: Frame) -> Alternatives:
        """``functools.reduce(f, items[, start])``: ``f`` called on the running value and each item in turn,
        through temporary names no Python code can spell."""
        line = node.line
        arguments = node.arguments
        if len(arguments) not in (2, 3) or any(a.keyword or a.star is not ir.Star.NONE for a in arguments):
            return [(state, Unknown(f"functools.reduce(...) at line {line} with these arguments is not supported"))]
        result: Alternatives = []
        for after, sequence in self.evaluate(arguments[1].value, state, frame):
            if not isinstance(sequence, Seq):
                result.append((after, Unknown(f"functools.reduce(...) at line {line} over a value that is not a "
                                              "sequence of known length is not supported")))
                continue
            items = list(sequence.items)
            paths: Alternatives = (self.evaluate(arguments[2].value, after, frame) if len(arguments) == 3
                                   else [(after, items.pop(0))] if items else [])
            if not paths:
                raise Stuck(f"functools.reduce(...) of an empty sequence at line {line} raises")
            step = ir.Invoke(arguments[0].value, (ir.Argument(ir.Name(_RUNNING, line)), ir.Argument(ir.Name(_ITEM, line))),
                             node.spelling, line, node.column)
            for item in items:
                paths = [(State(s.env, s2.conditions, s2.notes), value) for s, running in paths
                         for s2, value in self.evaluate(step, s.bind(_RUNNING, running).bind(_ITEM, item), frame)]
            result.extend(paths)
        return result

    def _method_call(self, callee: MethodCallee, node: ir.Invoke, state: State, frame: Frame) -> Alternatives:
        # `value.name(...)` on a variable or unknown value: opaque in the receiver and arguments
        result: Alternatives = []
        for after, receiver in self.evaluate(callee.receiver, state, frame):
            expr = as_expr(receiver)
            numpy_name = array_method(callee.name, receiver, {}) if isinstance(receiver, Seq) else None
            if isinstance(receiver, Record):
                result.extend(self.object_method(receiver, node, callee.name, after, frame))
            elif numpy_name is not None and isinstance(receiver, Seq):
                result.extend(alternative for s, args, keywords in self.arguments(node, after, frame)
                              for alternative in self._math_of(numpy_name, [receiver] + args, keywords, s, frame,
                                                               node.line))
            elif isinstance(receiver, Var):
                result.extend(self.opaque(f"{receiver.name}.{callee.name}", node, after, frame, prefix=()))
            elif expr is not None:
                result.extend(self.opaque(f".{callee.name}", node, after, frame, prefix=(expr,)))
            elif isinstance(receiver, Unknown):
                result.append((after, receiver))
            else:
                result.append((after, Unknown(f"the method call {node.spelling}(...) at line {node.line} "
                                              "is not supported")))
        return result

    def arguments(self, node: ir.Invoke, state: State, frame: Frame) -> Arguments:
        """Every (path, positional values, keyword values) of the call's arguments."""
        line = node.line
        paths: Arguments = [(state, [], {})]
        for arg in node.arguments:
            if arg.star is ir.Star.MAPPING:
                raise Stuck(f"`**` arguments at line {line} are not supported")
            new_paths: Arguments = []
            for s, positional, keywords in paths:
                for after, value in self.evaluate(arg.value, s, frame):
                    if arg.star is ir.Star.SEQUENCE:
                        if not isinstance(value, Seq):
                            raise Stuck(f"`*` arguments at line {line} are not supported here")
                        new_paths.append((after, positional + list(value.items), keywords))
                    elif arg.keyword is not None:
                        new_paths.append((after, positional, {**keywords, arg.keyword: value}))
                    else:
                        new_paths.append((after, positional + [value], keywords))
            paths = new_paths
        return paths

    def opaque(self, name: str, node: ir.Invoke, state: State, frame: Frame, prefix: tuple[Expr, ...]
               ) -> Alternatives:
        line = node.line
        if impure(name):
            # an opaque value stands for a pure function (same arguments, same value); random numbers,
            # clocks and I/O are not, and treating them so could prove random() - random() == 0
            return [(state, Unknown(f"the call {name}(...) at line {line} may give a different value each "
                                    "time (random numbers, clocks, I/O) and is not followed"))]
        result: Alternatives = []
        for after, positional, keywords in self.arguments(node, state, frame):
            values: list[Value] = list(prefix) + positional
            full_name = name
            if keywords:
                full_name += "[" + ",".join(f"{k}=" for k in sorted(keywords)) + "]"
                values += [keywords[k] for k in sorted(keywords)]
            if any(isinstance(v, Record) for v in values):
                raise Stuck(f"the call {name}(...) at line {line} is given an object or dict, which a function "
                            "the tool cannot see into may change; this is not followed")
            exprs = [as_expr(v) for v in values]
            bad = next((v for v, e in zip(values, exprs) if e is None), None)
            if isinstance(bad, FunctionValue):
                result.append((after, Unknown(f"the call {name}(...) at line {line} is given the function "
                                              f"{bad.function.name}, and the tool cannot see what it does with it")))
                continue
            if bad is not None:
                reason = bad.reason if isinstance(bad, Unknown) else (
                    f"the call {name}(...) at line {line} passes a tuple, list or None to a function the tool "
                    "cannot see into")
                result.append((after, Unknown(reason)))
                continue
            note = f"opaque call {name}(...) at line {line}" + (f" of {frame.module}" if frame.depth else "")
            result.append((after.with_note(note), Opaque(full_name, tuple(e for e in exprs if e is not None))))
        return result

    def _piecewise_call(self, name: str, node: ir.Invoke, state: State, frame: Frame, builtin: bool
                        ) -> Alternatives:
        """``abs``, ``min``, ``max`` ... of numbers: one alternative per piece, its tests as path conditions."""
        line = node.line
        result: Alternatives = []
        for after, args, keywords in self.arguments(node, state, frame):
            if builtin and name in ("min", "max") and len(args) == 1 and isinstance(args[0], Seq):
                args = list(args[0].items)  # min(sequence)
            exprs = [as_expr(a) for a in args]
            split = None if keywords else pieces(name, [e for e in exprs if e is not None])
            if split is None or None in exprs:
                if builtin:
                    result.append(_noted(after, self.builtin_value(name, args, keywords, line, False, frame.ident),
                                         line))
                else:
                    result.extend(self._math_of(name, args, keywords, after, frame, line))
                continue
            for tests, value in split:
                states = [after]
                for left, relation, right in tests:
                    states = [s2 for s1 in states for s2 in self.relation(left, relation, right, s1, line)]
                result.extend((s, value) for s in states)
        return result

    def _math_call(self, name: str, node: ir.Invoke, state: State, frame: Frame) -> Alternatives:
        if name in PIECEWISE:
            return self._piecewise_call(name, node, state, frame, builtin=False)
        harmless = harmless_keywords(name, node)  # np.asarray(v, dtype=np.float64) is v as an array
        return [alternative for after, args, keywords in self.arguments(node, state, frame)
                for alternative in self._math_of(name, args, {k: v for k, v in keywords.items() if k not in harmless},
                                                 after, frame, node.line)]

    def _math_of(self, name: str, args: list[Value], keywords: dict[str, Value], after: State, frame: Frame,
                 line: int) -> Alternatives:
        """The value of the math function ``name`` at arguments already evaluated on the path ``after``."""
        if keywords:
            return [(after, Unknown(f"keyword arguments to {name} at line {line} are not supported"))]
        if any(isinstance(a, Seq) for a in args):
            value = self.bounded(self.array_call(name, args, line), line)
            if isinstance(value, Seq) and value.kind is ARRAY:
                value = Seq(value.items, value.kind, value.ident, frame.ident)
            return [(after, value)]
        filled = self.zeros(name, args, frame.ident)
        if filled is not None:
            return [(after, filled)]
        exprs = [as_expr(a) for a in args]
        bad = next((a for a, e in zip(args, exprs) if e is None), None)
        if bad is not None:
            return [(after, bad if isinstance(bad, Unknown) else
                     Unknown(f"{name} of a tuple, list or None at line {line} is not supported"))]
        operands = [e for e in exprs if e is not None]
        computed = self.math_value(name, operands, line)
        if computed is None:
            return [(after.with_note(f"opaque call {name}(...) at line {line}"), Opaque(name, tuple(operands)))]
        return [_noted(after, self.bounded(computed, line), line)]

    # -- inlining

    def call_function_value(self, value: FunctionValue, node: ir.Invoke, state: State, frame: Frame
                            ) -> Alternatives:
        """A function passed around as a value: inlined; a lambda with the locals it captured, which must be
        the ones its maker still has (Python reads them when the lambda runs)."""
        current(value, state, frame, node.line)
        return [(back, result) for back, result, _ in
                self.inline_paths(value.function, node, state, frame, None, value.captured)]

    def inline(self, function: ir.Function, node: ir.Invoke, state: State, frame: Frame,
               receiver: Value | None) -> Alternatives:
        return [(back, value) for back, value, _ in self.inline_paths(function, node, state, frame, receiver)]

    def inline_paths(self, function: ir.Function, node: ir.Invoke, state: State, frame: Frame,
                     receiver: Value | None, captured: tuple[tuple[str, Value], ...] = ()
                     ) -> list[tuple[State, Value, State]]:
        """Every (caller's path after the call, returned value, the callee's final path) of an inlined call;
        objects passed in come back changed as the callee left them."""
        line = node.line
        if function.key in frame.stack:
            raise Stuck(f"the recursive call of {function.name} at line {line} is not supported")
        if frame.depth + 1 > self.inline_depth:
            raise Stuck(f"the inlining depth limit of {self.inline_depth} was reached at the call of "
                        f"{function.name} at line {line}")
        if function.generator:
            raise Stuck(f"the generator function {function.name} called at line {line} is not supported")
        self.depend(function.module)
        note = f"inlined {function.name} from {function.module}"
        if note not in self.inlined:
            self.inlined.append(note)
        fields_written(node, state, line)
        result: list[tuple[State, Value, State]] = []
        for after, positional, keywords in self.arguments(node, state, frame):
            if receiver is not None:
                positional = [receiver] + positional
            for given in positional + list(keywords.values()):
                if isinstance(given, FunctionValue):
                    current(given, after, frame, line)  # a lambda handed on sees its maker's locals as they are
            passed = [v for v in positional + list(keywords.values()) if isinstance(v, Record)]
            callee = Frame(function.module, function, frame.depth + 1, frame.stack + (function.key,),
                           self.new_ident(), objects=frozenset(r.ident for r in passed))
            start = self.bind_arguments(function, positional, keywords,
                                        State(captured, after.conditions, after.notes), line)
            for outcome in self.exec_block(function.body, [start], callee):
                back = State(after.env, outcome.state.conditions, outcome.state.notes)
                if outcome.status in (Status.RETURN, Status.NEXT):
                    back = self._outputs_back(function, node, outcome.state, back, frame)
                    back = self._objects_back(function, passed, outcome.state, back, frame, line)
                if outcome.status is Status.RETURN:
                    value = adopted(outcome.value, callee.ident, frame.ident) if outcome.value is not None else NONE
                    result.append((back, value, outcome.state))
                elif outcome.status is Status.NEXT:
                    result.append((back, NONE, outcome.state))
                elif outcome.status is Status.STUCK:
                    raise Stuck(f"{outcome.reason} (in {function.name} of {function.module}, called at line {line})")
                # RAISE: this path of the caller raises too and returns nothing
        return result

    def _objects_back(self, function: ir.Function, passed: list[Record], inside: State, back: State, frame: Frame,
                      line: int) -> State:
        """The objects a call was given, as the callee left them, for every local of the caller holding them;
        attributes the callee wrote on a parameter that is no object of the project are not followed."""
        for name, value in inside.env:
            head = name.split(".", 1)[0]
            if "." in name and any(p.name == head for p in function.parameters):
                raise Stuck(f"{function.name} (called at line {line}) assigns the attribute {name} of its "
                            "argument, which is not an object the tool follows")
        for record in passed:
            final = next((v for _, v in inside.env if isinstance(v, Record) and v.ident == record.ident), None)
            if final is None:
                if writes_attributes(function.body):
                    raise Stuck(f"{function.name} (called at line {line}) may change the object it was given "
                                "and then stop holding it; this is not followed")
            elif final != record:
                back = replace_object(back, final, frame, line)
        return back

    def _outputs_back(self, function: ir.Function, node: ir.Invoke, inside: State, back: State,
                      frame: Frame) -> State:
        """Out-parameters passed a caller's local (``f(x, &y)``) or a kernel place by reference (``AddressOf``):
        the local or place takes the value left in them."""
        positional = [p for p in function.parameters if p.binding in (ir.Binding.POSITIONAL,
                                                                        ir.Binding.POSITIONAL_ONLY)]
        for param, arg in zip(positional, node.arguments):
            if param.kind in OUTPUT_KINDS and isinstance(arg.value, ir.Name) and arg.keyword is None:
                value = inside.get(param.name)
                if value is not None:
                    back = back.bind(arg.value.name, value)
            elif param.kind in OUTPUT_KINDS and isinstance(arg.value, ir.AddressOf) and arg.keyword is None:
                value = inside.get(param.name)
                if value is not None:
                    back = self.store_place(arg.value.place, value, back, frame)
        return back

    def bind_arguments(self, function: ir.Function, positional: list[Value], keywords: dict[str, Value],
                       state: State, line: int) -> State:
        """``state`` with the parameters of ``function`` bound to a call's arguments (and defaults)."""
        name = function.name
        ordered = [p for p in function.parameters if p.binding in (ir.Binding.POSITIONAL, ir.Binding.POSITIONAL_ONLY)]
        variadic = any(p.binding is ir.Binding.VARIADIC for p in function.parameters)
        variadic_keyword = any(p.binding is ir.Binding.VARIADIC_KEYWORD for p in function.parameters)
        if len(positional) > len(ordered) and not variadic:
            raise Stuck(f"the call of {name} at line {line} passes {len(positional)} positional "
                        f"arguments, it takes {len(ordered)}")
        if variadic or variadic_keyword:
            raise Stuck(f"calling {name} with *args/**kwargs parameters at line {line} is not supported")
        remaining = dict(keywords)
        for i, param in enumerate(ordered):
            if i < len(positional):
                if param.name in remaining:
                    raise Stuck(f"the call of {name} at line {line} gives {param.name} twice")
                state = state.bind(param.name, positional[i])
            elif param.name in remaining and param.binding is not ir.Binding.POSITIONAL_ONLY:
                state = state.bind(param.name, remaining.pop(param.name))
            elif param.default is not None:
                state = state.bind(param.name, self._default(param.default, function))
            else:
                raise Stuck(f"the call of {name} at line {line} misses the argument {param.name}")
        for param in function.parameters:
            if param.binding is not ir.Binding.KEYWORD_ONLY:
                continue
            if param.name in remaining:
                state = state.bind(param.name, remaining.pop(param.name))
            elif param.default is not None:
                state = state.bind(param.name, self._default(param.default, function))
            else:
                raise Stuck(f"the call of {name} at line {line} misses the keyword argument {param.name}")
        if remaining:
            raise Stuck(f"the call of {name} at line {line} passes unknown keyword arguments "
                        f"{', '.join(sorted(remaining))}")
        return state

    def _default(self, node: ir.Expr, function: ir.Function) -> Value:
        alternatives = self.evaluate_detached(node, function.module)
        if len(alternatives) != 1 or alternatives[0][0].conditions:
            return Unknown(f"the default value of a parameter of {function.name} is not supported")
        return alternatives[0][1]
