"""Values and tests of IR expressions, path by path: every (path state, value) an expression can have."""
from __future__ import annotations

from collections.abc import Collection
from fractions import Fraction
from typing import cast

from verifier.claims.execute import places
from verifier.claims.execute.arithmetic import ARITHMETIC
from verifier.claims.execute.arrays import ATTRIBUTES, finfo_constant
from verifier.claims.execute.functions import Functions, opaque_note
from verifier.claims.execute.scope import Scope
from verifier.claims.execute.state import Frame, Mark, State, Visit
from verifier.claims.execute.values import (
    ARRAY,
    Compound,
    MUTABLE,
    NONE,
    NoneValue,
    Seq,
    Stuck,
    FunctionValue,
    Record,
    Unknown,
    Value,
    as_expr,
    int_of,
)
from verifier.claims.language import expression_text
from verifier.model import ir
from verifier.model.claim import Condition, Relation
from verifier.model.expr import BinOp, Call, Expr, Neg, Num, Opaque, Pow, Var

Alternatives = list[tuple[State, Value]]
RELATIONS = frozenset({"==", "!=", "<", "<=", ">", ">="})
NEGATION = {"==": "!=", "!=": "==", "<": ">=", "<=": ">", ">": "<=", ">=": "<"}
CLAIM_NODES = (Num, Var, BinOp, Neg, Pow, Call, Opaque)


def unsupported_reason(node: ir.Unsupported) -> str:
    return f"{node.construct} at line {node.line} is not supported{node.detail}"


def dotted_name(node: ir.Expr) -> str | None:
    """``a.b.c`` for a ``Field`` chain over a ``Name``, the name for a ``Name``, else None."""
    if isinstance(node, ir.Name):
        return node.name
    if isinstance(node, ir.Field):
        head = dotted_name(node.base)
        return None if head is None else f"{head}.{node.name}"
    return None


class Evaluator(Functions):
    """Expressions and tests; calls are left to ``CallEvaluator``, statements to ``Executor``."""

    def __init__(self, scope: Scope, *, unroll_limit: int = 256, inline_depth: int = 16,
                 marks: Collection[Mark] = ()):
        super().__init__()
        self.scope = scope
        self.unroll_limit = unroll_limit
        self.inline_depth = inline_depth
        self.marks = frozenset(marks)
        self.visits: dict[Mark, list[Visit]] = {}
        self.dependencies: list[str] = []
        self.inlined: list[str] = []

    def depend(self, path: str) -> None:
        """Record that the claim depends on the file ``path``."""
        if path not in self.dependencies:
            self.dependencies.append(path)

    def evaluate_detached(self, expr: ir.Expr, module: str) -> Alternatives:
        """Every (path, value) of ``expr`` at module level of ``module`` (module constants, defaults)."""
        frame = Frame(module, None, 0, (), self.new_ident())
        return self.evaluate(expr, State(()), frame)

    def call(self, node: ir.Invoke, state: State, frame: Frame, iterable: bool) -> Alternatives:
        raise NotImplementedError  # CallEvaluator

    # -- values

    def evaluate(self, node: ir.Expr, state: State, frame: Frame, iterable: bool = False) -> Alternatives:
        """Every (path state, value) ``node`` can have; the env never changes, conditions may be added.

        ``iterable``: the value is what a for loop runs over (a too long ``range`` stops the path).
        """
        if isinstance(node, CLAIM_NODES):
            return [(state, node)]
        if isinstance(node, ir.Name):
            return [(state, self.name_value(node.name, state, frame, node.line))]
        if isinstance(node, ir.NoValue):
            return [(state, NONE)]
        if isinstance(node, ir.Field):
            return self._field(node, state, frame)
        if isinstance(node, ir.Element):
            return self._element(node, state, frame)
        if isinstance(node, ir.Slice):
            return [(after, self._slice(base, node, after, frame)) for after, base in
                    self.evaluate(node.base, state, frame)]
        if isinstance(node, ir.Binary):
            result = []
            for s1, left in self.evaluate(node.left, state, frame):
                for s2, right in self.evaluate(node.right, s1, frame):
                    if isinstance(left, Record) or isinstance(right, Record):
                        result.extend(self.object_operator(node, left, right, s2, frame))
                    elif node.op in ARITHMETIC:
                        result.append((s2, self.binary(node.op, left, right, node.line)))
                    else:
                        value = self.other_binary(node.op, left, right, node.line)
                        note = opaque_note(value, node.line)
                        result.append((s2.with_note(note) if note else s2, value))
            return result
        if isinstance(node, ir.Unary):
            result = []
            for s1, operand in self.evaluate(node.operand, state, frame):
                if isinstance(operand, Record) and node.op in ("-", "+"):
                    result.extend(self.object_operator(node, operand, None, s1, frame))
                else:
                    result.append((s1, self.bounded(self.unary(node.op, operand, node.line), node.line)))
            return result
        if isinstance(node, ir.Conditional):
            result = []
            for s in self.truth(node.test, state, frame, True):
                result.extend(self.evaluate(node.then, s, frame))
            for s in self.truth(node.test, state, frame, False):
                result.extend(self.evaluate(node.orelse, s, frame))
            return result
        if isinstance(node, ir.Sequence):
            return self._sequence(node, state, frame)
        if isinstance(node, (ir.Load, ir.AddressOf)):  # kernel places
            keys = places.keys_of(node.place, lambda index: self.constant_index(index, state, frame))
            whole = isinstance(node, ir.AddressOf) or node.whole
            return [(state, places.read(state.get(node.place.root), node.place, keys, whole))]
        if isinstance(node, (ir.IntegerBinary, ir.ToInteger)):
            operands = (node.left, node.right) if isinstance(node, ir.IntegerBinary) else (node.operand,)
            paths: list[tuple[State, list[Value]]] = [(state, [])]
            for part in operands:
                paths = [(s2, values + [v]) for s1, values in paths for s2, v in self.evaluate(part, s1, frame)]
            return [(after, integer_value(node, values)) for after, values in paths]
        if isinstance(node, ir.Aggregate):
            built = self._sequence(ir.Sequence(node.items, line=node.line), state, frame)
            return [(after, places.aggregate(node, value.items)) for after, value in built
                    if isinstance(value, Seq)]
        if isinstance(node, ir.Text):
            return [(state, Unknown(f"a string at line {node.line} is not supported"))]
        if isinstance(node, ir.Invoke):
            return self.call(node, state, frame, iterable)
        if isinstance(node, ir.Compare):  # a value: 1 where it holds, 0 where not (Python's True/False)
            try:
                one: Value = Num(Fraction(1))
                zero: Value = Num(Fraction(0))
                return ([(s, one) for s in self.truth(node, state, frame, True)]
                        + [(s, zero) for s in self.truth(node, state, frame, False)])
            except Stuck as stuck:
                return [(state, Unknown(f"the comparison used as a value at line {node.line}: {stuck.reason}"))]
        if isinstance(node, ir.Logical):
            return [(state, Unknown(f"`{node.op}` used as a value at line {node.line} is not supported"))]
        return [(state, Unknown(unsupported_reason(node)))]

    # objects and dicts (``objects.py``)

    def object_field(self, record: Record, node: ir.Field, state: State, frame: Frame) -> Alternatives:
        raise NotImplementedError  # ObjectCalls

    def object_operator(self, node: ir.Binary | ir.Unary, left: Value, right: Value | None, state: State,
                        frame: Frame) -> Alternatives:
        raise NotImplementedError  # ObjectCalls

    def dict_item(self, record: Record, index: Value | ir.Text, state: State, line: int) -> Value:
        raise NotImplementedError  # ObjectCalls

    def name_value(self, name: str, state: State, frame: Frame, line: int) -> Value:
        bound = state.get(name)
        if bound is not None:
            return bound
        value = self.scope.global_value(self, frame.module, name, line)
        if isinstance(value, FunctionValue) and value.closure:  # a lambda sees the locals where it is made
            return FunctionValue(value.function, tuple(state.env), frame.ident)
        return value

    def _field(self, node: ir.Field, state: State, frame: Frame) -> Alternatives:
        line = node.line
        finfo = finfo_constant(node)
        if finfo is not None:  # np.finfo(np.float64).eps: a named positive constant
            var = finfo[0]
            return [(state.with_condition(Condition(">", var, Num(Fraction(0)), f"{var.name} > 0",
                                                    f"numpy constant (line {line})")), var)]
        member = self.scope.member_value(self, frame.module, node, lambda n: state.get(n) is not None, line)
        if member is not None:
            return [(state, member)]
        spelled = dotted_name(node)
        written = state.get(spelled) if spelled is not None else None
        if written is not None:  # a field assigned by ToField
            return [(state, written)]
        result: Alternatives = []
        for after, base in self.evaluate(node.base, state, frame):
            if isinstance(base, Record):
                result.extend(self.object_field(base, node, after, frame))
            elif isinstance(base, Var):
                result.append((after, Var(f"{base.name}.{node.name}")))
            elif isinstance(base, Opaque):
                result.append((after, Opaque(f"{base.name}.{node.name}", base.args)))
            elif isinstance(base, Unknown):
                result.append((after, base))
            elif isinstance(base, Seq) and base.kind is ARRAY and node.name in ATTRIBUTES:
                result.append((after, self.array_call(ATTRIBUTES[node.name], [base], line)))
            else:
                result.append((after, Unknown(f"the attribute .{node.name} at line {line} is not supported")))
        return result

    def _element(self, node: ir.Element, state: State, frame: Frame) -> Alternatives:
        line = node.line
        result: Alternatives = []
        for after, base in self.evaluate(node.base, state, frame):
            if isinstance(base, Unknown):
                result.append((after, base))
            elif len(node.indices) != 1:
                result.append((after, self._multi_index(base, node, after, frame)))
            elif isinstance(base, Record) and isinstance(node.indices[0], ir.Text):
                result.append((after, self.dict_item(base, node.indices[0], after, line)))
            else:
                for after2, index in self.evaluate(node.indices[0], after, frame):
                    if isinstance(base, Record):
                        result.append((after2, self.dict_item(base, index, after2, line)))
                    else:
                        result.append((after2, self._item(base, int_of(index), after2, line)))
        return result

    def _item(self, base: Value, i: int | None, state: State, line: int) -> Value:
        if i is None:
            return Unknown(f"a subscript with a non-constant index at line {line} is not supported")
        if isinstance(base, Seq):
            if not -len(base.items) <= i < len(base.items):
                raise Stuck(f"index {i} is out of range at line {line}")
            return base.items[i]
        if isinstance(base, Var):
            written = state.get(f"{base.name}[{i}]")  # an element of an array parameter assigned by ToElement
            return written if written is not None else Var(f"{base.name}[{i}]")
        if isinstance(base, Opaque):
            return Opaque(f"{base.name}[{i}]", base.args)
        return Unknown(f"the subscript at line {line} is not supported")

    def _multi_index(self, base: Value, node: ir.Element, state: State, frame: Frame) -> Value:
        line = node.line
        indices: list[int] = []
        for element in node.indices:
            alternatives = self.evaluate(element, state, frame)
            index = int_of(alternatives[0][1]) if len(alternatives) == 1 else None
            if index is None:
                return Unknown(f"the subscript at line {line} is not supported")
            indices.append(index)
        if isinstance(base, Var):
            return Var(f"{base.name}[{', '.join(str(i) for i in indices)}]")
        if isinstance(base, Seq):
            current: Value = base
            for i in indices:
                if not isinstance(current, Seq) or not -len(current.items) <= i < len(current.items):
                    raise Stuck(f"the subscript at line {line} is out of range or too deep")
                current = current.items[i]
            return current
        return Unknown(f"the subscript at line {line} is not supported")

    def _slice(self, base: Value, node: ir.Slice, state: State, frame: Frame) -> Value:
        line = node.line
        if isinstance(base, Unknown):
            return base
        if not isinstance(base, Seq):
            return Unknown(f"a slice at line {line} is not supported")
        bounds: list[int | None] = []
        for part in (node.lower, node.upper, node.step):
            if part is None:
                bounds.append(None)
                continue
            alternatives = self.evaluate(part, state, frame)
            bound = int_of(alternatives[0][1]) if len(alternatives) == 1 else None
            if bound is None:
                return Unknown(f"a slice with non-constant bounds at line {line} is not supported")
            bounds.append(bound)
        if bounds[2] == 0:
            return Unknown(f"a slice with step 0 at line {line}")
        items = base.items[slice(*bounds)]
        mutable = base.kind in MUTABLE
        return Seq(tuple(items), base.kind, self.new_ident() if mutable else 0, frame.ident if mutable else 0)

    def _sequence(self, node: ir.Sequence, state: State, frame: Frame) -> Alternatives:
        paths: list[tuple[State, tuple[Value, ...]]] = [(state, ())]
        for element in node.items:
            paths = [(s2, items + (v,)) for s, items in paths for s2, v in self.evaluate(element, s, frame)]
        mutable = node.kind in MUTABLE
        ident = self.new_ident() if mutable else 0
        return [(s, Seq(items, node.kind, ident, frame.ident if mutable else 0)) for s, items in paths]

    def store_place(self, place: ir.Place, value: Value, state: State, frame: Frame) -> State:
        """``state`` with ``value`` stored at the kernel place ``place``."""
        keys = places.keys_of(place, lambda index: self.constant_index(index, state, frame))
        return state.bind(place.root, places.written(state.get(place.root), place, keys, value))

    def constant_index(self, node: ir.Expr, state: State, frame: Frame) -> int | None:
        """The integer ``node`` evaluates to on this path without splitting it, or None."""
        alternatives = self.evaluate(node, state, frame)
        if len(alternatives) != 1:
            return None
        return int_of(alternatives[0][1])

    # -- tests

    def truth(self, node: ir.Expr, state: State, frame: Frame, want: bool) -> list[State]:
        """The states (with added branch conditions) in which ``node`` is truthy (``want``) or falsy."""
        line = 0 if isinstance(node, CLAIM_NODES) else node.line
        if isinstance(node, ir.Unary) and node.op == "not":
            return self.truth(node.operand, state, frame, not want)
        if isinstance(node, ir.Logical):
            is_and = node.op == "and"
            first = self.truth(node.left, state, frame, is_and)  # the side that needs the right operand
            shortcut = self.truth(node.left, state, frame, not is_and)
            if want == is_and:
                return [s2 for s in first for s2 in self.truth(node.right, s, frame, want)]
            return shortcut + [s2 for s in first for s2 in self.truth(node.right, s, frame, want)]
        if isinstance(node, ir.Compare):
            return self._compare_chain(node, state, frame, want)
        states = []
        for after, value in self.evaluate(node, state, frame):
            states.extend(self._truth_of_value(value, after, want, line))
        return states

    def _truth_of_value(self, value: Value, state: State, want: bool, line: int) -> list[State]:
        if isinstance(value, Unknown):
            raise Stuck(f"the test at line {line} uses a value the tool cannot follow ({value.reason})")
        if isinstance(value, NoneValue):
            return [state] if not want else []
        if isinstance(value, Seq):
            return [state] if bool(value.items) == want else []
        if isinstance(value, Compound):
            raise Stuck(f"the test at line {line} uses an array, struct or pointer as a number")
        if isinstance(value, FunctionValue):
            return [state] if want else []
        if isinstance(value, Record):  # an object is true unless its class says otherwise; a dict by its entries
            if value.cls is not None:
                raise Stuck(f"the truth of an object at line {line} is not followed")
            return [state] if bool(value.fields) == want else []
        return self.relation(value, "!=" if want else "==", Num(Fraction(0)), state, line)

    def _compare_chain(self, node: ir.Compare, state: State, frame: Frame, want: bool) -> list[State]:
        # a < b < c is (a < b) and (b < c); evaluate each operand once per path
        paths: list[tuple[State, list[Value]]] = [(state, [])]
        for operand in node.operands:
            paths = [(after, values + [value]) for s, values in paths
                     for after, value in self.evaluate(operand, s, frame)]
        result: list[State] = []
        for s, values in paths:
            result.extend(self._chain_truth(values, list(node.operators), s, want, node.line))
        return result

    def _chain_truth(self, values: list[Value], operators: list[str], state: State, want: bool,
                     line: int) -> list[State]:
        if not operators:
            return [state] if want else []
        left, right, op = values[0], values[1], operators[0]
        if want:
            states = self._single_comparison(left, op, right, state, True, line)
            return [s2 for s in states for s2 in self._chain_truth(values[1:], operators[1:], s, True, line)]
        falsy = self._single_comparison(left, op, right, state, False, line)
        rest = [s2 for s in self._single_comparison(left, op, right, state, True, line)
                for s2 in self._chain_truth(values[1:], operators[1:], s, False, line)] if len(operators) > 1 else []
        return falsy + rest

    def _single_comparison(self, left: Value, op: str, right: Value, state: State, want: bool,
                           line: int) -> list[State]:
        for v in (left, right):
            if isinstance(v, Unknown):
                raise Stuck(f"the test at line {line} uses a value the tool cannot follow ({v.reason})")
        if op in ("is", "is not"):
            if isinstance(left, NoneValue) or isinstance(right, NoneValue):
                same = isinstance(left, NoneValue) and isinstance(right, NoneValue)
                holds = same if op == "is" else not same
                return [state] if holds == want else []
            raise Stuck(f"`is` between values at line {line} is not supported")
        if op not in RELATIONS:
            raise Stuck(f"the comparison `{op}` at line {line} is not supported")
        relation = op
        if isinstance(left, NoneValue) or isinstance(right, NoneValue):
            if relation in ("==", "!="):
                same = isinstance(left, NoneValue) and isinstance(right, NoneValue)
                holds = same if relation == "==" else not same
                return [state] if holds == want else []
            raise Stuck(f"ordering comparison with None at line {line}")
        a, b = as_expr(left), as_expr(right)
        if a is None or b is None:
            raise Stuck(f"comparison of sequences at line {line} is not supported")
        if not want:
            relation = NEGATION[relation]
        return self.relation(a, relation, b, state, line)

    def relation(self, left: Expr, relation: str, right: Expr, state: State, line: int) -> list[State]:
        """``state`` with the test ``left relation right`` added (none when the path already decides it false)."""
        if isinstance(left, Num) and isinstance(right, Num):
            return [state] if holds(left.value, relation, right.value) else []
        if left == right and relation in ("==", "<=", ">="):
            return [state]
        if left == right:
            return []
        text = f"{expression_text(left)} {relation} {expression_text(right)}"
        condition = Condition(cast(Relation, relation), left, right, text, origin=f"branch (line {line})")
        if any(c.relation == relation and c.left == left and c.right == right for c in state.conditions):
            return [state]  # the same test already holds on this path
        negated = NEGATION[relation]
        if any(c.relation == negated and c.left == left and c.right == right for c in state.conditions):
            return []  # the same test was already decided the other way on this path
        return [state.with_condition(condition)]


def integer_value(node: ir.IntegerBinary | ir.ToInteger, values: list[Value]) -> Value:
    """Integer arithmetic of kernel code (``verifier.model.ir_ints``): exact on integer constants only."""
    unknown = next((v for v in values if isinstance(v, Unknown)), None)
    if unknown is not None:
        return unknown
    constants = [int_of(v) for v in values]
    line = node.line
    if isinstance(node, ir.ToInteger):
        return values[0] if constants[0] is not None else Unknown(
            f"conversion to an integer truncates (line {line})")
    a, b = constants
    if a is None or b is None:
        what = "integer division truncates" if node.op == "/" else "integer arithmetic may overflow"
        return Unknown(f"{what} (line {line})")
    if node.op == "/":
        if b == 0:
            return Unknown(f"division by zero at line {line}")
        quotient = abs(a) // abs(b)  # toward zero
        return Num(Fraction(quotient if (a >= 0) == (b >= 0) else -quotient))
    return Num(Fraction(a + b if node.op == "+" else a - b if node.op == "-" else a * b))


def holds(a: Fraction, relation: str, b: Fraction) -> bool:
    return {"==": a == b, "!=": a != b, "<": a < b, "<=": a <= b, ">": a > b, ">=": a >= b}[relation]
