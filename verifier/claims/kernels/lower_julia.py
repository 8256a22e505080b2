"""Julia: tree-sitter trees -> lowered functions (``tree``).

Long (``function f(x) ... end``) and short (``f(x) = ...``) definitions; the last expression is the
value (an implicit return); ``a, b`` returns two values; ``x^2`` is a power, ``2x`` a product, ``÷`` an
integer division, ``/`` always a floating division; ``for i in 1:3`` (and ``a:s:b``) is a counted loop over
an inclusive range; arrays index from 1.
"""
from __future__ import annotations

import re
from fractions import Fraction
from typing import Any

from verifier.claims.kernels import tree as t
from verifier.claims.kernels.common import Lowering, scalar_kind
from verifier.claims.kernels.locate import julia_signature_call, walk

_ASSIGN_OPS: dict[str, t.BinaryOp] = {"+=": "+", "-=": "-", "*=": "*", "/=": "/"}
_ARITHMETIC = {"+": "+", "-": "-", "*": "*", "/": "/", "^": "pow", "÷": "idiv"}
_COMPARISONS = {"==", "!=", "<", "<=", ">", ">=", "≤", "≥", "≠"}
_UNICODE = {"≤": "<=", "≥": ">=", "≠": "!="}
_STATEMENTS = {"assignment", "compound_assignment_expression", "for_statement", "if_statement",
               "return_statement", "while_statement", "local_statement", "const_statement"}
_NTUPLE = re.compile(r"NTuple\{\s*(\d+)\s*,")
_SVECTOR = re.compile(r"S(?:Vector|A)\{\s*(\d+)\s*,")


class JuliaLowering(Lowering):
    index_base = 1

    def __init__(self, source: Any, path: str):
        super().__init__(source, path)
        for node in walk(source.root):
            if node.type == "const_statement" and node.named_children:
                assignment = node.named_children[0]
                if assignment.type == "assignment" and assignment.named_children[0].type == "identifier":
                    self.constants[self.text(assignment.named_children[0])] = self.expression(
                        assignment.named_children[-1])
            elif node.type == "struct_definition":
                head = next((c for c in node.named_children if c.type == "type_head"), None)
                fields = []
                for child in node.named_children:
                    if child.type == "typed_expression":
                        fields.append(self.text(child.named_children[0]))
                    elif child.type == "identifier":
                        fields.append(self.text(child))
                if head is not None:
                    name = self.text(head).split("{")[0].split("<:")[0].strip()
                    self.structs[name] = tuple(fields)

    # -- functions

    def function(self, node: Any) -> t.Function:
        call = julia_signature_call(node)
        name = self.text(call.children[0])
        self.scope = set()
        params: list[t.Param] = []
        arguments = next(c for c in call.named_children if c.type == "argument_list")
        for argument in arguments.named_children:
            param = self._param(argument)
            if param is None:
                stopped = (self.stop(argument, "a parameter with a default, a keyword or a splat"),)
                return t.Function(name, (), stopped, True, line=self.line(node), path=self.path, language="julia")
            params.append(param)
            self.scope.add(param.name)
        if node.type == "assignment":
            value = node.named_children[-1]
            body: tuple[t.Statement, ...] = tuple(self._final(value))
        else:
            statements = [c for c in node.named_children[1:] if c.type not in ("line_comment", "block_comment")]
            body = self._block(statements, final=True)
        returns = not (body and isinstance(body[-1], t.Return) and body[-1].value is None)
        return t.Function(name, tuple(params), body, returns, line=self.line(node), path=self.path,
                          language="julia", structs=dict(self.structs), index_base=1)

    def _param(self, node: Any) -> t.Param | None:
        if node.type == "identifier":
            return t.Param(self.text(node), "real")
        if node.type == "typed_expression" and node.named_children[0].type == "identifier":
            name = self.text(node.named_children[0])
            type_text = self.text(node.named_children[-1])
            if type_text in self.structs:
                return t.Param(name, "unknown", "value", 0, type_text)
            size = _NTUPLE.search(type_text) or _SVECTOR.search(type_text)
            if size:
                return t.Param(name, "real", "value", int(size.group(1)))
            if re.search(r"Vector|Array|Tuple|Matrix", type_text):
                return t.Param(name, "real", "reference", 0)
            return t.Param(name, scalar_kind(type_text))
        return None

    # -- statements

    def _block(self, nodes: list[Any], final: bool) -> tuple[t.Statement, ...]:
        out: list[t.Statement] = []
        nodes = [n for n in nodes if n.type not in ("line_comment", "block_comment")]
        for index, node in enumerate(nodes):
            if final and index == len(nodes) - 1:
                out.extend(self._final(node))
            else:
                out.extend(self.statement(node))
        return tuple(out)

    def _final(self, node: Any) -> list[t.Statement]:
        """The last statement of a body: its value is the function's value."""
        if node.type == "if_statement":
            return [self._if(node, final=True)]
        if node.type in ("assignment", "compound_assignment_expression"):
            lowered = self.statement(node)
            target = lowered[-1].target if lowered and isinstance(lowered[-1], t.Assign) else None
            return lowered + ([t.Return(target, self.line(node))] if target is not None else [])
        if node.type in _STATEMENTS:
            return self.statement(node)
        if node.type == "identifier" and self.text(node) == "nothing":
            return [t.Return(None, self.line(node))]
        return [t.Return(self.expression(node), self.line(node), node.start_byte)]

    def statement(self, node: Any) -> list[t.Statement]:
        kind = node.type
        line = self.line(node)
        if kind in ("line_comment", "block_comment"):
            return []
        if kind == "local_statement" and node.named_children:
            return self.statement(node.named_children[0])
        if kind == "assignment":
            left, value = node.named_children[0], node.named_children[-1]
            if left.type == "typed_expression":
                left = left.named_children[0]
            if left.type in ("open_tuple", "tuple_expression"):
                names = [self.text(c) for c in left.named_children if c.type == "identifier"]
                if len(names) != len(left.named_children):
                    return [self.stop(node, "a nested destructuring")]
                self.scope.update(names)
                return [t.Destructure(tuple(names), self.expression(value), line, node.start_byte)]
            target = self._target(left)
            return [t.Assign(target, self.expression(value), line, node.start_byte)]
        if kind == "compound_assignment_expression":
            left, operator, value = node.named_children[0], node.named_children[1], node.named_children[-1]
            op = self.text(operator)
            if op not in _ASSIGN_OPS:
                return [self.stop(node, f"the compound assignment `{op}`")]
            target = self._target(left)
            combined = t.Binary(_ASSIGN_OPS[op], target, self.expression(value), line)
            return [t.Assign(target, combined, line, node.start_byte)]
        if kind == "return_statement":
            value = node.named_children[0] if node.named_children else None
            if value is not None and value.type == "identifier" and self.text(value) == "nothing":
                value = None
            return [t.Return(self.expression(value) if value is not None else None, line, node.start_byte)]
        if kind == "if_statement":
            return [self._if(node, final=False)]
        if kind == "for_statement":
            return [self._for(node)]
        if kind == "call_expression":
            return [t.Evaluate(self.expression(node), line)]
        constructs = {"while_statement": "a while loop", "macrocall_expression": "a macro call",
                      "try_statement": "a try block"}
        return [self.stop(node, constructs.get(kind))]

    def _target(self, node: Any) -> t.Node:
        if node.type == "identifier":
            self.scope.add(self.text(node))
            return t.Name(self.text(node), self.line(node))
        return self.expression(node)

    def _if(self, node: Any, final: bool) -> t.Statement:
        condition = node.child_by_field_name("condition")
        body = [c for c in node.named_children if c != condition and c.type not in (
            "elseif_clause", "else_clause")]
        otherwise: tuple[t.Statement, ...] = ()
        clauses = [c for c in node.named_children if c.type in ("elseif_clause", "else_clause")]
        for clause in reversed(clauses):
            if clause.type == "else_clause":
                otherwise = self._block(list(clause.named_children), final)
            else:
                clause_condition = clause.child_by_field_name("condition")
                clause_body = [c for c in clause.named_children if c != clause_condition]
                otherwise = (t.If(self.expression(clause_condition), self._block(clause_body, final), otherwise,
                                  self.line(clause)),)
        return t.If(self.expression(condition), self._block(body, final), otherwise, self.line(node))

    def _for(self, node: Any) -> t.Statement:
        binding = next((c for c in node.named_children if c.type == "for_binding"), None)
        not_counted = self.stop(node, "a for loop that is not over a constant range `a:b`")
        if binding is None or len(binding.named_children) != 3 or binding.named_children[0].type != "identifier":
            return not_counted
        var = self.text(binding.named_children[0])
        bounds = binding.named_children[2]
        if bounds.type != "range_expression":
            return not_counted
        parts = bounds.named_children
        if len(parts) == 2 and parts[0].type == "range_expression":
            start, step = (self.expression(c) for c in parts[0].named_children)
            stop = self.expression(parts[1])
        elif len(parts) == 2:
            start, stop = (self.expression(c) for c in parts)
            step = t.Lit(Fraction(1), "int")
        else:
            return not_counted
        self.scope.add(var)
        body = self._block([c for c in node.named_children if c != binding], final=False)
        return t.For(var, start, stop, step, True, body, self.line(node))

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
        if kind == "identifier":
            return self.name_value(self.text(node), line)
        if kind == "binary_expression":
            left, operator, right = node.named_children[0], node.named_children[1], node.named_children[-1]
            op = self.text(operator)
            if op in _ARITHMETIC:
                return t.Binary(_ARITHMETIC[op], self.expression(left), self.expression(right), line)  # type: ignore[arg-type]
            if op in _COMPARISONS:
                return t.Compare(_UNICODE.get(op, op), self.expression(left), self.expression(right),  # type: ignore[arg-type]
                                 line, self.text(node))
            if op in ("&&", "||"):
                return t.Logic("and" if op == "&&" else "or", (self.expression(left), self.expression(right)), line)
            return self.unsupported(node, f"the operation `{op}` at `{self.text(node)}`")
        if kind == "juxtaposition_expression" and len(node.named_children) == 2:
            return t.Binary("*", self.expression(node.named_children[0]), self.expression(node.named_children[1]),
                            line)
        if kind == "unary_expression":
            op = self.text(node.named_children[0])
            operand = self.expression(node.named_children[-1])
            if op == "-":
                return t.Negate(operand, line)
            if op == "+":
                return operand
            if op == "!":
                return t.Logic("not", (operand,), line)
            return self.unsupported(node)
        if kind == "ternary_expression" and len(node.named_children) == 3:
            condition, then, otherwise = node.named_children
            return t.Choose(self.expression(condition), self.expression(then), self.expression(otherwise), line)
        if kind in ("tuple_expression", "open_tuple", "vector_expression"):
            return t.Aggregate(tuple(self.expression(c) for c in node.named_children), line=line)
        if kind == "index_expression":
            base, index = node.named_children[0], node.named_children[-1]
            if index.type == "vector_expression" and len(index.named_children) == 1:
                return t.Index(self.expression(base), self.expression(index.named_children[0]), line)
            return self.unsupported(node)
        if kind == "field_expression":
            return t.Field(self.expression(node.named_children[0]), self.text(node.named_children[-1]), line)
        if kind == "call_expression":
            return self._call(node)
        return self.unsupported(node)

    def _call(self, node: Any) -> t.Node:
        callee = node.named_children[0]
        arguments = next((c for c in node.named_children if c.type == "argument_list"), None)
        if arguments is None or callee.type not in ("identifier", "field_expression"):
            return self.unsupported(node, f"the call `{self.text(node)[:40]}`")
        args = tuple(self.expression(a) for a in arguments.named_children)
        name = self.text(callee)
        line = self.line(node)
        if name in ("Float64", "Float32", "float") and len(args) == 1:
            return t.Cast("real", args[0], line)
        if name in ("Int", "Int64", "Int32") and len(args) == 1:
            return t.Cast("int", args[0], line)
        if name == "abs2" and len(args) == 1:
            return t.Binary("pow", args[0], t.Lit(Fraction(2), "int"), line)
        if name in self.structs and len(args) == len(self.structs[name]):
            return t.Aggregate(args, self.structs[name], line)
        if name == "muladd" and len(args) == 3:
            return t.MathCall("fma", args, line)
        return self.math_or_call(name, args, node)
