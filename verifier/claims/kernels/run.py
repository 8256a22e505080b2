"""Symbolic execution of lowered kernel functions (``tree``): paths, out-parameters, visits; never run.

Values are in ``kvalues`` (reals, exact integer constants, aggregates, pointers into cells of the store, so
a callee's writes reach its caller); calls of known functions and conditional expressions are hoisted
out of a statement first, each path of them continuing the statement.
"""
from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, replace
from fractions import Fraction

from verifier.claims.kernels import tree as t
from verifier.claims.kernels.kvalues import (_NEGATION, Agg, Int, Key, Ptr, Stuck, SymInt, Unknown, Value,
                                             _compare, _put, as_real, binary, convert, flatten)
from verifier.claims.kernels.tree import first_hoistable as _first_hoistable, substitute_node as _substitute
from verifier.claims.language import expression_text
from verifier.model.claim import Condition
from verifier.model.expr import KNOWN_FUNCTIONS, Call, Neg, Num, Opaque, Pow, Var

MAX_PATHS = 512


@dataclass
class Path:
    store: dict[int, Value]
    frames: list[dict[str, tuple[int, tuple[Key, ...]]]]
    conditions: tuple[Condition, ...] = ()
    returned: Value | None = None
    done: bool = False

    def fork(self) -> "Path":  # a copy the other branch changes independently
        return Path(dict(self.store), [dict(f) for f in self.frames], self.conditions, self.returned, self.done)


@dataclass(frozen=True)
class Visit:
    """A trailing-claim statement reached on one path: the assigned value and the names in scope."""

    value: Value
    scope: dict[str, Value]
    conditions: tuple[Condition, ...]


@dataclass(frozen=True)
class Outcome:
    results: tuple[Value, ...]  # the return value's components, then the written out-parameters
    conditions: tuple[Condition, ...]


Resolver = Callable[[str], "t.Function | None"]


class Runner:
    def __init__(self, resolve: Resolver, unroll_limit: int = 256, inline_depth: int = 16):
        self.resolve = resolve
        self.unroll_limit = unroll_limit
        self.inline_depth = inline_depth
        self.visits: dict[int, list[Visit]] = {}
        self.inlined: list[str] = []
        self.next_cell = 0
        self.depth = 0

    # -- entry point

    def run(self, function: t.Function, args: list[Value] | None = None) -> list[Outcome]:
        """Every path of ``function`` with symbolic parameters (or ``args``); raises Stuck."""
        path = Path({}, [{}])
        outputs: list[tuple[t.Param, int, Value]] = []
        inputs = iter(args or [])
        for param in function.params:
            initial: Value
            if args is not None and param.mode != "out" and not param.out_only:
                initial = next(inputs, Unknown("missing argument"))
            elif param.size or param.struct or param.mode in ("pointer", "reference", "out", "inout"):
                fields = function.structs.get(param.struct or "", ())
                # C++ `this`: the members are named as the code spells them inside the class (`x`)
                prefix = "" if param.name == "this" and function.language in ("cpp", "cuda") else param.name
                initial = Agg(prefix=prefix, size=param.size, fields=fields, base=function.index_base)
            elif param.kind == "int":
                initial = SymInt(param.name)
            else:
                initial = Var(param.name)
            if param.mode == "out" and initial == Var(param.name):
                initial = Agg(prefix=param.name)
            cell = self._cell(path, initial)
            cell_of_output = cell
            if param.mode == "pointer":
                cell_of_output = self._cell(path, initial)
                path.store[cell] = Ptr(cell_of_output)
            if param.mode in ("pointer", "reference", "out", "inout") and not param.const:
                outputs.append((param, cell_of_output, initial))
            path.frames[-1][param.name] = (cell, ())
        finished = self._block(function.body, [path], function)
        outcomes: list[Outcome] = []
        for end in finished:
            results: list[Value] = []
            if function.result_name is not None:
                binding = end.frames[-1].get(function.result_name)
                if binding is None:
                    raise Stuck(f"{function.name} never sets its result {function.result_name}", function.line)
                results.extend(flatten(self._load(end, binding)))
            elif function.returns_value:
                if end.returned is None:
                    raise Stuck(f"a path of {function.name} ends without returning a value", function.line)
                results.extend(flatten(end.returned))
            for param, cell, initial in outputs:
                value = end.store[cell]
                if param.mode == "out" or param.out_only or value != initial:
                    results.extend(flatten(value))
            outcomes.append(Outcome(tuple(results), end.conditions))
        return outcomes

    def constant(self, node: t.Node, language: str = "c") -> Value:
        """The value of a file-level constant's lowered initializer."""
        dummy = t.Function("<constant>", (), (), False, language=language)
        try:
            return self._value(node, Path({}, [{}]), dummy)
        except Stuck as stuck:
            return Unknown(stuck.reason)

    def input_names(self, function: t.Function) -> list[str]:
        """The parameters a caller passes values in (pure outputs excluded), for `same as`."""
        return [p.name for p in function.params if p.mode != "out" and not p.out_only]

    def _cell(self, path: Path, value: Value) -> int:
        self.next_cell += 1
        path.store[self.next_cell] = value
        return self.next_cell

    # -- statements

    def _block(self, body: tuple[t.Statement, ...], paths: list[Path], fn: t.Function) -> list[Path]:
        for statement in body:
            active = [p for p in paths if not p.done]
            if not active:
                break
            following: list[Path] = [p for p in paths if p.done]
            for path in active:
                following.extend(self._statement(statement, path, fn))
            if len(following) > MAX_PATHS:
                raise Stuck(f"more than {MAX_PATHS} paths", getattr(statement, "line", 0))
            paths = following
        return paths

    def _statement(self, s: t.Statement, path: Path, fn: t.Function) -> list[Path]:
        hoisted = self._hoist(s, path, fn)
        if hoisted is not None:
            out: list[Path] = []
            for branch_path, rewritten in hoisted:
                out.extend(self._statement(rewritten, branch_path, fn))
            return out
        if isinstance(s, t.Declare):
            if s.init is not None:
                value = self._value(s.init, path, fn)
                value = self._convert(value, s.kind, s.line) if not (s.size or s.struct) else value
                if isinstance(value, Agg) and s.size and not value.size:
                    value = replace(value, size=s.size, base=fn.index_base)
                if isinstance(value, Agg) and s.struct:
                    value = replace(value, fields=fn.structs.get(s.struct, value.fields))
            elif s.size or s.struct:
                value = Agg(size=s.size, fields=fn.structs.get(s.struct or "", ()), base=fn.index_base)
            else:
                value = Unknown(f"{s.name} is read before it is set (line {s.line})")
            path.frames[-1][s.name] = (self._cell(path, value), ())
            self._visit(s.site, value, path)
            return [path]
        if isinstance(s, t.Assign):
            value = self._value(s.value, path, fn)
            self._store(s.target, value, path, fn, s.line)
            self._visit(s.site, value, path)
            return [path]
        if isinstance(s, t.Destructure):
            value = self._value(s.value, path, fn)
            parts = flatten(value)
            if len(parts) != len(s.targets):
                raise Stuck(f"{len(s.targets)} names are bound to {len(parts)} values", s.line)
            for name, part in zip(s.targets, parts):
                self._store(t.Name(name, s.line), part, path, fn, s.line)
            self._visit(s.site, value, path)
            return [path]
        if isinstance(s, t.Return):
            if s.value is not None:
                path.returned = self._value(s.value, path, fn)
                self._visit(s.site, path.returned, path)
            path.done = True
            return [path]
        if isinstance(s, t.Evaluate):
            self._value(s.value, path, fn)
            return [path]
        if isinstance(s, t.If):
            out = []
            for branch, conditions in self._split(s.condition, path, fn):
                out.extend(self._block(s.then if branch else s.otherwise, [conditions], fn))
            return out
        if isinstance(s, t.For):
            return self._loop(s, path, fn)
        if isinstance(s, t.Stop):
            raise Stuck(s.construct, s.line)
        raise Stuck(f"unsupported statement {type(s).__name__}", getattr(s, "line", 0))

    def _visit(self, site: int, value: Value, path: Path) -> None:
        if site < 0 or self.depth:
            return
        scope: dict[str, Value] = {}
        for name, binding in path.frames[-1].items():
            if not name.startswith("$"):
                seen = self._load(path, binding)
                if isinstance(seen, Ptr):
                    seen = self._load(path, (seen.cell, seen.path))  # claims name a pointer's target
                scope[name] = seen
        self.visits.setdefault(site, []).append(Visit(value, scope, path.conditions))

    def _loop(self, s: t.For, path: Path, fn: t.Function) -> list[Path]:
        bounds = []
        for node in (s.start, s.stop, s.step):
            value = self._value(node, path, fn)
            if not isinstance(value, Int):
                raise Stuck(f"the loop over {s.var} does not have constant bounds (line {s.line})", s.line)
            bounds.append(value.value)
        start, stop, step = bounds
        if step == 0:
            raise Stuck(f"the loop over {s.var} has step 0 (line {s.line})", s.line)
        if step > 0:
            count = max(0, (stop - start) // step + 1) if s.inclusive else max(0, -(-(stop - start) // step))
        else:
            count = max(0, (start - stop) // -step + 1) if s.inclusive else max(0, -(-(start - stop) // -step))
        if count > self.unroll_limit:
            raise Stuck(f"the loop over {s.var} runs {count} times, more than the unroll limit "
                        f"{self.unroll_limit} (line {s.line})", s.line)
        paths = [path]
        cell = self._cell(path, Int(start))
        path.frames[-1][s.var] = (cell, ())
        for k in range(count):
            for p in paths:
                if not p.done:
                    p.store[cell] = Int(start + k * step)
            paths = self._block(s.body, paths, fn)
        for p in paths:
            if not p.done:
                p.store[cell] = Int(start + count * step)
        return paths

    # -- conditions

    def _split(self, node: t.Node, path: Path, fn: t.Function) -> list[tuple[bool, Path]]:
        """The paths where ``node`` holds (True) and where it does not (False), each with its condition."""
        if isinstance(node, t.Logic):
            if node.op == "not":
                return [(not branch, p) for branch, p in self._split(node.operands[0], path, fn)]
            first = self._split(node.operands[0], path, fn)
            out: list[tuple[bool, Path]] = []
            for branch, p in first:
                if (node.op == "and") != branch:
                    out.append((branch, p))  # and: false decides; or: true decides
                else:
                    out.extend(self._split(node.operands[1], p, fn))
            return out
        if not isinstance(node, t.Compare):
            value = self._value(node, path, fn)
            node = t.Compare("!=", node, t.Lit(Fraction(0), "int"), getattr(node, "line", 0),
                             f"{getattr(node, 'text', 'condition')} != 0")
            if isinstance(value, Unknown):
                raise Stuck(value.reason, node.line)
        left = self._value(node.left, path, fn)
        right = self._value(node.right, path, fn)
        if isinstance(left, Int) and isinstance(right, Int):
            truth = _compare(node.op, left.value, right.value)
            return [(truth, path)]
        lhs, rhs = as_real(left), as_real(right)
        for side in (lhs, rhs):
            if isinstance(side, Unknown):
                raise Stuck(f"the condition at line {node.line} cannot be followed: {side.reason}", node.line)
        if isinstance(lhs, Num) and isinstance(rhs, Num):
            return [(_compare(node.op, lhs.value, rhs.value), path)]
        negated = _NEGATION[node.op]
        for earlier in path.conditions:  # the same test already decided on this path (abs(x) * abs(x))
            if (earlier.left, earlier.right) == (lhs, rhs) and earlier.relation in (node.op, negated):
                return [(earlier.relation == node.op, path)]
        text = node.text or f"{expression_text(lhs)} {node.op} {expression_text(rhs)}"  # type: ignore[arg-type]
        where = f"branch (line {node.line})"
        holds = Condition(node.op, lhs, rhs, text, where)  # type: ignore[arg-type]
        fails = Condition(negated, lhs, rhs, f"not ({text})", where)  # type: ignore[arg-type]
        other = path.fork()
        path.conditions = path.conditions + (holds,)
        other.conditions = other.conditions + (fails,)
        return [(True, path), (False, other)]

    # -- values

    def _value(self, node: t.Node, path: Path, fn: t.Function) -> Value:
        if isinstance(node, t.Lit):
            if node.kind == "int" and node.value.denominator == 1:
                return Int(int(node.value))
            return Num(node.value)
        if isinstance(node, (t.Name, t.Field, t.Index, t.Deref)):
            return self._load(path, self._locate(node, path, fn))
        if isinstance(node, t.AddressOf):
            cell, keys = self._locate(node.operand, path, fn)
            return Ptr(cell, keys)
        if isinstance(node, t.Negate):
            value = self._value(node.operand, path, fn)
            if isinstance(value, Int):
                return Int(-value.value)
            if isinstance(value, SymInt):
                return Unknown(f"integer arithmetic on {value.name} may overflow (line {node.line})")
            real = as_real(value)
            return real if isinstance(real, Unknown) else Neg(real)
        if isinstance(node, t.Binary):
            return self._binary(node, path, fn)
        if isinstance(node, t.Choose):
            raise Stuck(f"a conditional expression where it cannot be split (line {node.line})", node.line)
        if isinstance(node, t.MathCall):
            return self._math(node, path, fn)
        if isinstance(node, t.Cast):
            return self._convert(self._value(node.operand, path, fn), node.kind, node.line)
        if isinstance(node, t.Aggregate):
            values = [self._value(item, path, fn) for item in node.items]
            if node.fields:
                return Agg(tuple(zip(node.fields, values)), fields=node.fields)
            return Agg(tuple((fn.index_base + i, v) for i, v in enumerate(values)), size=len(values),
                       base=fn.index_base)
        if isinstance(node, t.UserCall):
            return self._call(node, path, fn)
        if isinstance(node, t.Unsupported):
            return Unknown(f"{node.construct} (line {node.line})")
        if isinstance(node, (t.Compare, t.Logic)):
            return Unknown(f"a comparison used as a value (line {node.line})")
        return Unknown(f"unsupported expression (line {getattr(node, 'line', 0)})")

    def _binary(self, node: t.Binary, path: Path, fn: t.Function) -> Value:
        return binary(node.op, self._value(node.left, path, fn), self._value(node.right, path, fn), fn.language,
                      node.line)

    def _math(self, node: t.MathCall, path: Path, fn: t.Function) -> Value:
        args = [as_real(self._value(a, path, fn)) for a in node.args]
        for arg in args:
            if isinstance(arg, Unknown):
                return arg
        if node.function == "pow":
            exponent = args[1]
            if isinstance(exponent, Num) and exponent.value.denominator in (1, 2):
                return Pow(args[0], exponent.value)  # type: ignore[arg-type]
            return Unknown(f"pow with a non-constant exponent (line {node.line})")
        if node.function in KNOWN_FUNCTIONS and KNOWN_FUNCTIONS[node.function] == len(args):
            return Call(node.function, tuple(args))  # type: ignore[arg-type]
        return Unknown(f"the math function {node.function} is not supported (line {node.line})")

    def _convert(self, value: Value, kind: str, line: int) -> Value:
        return convert(value, kind, line)

    # -- places

    def _locate(self, node: t.Node, path: Path, fn: t.Function) -> tuple[int, tuple[Key, ...]]:
        if isinstance(node, t.Name):
            binding = path.frames[-1].get(node.name)
            if binding is None:
                raise Stuck(f"the name {node.name} is not a parameter or local (line {node.line})", node.line)
            return binding
        if isinstance(node, t.Deref):
            cell, keys = self._locate(node.operand, path, fn)
            value = self._load(path, (cell, keys))
            if isinstance(value, Ptr):
                return value.cell, value.path
            raise Stuck(f"a dereference of something that is not a pointer (line {node.line})", node.line)
        if isinstance(node, t.Field):
            cell, keys = self._locate(node.base, path, fn)
            cell, keys = self._follow(path, cell, keys)
            return cell, keys + (node.name,)
        if isinstance(node, t.Index):
            index = self._value(node.index, path, fn)
            if not isinstance(index, Int):
                raise Stuck(f"an index that is not a constant (line {node.line})", node.line)
            cell, keys = self._locate(node.base, path, fn)
            cell, keys = self._follow(path, cell, keys)
            return cell, keys + (index.value,)
        raise Stuck(f"cannot assign to this expression (line {getattr(node, 'line', 0)})",
                    getattr(node, "line", 0))

    def _follow(self, path: Path, cell: int, keys: tuple[Key, ...]) -> tuple[int, tuple[Key, ...]]:
        """Through pointers: a pointer's fields and elements are those of what it points to."""
        value = self._load(path, (cell, keys))
        if isinstance(value, Ptr):
            return value.cell, value.path
        return cell, keys

    def _load(self, path: Path, binding: tuple[int, tuple[Key, ...]]) -> Value:
        cell, keys = binding
        value = path.store[cell]
        for key in keys:
            if isinstance(value, Ptr):
                value = self._load(path, (value.cell, value.path))
            if not isinstance(value, Agg):
                return Unknown(f"component {key} of a value that has none")
            value = value.get(key)
        return value

    def _store(self, target: t.Node, value: Value, path: Path, fn: t.Function, line: int) -> None:
        if isinstance(target, t.Name) and target.name not in path.frames[-1]:
            path.frames[-1][target.name] = (self._cell(path, value), ())  # Julia and Fortran locals
            return
        cell, keys = self._locate(target, path, fn)
        path.store[cell] = _put(path.store[cell], keys, value, line)

    # -- calls

    def _call(self, node: t.UserCall, path: Path, fn: t.Function) -> Value:
        """An unresolved call: an opaque value of its arguments (resolved calls are hoisted and inlined)."""
        if self.resolve(node.name) is not None:
            raise Stuck(f"a call of {node.name} where it cannot be inlined (line {node.line})", node.line)
        args = [as_real(self._value(a, path, fn)) for a in node.args]
        for arg in args:
            if isinstance(arg, Unknown):
                return arg
        return Opaque(node.name, tuple(args))  # type: ignore[arg-type]

    def _inline(self, node: t.UserCall, callee: t.Function, path: Path, fn: t.Function) -> list[tuple[Path, Value]]:
        if self.depth >= self.inline_depth:
            raise Stuck(f"calls nested deeper than {self.inline_depth} (line {node.line})", node.line)
        if len(node.args) != len(callee.params):
            raise Stuck(f"{callee.name} takes {len(callee.params)} arguments, the call at line {node.line} "
                        f"passes {len(node.args)}", node.line)
        frame: dict[str, tuple[int, tuple[Key, ...]]] = {}
        for param, arg in zip(callee.params, node.args):
            if param.mode in ("reference", "out", "inout") and isinstance(arg, (t.Name, t.Field, t.Index, t.Deref)):
                frame[param.name] = self._follow(path, *self._locate(arg, path, fn))
            else:
                value = self._value(arg, path, fn)
                if param.kind == "real" and not (param.size or param.struct) and param.mode == "value":
                    value = self._convert(value, "real", node.line)
                elif param.kind == "int" and param.mode == "value":
                    value = self._convert(value, "int", node.line)
                frame[param.name] = (self._cell(path, value), ())
        note = f"inlined {callee.name} from {callee.path}" if callee.path else f"inlined {callee.name}"
        if note not in self.inlined:
            self.inlined.append(note)
        saved_returned, saved_done = path.returned, path.done
        path.frames.append(frame)
        path.returned, path.done = None, False
        self.depth += 1
        try:
            ends = self._block(callee.body, [path], callee)
        finally:
            self.depth -= 1
        results: list[tuple[Path, Value]] = []
        for end in ends:
            result = self._call_result(end, callee, node.line)
            end.frames.pop()
            end.returned, end.done = saved_returned, saved_done
            results.append((end, result))
        return results

    # -- hoisting calls and conditional expressions out of a statement

    def _hoist(self, s: t.Statement, path: Path, fn: t.Function) -> list[tuple[Path, t.Statement]] | None:
        names = [n for n in ("init", "value", "condition") if getattr(s, n, None) is not None]
        if isinstance(s, (t.For, t.Stop)):
            return None
        for name in names:
            node = getattr(s, name)
            found = _first_hoistable(node, self.resolve)
            if found is None:
                continue
            out: list[tuple[Path, t.Statement]] = []
            if isinstance(found, t.Choose):
                for branch, p in self._split(found.condition, path, fn):
                    chosen = found.then if branch else found.otherwise
                    out.append((p, t.with_expression(s, name, _substitute(node, found, chosen))))
                return out
            callee = self.resolve(found.name)
            assert callee is not None
            for p, value in self._inline(found, callee, path, fn):
                self.next_cell += 1
                temp = f"$call{self.next_cell}"
                p.store[self.next_cell] = value
                p.frames[-1][temp] = (self.next_cell, ())
                out.append((p, t.with_expression(s, name, _substitute(node, found, t.Name(temp, found.line)))))
            return out
        return None

    def _call_result(self, end: Path, callee: t.Function, line: int) -> Value:
        if callee.result_name is not None:
            binding = end.frames[-1].get(callee.result_name)
            return self._load(end, binding) if binding else Unknown(f"{callee.name} never sets its result")
        if callee.returns_value:
            if end.returned is None:
                return Unknown(f"{callee.name} ends without returning a value (line {line})")
            return end.returned
        return Agg()


