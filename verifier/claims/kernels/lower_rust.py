"""Rust: tree-sitter trees -> lowered functions (``tree``).

Tail expressions are returns; ``&mut T`` parameters are out-parameters written through ``*p``; float
methods (``x.sqrt()``, ``x.powi(2)``, ``x.mul_add(y, z)``, ``x.abs()``, ``x.hypot(y)``) are the math
functions; ``for i in a..b`` / ``a..=b`` are counted loops.
"""
from __future__ import annotations

from dataclasses import replace
from fractions import Fraction
from typing import Any

from verifier.claims.kernels import tree as t
from verifier.claims.kernels.common import Lowering, scalar_kind
from verifier.claims.kernels.locate import impl_owner, walk

_ASSIGN_OPS: dict[str, t.BinaryOp] = {"+=": "+", "-=": "-", "*=": "*", "/=": "/"}
_ARITHMETIC = {"+", "-", "*", "/"}
_COMPARISONS = {"==", "!=", "<", "<=", ">", ">="}
_METHODS = {"sqrt": "sqrt", "sin": "sin", "cos": "cos", "tan": "tan", "exp": "exp", "ln": "log", "abs": "abs",
            "hypot": "hypot", "mul_add": "fma", "copysign": "copysign", "min": "min", "max": "max"}
_STATEMENT_EXPRESSIONS = {"assignment_expression", "compound_assignment_expr", "for_expression",
                          "if_expression", "return_expression", "while_expression", "loop_expression",
                          "macro_invocation", "call_expression", "block"}


class RustLowering(Lowering):
    def __init__(self, source: Any, path: str):
        super().__init__(source, path)
        self.receivers: dict[tuple[str, str], str] = {}  # (impl type, method) -> `&self`, `&mut self`, `self`
        for node in walk(source.root):
            if node.type in ("const_item", "static_item"):
                name, value = node.child_by_field_name("name"), node.child_by_field_name("value")
                if name is not None and value is not None:
                    self.constants[self.text(name)] = self.expression(value)
            elif node.type == "struct_item":
                name, body = node.child_by_field_name("name"), node.child_by_field_name("body")
                if name is not None and body is not None and body.type == "field_declaration_list":
                    self.structs[self.text(name)] = tuple(
                        self.text(f.child_by_field_name("name")) for f in body.named_children
                        if f.type == "field_declaration" and f.child_by_field_name("name") is not None)
            elif node.type == "function_item":
                owner = impl_owner(source, node)
                receiver = next((c for c in node.child_by_field_name("parameters").named_children
                                 if c.type == "self_parameter"), None)
                if owner is not None and receiver is not None:
                    self.receivers[(owner, self.text(node.child_by_field_name("name")))] = self.text(receiver)
        self.owner: str | None = None  # the impl type of the function being lowered
        self.pointer_names: set[str] = set()  # parameters holding a reference (`&T`, `&mut T`, `&self`)
        self.struct_of: dict[str, str] = {}  # parameter -> its struct type

    # -- functions

    def function(self, node: Any) -> t.Function:
        name = self.text(node.child_by_field_name("name"))
        self.scope = set()
        self.owner = impl_owner(self.source, node)
        params: list[t.Param] = []
        for child in node.child_by_field_name("parameters").named_children:
            if child.type == "self_parameter":
                # `&self` / `&mut self` is a reference to the impl's struct, `self` the struct itself
                by_reference = self.text(child).lstrip().startswith("&")
                struct = self.owner if self.owner in self.structs else None
                params.append(t.Param("self", "unknown", "pointer" if by_reference else "value", 0,
                                      struct, const="mut" not in self.text(child)))
                self.scope.add("self")
                continue
            if child.type != "parameter":
                continue
            pattern = child.child_by_field_name("pattern")
            if pattern is not None and pattern.type == "mut_pattern":
                pattern = pattern.named_children[-1]
            if pattern is None or pattern.type != "identifier":
                continue
            params.append(self._param(self.text(pattern), child.child_by_field_name("type")))
            self.scope.add(params[-1].name)
        self.pointer_names = {p.name for p in params if p.mode == "pointer"}
        self.struct_of = {p.name: p.struct for p in params if p.struct is not None}
        returns = node.child_by_field_name("return_type") is not None
        body = self._body(node.child_by_field_name("body"), returns)
        read = t.read_names(body)
        params = [replace(p, out_only=True) if p.mode == "pointer" and not p.const and p.name not in read else p
                  for p in params]
        return t.Function(name, tuple(params), body, returns, line=self.line(node), path=self.path,
                          language="rust", structs=dict(self.structs))

    def _param(self, name: str, type_node: Any) -> t.Param:
        mode: t.ParamMode = "value"
        const = False
        while type_node is not None and type_node.type == "reference_type":
            mutable = any(c.type == "mutable_specifier" for c in type_node.children)
            mode, const = "pointer", not mutable
            type_node = type_node.child_by_field_name("type")
        size = 0
        struct = None
        kind: t.ScalarKind = "real"
        if type_node is not None and type_node.type == "array_type":
            length = type_node.child_by_field_name("length")
            size = self._constant_int(length)
            kind = scalar_kind(self.text(type_node.child_by_field_name("element")))
        elif type_node is not None:
            text = self.text(type_node)
            if text in self.structs:
                struct, kind = text, "unknown"
            else:
                kind = scalar_kind(text)
        return t.Param(name, kind, mode, size, struct, const)

    def _constant_int(self, node: Any) -> int:
        if node is None:
            return 0
        value = self.expression(node)
        return int(value.value) if isinstance(value, t.Lit) and value.value.denominator == 1 else 0

    # -- statements

    def _body(self, block: Any, tail_returns: bool) -> tuple[t.Statement, ...]:
        """A block's statements; its tail expression (last child without `;`) is returned when asked."""
        children = [c for c in block.named_children if c.type not in ("line_comment", "block_comment")]
        out: list[t.Statement] = []
        for index, child in enumerate(children):
            last = index == len(children) - 1
            if last and tail_returns and child.type not in ("expression_statement", "let_declaration"):
                out.extend(self._tail(child))
            elif last and tail_returns and child.type == "expression_statement" and child.named_children and \
                    child.named_children[0].type == "if_expression" and not self.text(child).rstrip().endswith(";"):
                out.extend(self._tail(child.named_children[0]))
            else:
                out.extend(self.statement(child))
        return tuple(out)

    def _tail(self, node: Any) -> list[t.Statement]:
        if node.type == "if_expression":
            condition = self.expression(node.child_by_field_name("condition"))
            then = self._body(node.child_by_field_name("consequence"), True)
            alternative = node.child_by_field_name("alternative")
            otherwise: tuple[t.Statement, ...] = ()
            if alternative is not None:
                inner = alternative.named_children[-1]
                otherwise = self._body(inner, True) if inner.type == "block" else tuple(self._tail(inner))
            return [t.If(condition, then, otherwise, self.line(node))]
        if node.type in _STATEMENT_EXPRESSIONS - {"call_expression", "block"}:
            return self.statement(node)
        return [t.Return(self.expression(node), self.line(node), node.start_byte)]

    def statement(self, node: Any) -> list[t.Statement]:
        kind = node.type
        line = self.line(node)
        if kind in ("line_comment", "block_comment", "empty_statement"):
            return []
        if kind == "expression_statement":
            inner = node.named_children[0] if node.named_children else None
            return self._effect(inner, node.start_byte) if inner is not None else []
        if kind == "let_declaration":
            pattern = node.child_by_field_name("pattern")
            value = node.child_by_field_name("value")
            type_node = node.child_by_field_name("type")
            if pattern is not None and pattern.type == "mut_pattern":
                pattern = pattern.named_children[-1]
            if pattern is not None and pattern.type == "tuple_pattern" and value is not None:
                names = [self.text(c) for c in pattern.named_children if c.type == "identifier"]
                if len(names) != len(pattern.named_children):
                    return [self.stop(node, "a nested pattern")]
                self.scope.update(names)
                return [t.Destructure(tuple(names), self.expression(value), line, node.start_byte)]
            if pattern is None or pattern.type != "identifier":
                return [self.stop(node, "a pattern in let")]
            name = self.text(pattern)
            kind_of: t.ScalarKind = "unknown"
            size = 0
            if type_node is not None:
                if type_node.type == "array_type":
                    size = self._constant_int(type_node.child_by_field_name("length"))
                else:
                    kind_of = scalar_kind(self.text(type_node))
            init = self.expression(value) if value is not None else None
            self.scope.add(name)
            struct_type = self.text(type_node) if type_node is not None else (
                self.text(value.child_by_field_name("name")) if value is not None and
                value.type == "struct_expression" and value.child_by_field_name("name") is not None else None)
            if struct_type in self.structs:
                self.struct_of[name] = struct_type  # for method calls on the local
            return [t.Declare(name, kind_of, size, init, line, None, node.start_byte)]
        return self._effect(node, node.start_byte)

    def _effect(self, node: Any, site: int) -> list[t.Statement]:
        line = self.line(node)
        kind = node.type
        if kind == "assignment_expression":
            target = self.expression(node.child_by_field_name("left"))
            return [t.Assign(target, self.expression(node.child_by_field_name("right")), line, site)]
        if kind == "compound_assignment_expr":
            op = self.text(node.child_by_field_name("operator"))
            if op not in _ASSIGN_OPS:
                return [self.stop(node, f"the compound assignment `{op}`")]
            target = self.expression(node.child_by_field_name("left"))
            value = t.Binary(_ASSIGN_OPS[op], target, self.expression(node.child_by_field_name("right")),
                             line)
            return [t.Assign(target, value, line, site)]
        if kind == "return_expression":
            returned = node.named_children[0] if node.named_children else None
            return [t.Return(self.expression(returned) if returned is not None else None, line, site)]
        if kind == "if_expression":
            condition = self.expression(node.child_by_field_name("condition"))
            then = self._body(node.child_by_field_name("consequence"), False)
            alternative = node.child_by_field_name("alternative")
            otherwise: tuple[t.Statement, ...] = ()
            if alternative is not None:
                inner = alternative.named_children[-1]
                otherwise = self._body(inner, False) if inner.type == "block" else tuple(self._effect(inner, -1))
            return [t.If(condition, then, otherwise, line)]
        if kind == "for_expression":
            return [self._for(node)]
        if kind == "block":
            return list(self._body(node, False))
        if kind == "call_expression":
            return [t.Evaluate(self.expression(node), line)]
        names = {"while_expression": "a while loop", "loop_expression": "a loop", "macro_invocation": "a macro"}
        return [self.stop(node, names.get(kind))]

    def _for(self, node: Any) -> t.Statement:
        pattern = node.child_by_field_name("pattern")
        value = node.child_by_field_name("value")
        if pattern is None or pattern.type != "identifier" or value is None or value.type != "range_expression" \
                or len(value.named_children) != 2:
            return self.stop(node, "a for loop that is not over a constant range `a..b`")
        var = self.text(pattern)
        inclusive = "..=" in self.text(value)
        self.scope.add(var)
        start, stop = (self.expression(c) for c in value.named_children)
        body = self._body(node.child_by_field_name("body"), False)
        return t.For(var, start, stop, t.Lit(Fraction(1), "int"), inclusive, body, self.line(node))

    # -- expressions

    def expression(self, node: Any) -> t.Node:
        kind = node.type
        line = self.line(node)
        if kind == "parenthesized_expression":
            return self.expression(node.named_children[0])
        if kind in ("integer_literal", "float_literal"):
            return self.literal(node)
        if kind == "boolean_literal":
            return t.Lit(Fraction(1 if self.text(node) == "true" else 0), "int")
        if kind in ("identifier", "self"):
            return self.name_value(self.text(node), line)
        if kind == "scoped_identifier":
            name = self.text(node).split("::")[-1]
            return self.constants.get(name, self.unsupported(node))
        if kind == "binary_expression":
            op = self.text(node.child_by_field_name("operator"))
            left = self.expression(node.child_by_field_name("left"))
            right = self.expression(node.child_by_field_name("right"))
            if op in _ARITHMETIC:
                return t.Binary(op, left, right, line)  # type: ignore[arg-type]
            if op in _COMPARISONS:
                return t.Compare(op, left, right, line, self.text(node))  # type: ignore[arg-type]
            if op in ("&&", "||"):
                return t.Logic("and" if op == "&&" else "or", (left, right), line)
            return self.unsupported(node, f"the operation `{op}` at `{self.text(node)}`")
        if kind == "unary_expression":
            op = self.text(node.children[0])
            operand = self.expression(node.named_children[-1])
            if op == "-":
                return t.Negate(operand, line)
            if op == "*":
                return t.Deref(operand, line)
            if op == "!":
                return t.Logic("not", (operand,), line)
            return self.unsupported(node)
        if kind == "struct_expression" and self.text(node.child_by_field_name("name")) in self.structs:
            fields = self.structs[self.text(node.child_by_field_name("name"))]
            given = {self.text(i.child_by_field_name("field")): i.child_by_field_name("value")
                     for i in node.child_by_field_name("body").named_children
                     if i.type == "field_initializer" and i.child_by_field_name("value") is not None}
            if set(given) != set(fields):  # shorthand `Vec3 { x, y, z }` or `..base`: not followed
                return self.unsupported(node, "a struct literal with shorthand or `..` fields")
            return t.Aggregate(tuple(self.expression(given[f]) for f in fields), fields, line)
        if kind == "reference_expression":
            return t.AddressOf(self.expression(node.named_children[-1]), line)
        if kind == "type_cast_expression":
            return t.Cast(scalar_kind(self.text(node.child_by_field_name("type"))),
                          self.expression(node.child_by_field_name("value")), line)
        if kind in ("tuple_expression", "array_expression"):
            text = self.text(node)
            if kind == "array_expression" and ";" in text and len(node.named_children) == 2:
                item, count = node.named_children
                size = self._constant_int(count)
                return t.Aggregate((self.expression(item),) * size, line=line) if size else self.unsupported(node)
            return t.Aggregate(tuple(self.expression(c) for c in node.named_children), line=line)
        if kind == "field_expression":
            base = self.expression(node.child_by_field_name("value"))
            field_node = node.child_by_field_name("field")
            if field_node.type == "integer_literal":
                return t.Index(base, self.literal(field_node), line)
            return t.Field(base, self.text(field_node), line)
        if kind == "index_expression":
            base, index = node.named_children[0], node.named_children[1]
            return t.Index(self.expression(base), self.expression(index), line)
        if kind == "if_expression":
            then = self._pure_block(node.child_by_field_name("consequence"))
            alternative = node.child_by_field_name("alternative")
            otherwise = None
            if alternative is not None:
                inner = alternative.named_children[-1]
                otherwise = self._pure_block(inner) if inner.type == "block" else self.expression(inner)
            if then is None or otherwise is None:
                return self.unsupported(node, "an if expression whose branches hold statements")
            return t.Choose(self.expression(node.child_by_field_name("condition")), then, otherwise, line)
        if kind == "block":
            value = self._pure_block(node)
            return value if value is not None else self.unsupported(node, "a block with statements")
        if kind == "call_expression":
            return self._call(node)
        return self.unsupported(node)

    def _pure_block(self, block: Any) -> t.Node | None:
        children = [c for c in block.named_children if c.type not in ("line_comment", "block_comment")]
        if len(children) == 1 and children[0].type not in ("expression_statement", "let_declaration"):
            return self.expression(children[0])
        return None

    def _call(self, node: Any) -> t.Node:
        function = node.child_by_field_name("function")
        args = tuple(self.expression(a) for a in node.child_by_field_name("arguments").named_children)
        line = self.line(node)
        if function.type == "field_expression":
            receiver = self.expression(function.child_by_field_name("value"))
            method = self.text(function.child_by_field_name("field"))
            if method == "powi" and len(args) == 1:
                return t.Binary("pow", receiver, args[0], line)
            if method == "powf" and len(args) == 1:
                return t.MathCall("pow", (receiver, args[0]), line)
            if method == "recip" and not args:
                return t.Binary("/", t.Lit(Fraction(1), "real"), receiver, line)
            if method in _METHODS:
                return t.as_cases(t.MathCall(_METHODS[method], (receiver,) + args, line))
            owner = self.owner if isinstance(receiver, t.Name) and receiver.name == "self" else (
                self.struct_of.get(receiver.name) if isinstance(receiver, t.Name) else None)
            kind = self.receivers.get((owner, method)) if owner is not None else None
            if kind is None:
                return self.unsupported(node, f"the method call `.{method}()`")
            if kind.startswith("&") and isinstance(receiver, t.Name) and receiver.name not in self.pointer_names:
                receiver = t.AddressOf(receiver, line)  # the method's writes through `&mut self` reach the caller
            return t.UserCall(f"{owner}::{method}", (receiver,) + args, line)
        if function.type in ("identifier", "scoped_identifier"):
            return self.math_or_call(self.text(function), args, node)
        return self.unsupported(node)
