"""C, C++ and CUDA: tree-sitter trees -> lowered functions (``tree``).

The three grammars share node names; the differences handled here are C++ references, ``std::``
spellings, ``constexpr``, brace initialisation, ``static_cast``, templates and namespaces, and CUDA's
``__device__``/``__host__`` qualifiers (which are only qualifiers) and vector types (``float3`` has fields
x, y, z).
"""
from __future__ import annotations

import re
from dataclasses import replace
from typing import Any

from verifier.claims.kernels import tree as t
from verifier.claims.kernels.common import Lowering, scalar_kind
from verifier.claims.kernels.locate import class_owner, function_name, walk

_VECTOR_TYPE = re.compile(r"^(float|double|int|uint|short|long)([234])$")
_VECTOR_FIELDS = ("x", "y", "z", "w")
_ASSIGN_OPS = {"=": None, "+=": "+", "-=": "-", "*=": "*", "/=": "/"}
_ARITHMETIC = {"+", "-", "*", "/"}
_COMPARISONS = {"==", "!=", "<", "<=", ">", ">="}


class CLowering(Lowering):
    def __init__(self, source: Any, path: str):
        super().__init__(source, path)
        self.methods: set[tuple[str, str]] = set()  # (class, member function) of C++ classes of the file
        self.owner: str | None = None  # the class of the member function being lowered
        self.typed: dict[str, str] = {}  # parameter or local -> its struct or class type
        self.pointers: set[str] = set()  # parameters that hold an address (`T*`, and `this`)
        self._collect_globals()

    # -- file level

    def _collect_globals(self) -> None:
        for node in walk(self.source.root):
            if node.type == "preproc_def":
                name, value = node.child_by_field_name("name"), node.child_by_field_name("value")
                if name is not None and value is not None:
                    lowered = self._macro_value(self.text(value))
                    if lowered is not None:
                        self.constants[self.text(name)] = lowered
            elif node.type in ("struct_specifier", "class_specifier"):
                self._struct(node)
            elif node.type == "function_definition" and self.source.language in ("cpp", "cuda"):
                owner, name = class_owner(self.source, node), function_name(self.source, node)
                if owner is not None and name is not None:
                    self.methods.add((owner, name))
            elif node.type == "declaration" and self._enclosing_function(node) is None:
                qualifiers = {self.text(c) for c in node.children if c.type == "type_qualifier"}
                if qualifiers & {"const", "constexpr", "__constant__"}:
                    for declarator in node.children_by_field_name("declarator"):
                        if declarator.type == "init_declarator":
                            name = declarator.child_by_field_name("declarator")
                            value = declarator.child_by_field_name("value")
                            if name is not None and name.type == "identifier" and value is not None:
                                self.constants[self.text(name)] = self.expression(value)

    def _macro_value(self, text: str) -> t.Node | None:
        text = text.strip()
        while text.startswith("(") and text.endswith(")"):
            text = text[1:-1].strip()
        negative = text.startswith("-")
        parsed = self.literal_text(text.lstrip("-").strip())
        if parsed is None:
            return None
        return t.Negate(parsed) if negative else parsed

    def literal_text(self, text: str) -> t.Node | None:
        from verifier.claims.kernels.common import number

        parsed = number(text, self.source.language)
        return None if parsed is None else t.Lit(parsed[0], parsed[1])

    def _struct(self, node: Any) -> None:
        body = node.child_by_field_name("body")
        if body is None:
            return
        fields: list[str] = []
        for declaration in body.children:
            if declaration.type == "field_declaration":
                for declarator in declaration.children_by_field_name("declarator"):
                    if declarator.type == "field_identifier":
                        fields.append(self.text(declarator))
        name = node.child_by_field_name("name")
        names = [self.text(name)] if name is not None else []
        parent = node.parent
        if parent is not None and parent.type == "type_definition":
            names.extend(self.text(d) for d in parent.children_by_field_name("declarator"))
        for struct_name in names:
            self.structs[struct_name] = tuple(fields)

    def _enclosing_function(self, node: Any) -> Any:
        while node is not None and node.type != "function_definition":
            node = node.parent
        return node

    def struct_of(self, type_text: str) -> str | None:
        bare = type_text.replace("const", "").replace("struct", "").strip().split("::")[-1].strip()
        if bare in self.structs:
            return bare
        match = _VECTOR_TYPE.match(bare)
        if match:
            self.structs[bare] = _VECTOR_FIELDS[: int(match.group(2))]
            return bare
        return None

    # -- functions

    def function(self, node: Any) -> t.Function:
        name = function_name(self.source, node) or "?"
        declarator = node.child_by_field_name("declarator")
        while declarator is not None and declarator.type != "function_declarator":
            declarator = declarator.child_by_field_name("declarator")
        params: list[t.Param] = []
        self.scope = set()
        self.owner = class_owner(self.source, node) if self.source.language in ("cpp", "cuda") else None
        if self.owner is not None and self.owner in self.structs and declarator is not None:
            # a member function: `this` points to the object; its fields read as their bare names
            constant = any(c.type == "type_qualifier" and self.text(c) == "const" for c in declarator.children)
            params.append(t.Param("this", "unknown", "pointer", 0, self.owner, constant))
            self.scope.add("this")
        if declarator is not None:
            for child in declarator.child_by_field_name("parameters").named_children:
                if child.type == "parameter_declaration":
                    param = self._param(child)
                    if param is not None:
                        params.append(param)
                        self.scope.add(param.name)
        self.typed = {p.name: p.struct for p in params if p.struct is not None}
        self.pointers = {p.name for p in params if p.mode == "pointer"}
        type_node = node.child_by_field_name("type")
        returns_value = not (type_node is not None and self.text(type_node) == "void" and
                             not self._returns_pointer(node))
        body = node.child_by_field_name("body")
        statements = self.block(body) if body is not None else ()
        read = t.read_names(statements)
        params = [replace(p, out_only=True) if p.mode in ("pointer", "reference") and not p.const and
                  p.name not in read and not (p.size == 0 and p.struct is None and p.mode == "reference" and False)
                  else p for p in params]
        return t.Function(name, tuple(params), statements, returns_value, line=self.line(node),
                          path=self.path, language=self.source.language, structs=dict(self.structs))

    def _returns_pointer(self, node: Any) -> bool:
        declarator = node.child_by_field_name("declarator")
        return declarator is not None and declarator.type == "pointer_declarator"

    def _param(self, node: Any) -> t.Param | None:
        type_node = node.child_by_field_name("type")
        type_text = self.text(type_node) if type_node is not None else ""
        const = any(self.text(c) == "const" for c in node.children if c.type == "type_qualifier")
        declarator = node.child_by_field_name("declarator")
        mode: t.ParamMode = "value"
        size = 0
        while declarator is not None and declarator.type != "identifier":
            if declarator.type == "pointer_declarator":
                mode = "pointer"
            elif declarator.type == "reference_declarator":
                mode = "reference"
            elif declarator.type == "array_declarator":
                size = self._size(declarator.child_by_field_name("size"))
                mode = "reference" if mode == "value" else mode
            inner = declarator.child_by_field_name("declarator")
            if inner is None:
                inner = next((c for c in declarator.named_children if c.type in (
                    "identifier", "pointer_declarator", "reference_declarator", "array_declarator",
                    "parenthesized_declarator")), None)
            declarator = inner
        if declarator is None:
            return None
        struct = self.struct_of(type_text)
        return t.Param(self.text(declarator), "unknown" if struct else scalar_kind(type_text), mode, size, struct,
                       const)

    def _size(self, node: Any) -> int:
        if node is None:
            return 0
        value = self.expression(node)
        if isinstance(value, t.Lit) and value.value.denominator == 1:
            return int(value.value)
        return 0

    # -- statements

    def block(self, node: Any) -> tuple[t.Statement, ...]:
        if node.type != "compound_statement":
            return tuple(self.statement(node))
        out: list[t.Statement] = []
        for child in node.named_children:
            out.extend(self.statement(child))
        return tuple(out)

    def statement(self, node: Any) -> list[t.Statement]:
        kind = node.type
        line = self.line(node)
        if kind in ("comment", "empty_statement") or not node.is_named:
            return []
        if kind == "compound_statement":
            return list(self.block(node))
        if kind == "declaration":
            return self._declaration(node)
        if kind == "expression_statement":
            inner = node.named_children[0] if node.named_children else None
            if inner is None:
                return []
            return self._expression_statement(inner, node.start_byte)
        if kind == "return_statement":
            value = node.named_children[0] if node.named_children else None
            return [t.Return(self.expression(value) if value is not None else None, line, node.start_byte)]
        if kind == "if_statement":
            condition = node.child_by_field_name("condition")
            then = node.child_by_field_name("consequence")
            alternative = node.child_by_field_name("alternative")
            otherwise: tuple[t.Statement, ...] = ()
            if alternative is not None:
                inner = alternative.named_children[-1] if alternative.type == "else_clause" else alternative
                otherwise = self.block(inner)
            return [t.If(self.condition(condition), self.block(then), otherwise, line)]
        if kind == "for_statement":
            return [self._for(node)]
        names = {"while_statement": "a while loop", "do_statement": "a do-while loop",
                 "switch_statement": "a switch", "goto_statement": "a goto", "break_statement": "a break",
                 "continue_statement": "a continue", "for_range_loop": "a range-based for loop"}
        return [self.stop(node, names.get(kind))]

    def _declaration(self, node: Any) -> list[t.Statement]:
        type_node = node.child_by_field_name("type")
        type_text = self.text(type_node) if type_node is not None else ""
        struct = self.struct_of(type_text)
        kind = "unknown" if struct else scalar_kind(type_text)
        if type_text == "auto":
            kind = "unknown"
        out: list[t.Statement] = []
        for declarator in node.children_by_field_name("declarator"):
            value_node = None
            if declarator.type == "init_declarator":
                value_node = declarator.child_by_field_name("value")
                declarator = declarator.child_by_field_name("declarator")
            size = 0
            pointer = False
            while declarator is not None and declarator.type in ("array_declarator", "pointer_declarator",
                                                                  "reference_declarator"):
                if declarator.type == "array_declarator":
                    size = self._size(declarator.child_by_field_name("size"))
                    if size == 0:
                        return [self.stop(node, "an array without a constant size")]
                else:
                    pointer = True
                declarator = declarator.child_by_field_name("declarator") or (
                    declarator.named_children[0] if declarator.named_children else None)
            if declarator is None or declarator.type != "identifier":
                return [self.stop(node)]
            name = self.text(declarator)
            init: t.Node | None = None
            if value_node is not None:
                init = self._initializer(value_node, size > 0 or struct is not None)
            if pointer and init is not None:
                if not isinstance(init, t.AddressOf):
                    return [self.stop(node, "a pointer local (pointer arithmetic is not followed)")]
            self.scope.add(name)
            if struct is not None:
                self.typed[name] = struct
            out.append(t.Declare(name, kind, size, init, self.line(node), struct, node.start_byte))
        return out

    def _initializer(self, node: Any, aggregate: bool) -> t.Node:
        if node.type == "initializer_list":
            items = tuple(self.expression(c) for c in node.named_children)
            if not aggregate:
                return items[0] if len(items) == 1 else self.unsupported(node)
            return t.Aggregate(items, line=self.line(node))
        if node.type == "argument_list":  # `double x(1.0)`
            items = tuple(self.expression(c) for c in node.named_children)
            return items[0] if len(items) == 1 and not aggregate else self.unsupported(node)
        return self.expression(node)

    def _expression_statement(self, node: Any, site: int) -> list[t.Statement]:
        line = self.line(node)
        if node.type == "assignment_expression":
            operator = node.child_by_field_name("operator")
            op = self.text(operator) if operator is not None else "="
            target = self.expression(node.child_by_field_name("left"))
            value = self.expression(node.child_by_field_name("right"))
            if op not in _ASSIGN_OPS:
                return [self.stop(node, f"the compound assignment `{op}`")]
            binary = _ASSIGN_OPS[op]
            if binary is not None:
                value = t.Binary(binary, target, value, line)  # type: ignore[arg-type]
            return [t.Assign(target, value, line, site)]
        if node.type == "update_expression":
            target = self.expression(node.child_by_field_name("argument"))
            op = "+" if "++" in self.text(node) else "-"
            return [t.Assign(target, t.Binary(op, target, t.Lit(1, "int"), line), line, site)]  # type: ignore[arg-type]
        if node.type == "call_expression":
            return [t.Evaluate(self.expression(node), line)]
        return [self.stop(node)]

    def _for(self, node: Any) -> t.Statement:
        line = self.line(node)
        init = node.child_by_field_name("initializer")
        condition = node.child_by_field_name("condition")
        update = node.child_by_field_name("update")
        body = node.child_by_field_name("body")
        not_counted = self.stop(node, "a for loop that is not a counted loop over an integer")
        if init is None or condition is None or update is None or body is None:
            return not_counted
        var = start = None
        if init.type == "declaration":
            declarators = init.children_by_field_name("declarator")
            if len(declarators) == 1 and declarators[0].type == "init_declarator":
                name = declarators[0].child_by_field_name("declarator")
                value = declarators[0].child_by_field_name("value")
                if name is not None and value is not None:
                    var, start = self.text(name), self._initializer(value, False)
        elif init.type == "assignment_expression" and self.text(init.child_by_field_name("operator")) == "=":
            var, start = self.text(init.child_by_field_name("left")), self.expression(
                init.child_by_field_name("right"))
        if var is None or start is None or condition.type != "binary_expression":
            return not_counted
        op = self.text(condition.child_by_field_name("operator"))
        if self.text(condition.child_by_field_name("left")) != var or op not in ("<", "<=", ">", ">=", "!="):
            return not_counted
        stop = self.expression(condition.child_by_field_name("right"))
        step: int | None = None
        update_text = self.text(update).replace(" ", "")
        if update_text in (f"++{var}", f"{var}++"):
            step = 1
        elif update_text in (f"--{var}", f"{var}--"):
            step = -1
        elif update.type == "assignment_expression" and self.text(update.child_by_field_name("left")) == var:
            amount = self.expression(update.child_by_field_name("right"))
            update_op = self.text(update.child_by_field_name("operator"))
            if isinstance(amount, t.Lit) and amount.value.denominator == 1 and update_op in ("+=", "-="):
                step = int(amount.value) * (1 if update_op == "+=" else -1)
        if step is None or (op in ("<", "<=") and step < 0) or (op in (">", ">=") and step > 0):
            return not_counted
        if op == "!=" and abs(step) != 1:
            return not_counted
        self.scope.add(var)
        inclusive = op in ("<=", ">=")
        return t.For(var, start, stop, t.Lit(step, "int"), inclusive, self.block(body), line)  # type: ignore[arg-type]

    # -- expressions

    def condition(self, node: Any) -> t.Node:
        while node.type in ("parenthesized_expression", "condition_clause") and node.named_children:
            node = node.child_by_field_name("value") or node.named_children[0]
        return self.expression(node)

    def expression(self, node: Any) -> t.Node:
        kind = node.type
        line = self.line(node)
        if kind == "parenthesized_expression":
            return self.expression(node.named_children[0]) if node.named_children else self.unsupported(node)
        if kind == "number_literal":
            return self.literal(node)
        if kind in ("true", "false"):
            return t.Lit(1 if kind == "true" else 0, "int")  # type: ignore[arg-type]
        if kind == "identifier":
            name = self.text(node)
            if self.owner is not None and name not in self.scope and name in self.structs.get(self.owner, ()):
                return t.Field(t.Name("this", line), name, line)  # an implicit member
            return self.name_value(name, line)
        if kind == "this":
            return self.name_value("this", line)
        if kind == "qualified_identifier":
            name = self.text(node).split("::")[-1]
            if name in self.constants:
                return self.constants[name]
            return self.unsupported(node)
        if kind == "binary_expression":
            op = self.text(node.child_by_field_name("operator"))
            left = node.child_by_field_name("left")
            right = node.child_by_field_name("right")
            if op in _ARITHMETIC:
                return t.Binary(op, self.expression(left), self.expression(right), line)  # type: ignore[arg-type]
            if op in _COMPARISONS:
                return t.Compare(op, self.expression(left), self.expression(right), line,  # type: ignore[arg-type]
                                 self.text(node))
            if op in ("&&", "||"):
                return t.Logic("and" if op == "&&" else "or", (self.expression(left), self.expression(right)), line)
            if op == "%":
                return self.unsupported(node, f"the remainder `%` at `{self.text(node)}`")
            return self.unsupported(node, f"the bit operation `{op}` at `{self.text(node)}`")
        if kind == "unary_expression":
            op = self.text(node.child_by_field_name("operator"))
            operand = self.expression(node.child_by_field_name("argument"))
            if op == "-":
                return t.Negate(operand, line)
            if op == "+":
                return operand
            if op == "!":
                return t.Logic("not", (operand,), line)
            return self.unsupported(node, f"the bit operation `{op}` at `{self.text(node)}`")
        if kind == "conditional_expression":
            return t.Choose(self.condition(node.child_by_field_name("condition")),
                            self.expression(node.child_by_field_name("consequence")),
                            self.expression(node.child_by_field_name("alternative")), line)
        if kind == "field_expression":
            base = self.expression(node.child_by_field_name("argument"))
            return t.Field(base, self.text(node.child_by_field_name("field")), line)
        if kind == "subscript_expression":
            base = self.expression(node.child_by_field_name("argument"))
            index_node = node.child_by_field_name("index")
            if index_node is None:
                indices = node.child_by_field_name("indices")
                if indices is None or len(indices.named_children) != 1:
                    return self.unsupported(node)
                index_node = indices.named_children[0]
            return t.Index(base, self.expression(index_node), line)
        if kind == "pointer_expression":
            op = node.children[0].type
            operand = self.expression(node.child_by_field_name("argument"))
            return t.Deref(operand, line) if op == "*" else t.AddressOf(operand, line)
        if kind == "cast_expression":
            type_node = node.child_by_field_name("type")
            return t.Cast(scalar_kind(self.text(type_node)), self.expression(node.child_by_field_name("value")), line)
        if kind == "call_expression":
            return self._call(node)
        if kind == "initializer_list":
            return t.Aggregate(tuple(self.expression(c) for c in node.named_children), line=line)
        if kind == "compound_literal_expression":
            value = node.child_by_field_name("value")
            return self.expression(value) if value is not None else self.unsupported(node)
        return self.unsupported(node)

    def _member_call(self, function: Any, args: tuple[t.Node, ...], node: Any) -> t.Node:
        """``o.f(..)``, ``p->f(..)``, ``this->f(..)``: a member function of a class of the file."""
        receiver_node, method = function.child_by_field_name("argument"), self.text(function.child_by_field_name("field"))
        receiver = self.expression(receiver_node)
        name = receiver.name if isinstance(receiver, t.Name) else None
        owner = self.owner if name == "this" else self.typed.get(name or "")
        if owner is None or (owner, method) not in self.methods:
            return self.unsupported(node, f"the call `{self.text(function)}(...)`")
        arrow = any(c.type == "->" for c in function.children)
        if not arrow and name not in self.pointers:
            receiver = t.AddressOf(receiver, self.line(node))  # `this` of the callee points to the object
        return t.UserCall(f"{owner}::{method}", (receiver,) + args, self.line(node))

    def _call(self, node: Any) -> t.Node:
        function = node.child_by_field_name("function")
        arguments = node.child_by_field_name("arguments")
        args = tuple(self.expression(a) for a in arguments.named_children) if arguments is not None else ()
        if function.type == "template_function":
            name = self.text(function.child_by_field_name("name"))
            if name in ("static_cast", "float", "double") and len(args) == 1:
                type_text = self.text(function.child_by_field_name("arguments"))
                return t.Cast(scalar_kind(type_text), args[0], self.line(node))
            return self.unsupported(node, f"the template call `{self.text(function)}`")
        if function.type == "identifier" and self.owner is not None and \
                (self.owner, self.text(function)) in self.methods and self.text(function) not in self.scope:
            return t.UserCall(f"{self.owner}::{self.text(function)}", (t.Name("this", self.line(node)),) + args,
                              self.line(node))  # another member function, on the same object
        if function.type == "field_expression":
            return self._member_call(function, args, node)
        if function.type in ("identifier", "qualified_identifier"):
            name = self.text(function)
            if name in ("float", "double") and len(args) == 1:
                return t.Cast("real", args[0], self.line(node))
            if name in ("int", "long") and len(args) == 1:
                return t.Cast("int", args[0], self.line(node))
            if name.startswith("make_") and self.struct_of(name[len("make_"):]) is not None:
                fields = self.structs[name[len("make_"):]]
                if len(fields) == len(args):
                    return t.Aggregate(args, fields, self.line(node))
            return self.math_or_call(name, args, node)
        if function.type == "primitive_type":
            return t.Cast(scalar_kind(self.text(function)), args[0], self.line(node)) if len(args) == 1 else \
                self.unsupported(node)
        return self.unsupported(node, f"the call `{self.text(function)}(...)`")
