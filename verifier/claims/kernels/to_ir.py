"""Lowered kernel functions (``tree``) rewritten as the shared kernel IR (``verifier.model.ir``).

A step of moving the kernel front ends onto the one executor (issue 8): a function converts only when
both executors give it the same meaning, i.e. when it uses real scalars, structs and fixed-size arrays of
reals, pointers and references to them as parameters (places: ``verifier.model.ir_places``), and none of
what the IR has no model of yet: operations on values whose kind (integer or real) the
code does not say, pointer locals, and calls whose places by reference may overlap.  Anything else gives ``None`` and the kernel runner (``run``) keeps the function.
Integer arithmetic is lowered by the static kinds of ``ir_kinds`` to ``verifier.model.ir_ints``; an
operation whose operands' kinds are not known is refused when it divides, or when the function has
integer parameters (symbolic integers that may overflow).
"""
from __future__ import annotations

from collections.abc import Callable
from fractions import Fraction

from verifier.claims.kernels import tree as t
from verifier.claims.kernels.ir_kinds import Kinds
from verifier.model import ir
from verifier.model.expr import Num
from verifier.model.ir_places import Step

MATH_PREFIX = "math:"  # callee names of known math functions: no scanned name contains a colon
UNKNOWN_PREFIX = "unknown:"  # names whose value is unknown for the reason that follows (the runner's wording)
_ARITHMETIC = {"+": "+", "-": "-", "*": "*", "/": "/"}


def unknown(reason: str) -> ir.Name:
    """A value the kernel runner does not follow either, with its reason in the kernel runner's words."""
    return ir.Name(UNKNOWN_PREFIX + reason)


class NotConvertible(Exception):
    """The function uses a construct the shared executor does not model the kernel runner's way yet."""


def convert_function(function: t.Function, resolve: Callable[[str], t.Function | None]
                     ) -> dict[str, ir.Function] | None:
    """``function`` (under the key ``""``) and every function it may call, by name, as IR; or None."""
    converted = _convert(function, resolve)
    return converted if isinstance(converted, dict) else None


def refusal(function: t.Function, resolve: Callable[[str], t.Function | None]) -> str | None:
    """Why ``function`` stays on the kernel runner (the function and construct), or None when it converts."""
    converted = _convert(function, resolve)
    return converted if isinstance(converted, str) else None


def _convert(function: t.Function, resolve: Callable[[str], t.Function | None]) -> dict[str, ir.Function] | str:
    converted: dict[str, ir.Function] = {}
    pending: list[tuple[str, t.Function]] = [("", function)]
    while pending:
        key, current = pending.pop()
        if key in converted:
            continue
        try:
            converter = _Converter(current, resolve)
            converted[key] = converter.function(top=key == "")
        except NotConvertible as refused:
            return f"{current.name}: {refused}"
        for name in converter.called:
            callee = resolve(name)
            if callee is None:
                continue
            if callee.language != function.language:
                return f"{current.name}: a call of {name} in another language"
            pending.append((name, callee))
    return converted


class _Converter:
    def __init__(self, function: t.Function, resolve: Callable[[str], t.Function | None]):
        self.source = function
        self.resolve = resolve
        self.called: list[str] = []
        self.kinds = Kinds(function)
        # integer parameters are symbolic integers: arithmetic on values of unknown kind may involve them
        self.symbolic = any(p.kind == "int" and not (p.size or p.struct) for p in function.params)
        self.pointers: set[str] = set()  # pointer parameters: ``*p``, ``p->w``, ``p[i]`` are places rooted at p
        self.scalars: set[str] = set()  # real scalars passed by value: they have no components
        self.outputs: set[str] = set()  # scalar parameters the function writes for its caller

    def function(self, top: bool) -> ir.Function:
        fn = self.source
        parameters = tuple(self.parameter(p, top) for p in fn.params)
        body = [self.statement(s) for s in fn.body]
        if fn.result_name is not None:  # Fortran: the result variable is returned at the end
            unset = unknown(f"{fn.result_name} is read before it is set (line {fn.line})")
            body = [ir.Assign((ir.ToLocal(fn.result_name, fn.line),), unset, fn.line)] + body
            body.append(ir.Return(ir.Name(fn.result_name, fn.line), fn.line))
        return ir.Function(fn.name, parameters, tuple(body), fn.path, fn.line)

    def parameter(self, param: t.Param, top: bool) -> ir.Parameter:
        """A real scalar, struct or array passed by value, or one passed by reference (a pointer, C++ ``T&``,
        Fortran dummy argument, C array): the parameter's value is what it refers to, written back to the
        caller's place when the call returns (``INOUT``; at the top level its final value is a result)."""
        aggregate = bool(param.size or param.struct)
        if param.kind not in ("real", "int") and param.struct is None or param.kind == "int" and aggregate:
            raise NotConvertible(f"parameter {param.name}")
        by_reference = param.mode != "value"
        if not aggregate and not by_reference:
            self.scalars.add(param.name)
        if not by_reference and not param.out_only:
            return ir.Parameter(param.name)
        if param.mode == "pointer":
            self.pointers.add(param.name)
        if param.const:
            return ir.Parameter(param.name)
        if not aggregate:
            self.outputs.add(param.name)
        if not top:
            return ir.Parameter(param.name, ir.ParameterKind.INOUT)
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
            if s.kind == "bool" or isinstance(s.init, t.AddressOf):
                raise NotConvertible("declaration")
            if s.size or s.struct or isinstance(s.init, t.Aggregate):
                return ir.Assign((ir.ToLocal(s.name, s.line),), self.declared_aggregate(s), s.line)
            if s.init is None:
                value: ir.Expr = unknown(f"{s.name} is read before it is set (line {s.line})")
            else:
                value = self.converted(s.init, s.kind)
            return ir.Assign((ir.ToLocal(s.name, s.line),), value, s.line)
        if isinstance(s, t.Assign):
            if isinstance(s.value, t.Aggregate):
                value = self.aggregate(s.value)
            elif self.kinds.of(s.target) == "int":
                value = self.converted(s.value, "int")
            else:
                value = self.value(s.value, top=True)
            return ir.Assign((self.target(s.target),), value, s.line)
        if isinstance(s, t.Evaluate) and isinstance(s.value, (t.UserCall, t.MathCall)):
            return ir.Evaluate(self.call(s.value, statement=True) if isinstance(s.value, t.UserCall)
                               else self.value(s.value), s.line)
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
        if isinstance(node, t.Name) and node.name not in self.pointers:
            if node.name in self.outputs:
                return ir.ToOut(node.name, node.line)
            return ir.ToLocal(node.name, node.line)
        if isinstance(node, (t.Field, t.Index, t.Deref)):
            return ir.Store(self.place(node), node.line)
        raise NotConvertible("assignment to a place")

    def place(self, node: t.Node) -> ir.Place:
        """``q.w``, ``q->w``, ``(*p).w``, ``v[i]``, ``*p`` as a place rooted at a parameter or local."""
        line = getattr(node, "line", 0)
        steps: list[Step] = []
        while not isinstance(node, t.Name):
            if isinstance(node, t.Field):
                steps.append(node.name)
                node = node.base
            elif isinstance(node, t.Index):
                steps.append(self.value(node.index))
                node = node.base
            elif isinstance(node, t.Deref) and isinstance(node.operand, t.Name) and node.operand.name in self.pointers:
                node = node.operand  # a pointer parameter's value is what it points to
            else:
                raise NotConvertible("a place that is not rooted at a parameter or local")
        if steps and node.name in self.scalars:
            raise NotConvertible("a component of a scalar")  # the kernel runner: a value that has none
        return ir.Place(node.name, tuple(reversed(steps)), line)

    def declared_aggregate(self, s: t.Declare) -> ir.Expr:
        """A local struct or array: its literal, a copy of another value, or unset components."""
        fields = self.source.structs.get(s.struct or "", ())
        if s.init is None:
            return ir.Aggregate((), fields, s.size, self.source.index_base, s.line)
        if isinstance(s.init, t.Aggregate):
            return self.aggregate(s.init, fields, s.size)
        return self.value(s.init, top=True)

    def aggregate(self, node: t.Aggregate, fields: tuple[str, ...] = (), size: int = 0) -> ir.Aggregate:
        fields = node.fields or fields
        if fields and len(node.items) > len(fields):
            raise NotConvertible("a struct literal with more items than fields")
        return ir.Aggregate(tuple(self.value(item, top=True) for item in node.items), fields, size,
                            self.source.index_base, node.line)

    def loop(self, s: t.For) -> ir.CountedLoop:
        # the kernel runner leaves the counter one step past the end; the IR leaves it at the last value
        if s.var in t.read_names(tuple(x for x in self.source.body if x is not s)) or _reassigns(s.body, s.var):
            raise NotConvertible("the loop counter is used outside its loop")
        step = self.value(s.step)
        stop = self.value(s.stop)
        if s.inclusive:  # the IR's stop is exclusive: one step further in the loop's direction
            literal = s.step.operand if isinstance(s.step, t.Negate) else s.step
            if not isinstance(literal, t.Lit):
                raise NotConvertible("an inclusive loop with a step that is not a literal")
            beyond = "+" if (literal.value > 0) != isinstance(s.step, t.Negate) else "-"
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
        if isinstance(node, (t.Field, t.Index, t.Deref)):
            return ir.Load(self.place(node), top, node.line)
        if isinstance(node, t.Negate):
            if self.kinds.of(node.operand) == "int":
                return ir.IntegerBinary("-", Num(Fraction(0)), self.value(node.operand), node.line)
            return ir.Unary("-", self.value(node.operand), node.line)
        if isinstance(node, t.Cast):
            if node.kind not in ("int", "real"):
                raise NotConvertible("a cast to a type that is neither an integer nor a real")
            return self.converted(node.operand, node.kind)
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
            return self.call(node, statement=False)
        if isinstance(node, t.Aggregate) and top:  # returned: its components are the results
            return self.aggregate(node)
        if isinstance(node, t.Unsupported):
            return unknown(f"{node.construct} (line {node.line})")
        raise NotConvertible(type(node).__name__)

    def call(self, node: t.UserCall, statement: bool) -> ir.Expr:
        """A call of a function of the scanned files (inlined) or an opaque one; places passed by reference
        are ``AddressOf`` arguments, which must not overlap (see ``verifier.model.ir_places``)."""
        callee = self.resolve(node.name)
        arguments: list[ir.Argument] = []
        if callee is None:
            arguments = [ir.Argument(self.value(a)) for a in node.args]
        else:
            if not (statement or callee.returns_value or callee.result_name is not None):
                raise NotConvertible("the value of a call of a function that returns none")
            if len(node.args) != len(callee.params):
                raise NotConvertible("a call with a different number of arguments")
            self.called.append(node.name)
            passed: list[tuple[ir.Place, bool]] = []
            for param, arg in zip(callee.params, node.args):
                place = self.reference(arg) if param.mode != "value" else None
                if place is not None:
                    passed.append((place, not param.const))
                    arguments.append(ir.Argument(ir.AddressOf(place, place.line)))
                elif isinstance(arg, t.AddressOf):
                    raise NotConvertible("an address passed by value")
                elif param.kind == "int" and not (param.size or param.struct):
                    arguments.append(ir.Argument(self.converted(arg, "int")))
                else:
                    arguments.append(ir.Argument(self.value(arg, top=True)))
            _check_no_overlap(passed)
        return ir.Invoke(ir.Name(node.name, node.line), tuple(arguments), node.name, node.line)

    def reference(self, arg: t.Node) -> ir.Place | None:
        """The place ``arg`` passes by reference (``&x``, or a name, field or element given to a reference)."""
        if isinstance(arg, t.AddressOf):
            return self.place(arg.operand)
        if isinstance(arg, (t.Name, t.Field, t.Index, t.Deref)):
            return self.place(arg)
        return None

    def binary(self, node: t.Binary) -> ir.Expr:
        if node.op == "pow":
            return self.power(node.left, node.right, node.line)
        left, right = self.kinds.of(node.left), self.kinds.of(node.right)
        if node.op == "idiv":
            if left == right == "int":
                return ir.IntegerBinary("/", self.value(node.left), self.value(node.right), node.line)
            raise NotConvertible("an integer division of values that may not be integers")
        if node.op not in _ARITHMETIC:
            raise NotConvertible(node.op)
        julia_division = node.op == "/" and self.source.language == "julia"  # `/` of integers is real there
        if left == right == "int" and not julia_division:
            return ir.IntegerBinary(node.op, self.value(node.left), self.value(node.right), node.line)
        if "real" not in (left, right) and not julia_division and (node.op == "/" or self.symbolic):
            raise NotConvertible("a division that may be integer division" if node.op == "/"
                                 else "arithmetic on values that may be symbolic integers")
        return ir.Binary(_ARITHMETIC[node.op], self.value(node.left), self.value(node.right), node.line)

    def converted(self, node: t.Node, kind: str) -> ir.Expr:
        """``node``'s value in a place of kind ``kind`` (an ``int`` local, parameter or cast)."""
        if kind != "int" or self.kinds.of(node) == "int":
            return self.value(node)
        if self.kinds.of(node) == "real":
            return ir.ToInteger(self.value(node), getattr(node, "line", 0))
        raise NotConvertible("conversion to an integer")

    def power(self, base: t.Node, exponent: t.Node, line: int) -> ir.Expr:
        if not (isinstance(exponent, t.Lit) and exponent.value.denominator in (1, 2)):
            raise NotConvertible("a power without a literal integer or half-integer exponent")
        return ir.Binary("**", self.value(base), Num(exponent.value), line)

def _check_no_overlap(passed: list[tuple[ir.Place, bool]]) -> None:
    """Places passed by reference to one call must be apart when one is written, and the indices of one
    must not read another's root (the call could change them before they are written back)."""
    for i, (place, writes) in enumerate(passed):
        for other, other_writes in passed[i + 1:]:
            if place.root == other.root and (writes or other_writes):
                raise NotConvertible("places passed by reference that may overlap")
        index_names = {n.name for step in place.steps if not isinstance(step, str) for n in _names_in(step)}
        if any(other.root in index_names for other, other_writes in passed if other_writes):
            raise NotConvertible("an index that the call may change")


def _names_in(expr: object) -> list[ir.Name]:
    if isinstance(expr, ir.Name):
        return [expr]
    found: list[ir.Name] = []
    for name in getattr(expr, "__dataclass_fields__", {}):
        value = getattr(expr, name)
        for child in value if isinstance(value, tuple) else (value,):
            found.extend(_names_in(child))
    return found


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
            target = s.target
            while isinstance(target, (t.Deref, t.Field, t.Index)):
                target = target.operand if isinstance(target, t.Deref) else target.base
            if isinstance(target, t.Name) and target.name == name:
                return True
    return False
