"""Where a kernel claim sits: the function below a comment, the assignment a trailing comment is on.

Works on the tree-sitter tree of any kernel language.  A function claim sits in the comment lines
directly above a function definition; lines holding only comments or attributes (``#[inline]``,
``[[nodiscard]]``) may sit in between, and qualifiers on the definition's own first lines (``static
inline``, ``__host__ __device__``, ``template <...>``, ``@inline``, ``pure elemental``) belong to it.
"""
from __future__ import annotations

from collections.abc import Iterator
from dataclasses import dataclass
from typing import Any

from verifier.claims.kernels.parse import ParsedSource

# Node types per language family.
_COMMENTS = {"comment", "line_comment", "block_comment"}
_ATTRIBUTES = {"attribute_item", "inner_attribute_item", "attribute_declaration"}
_FUNCTIONS = {
    "c": {"function_definition"},
    "cpp": {"function_definition"},
    "cuda": {"function_definition"},
    "fortran": {"function", "subroutine"},
    "julia": {"function_definition", "assignment"},  # `f(x) = ...` is an assignment to a call
    "rust": {"function_item"},
}
# Wrappers whose first line is the definition's first line.
_WRAPPERS = {"template_declaration", "macrocall_expression", "macro_argument_list"}
_STATEMENTS = {
    "c": {"expression_statement", "declaration", "return_statement"},
    "cpp": {"expression_statement", "declaration", "return_statement"},
    "cuda": {"expression_statement", "declaration", "return_statement"},
    "fortran": {"assignment_statement"},
    "julia": {"assignment", "compound_assignment_expression", "return_statement", "const_statement",
              "local_statement"},
    "rust": {"let_declaration", "expression_statement", "return_expression"},
}


@dataclass(frozen=True)
class FunctionSite:
    name: str  # as written (Fortran: lower case)
    node: Any  # the definition node (function_definition, function, subroutine, function_item, ...)
    first_line: int  # 1-based first line, wrappers (template, macro) included


@dataclass(frozen=True)
class StatementSite:
    node: Any  # the statement node
    function: FunctionSite | None
    line: int
    end_line: int


def walk(node: Any) -> Iterator[Any]:
    """Every node below ``node`` in document order (iterative, so deep trees do not recurse)."""
    stack = [node]
    while stack:
        current = stack.pop()
        yield current
        stack.extend(reversed(current.children))


def function_name(source: ParsedSource, node: Any) -> str | None:
    """The name a definition node defines, or None when it is not a function definition."""
    language = source.language
    if language in ("c", "cpp", "cuda"):
        declarator = node.child_by_field_name("declarator")
        while declarator is not None and declarator.type != "function_declarator":
            declarator = declarator.child_by_field_name("declarator")
        if declarator is None:
            return None
        name = declarator.child_by_field_name("declarator")
        if name is None:
            return None
        if name.type == "qualified_identifier":
            inner = name.child_by_field_name("name")
            name = inner if inner is not None else name
        return source.node_text(name)
    if language == "fortran":
        header = node.children[0] if node.children else None
        name = header.child_by_field_name("name") if header is not None else None
        return source.node_text(name).lower() if name is not None else None
    if language == "julia":
        call = _julia_signature_call(node)
        if call is None:
            return None
        head = call.children[0]
        return source.node_text(head) if head.type in ("identifier", "field_expression") else None
    if language == "rust":
        name = node.child_by_field_name("name")
        return source.node_text(name) if name is not None else None
    return None


def class_owner(source: ParsedSource, node: Any) -> str | None:
    """The class or struct a C++ member function belongs to (defined in its body, or as ``T::f``), or None."""
    parent = node.parent
    if parent is not None and parent.type == "field_declaration_list" and parent.parent is not None and \
            parent.parent.type in ("struct_specifier", "class_specifier"):
        name = parent.parent.child_by_field_name("name")
        return source.node_text(name) if name is not None else None
    declarator = node.child_by_field_name("declarator")
    while declarator is not None and declarator.type != "function_declarator":
        declarator = declarator.child_by_field_name("declarator")
    name = declarator.child_by_field_name("declarator") if declarator is not None else None
    if name is not None and name.type == "qualified_identifier" and name.child_by_field_name("scope") is not None:
        return source.node_text(name.child_by_field_name("scope")).split("<")[0].strip()
    return None


def owner_of(source: ParsedSource, node: Any) -> str | None:
    """The type a method belongs to: a Rust ``impl`` block or a C++ class; None for a free function."""
    if source.language == "rust":
        return impl_owner(source, node)
    if source.language in ("cpp", "cuda"):
        return class_owner(source, node)
    return None


def impl_owner(source: ParsedSource, node: Any) -> str | None:
    """The type a Rust function item is a method or associated function of (``impl Vec3 { .. }``), or None."""
    parent = node.parent
    while parent is not None and parent.type == "declaration_list":
        parent = parent.parent
    if parent is None or parent.type != "impl_item":
        return None
    owner = parent.child_by_field_name("type")
    return source.node_text(owner).split("<")[0].strip() if owner is not None else None


def _julia_signature_call(node: Any) -> Any:
    """The ``f(args)`` call of a Julia definition (long form, or short form ``f(x) = ...``)."""
    if node.type == "function_definition":
        signature = next((c for c in node.children if c.type == "signature"), None)
        if signature is None or not signature.named_children:
            return None
        head = signature.named_children[0]
    elif node.type == "assignment" and node.named_children:
        head = node.named_children[0]
    else:
        return None
    while head is not None and head.type in ("where_expression", "typed_expression") and head.named_children:
        head = head.named_children[0]  # `f(x)::T where T` -> `f(x)`
    return head if head is not None and head.type == "call_expression" else None


def julia_signature_call(node: Any) -> Any:
    return _julia_signature_call(node)


class SourceIndex:
    """The functions and claimable statements of one parsed file, by line."""

    def __init__(self, source: ParsedSource):
        self.source = source
        self.lines = source.text.splitlines()
        self.functions: list[FunctionSite] = []
        self.statements: list[StatementSite] = []
        self._skippable: set[int] = set()
        self._index()

    def _index(self) -> None:
        source = self.source
        function_types = _FUNCTIONS[source.language]
        statement_types = _STATEMENTS[source.language]
        covered: dict[int, list[tuple[int, int]]] = {}
        stack: list[tuple[Any, FunctionSite | None]] = [(source.root, None)]
        while stack:
            node, function = stack.pop()
            if node.type in _COMMENTS or node.type in _ATTRIBUTES:
                self._cover(node, covered)
                continue
            inner = function
            if node.type in function_types and (node.type != "assignment" or function is None):
                name = function_name(source, node)
                if name is not None:
                    site = FunctionSite(name, node, self._first_line(node))
                    self.functions.append(site)
                    inner = site
            if node.type in statement_types and inner is not None and node != getattr(inner, "node", None):
                self.statements.append(StatementSite(node, inner, source.line(node), source.end_line(node)))
            stack.extend((child, inner) for child in reversed(node.children))
        for number, line in enumerate(self.lines, start=1):
            if not line.strip():
                continue
            spans = covered.get(number, [])
            rest = list(line)
            for start, end in spans:
                for i in range(max(0, start), min(len(rest), end)):
                    rest[i] = " "
            if not "".join(rest).strip():
                self._skippable.add(number)

    def _cover(self, node: Any, covered: dict[int, list[tuple[int, int]]]) -> None:
        first, last = self.source.line(node), self.source.end_line(node)
        start_column = self.source.column(node) - 1
        for number in range(first, last + 1):
            line = self.lines[number - 1] if number - 1 < len(self.lines) else ""
            start = start_column if number == first else 0
            end = len(line)
            if number == last and node.end_point[1] < len(line.encode("utf-8")):
                end = len(line.encode("utf-8")[:node.end_point[1]].decode("utf-8", "replace"))
            covered.setdefault(number, []).append((start, end))

    def _first_line(self, node: Any) -> int:
        outer = node
        while outer.parent is not None and outer.parent.type in _WRAPPERS:
            outer = outer.parent
        return self.source.line(outer)

    def function_below(self, end_line: int) -> FunctionSite | None:
        """The function whose definition starts after ``end_line`` with only comment/attribute lines between."""
        number = end_line + 1
        while number in self._skippable:
            number += 1
        candidates = [f for f in self.functions if f.first_line == number]
        if not candidates:
            return None
        return min(candidates, key=lambda f: f.node.start_byte)

    def statement_on(self, line: int) -> StatementSite | None:
        """The innermost claimable statement spanning ``line`` (the latest-starting one)."""
        best: StatementSite | None = None
        for site in self.statements:
            if site.line <= line <= site.end_line:
                if best is None or site.line > best.line or (
                        site.line == best.line and site.node.start_byte > best.node.start_byte):
                    best = site
        return best

    def method_named(self, owner: str, name: str) -> FunctionSite | None:
        """The method ``name`` of ``owner`` (a Rust ``impl`` block, a C++ class), or None."""
        for site in self.functions:
            if site.name == name and owner_of(self.source, site.node) == owner:
                return site
        return None

    def function_named(self, name: str) -> FunctionSite | None:
        wanted = name.lower() if self.source.language == "fortran" else name
        for site in self.functions:
            if site.name == wanted:
                return site
        return None
