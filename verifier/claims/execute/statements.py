"""The executor: runs IR functions statement by statement, path by path."""
from __future__ import annotations

from collections.abc import Mapping, Sequence
from fractions import Fraction

from verifier.claims.execute import places
from verifier.claims.execute.arrays import replaced_slice, slice_positions
from verifier.claims.execute.calls import OUTPUT_KINDS
from verifier.claims.execute.objects import ObjectCalls, field_name, key_of
from verifier.claims.execute.expressions import unsupported_reason
from verifier.claims.execute.sequences import Shape, parameter_sequence
from verifier.claims.execute.state import Frame, Outcome, State, Status, Visit
from verifier.claims.execute.values import (
    LIST,
    Compound,
    MUTABLE,
    NONE,
    Record,
    Seq,
    Stuck,
    Unknown,
    Value,
    contains_list,
)
from verifier.model import ir
from verifier.model.claim import Condition
from verifier.model.expr import Num, Opaque, Var

MAX_PATHS = 512  # live paths at once; more is inconclusive rather than slow
ELEMENT_KINDS = (ir.ParameterKind.ARRAY, ir.ParameterKind.OUT, ir.ParameterKind.INOUT)
_LOOP_ENDS = {Status.NEXT: "next", Status.CONTINUE: "next", Status.BREAK: "break"}


class Executor(ObjectCalls):
    """Runs functions symbolically; one executor per claim (it collects the claim's dependencies)."""

    def run_function(self, function: ir.Function, args: Sequence[Value] | None = None,
                     conditions: tuple[Condition, ...] = (), shapes: Mapping[str, Shape] | None = None,
                     bindings: Mapping[str, Value] | None = None) -> list[Outcome]:
        """Execute ``function`` at the top level: parameters are variables named after them unless ``args``
        gives values (a parameter with a shape in ``shapes`` is an array of variables ``q[0]``, ...).
        Returns the outcomes of every path (RETURN, RAISE, STUCK, or NEXT for falling off the end); the values assigned at ``marks`` are collected in ``visits``."""
        self.depend(function.module)
        objects = frozenset(v.ident for v in (bindings or {}).values() if isinstance(v, Record))
        frame = Frame(function.module, function, 0, (function.key,), self.new_ident(), objects=objects)
        if args is None:
            state = State((), conditions)
            for param in function.parameters:
                if param.binding not in (ir.Binding.VARIADIC, ir.Binding.VARIADIC_KEYWORD):
                    shape = (shapes or {}).get(param.name)
                    value = (parameter_sequence(param.name, shape, iter(self.new_ident, -1), frame.ident)
                             if shape else Var(param.name))
                    value = (bindings or {}).get(param.name, value)  # the claim's `self` of a method
                    state = state.bind(param.name, value)
            for param in function.parameters:
                if param.binding in (ir.Binding.VARIADIC, ir.Binding.VARIADIC_KEYWORD):
                    state = state.bind(param.name, Unknown(f"the *args/**kwargs parameter {param.name} is "
                                                           "not supported"))
        else:
            try:
                state = self.bind_arguments(function, list(args), {}, State((), conditions), function.line)
            except Stuck as exc:
                return [Outcome(State((), conditions), Status.STUCK, reason=exc.reason, line=function.line)]
        outcomes = self.exec_block(function.body, [state], frame)
        outputs = [p.name for p in function.parameters if p.kind in OUTPUT_KINDS]
        if not outputs:
            return outcomes
        return [self._with_outputs(o, outputs) for o in outcomes]

    @staticmethod
    def _with_outputs(outcome: Outcome, names: list[str]) -> Outcome:
        if outcome.status not in (Status.RETURN, Status.NEXT):
            return outcome
        values = tuple((name, value) for name in names for value in [outcome.state.get(name)] if value is not None)
        return Outcome(outcome.state, outcome.status, outcome.value, outcome.reason, outcome.line, outcome.loops,
                       values)

    # -- blocks

    def exec_block(self, statements: Sequence[ir.Statement], states: list[State], frame: Frame) -> list[Outcome]:
        live = [Outcome(s, Status.NEXT) for s in states]
        done: list[Outcome] = []
        for stmt in statements:
            if not live:
                break
            following: list[Outcome] = []
            for outcome in live:
                for result in self.exec_statement(stmt, outcome.state, frame):
                    (following if result.status is Status.NEXT else done).append(result)
            if len(following) > MAX_PATHS:
                line = stmt.line
                return done + [Outcome(following[0].state, Status.STUCK,
                                       reason=f"more than {MAX_PATHS} paths at line {line}", line=line,
                                       loops=frame.loops)]
            live = following
        return done + live

    def exec_statement(self, stmt: ir.Statement, state: State, frame: Frame) -> list[Outcome]:
        line = stmt.line
        try:
            return self._exec_statement(stmt, state, frame)
        except Stuck as exc:
            return [Outcome(state, Status.STUCK, reason=exc.reason, line=line, loops=frame.loops)]
        except RecursionError:
            return [Outcome(state, Status.STUCK, reason=f"the code at line {line} is nested too deeply", line=line,
                            loops=frame.loops)]

    def _exec_statement(self, stmt: ir.Statement, state: State, frame: Frame) -> list[Outcome]:
        if isinstance(stmt, ir.Assign):
            return self._exec_assign(stmt, state, frame)
        if isinstance(stmt, ir.If):
            outcomes: list[Outcome] = []
            for true_state in self.truth(stmt.test, state, frame, True):
                outcomes.extend(self.exec_block(stmt.then, [true_state], frame))
            for false_state in self.truth(stmt.test, state, frame, False):
                outcomes.extend(self.exec_block(stmt.orelse, [false_state], frame))
            return outcomes
        if isinstance(stmt, ir.ForEach):
            return self._exec_for(stmt, state, frame)
        if isinstance(stmt, ir.CountedLoop):
            return self._exec_counted(stmt, state, frame)
        if isinstance(stmt, ir.Return):
            outcomes = []
            alternatives = [(state, NONE)] if stmt.value is None else self.evaluate(stmt.value, state, frame)
            for after, value in alternatives:
                self._record(stmt, state, after, value, frame)
                outcomes.append(Outcome(after, Status.RETURN, value, line=stmt.line))
            return outcomes
        if isinstance(stmt, ir.Append):
            return self._exec_append(stmt, state, frame)
        if isinstance(stmt, ir.Evaluate):
            return self._exec_evaluate(stmt, state, frame)
        if isinstance(stmt, ir.Break):
            return [Outcome(state, Status.BREAK, line=stmt.line)]
        if isinstance(stmt, ir.Continue):
            return [Outcome(state, Status.CONTINUE, line=stmt.line)]
        if isinstance(stmt, ir.Raise):
            return [Outcome(state, Status.RAISE, line=stmt.line)]
        raise Stuck(unsupported_reason(stmt))

    def _record(self, stmt: ir.Statement, before: State, after: State, value: Value, frame: Frame) -> None:
        mark = (stmt.line, stmt.column)
        if frame.depth != 0 or mark not in self.marks:
            return
        state = State(before.env, after.conditions, after.notes)
        self.visits.setdefault(mark, []).append(Visit(state, value))

    # -- statements with effects

    def _exec_append(self, stmt: ir.Append, state: State, frame: Frame) -> list[Outcome]:
        current = state.get(stmt.name)
        if isinstance(current, Seq) and current.kind is LIST:
            outcomes = []
            for after, value in self.evaluate(stmt.value, state, frame):
                updated = Seq(current.items + (value,), LIST, current.ident, current.owner)
                outcomes.append(Outcome(self._replace_list(after, current, updated, frame, stmt.line), Status.NEXT))
            return outcomes
        if stmt.fallback is None:
            raise Stuck(f"appending to {stmt.name} at line {stmt.line} is not supported: it is not a list")
        return self._exec_statement(stmt.fallback, state, frame)

    def _exec_evaluate(self, stmt: ir.Evaluate, state: State, frame: Frame) -> list[Outcome]:
        node = stmt.value
        line = stmt.line
        if not isinstance(node, ir.Invoke):
            return [Outcome(state, Status.NEXT)]  # no effect on values; evaluating it may only split paths
        callee = node.callee
        if isinstance(callee, ir.Field) and isinstance(callee.base, ir.Name) and isinstance(
                state.get(callee.base.name), Seq):
            raise Stuck(f"the in-place method call {node.spelling}(...) at line {line} is not supported")
        outcomes = []
        for after, _ in self.evaluate(node, state, frame):
            for arg in node.arguments:
                if isinstance(arg.value, ir.Name):
                    bound = after.get(arg.value.name)
                    if isinstance(bound, Seq) and bound.kind in MUTABLE:
                        raise Stuck(f"the call at line {line} may change the list {arg.value.name}; "
                                    "calls for their side effects are not supported")
            outcomes.append(Outcome(after, Status.NEXT))
        return outcomes

    def _exec_assign(self, stmt: ir.Assign, state: State, frame: Frame) -> list[Outcome]:
        outcomes = []
        for after, value in self.evaluate(stmt.value, state, frame):
            self._record(stmt, state, after, value, frame)
            current = after
            for target in stmt.targets:
                current = self.assign(target, value, current, frame)
            outcomes.append(Outcome(current, Status.NEXT))
        return outcomes

    def _replace_list(self, state: State, old: Seq, new: Seq, frame: Frame, line: int) -> State:
        if old.owner != frame.ident:
            raise Stuck(f"changing a list passed in from elsewhere at line {line} is not supported")
        env: list[tuple[str, Value]] = []
        for name, value in state.env:
            if isinstance(value, Seq) and value.kind in MUTABLE and value.ident == old.ident:
                env.append((name, new))
            else:
                if contains_list(value, old.ident):
                    raise Stuck(f"changing a list that another value holds at line {line} is not supported")
                env.append((name, value))
        return state.with_env(tuple(env))

    # -- assignment targets

    def assign(self, target: ir.Target, value: Value, state: State, frame: Frame) -> State:
        line = target.line
        if isinstance(target, (ir.ToLocal, ir.ToOut)):
            return state.bind(target.name, value)
        if isinstance(target, ir.ToField):
            held = state.get(target.base)
            if isinstance(held, Record):
                return self.set_field(target.base, held, target.field, value, state, frame, line)
            return state.bind(f"{target.base}.{target.field}", value)
        if isinstance(target, ir.Store):
            return self.store_place(target.place, value, state, frame)
        if isinstance(target, ir.Unpack):
            parts = self._unpack(value, len(target.items), line)
            for item, part in zip(target.items, parts):
                state = self.assign(item, part, state, frame)
            return state
        if isinstance(target, ir.ToElement):
            if len(target.indices) == 1:
                return self._assign_element(target, value, state, frame)
            if len(target.indices) == 2:
                return self._assign_nested(target, value, state, frame)
            raise Stuck(f"assignment to a nested subscript at line {line} is not supported")
        raise Stuck(unsupported_reason(target))

    def _parameter_kind(self, name: str, frame: Frame) -> ir.ParameterKind | None:
        if frame.function is None:
            return None
        return next((p.kind for p in frame.function.parameters if p.name == name), None)

    def _assign_element(self, target: ir.ToElement, value: Value, state: State, frame: Frame) -> State:
        line = target.line
        current = state.get(target.name)
        part = target.indices[0]
        if isinstance(part, ir.Slice) and isinstance(current, Seq) and current.kind in MUTABLE:  # v[1:] = w
            bounds = [None if b is None else self.constant_index(b, state, frame) for b in
                      (part.lower, part.upper, part.step)]
            positions = slice_positions(len(current.items), bounds)
            if positions is None or any(b is None and p is not None for b, p in
                                        zip(bounds, (part.lower, part.upper, part.step))):
                raise Stuck(f"assignment to a slice with non-constant bounds or step 0 at line {line}")
            updated = replaced_slice(current, positions, value, line)
            if isinstance(updated, Unknown):
                raise Stuck(updated.reason)
            return self._replace_list(state, current, updated, frame, line)
        if isinstance(current, Record) and current.cls is None:  # d["X"] = value on a dict
            key = key_of(part) if isinstance(part, ir.Text) else None
            if key is None:
                alternatives = self.evaluate(part, state, frame)
                key = key_of(alternatives[0][1]) if len(alternatives) == 1 else None
            if key is None:
                raise Stuck(f"assignment to a dict entry whose key is not a constant at line {line}")
            return self.set_field(target.name, current, field_name(key), value, state, frame, line)
        index = self.constant_index(target.indices[0], state, frame)
        if isinstance(current, Seq) and current.kind in MUTABLE and index is not None:
            items = list(current.items)
            if not -len(items) <= index < len(items):
                raise Stuck(f"index {index} out of range at line {line}")
            items[index] = value
            updated = Seq(tuple(items), current.kind, current.ident, current.owner)
            return self._replace_list(state, current, updated, frame, line)
        if isinstance(current, Var) and index is not None and self._parameter_kind(target.name, frame) in ELEMENT_KINDS:
            return state.bind(f"{current.name}[{index}]", value)
        raise Stuck(f"assignment to a subscript at line {line} is not supported")

    def _assign_nested(self, target: ir.ToElement, value: Value, state: State, frame: Frame) -> State:
        """``m[i][j] = value`` on a local list of lists: the row is rebuilt and the outer list replaced.

        Only when the row is held by the outer list alone, at that one place (no other name, no other
        element): otherwise a change through one holder would have to show through the others.
        """
        line = target.line
        outer_name = target.name
        outer = state.get(outer_name)
        row_index = self.constant_index(target.indices[0], state, frame)
        column = self.constant_index(target.indices[1], state, frame)
        unsupported = Stuck(f"assignment to a nested subscript at line {line} is not supported")
        if (isinstance(outer, Var) and row_index is not None and column is not None
                and self._parameter_kind(outer_name, frame) in ELEMENT_KINDS):
            return state.bind(f"{outer.name}[{row_index}][{column}]", value)
        if not (isinstance(outer, Seq) and outer.kind in MUTABLE and row_index is not None
                and column is not None and -len(outer.items) <= row_index < len(outer.items)):
            raise unsupported
        row = outer.items[row_index]
        if not (isinstance(row, Seq) and row.kind in MUTABLE and row.owner == frame.ident):
            raise unsupported
        if not -len(row.items) <= column < len(row.items):
            raise Stuck(f"index {column} out of range at line {line}")
        held_elsewhere = any(name != outer_name and (contains_list(held, row.ident) or
                                                     (isinstance(held, Seq) and held.ident == row.ident))
                             for name, held in state.env)
        position = row_index % len(outer.items)
        twice = any(k != position and ((isinstance(item, Seq) and item.ident == row.ident)
                                       or contains_list(item, row.ident))
                    for k, item in enumerate(outer.items))
        if held_elsewhere or twice:
            raise Stuck(f"changing a row that another value holds at line {line} is not supported")
        items = list(row.items)
        items[column] = value
        rows = list(outer.items)
        rows[position] = Seq(tuple(items), row.kind, row.ident, row.owner)
        return self._replace_list(state, outer, Seq(tuple(rows), outer.kind, outer.ident, outer.owner), frame, line)

    def _unpack(self, value: Value, count: int, line: int) -> list[Value]:
        if isinstance(value, Compound):  # a kernel struct or array: its numbers in order
            value = Seq(tuple(places.flatten(value, line)))
        if isinstance(value, Seq):
            if len(value.items) != count:
                raise Stuck(f"unpacking {len(value.items)} values into {count} names at line {line}")
            return list(value.items)
        if isinstance(value, Var):
            return [Var(f"{value.name}[{i}]") for i in range(count)]
        if isinstance(value, Opaque):
            return [Opaque(f"{value.name}[{i}]", value.args) for i in range(count)]
        if isinstance(value, Unknown):
            return [value] * count
        raise Stuck(f"unpacking a single value into {count} names at line {line}")

    # -- loops

    def _exec_for(self, stmt: ir.ForEach, state: State, frame: Frame) -> list[Outcome]:
        line = stmt.line
        runs: list[tuple[State, list[Value]]] = []
        for after, value in self.evaluate(stmt.iterable, state, frame, iterable=True):
            if isinstance(value, Seq):
                runs.append((after, list(value.items)))
            elif isinstance(value, Unknown):
                raise Stuck(f"the for loop at line {line} iterates over a value the tool cannot follow "
                            f"({value.reason})")
            else:
                raise Stuck(f"the for loop at line {line} iterates over something other than range(...) "
                            "with constant arguments or a sequence of known length")
        return self._unroll(stmt.target, runs, stmt.body, stmt.orelse, stmt, frame)

    def _exec_counted(self, stmt: ir.CountedLoop, state: State, frame: Frame) -> list[Outcome]:
        bounds = [self.constant_index(part, state, frame) for part in (stmt.start, stmt.stop, stmt.step)]
        start, stop, step = bounds
        if start is None or stop is None or step is None or step == 0:
            raise Stuck(f"the loop at line {stmt.line} does not run over integer constants with a nonzero step")
        items: list[Value] = [Num(Fraction(i)) for i in range(start, stop, step)]
        return self._unroll(ir.ToLocal(stmt.counter, stmt.line, stmt.column), [(state, items)], stmt.body, None,
                            stmt, frame)

    def _unroll(self, target: ir.Target, runs: list[tuple[State, list[Value]]], body: tuple[ir.Statement, ...],
                orelse: tuple[ir.Statement, ...] | None, stmt: ir.ForEach | ir.CountedLoop,
                frame: Frame) -> list[Outcome]:
        line = stmt.line
        loop_range = (line, stmt.end_line or line)
        outcomes: list[Outcome] = []
        inner = Frame(frame.module, frame.function, frame.depth, frame.stack, frame.ident,
                      frame.loops + (loop_range,))
        for start_state, items in runs:
            if len(items) > self.unroll_limit:
                raise Stuck(f"the for loop at line {line} runs {len(items)} iterations, more than the unroll "
                            f"limit of {self.unroll_limit}")
            live = [start_state]
            finished: list[State] = []
            for item in items:
                following: list[State] = []
                for current in live:
                    bound = self.assign(target, item, current, inner)
                    for result in self.exec_block(body, [bound], inner):
                        end = _LOOP_ENDS.get(result.status)
                        if end == "next":
                            following.append(result.state)
                        elif end == "break":
                            finished.append(result.state)
                        else:
                            outcomes.append(result)
                if len(following) > MAX_PATHS:
                    raise Stuck(f"more than {MAX_PATHS} paths in the for loop at line {line}")
                live = following
            if orelse is not None:
                outcomes.extend(self.exec_block(orelse, live, frame))
            else:
                outcomes.extend(Outcome(s, Status.NEXT) for s in live)
            outcomes.extend(Outcome(s, Status.NEXT) for s in finished)
        return outcomes
