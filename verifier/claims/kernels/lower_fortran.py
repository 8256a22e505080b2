"""Fortran (free form): tree-sitter trees -> lowered functions (``tree``).

Names are case-insensitive (spelled in lower case).  A function's result is its ``result(v)`` variable or
the variable named like the function; ``intent(out)`` / ``intent(inout)`` dummies are out-parameters, and
every dummy is passed by reference, so a subroutine's writes reach its caller.  ``do i = a, b[, s]`` is a
counted loop over an inclusive range; arrays index from 1 (``v(1)``); ``1d0``, ``2.0_dp``, ``1.0e-3`` are
exact decimals; ``parameter`` constants are constants.
"""
from __future__ import annotations

from fractions import Fraction
from typing import Any

from verifier.claims.kernels import tree as t
from verifier.claims.kernels.common import Lowering, scalar_kind
from verifier.claims.kernels.locate import walk

_ARITHMETIC = {"+": "+", "-": "-", "*": "*", "/": "/", "**": "pow"}
_COMPARISONS = {"==": "==", "/=": "!=", "<": "<", "<=": "<=", ">": ">", ">=": ">=", ".eq.": "==", ".ne.": "!=",
                ".lt.": "<", ".le.": "<=", ".gt.": ">", ".ge.": ">="}
_SKIPPED = {"comment", "implicit_statement", "use_statement", "print_statement", "write_statement",
            "end_function_statement", "end_subroutine_statement", "function_statement", "subroutine_statement",
            "variable_declaration", "contains_statement", "internal_procedures", "format_statement"}


class FortranLowering(Lowering):
    index_base = 1

    def __init__(self, source: Any, path: str):
        super().__init__(source, path)
        for node in walk(source.root):
            if node.type == "variable_declaration" and self._is_module_level(node):
                if any(self.text(a).lower() == "parameter" for a in node.children_by_field_name("attribute")):
                    for declarator in node.children_by_field_name("declarator"):
                        if declarator.type == "init_declarator":
                            name = self.text(declarator.child_by_field_name("left")).lower()
                            self.constants[name] = self.expression(declarator.child_by_field_name("right"))
            elif node.type == "derived_type_definition":
                header = node.named_children[0]
                name = next((self.text(c).lower() for c in header.named_children if c.type == "type_name"), None)
                fields: list[str] = []
                for child in node.named_children:
                    if child.type == "variable_declaration":
                        for declarator in child.children_by_field_name("declarator"):
                            fields.append(self._declared_name(declarator))
                if name is not None:
                    self.structs[name] = tuple(fields)

    def _is_module_level(self, node: Any) -> bool:
        parent = node.parent
        return parent is not None and parent.type in ("module", "program", "translation_unit")

    def _declared_name(self, node: Any) -> str:
        if node.type in ("sized_declarator", "init_declarator"):
            return self.text(node.named_children[0]).lower()
        return self.text(node).lower()

    # -- functions

    def function(self, node: Any) -> t.Function:
        header = node.named_children[0]
        name = self.text(header.child_by_field_name("name")).lower()
        parameters_node = header.child_by_field_name("parameters")
        dummies = [self.text(c).lower() for c in parameters_node.named_children] if parameters_node else []
        result_name: str | None = None
        if node.type == "function":
            result = next((c for c in header.named_children if c.type == "function_result"), None)
            result_name = self.text(result.named_children[0]).lower() if result is not None else name
        self.scope = set(dummies) | ({result_name} if result_name else set())
        declared: dict[str, tuple[t.ScalarKind, str, int, str | None]] = {}
        self.arrays: set[str] = set()
        body_nodes = []
        for child in node.named_children[1:]:
            if child.type == "variable_declaration":
                type_node = child.child_by_field_name("type")
                type_text = self.text(type_node).lower() if type_node is not None else ""
                struct = None
                if type_node is not None and type_node.type == "derived_type":
                    struct = self.text(type_node.child_by_field_name("name")).lower()
                intent = "none"
                dimension = 0
                for attribute in child.children_by_field_name("attribute"):
                    text = self.text(attribute).lower().replace(" ", "")
                    if text.startswith("intent("):
                        intent = text[len("intent("):-1]
                    elif text.startswith("dimension("):
                        dimension = self._size_text(text[len("dimension("):-1])
                for declarator in child.children_by_field_name("declarator"):
                    local = self._declared_name(declarator)
                    size = dimension
                    if declarator.type == "sized_declarator":
                        size_node = next((c for c in declarator.named_children if c.type == "size"), None)
                        size = self._size_text(self.text(size_node)[1:-1]) if size_node is not None else 0
                        if size == 0:
                            size = -1  # assumed-shape or not constant
                    kind = "unknown" if struct else scalar_kind(type_text)
                    declared[local] = (kind, intent, size, struct)
                    if size:
                        self.arrays.add(local)
            elif child.type not in _SKIPPED:
                body_nodes.append(child)
        params = []
        for dummy in dummies:
            kind, intent, size, struct = declared.get(dummy, ("real", "none", 0, None))
            mode: t.ParamMode = {"in": "value", "out": "out", "inout": "inout"}.get(intent, "inout")
            params.append(t.Param(dummy, kind, mode, max(size, 0), struct, const=intent == "in"))
        prologue: list[t.Statement] = []
        for local, (kind, _, size, struct) in declared.items():
            if local in dummies:
                continue
            if size < 0:
                prologue.append(self.stop(node, f"the array {local} without a constant size"))
            prologue.append(t.Declare(local, kind, size, None, self.line(node), struct))
            self.scope.add(local)
        statements = prologue + [s for child in body_nodes for s in self.statement(child)]
        return t.Function(name, tuple(params), tuple(statements), node.type == "function", result_name=result_name,
                          line=self.line(node), path=self.path, language="fortran", structs=dict(self.structs),
                          index_base=1)

    def _size_text(self, text: str) -> int:
        text = text.strip().lower()
        if text.isdigit():
            return int(text)
        constant = self.constants.get(text)
        if isinstance(constant, t.Lit) and constant.value.denominator == 1:
            return int(constant.value)
        return 0

    # -- statements

    def _body(self, nodes: list[Any]) -> tuple[t.Statement, ...]:
        return tuple(s for node in nodes for s in self.statement(node))

    def statement(self, node: Any) -> list[t.Statement]:
        kind = node.type
        line = self.line(node)
        if kind in _SKIPPED or kind.startswith("end_"):
            return []
        if kind == "assignment_statement":
            target = self.expression(node.child_by_field_name("left"))
            value = self.expression(node.child_by_field_name("right"))
            return [t.Assign(target, value, line, node.start_byte)]
        if kind == "subroutine_call":
            callee = node.child_by_field_name("subroutine")
            arguments = next((c for c in node.named_children if c.type == "argument_list"), None)
            args = tuple(self.expression(a) for a in arguments.named_children) if arguments is not None else ()
            return [t.Evaluate(t.UserCall(self.text(callee).lower(), args, line), line)]
        if kind == "if_statement":
            return [self._if(node)]
        if kind == "do_loop":
            return [self._do(node)]
        if kind == "keyword_statement" and self.text(node).strip().lower() == "return":
            return [t.Return(None, line)]
        names = {"do_while_loop": "a do while loop", "select_case_statement": "a select case",
                 "keyword_statement": f"the statement `{self.text(node).strip()}`", "stop_statement": "stop"}
        return [self.stop(node, names.get(kind))]

    def _if(self, node: Any) -> t.Statement:
        children = node.named_children
        condition = children[0]
        then = [c for c in children[1:] if c.type not in ("elseif_clause", "else_clause", "end_if_statement")]
        otherwise: tuple[t.Statement, ...] = ()
        for clause in reversed([c for c in children if c.type in ("elseif_clause", "else_clause")]):
            if clause.type == "else_clause":
                otherwise = self._body(list(clause.named_children))
            else:
                clause_condition = clause.named_children[0]
                otherwise = (t.If(self.condition(clause_condition), self._body(list(clause.named_children[1:])),
                                  otherwise, self.line(clause)),)
        if not then and not otherwise and len(children) >= 2:
            pass
        return t.If(self.condition(condition), self._body(then), otherwise, self.line(node))

    def condition(self, node: Any) -> t.Node:
        while node.type == "parenthesized_expression" and node.named_children:
            node = node.named_children[0]
        return self.expression(node)

    def _do(self, node: Any) -> t.Statement:
        header = node.named_children[0]
        control = next((c for c in header.named_children if c.type == "loop_control_expression"), None)
        if control is None:
            return self.stop(node, "a do loop without a counter")
        parts = control.named_children
        if len(parts) not in (3, 4):
            return self.stop(node, "a do loop without a counter")
        var = self.text(parts[0]).lower()
        start, stop = self.expression(parts[1]), self.expression(parts[2])
        step = self.expression(parts[3]) if len(parts) == 4 else t.Lit(Fraction(1), "int")
        self.scope.add(var)
        body = self._body([c for c in node.named_children[1:] if c.type != "end_do_loop_statement"])
        return t.For(var, start, stop, step, True, body, self.line(node))

    # -- expressions

    def expression(self, node: Any) -> t.Node:
        kind = node.type
        line = self.line(node)
        if kind == "parenthesized_expression":
            return self.expression(node.named_children[0])
        if kind == "number_literal":
            return self.literal(node)
        if kind == "boolean_literal":
            return t.Lit(Fraction(1 if ".true." in self.text(node).lower() else 0), "int")
        if kind == "identifier":
            name = self.text(node).lower()
            if name in self.scope:
                return t.Name(name, line)
            if name in self.constants:
                return self.constants[name]
            return t.Unsupported(f"the name {name} is not a dummy argument, local or parameter", line)
        if kind == "math_expression":
            op = self.text(node.child_by_field_name("operator")).lower()
            left, right = node.child_by_field_name("left"), node.child_by_field_name("right")
            if op in _ARITHMETIC:
                return t.Binary(_ARITHMETIC[op], self.expression(left), self.expression(right), line)  # type: ignore[arg-type]
            return self.unsupported(node, f"the operation `{op}`")
        if kind == "relational_expression":
            op = self.text(node.child_by_field_name("operator")).lower()
            left, right = node.child_by_field_name("left"), node.child_by_field_name("right")
            if op in _COMPARISONS:
                return t.Compare(_COMPARISONS[op], self.expression(left), self.expression(right), line,  # type: ignore[arg-type]
                                 self.text(node))
            return self.unsupported(node)
        if kind == "logical_expression":
            op = self.text(node.child_by_field_name("operator")).lower()
            operands = tuple(self.expression(c) for c in node.named_children if c.type != "operator" and
                             c != node.child_by_field_name("operator"))
            if op == ".not." and len(operands) == 1:
                return t.Logic("not", operands, line)
            if op in (".and.", ".or.") and len(operands) == 2:
                return t.Logic("and" if op == ".and." else "or", operands, line)
            return self.unsupported(node)
        if kind == "unary_expression":
            op = self.text(node.children[0])
            operand = self.expression(node.child_by_field_name("argument") or node.named_children[-1])
            if op == "-":
                return t.Negate(operand, line)
            if op == "+":
                return operand
            return self.unsupported(node)
        if kind == "derived_type_member_expression":
            base, member = node.named_children[0], node.named_children[-1]
            return t.Field(self.expression(base), self.text(member).lower(), line)
        if kind == "array_literal":
            return t.Aggregate(tuple(self.expression(c) for c in node.named_children), line=line)
        if kind == "call_expression":
            return self._call(node)
        return self.unsupported(node)

    def _call(self, node: Any) -> t.Node:
        callee = node.named_children[0]
        arguments = next((c for c in node.named_children if c.type == "argument_list"), None)
        args_nodes = list(arguments.named_children) if arguments is not None else []
        line = self.line(node)
        if callee.type != "identifier":
            return self.unsupported(node)
        name = self.text(callee).lower()
        if name in self.scope and name in getattr(self, "arrays", set()):
            if len(args_nodes) != 1:
                return self.unsupported(node, "a multi-dimensional element or an array section")
            return t.Index(t.Name(name, line), self.expression(args_nodes[0]), line)
        if any(a.type == "keyword_argument" for a in args_nodes):
            if name in ("real", "dble") and args_nodes:
                return t.Cast("real", self.expression(args_nodes[0]), line)
            return self.unsupported(node, f"keyword arguments in the call of {name}")
        args = tuple(self.expression(a) for a in args_nodes)
        if name in ("real", "dble", "dfloat", "float") and args:
            return t.Cast("real", args[0], line)
        if name in ("int", "nint", "floor", "ceiling") and args:
            return t.Cast("int", args[0], line) if name == "int" else self.unsupported(node, f"the rounding {name}")
        return self.math_or_call(name, args, node)
