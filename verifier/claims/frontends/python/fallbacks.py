"""Module-level alternatives: ``try: from numpy import cos ... except ImportError: from math import cos``
and ``if``/``else`` blocks that bind names one way or another at import time.

Which alternative runs is not known (the file is never imported), so a name such a block binds has as
candidates every binding an alternative may leave: the one of each branch that binds it, the one from
before the block for a branch that does not, and - since a ``try`` body may fail half way - the try
body's binding inside each handler.  When the candidates mean the same thing (numpy's and math's
``cos`` are one function of the reals) the name is bound to it; when they differ, using the name is not
followed and the message names both bindings with their lines.  A branch that ends in ``raise`` is no
alternative: the module would not load.  ``name = None`` in a branch (``except ImportError: np = None``)
only matters where the name is used as a value: calling or reading a member of None fails.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Callable, Union

import libcst as cst

from verifier.model.functions import CALL_SPELLINGS

MATH_LIBRARIES = ("math", "numpy", "np")
# numpy and math spell these alike but they differ on real arguments (IEEE remainder against floored
# modulo, tolerances, rounding to a number of digits), so the two bindings are different functions
_DIFFERENT_IN_NUMPY = frozenset({"remainder", "isclose", "round", "prod", "fsum", "sum", "max", "min"})
# numpy's names of math's functions (the same function of the reals)
_NUMPY_SPELLINGS = {"arctan2": "atan2", "arcsin": "asin", "arccos": "acos", "arctan": "atan", "arcsinh": "asinh",
                    "arccosh": "acosh", "arctanh": "atanh", "absolute": "fabs", "power": "pow", "deg2rad": "radians",
                    "rad2deg": "degrees"}


@dataclass(frozen=True)
class ModuleImport:
    """``import dotted`` / ``import dotted as alias``: the alias names the module ``dotted``."""

    dotted: str


@dataclass(frozen=True)
class MemberImport:
    """``from dotted import name [as alias]`` (``dotted`` keeps its leading dots when relative)."""

    dotted: str
    name: str

    @property
    def full(self) -> str:
        return self.dotted + self.name if self.dotted.endswith(".") else f"{self.dotted}.{self.name}"


Import = Union[ModuleImport, MemberImport]
Bound = Union[Import, cst.FunctionDef, cst.BaseExpression]  # an import, a def, or an assigned value


@dataclass(frozen=True)
class Binding:
    """What one branch binds a name to: ``meaning`` is equal for bindings that mean the same value."""

    bound: Bound
    meaning: tuple[str, ...]
    line: int
    text: str  # as the message shows it: "`from numpy import cos` (line 3)"


@dataclass(frozen=True)
class Choice:
    """The outcome for one name: the agreed binding, or why there is none; ``maybe_none`` when some
    alternative leaves it None.  Both texts follow "the module-level name NAME (used at line N) "."""

    binding: Binding | None
    conflict: str | None = None
    maybe_none: str | None = None


def import_meaning(imported: Import) -> tuple[str, ...]:
    """Equal for imports that bind the same thing (numpy's and math's functions of the same name)."""
    if isinstance(imported, ModuleImport):
        return ("module", imported.dotted)
    if imported.dotted in MATH_LIBRARIES and imported.name not in _DIFFERENT_IN_NUMPY:
        name = _NUMPY_SPELLINGS.get(imported.name, imported.name) if imported.dotted != "math" else imported.name
        return ("math", CALL_SPELLINGS.get(name, name))
    return ("member", imported.dotted, imported.name)


def import_text(imported: Import, bound_name: str) -> str:
    if isinstance(imported, ModuleImport):
        alias = "" if imported.dotted.split(".")[0] == bound_name else f" as {bound_name}"
        return f"import {imported.dotted}{alias}"
    alias = "" if imported.name == bound_name else f" as {bound_name}"
    return f"from {imported.dotted} import {imported.name}{alias}"


LineOf = Callable[[cst.CSTNode], int]
CodeOf = Callable[[cst.CSTNode], str]


def _import_bindings(small: cst.Import | cst.ImportFrom, line: int) -> dict[str, Binding] | None:
    bound: dict[str, Binding] = {}
    if isinstance(small, cst.Import):
        for alias in small.names:
            path = dotted(alias.name)
            if path is None:
                return None
            if alias.asname is not None and isinstance(alias.asname.name, cst.Name):
                name, imported = alias.asname.name.value, ModuleImport(path)
            else:
                name = path.split(".")[0]
                imported = ModuleImport(name)
            bound[name] = Binding(imported, import_meaning(imported), line, f"`{import_text(imported, name)}`")
        return bound
    if isinstance(small.names, cst.ImportStar):
        return None
    base = dotted(small.module) if small.module is not None else ""
    if base is None:
        return None
    prefix = "." * len(small.relative)
    for alias in small.names:
        if not isinstance(alias.name, cst.Name):
            return None
        name = alias.name.value
        if alias.asname is not None and isinstance(alias.asname.name, cst.Name):
            name = alias.asname.name.value
        member = MemberImport(prefix + base, alias.name.value)
        bound[name] = Binding(member, import_meaning(member), line, f"`{import_text(member, name)}`")
    return bound


def dotted(node: cst.BaseExpression) -> str | None:
    """``a.b.c`` for a chain of names, else None."""
    if isinstance(node, cst.Name):
        return node.value
    if isinstance(node, cst.Attribute):
        head = dotted(node.value)
        return None if head is None else f"{head}.{node.attr.value}"
    return None


class _Branch:
    """What one branch binds, or why it is no alternative (``raises``) or not followed (``opaque``)."""

    def __init__(self) -> None:
        self.bound: dict[str, Binding] = {}
        self.raises = False
        self.opaque = False
        self.touched: list[str] = []  # names whose object a method call may change
        self.stars: list[str] = []  # modules imported with `from M import *`


def _branch(statements: tuple[cst.CSTNode, ...] | list[cst.CSTNode], line_of: LineOf, code_of: CodeOf) -> _Branch:
    branch = _Branch()
    for stmt in statements:
        if isinstance(stmt, cst.FunctionDef):
            line = line_of(stmt)
            branch.bound[stmt.name.value] = Binding(stmt, ("def", str(line)), line, f"`def {stmt.name.value}` "
                                                                                    f"(line {line})")
            continue
        if not isinstance(stmt, cst.SimpleStatementLine):
            branch.opaque = True
            return branch
        for small in stmt.body:
            line = line_of(small)
            if isinstance(small, cst.ImportFrom) and isinstance(small.names, cst.ImportStar):
                module = dotted(small.module) if small.module is not None else ""
                if module is None:
                    branch.opaque = True
                    return branch
                branch.stars.append("." * len(small.relative) + module)
                continue
            if isinstance(small, (cst.Import, cst.ImportFrom)):
                bindings = _import_bindings(small, line)
                if bindings is None:
                    branch.opaque = True
                    return branch
                for name, binding in bindings.items():
                    branch.bound[name] = Binding(binding.bound, binding.meaning, line, f"{binding.text} (line {line})")
            elif isinstance(small, cst.Assign) and len(small.targets) == 1 and isinstance(
                    small.targets[0].target, cst.Name):
                name, value = small.targets[0].target.value, small.value
                text = code_of(value)
                meaning = ("none",) if isinstance(value, cst.Name) and value.value == "None" else ("value", text)
                branch.bound[name] = Binding(value, meaning, line, f"`{name} = {text}` (line {line})")
            elif isinstance(small, cst.Raise):
                branch.raises = True
                return branch
            elif isinstance(small, cst.Pass) or (isinstance(small, cst.Expr) and isinstance(
                    small.value, (cst.SimpleString, cst.ConcatenatedString))):
                continue
            elif isinstance(small, cst.Expr) and isinstance(small.value, cst.Call) and dotted(small.value.func):
                # a call for its effect (a warning, a message, np.seterr): it binds nothing, but a method
                # call on a module-level name may change that object
                head = (dotted(small.value.func) or "").split(".")
                if len(head) > 1:
                    branch.touched.append(head[0])
                continue
            else:
                branch.opaque = True
                return branch
    return branch


@dataclass(frozen=True)
class Alternatives:
    """The branches of one top-level block: ``first`` runs wholly or fails part way into a ``handler``."""

    first: dict[str, Binding]
    others: tuple[dict[str, Binding], ...]  # handlers (after a partial first) or other if-branches
    partial_first: bool  # a try: the handlers may keep what the try body bound before it failed
    line: int
    word: str  # "try" or "if"
    touched: tuple[str, ...] = ()  # names a method call in some branch may change
    stars: tuple[str, ...] = ()  # `from M import *` of any branch: each may be the one that ran


def block_alternatives(stmt: cst.CSTNode, line_of: LineOf, code_of: CodeOf) -> Alternatives | None:
    """The alternatives of a top-level ``try``/``if`` made of imports, defs and simple assignments, or None."""
    line = line_of(stmt)
    if isinstance(stmt, cst.Try):
        if stmt.finalbody is not None:
            return None
        body = list(stmt.body.body) + (list(stmt.orelse.body.body) if stmt.orelse is not None else [])
        first = _branch(body, line_of, code_of)
        handlers = [_branch(list(h.body.body), line_of, code_of) for h in stmt.handlers]
        if first.opaque or first.raises or any(h.opaque for h in handlers):
            return None
        touched = tuple(name for b in [first, *handlers] for name in b.touched)
        stars = tuple(m for b in [first, *handlers] if not b.raises for m in b.stars)
        return Alternatives(first.bound, tuple(h.bound for h in handlers if not h.raises), True, line, "try",
                            touched, stars)
    if isinstance(stmt, cst.If):
        branches: list[_Branch] = []
        node: cst.CSTNode | None = stmt
        while isinstance(node, cst.If):
            branches.append(_branch(list(node.body.body), line_of, code_of))
            node = node.orelse
        if isinstance(node, cst.Else):
            branches.append(_branch(list(node.body.body), line_of, code_of))
        else:
            branches.append(_Branch())  # no else: nothing is bound
        if any(b.opaque for b in branches):
            return None
        kept = [b.bound for b in branches if not b.raises]
        if not kept:
            return None
        return Alternatives(kept[0], tuple(kept[1:]), False, line, "if",
                            tuple(name for b in branches for name in b.touched),
                            tuple(m for b in branches if not b.raises for m in b.stars))
    return None


def choose(name: str, block: Alternatives, before: Binding | None, path: str) -> Choice:
    """The binding ``name`` has after ``block`` (``before``: its binding before the block, if any)."""
    candidates: list[Binding] = []

    def add(binding: Binding | None) -> None:
        if binding is not None and binding not in candidates:
            candidates.append(binding)

    add(block.first.get(name, before))
    for other in block.others:
        if name in other:
            add(other[name])
        else:
            if block.partial_first:
                add(block.first.get(name))
            add(before)
    nones = [c for c in candidates if c.meaning == ("none",)]
    usable = [c for c in candidates if c.meaning != ("none",)]
    maybe_none = None
    if nones:
        maybe_none = f"may be None ({nones[0].text} in the `{block.word}` at line {block.line} of {path})"
    if not usable:
        return Choice(None, maybe_none or "is None", maybe_none)
    meanings = {c.meaning for c in usable}
    if len(meanings) == 1:
        return Choice(usable[0], None, maybe_none)
    shown = " or ".join(c.text for c in sorted(usable, key=lambda c: c.line)[:3])
    conflict = (f"is bound differently by the alternatives of the `{block.word}` at line {block.line} of {path}: "
                f"{shown}; the tool cannot tell which one runs")
    return Choice(None, conflict, maybe_none)
