"""Python (libcst trees) lowered to the kernel IR.

Only syntax is rewritten here; what a name means (a local, a module constant, an import, a function) is
decided when the function runs, by ``PythonScope``.  Every construct without an IR counterpart becomes
``ir.Unsupported`` with the wording the reports use.
"""
from __future__ import annotations

from collections.abc import Iterable
from fractions import Fraction

import libcst as cst

from verifier.claims.frontends.python.modules import ModuleInfo, dotted
from verifier.model import ir
from verifier.model.ir_keys import DICT_LITERAL, LAMBDA_PREFIX
from verifier.model.expr import Num

_BINARY: dict[type, str] = {
    cst.Add: "+", cst.Subtract: "-", cst.Multiply: "*", cst.Divide: "/", cst.Power: "**",
    cst.FloorDivide: "//", cst.Modulo: "%", cst.BitAnd: "&", cst.BitOr: "|", cst.BitXor: "^",
    cst.LeftShift: "<<", cst.RightShift: ">>", cst.MatrixMultiply: "@",
}
_AUGMENTED: dict[type, str] = {
    cst.AddAssign: "+", cst.SubtractAssign: "-", cst.MultiplyAssign: "*", cst.DivideAssign: "/",
    cst.PowerAssign: "**",
}
_UNARY: dict[type, str] = {cst.Minus: "-", cst.Plus: "+", cst.BitInvert: "~", cst.Not: "not"}
_COMPARISONS: dict[type, str] = {
    cst.Equal: "==", cst.NotEqual: "!=", cst.LessThan: "<", cst.LessThanEqual: "<=", cst.GreaterThan: ">",
    cst.GreaterThanEqual: ">=", cst.In: "in", cst.NotIn: "not in", cst.Is: "is", cst.IsNot: "is not",
}
_STATEMENT_NAMES = {
    "While": "the while loop", "Try": "the try statement", "TryStar": "the try statement",
    "With": "the with statement", "Match": "the match statement", "FunctionDef": "a nested function definition",
    "ClassDef": "a class definition", "Global": "the global statement", "Nonlocal": "the nonlocal statement",
    "Import": "an import statement", "ImportFrom": "an import statement", "Del": "the del statement",
}
_EXPRESSION_NAMES = {
    "ListComp": "a list comprehension", "SetComp": "a set comprehension", "DictComp": "a dict comprehension",
    "GeneratorExp": "a generator expression", "Lambda": "a lambda", "Dict": "a dict", "Set": "a set",
    "NamedExpr": "an assignment expression (:=)", "Await": "await", "Yield": "yield",
    "SimpleString": "a string", "ConcatenatedString": "a string", "FormattedString": "an f-string",
    "Ellipsis": "`...`", "StarredElement": "a starred expression",
}
_QUIET = (cst.SimpleString, cst.ConcatenatedString, cst.FormattedString, cst.Ellipsis)  # docstrings, `...`


def spelling(node: cst.BaseExpression) -> str:
    """The source text of a callee (for messages)."""
    name = dotted(node)
    if name is not None:
        return name
    try:
        return cst.Module(body=[]).code_for_node(node)
    except Exception:  # pragma: no cover - printing is best effort
        return type(node).__name__


def string_key(node: cst.BaseExpression) -> str | None:
    """The text of a plain string literal (no f-string, no bytes), or None."""
    if isinstance(node, cst.SimpleString):
        value = node.evaluated_value
        return value if isinstance(value, str) else None
    return None


def is_generator(node: cst.FunctionDef) -> bool:
    found: list[cst.Yield] = []

    class Visitor(cst.CSTVisitor):
        def visit_Yield(self, n: cst.Yield) -> None:
            found.append(n)

        def visit_FunctionDef(self, n: cst.FunctionDef) -> bool:
            return n is node

        def visit_Lambda(self, n: cst.Lambda) -> bool:
            return False

    node.visit(Visitor())
    return bool(found)


def lower_function(module: ModuleInfo, node: cst.FunctionDef, qualname: str, owner: str | None) -> ir.Function:
    """The IR of one function (cached on the module: lowering is pure)."""
    key = (id(node), qualname)
    cached = module.lowered.get(key)
    if cached is None:
        lowering = Lowering(module)
        line, column = module.position(node)
        cached = ir.Function(qualname, lowering.parameters(node.params), lowering.block(node.body.body),
                             module.path, line, column, owner, is_generator(node))
        module.lowered[key] = cached
    return cached


def lower_expression(module: ModuleInfo, node: cst.BaseExpression) -> ir.Expr:
    return Lowering(module).expr(node)


class Lowering:
    """Rewrites the statements and expressions of one module."""

    def __init__(self, module: ModuleInfo):
        self.module = module

    def _at(self, node: cst.CSTNode) -> tuple[int, int]:
        return self.module.position(node)

    def parameters(self, params: cst.Parameters) -> tuple[ir.Parameter, ...]:
        out: list[ir.Parameter] = []
        for p in params.posonly_params:
            out.append(self._parameter(p, ir.Binding.POSITIONAL_ONLY))
        for p in params.params:
            out.append(self._parameter(p, ir.Binding.POSITIONAL))
        if isinstance(params.star_arg, cst.Param):
            out.append(ir.Parameter(params.star_arg.name.value, binding=ir.Binding.VARIADIC))
        for p in params.kwonly_params:
            out.append(self._parameter(p, ir.Binding.KEYWORD_ONLY))
        if params.star_kwarg is not None:
            out.append(ir.Parameter(params.star_kwarg.name.value, binding=ir.Binding.VARIADIC_KEYWORD))
        return tuple(out)

    def _parameter(self, param: cst.Param, binding: ir.Binding) -> ir.Parameter:
        default = self.expr(param.default) if param.default is not None else None
        return ir.Parameter(param.name.value, binding=binding, default=default)

    # -- statements

    def block(self, statements: Iterable[cst.CSTNode]) -> tuple[ir.Statement, ...]:
        out: list[ir.Statement] = []
        for stmt in statements:
            out.extend(self.statement(stmt))
        return tuple(out)

    def statement(self, stmt: cst.CSTNode) -> list[ir.Statement]:
        line, column = self._at(stmt)
        if isinstance(stmt, (cst.SimpleStatementLine, cst.SimpleStatementSuite)):
            return list(self.block(stmt.body))
        if isinstance(stmt, cst.If):
            return [self._if(stmt)]
        if isinstance(stmt, cst.For):
            if stmt.asynchronous is not None:
                return [ir.Unsupported("`async for`", line, column)]
            orelse = self.block(stmt.orelse.body.body) if stmt.orelse is not None else None
            return [ir.ForEach(self.target(stmt.target), self.expr(stmt.iter), self.block(stmt.body.body), orelse,
                               line, column, self.module.end_line(stmt) or line)]
        if isinstance(stmt, (cst.Pass, cst.Assert)):
            return []  # an assertion only removes executions (those that raise); ignoring it is sound
        if isinstance(stmt, cst.Expr):
            return self._expression_statement(stmt, line, column)
        if isinstance(stmt, cst.Assign):
            targets = tuple(self.target(t.target) for t in stmt.targets)
            return [ir.Assign(targets, self.expr(stmt.value), line, column)]
        if isinstance(stmt, cst.AnnAssign):
            if stmt.value is None:
                return []
            return [ir.Assign((self.target(stmt.target),), self.expr(stmt.value), line, column)]
        if isinstance(stmt, cst.AugAssign):
            return [self._augmented(stmt, line, column)]
        if isinstance(stmt, cst.Return):
            return [ir.Return(self.expr(stmt.value) if stmt.value is not None else None, line, column)]
        if isinstance(stmt, cst.Break):
            return [ir.Break(line, column)]
        if isinstance(stmt, cst.Continue):
            return [ir.Continue(line, column)]
        if isinstance(stmt, cst.Raise):
            return [ir.Raise(line, column)]
        name = type(stmt).__name__
        return [ir.Unsupported(_STATEMENT_NAMES.get(name, f"the {name} statement"), line, column)]

    def _if(self, stmt: cst.If) -> ir.If:
        line, column = self._at(stmt)
        orelse: tuple[ir.Statement, ...] = ()
        if isinstance(stmt.orelse, cst.If):
            orelse = (self._if(stmt.orelse),)
        elif stmt.orelse is not None:
            orelse = self.block(stmt.orelse.body.body)
        return ir.If(self.expr(stmt.test), self.block(stmt.body.body), orelse, line, column)

    def _augmented(self, stmt: cst.AugAssign, line: int, column: int) -> ir.Statement:
        op = _AUGMENTED.get(type(stmt.operator))
        value: ir.Expr
        if op is None:
            value = ir.Unsupported(f"the operator {stmt.operator.__class__.__name__}", line, column)
        else:
            value = ir.Binary(op, self.expr(stmt.target), self.expr(stmt.value), line, column)
        return ir.Assign((self.target(stmt.target),), value, line, column)

    def _expression_statement(self, stmt: cst.Expr, line: int, column: int) -> list[ir.Statement]:
        node = stmt.value
        if isinstance(node, _QUIET):
            return []
        if isinstance(node, (cst.Yield, cst.Await)):
            word = "yield" if isinstance(node, cst.Yield) else "await"
            return [ir.Unsupported(f"`{word}`", line, column, " (generators and coroutines are not followed)")]
        if not isinstance(node, cst.Call):
            return []  # no effect on values; evaluating it may only split paths
        call = ir.Evaluate(self.expr(node), line, column)
        func = node.func
        if (isinstance(func, cst.Attribute) and isinstance(func.value, cst.Name)
                and func.attr.value == "append" and len(node.args) == 1):
            return [ir.Append(func.value.value, self.expr(node.args[0].value), call, line, column)]
        return [call]

    def target(self, node: cst.BaseExpression) -> ir.Target:
        line, column = self._at(node)
        if isinstance(node, cst.Name):
            return ir.ToLocal(node.value, line, column)
        if isinstance(node, (cst.Tuple, cst.List)):
            if any(isinstance(el, cst.StarredElement) for el in node.elements):
                return ir.Unsupported("starred unpacking", line, column)
            return ir.Unpack(tuple(self.target(el.value) for el in node.elements), line, column)
        if isinstance(node, cst.Subscript) and isinstance(node.value, cst.Name):
            return ir.ToElement(node.value.value, (self._target_index(node),), line, column)
        if (isinstance(node, cst.Subscript) and isinstance(node.value, cst.Subscript)
                and isinstance(node.value.value, cst.Name)):
            indices = (self._target_index(node.value), self._target_index(node))
            return ir.ToElement(node.value.value.value, indices, line, column)
        if isinstance(node, cst.Attribute):
            if isinstance(node.value, cst.Name):
                return ir.ToField(node.value.value, node.attr.value, line, column)
            return ir.Unsupported("assignment to a nested attribute", line, column)
        return ir.Unsupported(f"assignment to {type(node).__name__}", line, column)

    def _target_index(self, node: cst.Subscript) -> ir.Expr:
        if len(node.slice) == 1 and isinstance(node.slice[0].slice, cst.Slice):  # v[1:] = w
            line, column = self._at(node)
            part = node.slice[0].slice
            bounds = [self.expr(b) if b is not None else None for b in (part.lower, part.upper, part.step)]
            return ir.Slice(self.expr(node.value), bounds[0], bounds[1], bounds[2], line, column)
        if len(node.slice) != 1 or not isinstance(node.slice[0].slice, cst.Index):
            line, column = self._at(node)
            return ir.Unsupported("a subscript that is not one index", line, column)
        return self._index(node.slice[0].slice.value)

    def _index(self, node: cst.BaseExpression) -> ir.Expr:
        """An index; a string literal is a constant key (``d["X"]``)."""
        key = string_key(node)
        if key is not None:
            line, column = self._at(node)
            return ir.Text(key, line, column)
        return self.expr(node)

    # -- expressions

    def expr(self, node: cst.BaseExpression) -> ir.Expr:
        line, column = self._at(node)
        if isinstance(node, cst.Integer):
            try:
                return Num(Fraction(int(node.value.replace("_", ""), 0)))
            except ValueError:
                return ir.Unsupported(f"the number {node.value}", line, column)
        if isinstance(node, cst.Float):
            try:
                return Num(Fraction(node.value.replace("_", "")))
            except ValueError:
                return ir.Unsupported(f"the number {node.value}", line, column)
        key = string_key(node)
        if key is not None:  # a constant key where one is used (d["X"], d.get("X")); else a string
            return ir.Text(key, line, column)
        if isinstance(node, cst.Imaginary):
            return ir.Unsupported(f"the complex number {node.value}", line, column)
        if isinstance(node, cst.Name):
            if node.value in ("True", "False"):
                return Num(Fraction(1 if node.value == "True" else 0))
            if node.value == "None":
                return ir.NoValue(line, column)
            return ir.Name(node.value, line, column)
        if isinstance(node, cst.Attribute):
            return ir.Field(self.expr(node.value), node.attr.value, line, column)
        if isinstance(node, cst.Subscript):
            return self._subscript(node, line, column)
        if isinstance(node, cst.BinaryOperation):
            symbol = _BINARY.get(type(node.operator), type(node.operator).__name__)
            return ir.Binary(symbol, self.expr(node.left), self.expr(node.right), line, column)
        if isinstance(node, cst.UnaryOperation):
            return ir.Unary(_UNARY[type(node.operator)], self.expr(node.expression), line, column)
        if isinstance(node, cst.IfExp):
            return ir.Conditional(self.expr(node.test), self.expr(node.body), self.expr(node.orelse), line, column)
        if isinstance(node, (cst.Tuple, cst.List)):
            if any(isinstance(el, cst.StarredElement) for el in node.elements):
                return ir.Unsupported("a starred element", line, column)
            kind = ir.SequenceKind.TUPLE if isinstance(node, cst.Tuple) else ir.SequenceKind.LIST
            return ir.Sequence(tuple(self.expr(el.value) for el in node.elements), kind, line, column)
        if isinstance(node, cst.Call):
            return ir.Invoke(self.expr(node.func), tuple(self._argument(a) for a in node.args), spelling(node.func),
                             line, column)
        if isinstance(node, cst.Dict):
            return self._mapping(node, line, column)
        if isinstance(node, cst.Lambda):
            name = f"{LAMBDA_PREFIX}{line}:{column}"
            if name not in self.module.lambdas:
                body = (ir.Return(self.expr(node.body), line, column),)
                self.module.lambdas[name] = ir.Function(f"<lambda at line {line}>", self.parameters(node.params),
                                                        body, self.module.path, line, column)
            return ir.Name(name, line, column)
        if isinstance(node, cst.Comparison):
            operands = (self.expr(node.left),) + tuple(self.expr(c.comparator) for c in node.comparisons)
            operators = tuple(_COMPARISONS.get(type(c.operator), type(c.operator).__name__)
                              for c in node.comparisons)
            return ir.Compare(operands, operators, line, column)
        if isinstance(node, cst.BooleanOperation):
            word = "and" if isinstance(node.operator, cst.And) else "or"
            return ir.Logical(word, self.expr(node.left), self.expr(node.right), line, column)
        name = type(node).__name__
        return ir.Unsupported(_EXPRESSION_NAMES.get(name, f"the expression {name}"), line, column)

    def _mapping(self, node: cst.Dict, line: int, column: int) -> ir.Expr:
        keys: list[str | int] = []
        items: list[ir.Argument] = []
        for element in node.elements:
            if not isinstance(element, cst.DictElement):
                return ir.Unsupported("a dict with `**` unpacking", line, column)
            key: str | int | None = string_key(element.key)
            if key is None and isinstance(element.key, cst.Integer):
                number = self.expr(element.key)
                key = int(number.value) if isinstance(number, Num) else None
            if key is None:
                return ir.Unsupported("a dict whose keys are not string or integer literals", line, column)
            if key in keys:
                return ir.Unsupported("a dict with a repeated key", line, column)
            keys.append(key)
            items.append(ir.Argument(self.expr(element.value), repr(key)))
        return ir.Invoke(ir.Name(DICT_LITERAL, line, column), tuple(items), "dict", line, column)

    def _subscript(self, node: cst.Subscript, line: int, column: int) -> ir.Expr:
        base = self.expr(node.value)
        if len(node.slice) == 1 and isinstance(node.slice[0].slice, cst.Slice):
            part = node.slice[0].slice
            bounds = [self.expr(b) if b is not None else None for b in (part.lower, part.upper, part.step)]
            return ir.Slice(base, bounds[0], bounds[1], bounds[2], line, column)
        indices: list[ir.Expr] = []
        for element in node.slice:
            if isinstance(element.slice, cst.Index):
                indices.append(self._index(element.slice.value))
            else:
                indices.append(ir.Unsupported("a slice among indices", line, column))
        return ir.Element(base, tuple(indices), line, column)

    def _argument(self, arg: cst.Arg) -> ir.Argument:
        star = {"": ir.Star.NONE, "*": ir.Star.SEQUENCE, "**": ir.Star.MAPPING}[arg.star]
        keyword = arg.keyword.value if arg.keyword is not None else None
        return ir.Argument(self.expr(arg.value), keyword, star)
