"""Python modules for the front end: parsed files, what their top level defines, and the loader that finds
the project modules imports name (under the scanned roots).  Files are parsed with libcst, never imported.
"""
from __future__ import annotations

import os
import re
from dataclasses import dataclass, field
from typing import Iterable, Sequence

import libcst as cst
from libcst.metadata import CodeRange, MetadataWrapper, PositionProvider

from verifier.claims.decoding import read_helper_text
from verifier.claims.file_reads import is_file
from verifier.claims.frontends.python.fallbacks import (
    dotted,
    Binding,
    Import,
    MemberImport,
    ModuleImport,
    Alternatives,
    block_alternatives,
    choose,
    import_meaning,
    import_text,
)
from verifier.model import ir

MATH_MODULES = ("math", "numpy", "np")




@dataclass
class ModuleInfo:
    """One parsed Python file and what its top level defines."""

    path: str  # relative to the working directory
    directory: str  # where relative imports start
    module: cst.Module
    positions: dict[cst.CSTNode, CodeRange]
    functions: dict[str, cst.FunctionDef] = field(default_factory=dict)
    classes: dict[str, dict[str, cst.FunctionDef]] = field(default_factory=dict)
    class_nodes: dict[str, cst.ClassDef] = field(default_factory=dict)  # the definitions, by name
    imports: dict[str, Import] = field(default_factory=dict)
    constants: dict[str, list[cst.BaseExpression]] = field(default_factory=dict)
    rebound: set[str] = field(default_factory=set)  # names bound at top level by something other than one assignment
    star_imports: list[str] = field(default_factory=list)  # modules imported with `from M import *`
    # names bound by a top-level try/if whose alternatives disagree, and names some alternative leaves None
    conflicts: dict[str, str] = field(default_factory=dict)
    maybe_none: dict[str, str] = field(default_factory=dict)
    bindings: dict[str, Binding] = field(default_factory=dict)  # the latest top-level binding of each name
    # names bound before a `from M import *` of a project or outside module M, which may replace them
    starred_over: dict[str, list[str]] = field(default_factory=dict)
    lowered: dict[tuple[int, str], ir.Function] = field(default_factory=dict)  # by id(node), qualname
    lambdas: dict[str, ir.Function] = field(default_factory=dict)  # by the name their lowering gave them

    def line(self, node: cst.CSTNode) -> int:
        pos = self.positions.get(node)
        return pos.start.line if pos is not None else 0

    def position(self, node: cst.CSTNode) -> tuple[int, int]:
        """(line, column), both 1-based; (0, 0) when libcst gives none."""
        pos = self.positions.get(node)
        return (pos.start.line, pos.start.column + 1) if pos is not None else (0, 0)

    def end_line(self, node: cst.CSTNode) -> int:
        pos = self.positions.get(node)
        return pos.end.line if pos is not None else 0


def build_module_info(path: str, module: cst.Module, positions: dict[cst.CSTNode, CodeRange]) -> ModuleInfo:
    directory = os.path.dirname(path) or "."
    info = ModuleInfo(path=path, directory=directory, module=module, positions=positions)
    for stmt in module.body:
        _index_statement(info, stmt, top=True)
    info.rebound.update(_global_names(module))
    return info


def _global_names(module: cst.Module) -> set[str]:
    """Names some function rebinds with ``global``: their module-level value is not a constant."""
    names: set[str] = set()

    class Visitor(cst.CSTVisitor):
        def visit_Global(self, node: cst.Global) -> None:
            names.update(item.name.value for item in node.names)

    module.visit(Visitor())
    return names


def _index_statement(info: ModuleInfo, stmt: cst.CSTNode, top: bool) -> None:
    if isinstance(stmt, cst.FunctionDef):
        name = stmt.name.value
        if name in info.functions or name in info.constants:
            info.rebound.add(name)
        info.functions[name] = stmt
        line = info.line(stmt)
        info.bindings[name] = Binding(stmt, ("def", str(line)), line, f"`def {name}` (line {line})")
        return
    if isinstance(stmt, cst.ClassDef):
        methods: dict[str, cst.FunctionDef] = {}
        body = stmt.body.body if isinstance(stmt.body, cst.IndentedBlock) else ()
        for item in body:
            if isinstance(item, cst.FunctionDef):
                methods[item.name.value] = item
        info.classes[stmt.name.value] = methods
        info.class_nodes[stmt.name.value] = stmt
        line = info.line(stmt)
        info.bindings[stmt.name.value] = Binding(stmt.name, ("class", str(line)), line,
                                                 f"`class {stmt.name.value}` (line {line})")
        return
    if isinstance(stmt, cst.SimpleStatementLine):
        for small in stmt.body:
            if isinstance(small, cst.Import):
                for alias in small.names:
                    imported = dotted(alias.name)
                    if imported is None:
                        continue
                    if alias.asname is not None and isinstance(alias.asname.name, cst.Name):
                        _bind_import(info, alias.asname.name.value, ModuleImport(imported), small)
                    else:
                        head = imported.split(".")[0]
                        _bind_import(info, head, ModuleImport(head), small)
            elif isinstance(small, cst.ImportFrom):
                dots = len(small.relative)
                base = dotted(small.module) if small.module is not None else ""
                if base is None:
                    continue
                prefix = "." * dots
                if isinstance(small.names, cst.ImportStar):
                    _star_import(info, prefix + base)
                    continue
                for alias in small.names:
                    if not isinstance(alias.name, cst.Name):
                        continue
                    name = alias.name.value
                    bound = name
                    if alias.asname is not None and isinstance(alias.asname.name, cst.Name):
                        bound = alias.asname.name.value
                    _bind_import(info, bound, MemberImport(prefix + base, name), small)
            elif isinstance(small, cst.Assign) and len(small.targets) == 1 and isinstance(
                small.targets[0].target, cst.Name
            ):
                name = small.targets[0].target.value
                info.constants.setdefault(name, []).append(small.value)
                line = info.line(small)
                text = _code(small.value)
                meaning = ("none",) if text == "None" else ("value", text)
                info.bindings[name] = Binding(small.value, meaning, line, f"`{name} = {text}` (line {line})")
            elif isinstance(small, cst.AnnAssign) and isinstance(small.target, cst.Name) and small.value is not None:
                info.constants.setdefault(small.target.value, []).append(small.value)
            elif isinstance(small, (cst.Assign, cst.AugAssign, cst.AnnAssign)):
                for target in _assigned_names(small):
                    info.rebound.add(target)
            if isinstance(small, (cst.Assign, cst.AugAssign, cst.AnnAssign, cst.Expr, cst.Del)):
                # `T[0] = v`, `T.x = v`, `T.append(v)`, `del T[0]` at top level change the value of T
                for base in _changed_bases(small):
                    info.rebound.add(base)
        return
    block = block_alternatives(stmt, info.line, _code)
    if block is not None:
        _bind_alternatives(info, block)
        return
    # Other compound statements at top level (for, with, nested blocks ...) bind names in ways not followed.
    for name in _names_bound_in(stmt):
        info.rebound.add(name)


def star_exports(info: ModuleInfo, name: str) -> bool | None:
    """Whether ``info`` binds ``name`` for ``from info import *`` itself (None: cannot be told, e.g. a
    computed ``__all__``); what its own star imports pass on is the caller's to follow."""
    if name.startswith("_"):
        return False
    if "__all__" in info.constants or "__all__" in info.rebound:
        listed = info.constants.get("__all__", [])
        if len(listed) != 1 or not isinstance(listed[0], (cst.List, cst.Tuple)):
            return None
        names = []
        for element in listed[0].elements:
            spelled = element.value.value if isinstance(element.value, cst.SimpleString) else ""
            match = re.fullmatch(r"(['\"])([A-Za-z_]\w*)\1", spelled)  # a plain quoted name, read as text
            if match is None:
                return None
            names.append(match.group(2))
        return name in names
    return (name in info.bindings or name in info.imports or name in info.functions or name in info.constants
            or name in info.classes or name in info.conflicts or name in info.rebound)


def _star_import(info: ModuleInfo, module: str) -> None:
    info.star_imports.append(module)
    if module.lstrip(".").split(".")[0] not in MATH_MODULES:
        for name in info.bindings:
            info.starred_over.setdefault(name, []).append(module)


def _code(node: cst.CSTNode) -> str:
    return cst.Module(body=[]).code_for_node(node)


def _bind_import(info: ModuleInfo, name: str, imported: Import, node: cst.CSTNode) -> None:
    if name in info.functions or name in info.constants or name in info.classes:
        info.rebound.add(name)  # an import after a def or assignment of the same name: not followed
    info.imports[name] = imported
    line = info.line(node)
    info.bindings[name] = Binding(imported, import_meaning(imported), line,
                                  f"`{import_text(imported, name)}` (line {line})")


def _bind_alternatives(info: ModuleInfo, block: Alternatives) -> None:
    """Each name a top-level try/if binds: to what its alternatives agree on, or a conflict."""
    names = list(dict.fromkeys([*block.first, *(n for other in block.others for n in other)]))
    for name in names:
        choice = choose(name, block, info.bindings.get(name), info.path)
        if choice.maybe_none is not None:
            info.maybe_none[name] = choice.maybe_none
        if choice.binding is None:
            info.conflicts[name] = choice.conflict or "is not followed"
            info.rebound.add(name)
            continue
        info.conflicts.pop(name, None)
        if choice.binding is info.bindings.get(name):
            continue  # every alternative keeps the earlier binding
        info.bindings[name] = choice.binding
        bound = choice.binding.bound
        info.imports.pop(name, None)  # the block's binding replaces any earlier one
        info.functions.pop(name, None)
        info.constants.pop(name, None)
        info.classes.pop(name, None)
        if isinstance(bound, (ModuleImport, MemberImport)):
            info.imports[name] = bound
        elif isinstance(bound, cst.FunctionDef):
            info.functions[name] = bound
        else:
            info.constants[name] = [bound]
    for star in block.stars:
        _star_import(info, star)
    for touched in block.touched:
        if not isinstance(info.imports.get(touched), ModuleImport) and touched not in info.conflicts:
            info.rebound.add(touched)  # `TABLE.update(...)` in a branch: TABLE is no constant


def _assigned_names(small: cst.CSTNode) -> Iterable[str]:
    collector: list[str] = []

    class Visitor(cst.CSTVisitor):
        def visit_AssignTarget(self, node: cst.AssignTarget) -> None:
            for n in _target_names(node.target):
                collector.append(n)

        def visit_AugAssign(self, node: cst.AugAssign) -> None:
            collector.extend(_target_names(node.target))

        def visit_AnnAssign(self, node: cst.AnnAssign) -> None:
            collector.extend(_target_names(node.target))

    small.visit(Visitor())
    return collector


def _changed_bases(small: cst.CSTNode) -> list[str]:
    """Names whose object a top-level statement changes in place (subscript/attribute targets, method calls)."""
    bases: list[str] = []

    def base_of(node: cst.BaseExpression) -> str | None:
        while isinstance(node, (cst.Subscript, cst.Attribute)):
            node = node.value
        return node.value if isinstance(node, cst.Name) else None

    targets: list[cst.BaseExpression] = []
    if isinstance(small, cst.Assign):
        targets = [t.target for t in small.targets]
    elif isinstance(small, (cst.AugAssign, cst.AnnAssign)):
        targets = [small.target]
    elif isinstance(small, cst.Del):
        targets = [small.target]
    elif isinstance(small, cst.Expr) and isinstance(small.value, cst.Call) and isinstance(small.value.func, cst.Attribute):
        targets = [small.value.func]
    for target in targets:
        for part in target.elements if isinstance(target, (cst.Tuple, cst.List)) else [target]:  # type: ignore[union-attr]
            node = part.value if isinstance(part, cst.BaseElement) else part
            if isinstance(node, (cst.Subscript, cst.Attribute)):
                name = base_of(node)
                if name is not None:
                    bases.append(name)
    return bases


def _target_names(target: cst.BaseExpression) -> list[str]:
    if isinstance(target, cst.Name):
        return [target.value]
    if isinstance(target, (cst.Tuple, cst.List)):
        out: list[str] = []
        for el in target.elements:
            out.extend(_target_names(el.value))
        return out
    return []


def _names_bound_in(stmt: cst.CSTNode) -> list[str]:
    names: list[str] = []

    class Visitor(cst.CSTVisitor):
        def visit_AssignTarget(self, node: cst.AssignTarget) -> None:
            names.extend(_target_names(node.target))

        def visit_AugAssign(self, node: cst.AugAssign) -> None:
            names.extend(_target_names(node.target))

        def visit_AnnAssign(self, node: cst.AnnAssign) -> None:
            names.extend(_target_names(node.target))

        def visit_FunctionDef(self, node: cst.FunctionDef) -> bool:
            names.append(node.name.value)
            return False

        def visit_ClassDef(self, node: cst.ClassDef) -> bool:
            names.append(node.name.value)
            return False

        def visit_ImportAlias(self, node: cst.ImportAlias) -> None:
            if node.asname is not None and isinstance(node.asname.name, cst.Name):
                names.append(node.asname.name.value)
            else:
                imported = dotted(node.name)
                if imported:
                    names.append(imported.split(".")[0])

        def visit_For(self, node: cst.For) -> None:
            names.extend(_target_names(node.target))

    stmt.visit(Visitor())
    return names


def parse_module_text(path: str, text: str) -> ModuleInfo:
    """Parse ``text`` (raises ``cst.ParserSyntaxError``) and index its top level."""
    wrapper = MetadataWrapper(cst.parse_module(text))
    positions = dict(wrapper.resolve(PositionProvider))
    return build_module_info(path, wrapper.module, positions)


def normalize_rel(path: str) -> str:
    rel = os.path.relpath(os.path.abspath(path), os.getcwd())
    return rel.replace(os.sep, "/")


class ModuleLoader:
    """Finds and parses the project modules that imports name (under the scanned roots)."""

    def __init__(self, roots: Sequence[str]):
        self.roots = tuple(roots) or (".",)
        self._cache: dict[str, ModuleInfo | None] = {}
        self._by_path: dict[str, ModuleInfo] = {}

    def add(self, info: ModuleInfo) -> None:
        self._cache[os.path.abspath(info.path)] = info
        self._by_path[info.path] = info

    def module(self, path: str) -> ModuleInfo:
        """The module loaded (or added) under ``path``, as IR functions name it."""
        return self._by_path[path]

    def _load_file(self, path: str) -> ModuleInfo | None:
        key = os.path.abspath(path)
        if key in self._cache:
            return self._cache[key]
        self._cache[key] = None  # guards against import cycles while parsing
        text = read_helper_text(path)
        try:
            info = parse_module_text(normalize_rel(path), text) if text is not None else None
        except (cst.ParserSyntaxError, RecursionError):
            info = None
        self._cache[key] = info
        if info is not None:
            self._by_path[info.path] = info
        return info

    def _bases(self, importer: ModuleInfo) -> list[str]:
        bases: list[str] = list(self.roots)
        cwd = os.path.abspath(os.getcwd())
        here = os.path.abspath(importer.directory)
        while here.startswith(cwd):
            bases.append(here)
            parent = os.path.dirname(here)
            if parent == here:
                break
            here = parent
        return list(dict.fromkeys(bases))

    def find(self, dotted: str, importer: ModuleInfo) -> ModuleInfo | None:
        """The module file for ``dotted`` (``.x``/``..x`` relative to the importer) or None."""
        if not dotted or dotted.split(".")[0] in MATH_MODULES:
            return None
        if dotted.startswith("."):
            level = len(dotted) - len(dotted.lstrip("."))
            rest = dotted[level:]
            base = os.path.abspath(importer.directory)
            for _ in range(level - 1):
                base = os.path.dirname(base)
            return self._find_under(base, rest)
        for base in self._bases(importer):
            found = self._find_under(base, dotted)
            if found is not None:
                return found
        return None

    def _find_under(self, base: str, dotted: str) -> ModuleInfo | None:
        parts = [p for p in dotted.split(".") if p]
        stem = os.path.join(base, *parts) if parts else base
        for candidate in (stem + ".py", os.path.join(stem, "__init__.py")):
            if parts and is_file(candidate):
                return self._load_file(candidate)
            if not parts and candidate.endswith("__init__.py") and is_file(candidate):
                return self._load_file(candidate)
        return None


@dataclass(frozen=True)
class FunctionRef:
    """A function definition of a parsed module, named as claims and messages name it."""

    module: ModuleInfo
    node: cst.FunctionDef
    qualname: str
    class_name: str | None = None

    @property
    def key(self) -> tuple[str, str]:
        return (self.module.path, self.qualname)

    def positional_names(self) -> list[str]:
        params = self.node.params
        return [p.name.value for p in list(params.posonly_params) + list(params.params)]
