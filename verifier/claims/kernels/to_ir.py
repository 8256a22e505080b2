"""Lowered kernel functions (``tree``) rewritten as the shared kernel IR (``verifier.model.ir``).

A step of moving the kernel front ends onto the one executor (issue 8): a function converts only when
both executors give it the same meaning, i.e. when it uses real scalars and none of what the IR has no
model of yet: pointers and places (``*p``, ``&x``, fields, elements, out-parameters), integer parameters
(symbolic integers that may overflow), casts, integer division (C truncates, decided from the values at
run time), and index bases.  Anything else gives ``None`` and the kernel runner (``run``) keeps the
function.  A name is "maybe an integer" when a value it holds may be an exact integer constant of the
kernel runner (an integer literal, a loop counter, an ``int`` local, a call's result): a division of two
such operands is integer division there, so it is not converted.
"""
from __future__ import annotations

from collections.abc import Callable
from fractions import Fraction

from verifier.claims.kernels import tree as t
from verifier.model import ir
from verifier.model.expr import Num

MATH_PREFIX = "math:"  # callee names of known math functions: no scanned name contains a colon
_ARITHMETIC = {"+": "+", "-": "-", "*": "*", "/": "/"}


class NotConvertible(Exception):
    """The function uses a construct the shared executor does not model the kernel runner's way yet."""


def convert_function(function: t.Function, resolve: Callable[[str], t.Function | None]
                     ) -> dict[str, ir.Function] | None:
    """``function`` (under the key ``""``) and every function it may call, by name, as IR; or None."""
    converted: dict[str, ir.Function] = {}
    pending: list[tuple[str, t.Function]] = [("", function)]
    while pending:
        key, current = pending.pop()
        if key in converted:
            continue
        try:
            converter = _Converter(current)
            converted[key] = converter.function(top=key == "")
        except NotConvertible:
            return None
        for name in converter.called:
            callee = resolve(name)
            if callee is None:
                continue
            if callee.language != function.language or not callee.returns_value:
                return None
            pending.append((name, callee))
    return converted


class _Converter:
    def __init__(self, function: t.Function):
        self.source = function
        self.called: list[str] = []
        self.maybe_int = _maybe_int_names(function)
        self.pointers: set[str] = set()  # scalar pointer parameters: ``*p`` is the parameter's value
        self.outputs: set[str] = set()  # parameters the function writes for its caller

    def function(self, top: bool) -> ir.Function:
        fn = self.source
        if not fn.returns_value and not top:
            raise NotConvertible("no value returned")
        parameters = tuple(self.parameter(p, top) for p in fn.params)
        body = [self.statement(s) for s in fn.body]
        if fn.result_name is not None:  # Fortran: the result variable is returned at the end
            unset = ir.Unsupported(f"reading {fn.result_name} before it is set", fn.line)
            body = [ir.Assign((ir.ToLocal(fn.result_name, fn.line),), unset, fn.line)] + body
            body.append(ir.Return(ir.Name(fn.result_name, fn.line), fn.line))
        return ir.Function(fn.name, parameters, tuple(body), fn.path, fn.line)

    def parameter(self, param: t.Param, top: bool) -> ir.Parameter:
        """A real scalar passed by value, or (at the top level) a real scalar out-parameter: ``*p`` of a pointer
        reads and writes the parameter itself, as C++ references and Fortran ``intent(out)`` arguments do."""
        if param.kind != "real" or param.size or param.struct:
            raise NotConvertible(f"parameter {param.name}")
        if param.mode == "value" and not param.out_only:
            return ir.Parameter(param.name)
        if not top:
            raise NotConvertible(f"parameter {param.name}")
        if param.mode == "pointer":
            self.pointers.add(param.name)
        if param.const:
            return ir.Parameter(param.name)
        self.outputs.add(param.name)
        if param.mode == "out" or param.out_only:
            return ir.Parameter(param.name, ir.ParameterKind.OUT)
        # the kernel runner reports such a parameter on the paths that change it: every path must write it
        if not _written_on_every_path(self.source.body, param.name):
            raise NotConvertible(f"parameter {param.name} is not written on every path")
        return ir.Parameter(param.name, ir.ParameterKind.INOUT)

    # -- statements

    def block(self, statements: tuple[t.Statement, ...]) -> tuple[ir.Statement, ...]:
        return tuple(self.statement(s) for s in statements)

    def statement(self, s: t.Statement) -> ir.Statement:
        if isinstance(s, t.Declare):
            if s.size or s.struct or s.kind == "bool":
                raise NotConvertible("declaration")
            if s.init is None:
                value: ir.Expr = ir.Unsupported(f"reading {s.name} before it is set", s.line)
            elif s.kind == "int" and not self.surely_int(s.init):
                raise NotConvertible("conversion to an integer")
            else:
                value = self.value(s.init)
            return ir.Assign((ir.ToLocal(s.name, s.line),), value, s.line)
        if isinstance(s, t.Assign):
            return ir.Assign((self.target(s.target),), self.value(s.value), s.line)
        if isinstance(s, t.Destructure):
            targets = tuple(ir.ToLocal(name, s.line) for name in s.targets)
            return ir.Assign((ir.Unpack(targets, s.line),), self.value(s.value, top=True), s.line)
        if isinstance(s, t.If):
            return ir.If(self.test(s.condition), self.block(s.then), self.block(s.otherwise), s.line)
        if isinstance(s, t.For):
            return self.loop(s)
        if isinstance(s, t.Return):
            if s.value is None:
                if self.source.result_name is not None:
                    return ir.Return(ir.Name(self.source.result_name, s.line), s.line)
                if self.source.returns_value:
                    raise NotConvertible("a return without a value")
                return ir.Return(None, s.line)
            return ir.Return(self.value(s.value, top=True), s.line)
        if isinstance(s, t.Stop):
            return ir.Unsupported(s.construct, s.line)
        raise NotConvertible(type(s).__name__)

    def target(self, node: t.Node) -> ir.Target:
        if isinstance(node, t.Deref):
            name = self.pointee(node)
            if name is None:
                raise NotConvertible("assignment through a pointer")
            return ir.ToOut(name, node.line)
        if isinstance(node, t.Name) and node.name not in self.pointers:
            if node.name in self.outputs:
                return ir.ToOut(node.name, node.line)
            return ir.ToLocal(node.name, node.line)
        raise NotConvertible("assignment to a place")

    def pointee(self, node: t.Deref) -> str | None:
        """``p`` of ``*p`` for a scalar pointer parameter ``p``."""
        operand = node.operand
        return operand.name if isinstance(operand, t.Name) and operand.name in self.pointers else None

    def loop(self, s: t.For) -> ir.CountedLoop:
        # the kernel runner leaves the counter one step past the end; the IR leaves it at the last value
        if s.var in t.read_names(tuple(x for x in self.source.body if x is not s)) or _reassigns(s.body, s.var):
            raise NotConvertible("the loop counter is used outside its loop")
        step = self.value(s.step)
        stop = self.value(s.stop)
        if s.inclusive:  # the IR's stop is exclusive: one step further in the loop's direction
            if not isinstance(s.step, t.Lit):
                raise NotConvertible("an inclusive loop with a step that is not a literal")
            beyond = "+" if s.step.value > 0 else "-"
            stop = ir.Binary(beyond, stop, Num(Fraction(1)), s.line)
        return ir.CountedLoop(s.var, self.value(s.start), stop, step, self.block(s.body), s.line)

    # -- expressions

    def test(self, node: t.Node) -> ir.Expr:
        if isinstance(node, t.Logic):
            if node.op == "not":
                return ir.Unary("not", self.test(node.operands[0]), node.line)
            return ir.Logical(node.op, self.test(node.operands[0]), self.test(node.operands[1]), node.line)
        if isinstance(node, t.Compare):
            return ir.Compare((self.value(node.left), self.value(node.right)), (node.op,), node.line)
        line = getattr(node, "line", 0)
        return ir.Compare((self.value(node), Num(Fraction(0))), ("!=",), line)

    def value(self, node: t.Node, top: bool = False) -> ir.Expr:
        if isinstance(node, t.Lit):
            return Num(node.value)
        if isinstance(node, t.Name):
            if node.name in self.pointers:
                raise NotConvertible("a pointer used as a value")
            return ir.Name(node.name, node.line)
        if isinstance(node, t.Deref):
            name = self.pointee(node)
            if name is None:
                raise NotConvertible("a dereference")
            return ir.Name(name, node.line)
        if isinstance(node, t.Negate):
            return ir.Unary("-", self.value(node.operand), node.line)
        if isinstance(node, t.Binary):
            return self.binary(node)
        if isinstance(node, t.Choose):
            return ir.Conditional(self.test(node.condition), self.value(node.then), self.value(node.otherwise),
                                  node.line)
        if isinstance(node, t.MathCall):
            if node.function == "pow" and len(node.args) == 2:
                return self.power(node.args[0], node.args[1], node.line)
            callee = ir.Name(MATH_PREFIX + node.function, node.line)
            return ir.Invoke(callee, tuple(ir.Argument(self.value(a)) for a in node.args), node.function,
                             node.line)
        if isinstance(node, t.UserCall):
            self.called.append(node.name)
            return ir.Invoke(ir.Name(node.name, node.line), tuple(ir.Argument(self.value(a)) for a in node.args),
                             node.name, node.line)
        if isinstance(node, t.Aggregate) and top and not node.fields:
            return ir.Sequence(tuple(self.value(item) for item in node.items), ir.SequenceKind.TUPLE, node.line)
        if isinstance(node, t.Unsupported):
            return ir.Unsupported(node.construct, node.line)
        raise NotConvertible(type(node).__name__)

    def binary(self, node: t.Binary) -> ir.Expr:
        if node.op == "pow":
            return self.power(node.left, node.right, node.line)
        if node.op not in _ARITHMETIC:
            raise NotConvertible(node.op)
        if node.op == "/" and self.source.language != "julia" and self.maybe(node.left) and self.maybe(node.right):
            raise NotConvertible("a division that may be integer division")
        return ir.Binary(_ARITHMETIC[node.op], self.value(node.left), self.value(node.right), node.line)

    def power(self, base: t.Node, exponent: t.Node, line: int) -> ir.Expr:
        if not (isinstance(exponent, t.Lit) and exponent.value.denominator in (1, 2)):
            raise NotConvertible("a power without a literal integer or half-integer exponent")
        return ir.Binary("**", self.value(base), Num(exponent.value), line)

    # -- integer kinds (see the module's docstring)

    def maybe(self, node: t.Node) -> bool:
        return _maybe_int(node, self.maybe_int)

    def surely_int(self, node: t.Node) -> bool:
        if isinstance(node, t.Lit):
            return node.kind == "int" and node.value.denominator == 1
        if isinstance(node, t.Negate):
            return self.surely_int(node.operand)
        if isinstance(node, t.Binary) and node.op in ("+", "-", "*"):
            return self.surely_int(node.left) and self.surely_int(node.right)
        return False  # names: their kind may change with an assignment; the kernel runner decides at run time


def _maybe_int(node: t.Node, names: set[str]) -> bool:
    if isinstance(node, t.Lit):
        return node.kind == "int"
    if isinstance(node, t.Name):
        return node.name in names
    if isinstance(node, t.Negate):
        return _maybe_int(node.operand, names)
    if isinstance(node, t.Binary):
        return _maybe_int(node.left, names) or _maybe_int(node.right, names)
    if isinstance(node, t.Choose):
        return _maybe_int(node.then, names) or _maybe_int(node.otherwise, names)
    return isinstance(node, t.UserCall)  # a callee's result is not converted to its declared kind


def _maybe_int_names(function: t.Function) -> set[str]:
    """Names that may hold an exact integer of the kernel runner somewhere in ``function``: a fixpoint."""
    names: set[str] = set()
    assignments: list[tuple[str, t.Node | None]] = []

    def collect(statements: tuple[t.Statement, ...]) -> None:
        for s in statements:
            if isinstance(s, t.Declare):
                if s.kind == "int":
                    names.add(s.name)
                elif s.kind == "unknown" and s.init is not None:  # an untyped local keeps its value's kind
                    assignments.append((s.name, s.init))
            elif isinstance(s, t.Assign) and isinstance(s.target, t.Name):
                assignments.append((s.target.name, s.value))
            elif isinstance(s, t.Destructure):
                assignments.extend((name, None) for name in s.targets)
            elif isinstance(s, t.For):
                names.add(s.var)
                collect(s.body)
            elif isinstance(s, t.If):
                collect(s.then)
                collect(s.otherwise)

    collect(function.body)
    changed = True
    while changed:
        changed = False
        for name, value in assignments:
            if name not in names and (value is None or _maybe_int(value, names)):
                names.add(name)
                changed = True
    return names


def _reassigns(statements: tuple[t.Statement, ...], name: str) -> bool:
    for s in statements:
        if isinstance(s, t.Assign) and isinstance(s.target, t.Name) and s.target.name == name:
            return True
        if isinstance(s, (t.Declare, t.For)) and (getattr(s, "name", None) == name or getattr(s, "var", None) == name):
            return True
        if isinstance(s, t.Destructure) and name in s.targets:
            return True
        if isinstance(s, t.If) and (_reassigns(s.then, name) or _reassigns(s.otherwise, name)):
            return True
        if isinstance(s, t.For) and _reassigns(s.body, name):
            return True
    return False


def _written_on_every_path(statements: tuple[t.Statement, ...], name: str) -> bool:
    """Whether a statement of the body itself (not a branch) writes ``name`` or ``*name``, and no path
    returns early (only a last ``return`` statement)."""
    def returns(items: tuple[t.Statement, ...]) -> bool:
        return any(isinstance(s, t.Return) or (isinstance(s, t.If) and (returns(s.then) or returns(s.otherwise)))
                   or (isinstance(s, t.For) and returns(s.body)) for s in items)

    if returns(statements[:-1]) or (statements and not isinstance(statements[-1], t.Return)
                                    and returns(statements[-1:])):
        return False
    for s in statements:
        if isinstance(s, t.Assign):
            target = s.target.operand if isinstance(s.target, t.Deref) else s.target
            if isinstance(target, t.Name) and target.name == name:
                return True
    return False
