"""Symbolic execution of Python kernels (libcst trees) into claim-language expressions, path by path.

The scanned code is never imported or run: function bodies are walked as syntax.  Parameters are
variables; locals hold symbolic values; ``if``/``elif``/``else`` and conditional expressions split the
execution into paths, each carrying its branch conditions; ``for`` over constant ranges is unrolled;
calls of functions of the same module or of modules under the scanned roots are inlined, ``math``/
``numpy`` functions become the claim language's functions, anything else is an opaque value.

Unsupported expressions give an ``Unknown`` value that only matters when it is used (returned, tested,
claimed); unsupported statements stop their path with a reason.  Either way the reason names the
construct and its line.
"""
from __future__ import annotations

import os
from dataclasses import dataclass, field
from fractions import Fraction
from typing import Iterable, Sequence, Union

import libcst as cst
from libcst.metadata import MetadataWrapper, PositionProvider

from verifier.model.claim import Condition
from verifier.model.expr import PI, BinOp, Call, Expr, Neg, Num, Opaque, Pow, Var

MUTABLE = ("list", "array")
MAX_PATHS = 512  # live paths at once; more is inconclusive rather than slow
MAX_TREE_SIZE = 50000  # nodes of an expression counted as a tree (shared parts counted each time)
MAX_CONSTANT_EXPONENT = 64  # folding n**k of constants beyond this is left symbolic
MATH_MODULES = ("math", "numpy", "np")
# Decorators known not to change what a function computes (JIT compilers, caches, method kinds).
NEUTRAL_DECORATORS = frozenset(
    {"njit", "jit", "vectorize", "lru_cache", "cache", "staticmethod", "wraps", "profile", "cfunc", "guvectorize"}
)
PI_NAMES = frozenset({"math.pi", "np.pi", "numpy.pi", "pi"})


# ---------------------------------------------------------------- values


@dataclass(frozen=True)
class Unknown:
    """A value the executor does not model; ``reason`` names the construct and its line."""

    reason: str


@dataclass(frozen=True)
class Seq:
    """A tuple or list of known length (``ident`` tells lists apart for in-place changes)."""

    items: tuple["Value", ...]
    kind: str = "tuple"  # "tuple" | "list" | "array" (numpy: arithmetic is elementwise)
    ident: int = 0
    owner: int = 0  # the frame that created a list; only it may change the list in place


@dataclass(frozen=True)
class NoneValue:
    pass


NONE = NoneValue()
Value = Union[Num, Var, BinOp, Neg, Pow, Call, Opaque, Unknown, Seq, NoneValue]
EXPR_TYPES = (Num, Var, BinOp, Neg, Pow, Call, Opaque)


def is_expr(value: object) -> bool:
    return isinstance(value, EXPR_TYPES)


def first_unknown(value: Value) -> Unknown | None:
    if isinstance(value, Unknown):
        return value
    if isinstance(value, Seq):
        for item in value.items:
            found = first_unknown(item)
            if found is not None:
                return found
    return None


class Stuck(Exception):
    """The current path cannot be followed (unsupported statement, limit, recursion ...)."""

    def __init__(self, reason: str):
        super().__init__(reason)
        self.reason = reason


# ---------------------------------------------------------------- printing expressions

def _frac(value: Fraction) -> str:
    return str(value.numerator) if value.denominator == 1 else f"{value.numerator}/{value.denominator}"


def expr_text(e: Expr) -> str:
    """The claim-language spelling of an expression (for condition texts and labels)."""
    from verifier.claims.language import expression_text

    return expression_text(e)


# ---------------------------------------------------------------- modules


@dataclass
class ModuleInfo:
    """One parsed Python file and what its top level defines."""

    path: str  # relative to the working directory
    directory: str  # where relative imports start
    module: cst.Module
    positions: dict
    functions: dict[str, cst.FunctionDef] = field(default_factory=dict)
    classes: dict[str, dict[str, cst.FunctionDef]] = field(default_factory=dict)
    imports: dict[str, tuple] = field(default_factory=dict)  # alias -> ("module", dotted) | ("member", dotted, name)
    constants: dict[str, list[cst.BaseExpression]] = field(default_factory=dict)
    rebound: set[str] = field(default_factory=set)  # names bound at top level by something other than one assignment
    star_imports: list[str] = field(default_factory=list)  # modules imported with `from M import *`

    def line(self, node: cst.CSTNode) -> int:
        pos = self.positions.get(node)
        return pos.start.line if pos is not None else 0


def build_module_info(path: str, module: cst.Module, positions: dict) -> ModuleInfo:
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


def _dotted(node: cst.BaseExpression) -> str | None:
    if isinstance(node, cst.Name):
        return node.value
    if isinstance(node, cst.Attribute):
        head = _dotted(node.value)
        return None if head is None else f"{head}.{node.attr.value}"
    return None


def _index_statement(info: ModuleInfo, stmt: cst.CSTNode, top: bool) -> None:
    if isinstance(stmt, cst.FunctionDef):
        name = stmt.name.value
        if name in info.functions or name in info.constants:
            info.rebound.add(name)
        info.functions[name] = stmt
        return
    if isinstance(stmt, cst.ClassDef):
        methods: dict[str, cst.FunctionDef] = {}
        body = stmt.body.body if isinstance(stmt.body, cst.IndentedBlock) else ()
        for item in body:
            if isinstance(item, cst.FunctionDef):
                methods[item.name.value] = item
        info.classes[stmt.name.value] = methods
        return
    if isinstance(stmt, cst.SimpleStatementLine):
        for small in stmt.body:
            if isinstance(small, cst.Import):
                for alias in small.names:
                    dotted = _dotted(alias.name)
                    if dotted is None:
                        continue
                    if alias.asname is not None and isinstance(alias.asname.name, cst.Name):
                        info.imports[alias.asname.name.value] = ("module", dotted)
                    else:
                        head = dotted.split(".")[0]
                        info.imports[head] = ("module", head)
            elif isinstance(small, cst.ImportFrom):
                dots = len(small.relative)
                base = _dotted(small.module) if small.module is not None else ""
                if base is None:
                    continue
                prefix = "." * dots
                if isinstance(small.names, cst.ImportStar):
                    info.star_imports.append(prefix + base)
                    continue
                for alias in small.names:
                    name = alias.name.value if isinstance(alias.name, cst.Name) else None
                    if name is None:
                        continue
                    bound = name
                    if alias.asname is not None and isinstance(alias.asname.name, cst.Name):
                        bound = alias.asname.name.value
                    info.imports[bound] = ("member", prefix + base, name)
            elif isinstance(small, cst.Assign) and len(small.targets) == 1 and isinstance(
                small.targets[0].target, cst.Name
            ):
                name = small.targets[0].target.value
                info.constants.setdefault(name, []).append(small.value)
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
    # Compound statements at top level (if/try/for ...) may bind names in ways we do not follow.
    for name in _names_bound_in(stmt):
        info.rebound.add(name)


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
                dotted = _dotted(node.name)
                if dotted:
                    names.append(dotted.split(".")[0])

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

    def add(self, info: ModuleInfo) -> None:
        self._cache[os.path.abspath(info.path)] = info

    def _load_file(self, path: str) -> ModuleInfo | None:
        key = os.path.abspath(path)
        if key in self._cache:
            return self._cache[key]
        self._cache[key] = None  # guards against import cycles while parsing
        try:
            with open(path, encoding="utf-8") as handle:
                text = handle.read()
            info = parse_module_text(normalize_rel(path), text)
        except (OSError, UnicodeDecodeError, cst.ParserSyntaxError, RecursionError):
            info = None
        self._cache[key] = info
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
            if parts and os.path.isfile(candidate):
                return self._load_file(candidate)
            if not parts and candidate.endswith("__init__.py") and os.path.isfile(candidate):
                return self._load_file(candidate)
        return None


# ---------------------------------------------------------------- paths


@dataclass(frozen=True)
class State:
    env: tuple[tuple[str, Value], ...]  # immutable mapping as pairs; small functions keep this cheap
    conditions: tuple[Condition, ...] = ()
    notes: tuple[str, ...] = ()

    def get(self, name: str) -> Value | None:
        for key, value in reversed(self.env):
            if key == name:
                return value
        return None

    def bind(self, name: str, value: Value) -> "State":
        env = tuple((k, v) for k, v in self.env if k != name) + ((name, value),)
        return State(env, self.conditions, self.notes)

    def with_condition(self, condition: Condition) -> "State":
        return State(self.env, self.conditions + (condition,), self.notes)

    def with_note(self, note: str) -> "State":
        if note in self.notes:
            return self
        return State(self.env, self.conditions, self.notes + (note,))

    def with_env(self, env: tuple[tuple[str, Value], ...]) -> "State":
        return State(env, self.conditions, self.notes)


@dataclass(frozen=True)
class Outcome:
    state: State
    status: str  # "next" | "return" | "break" | "continue" | "raise" | "stuck"
    value: Value | None = None
    reason: str = ""
    line: int = 0
    loops: tuple[tuple[int, int], ...] = ()  # line ranges of the loops around a stuck statement


@dataclass(frozen=True)
class Visit:
    """A statement claim's statement reached on one path: the value it assigns or returns there."""

    state: State  # the path (conditions, notes) and the locals before the statement
    value: Value


@dataclass(frozen=True)
class FunctionRef:
    module: ModuleInfo
    node: cst.FunctionDef
    qualname: str
    class_name: str | None = None

    @property
    def key(self) -> tuple[str, str]:
        return (self.module.path, self.qualname)


@dataclass
class Frame:
    module: ModuleInfo
    function: FunctionRef | None
    depth: int
    stack: tuple[tuple[str, str], ...]
    ident: int
    loops: tuple[tuple[int, int], ...] = ()


class Executor:
    """Runs functions symbolically; one executor per claim (it collects the claim's dependencies)."""

    def __init__(self, loader: ModuleLoader, *, unroll_limit: int = 256, inline_depth: int = 16,
                 claim_targets: dict | None = None):
        self.loader = loader
        self.unroll_limit = unroll_limit
        self.inline_depth = inline_depth
        self.claim_targets = claim_targets or {}  # statement node -> key, recorded at depth 0
        self.visits: dict[object, list[Visit]] = {}
        self.dependencies: list[str] = []
        self.inlined: list[str] = []
        self._counter = 0
        self._constant_cache: dict[tuple[str, str], Value] = {}
        self._constant_busy: set[tuple[str, str]] = set()
        self._sizes: dict[int, tuple[Value, int]] = {}

    # -- bookkeeping

    def _new_ident(self) -> int:
        self._counter += 1
        return self._counter

    def depend(self, path: str) -> None:
        if path not in self.dependencies:
            self.dependencies.append(path)

    # -- entry points

    def run_function(self, ref: FunctionRef, args: Sequence[Value] | None = None,
                     conditions: tuple[Condition, ...] = ()) -> list[Outcome]:
        """Execute ``ref`` at the top level: parameters are variables named after them unless ``args`` gives values.

        Returns the outcomes of every path ("return", "raise", "stuck", or "next" for falling off the end).
        """
        self.depend(ref.module.path)
        frame = Frame(ref.module, ref, 0, (ref.key,), self._new_ident())
        if args is None:
            state = State((), conditions)
            for param, _ in _parameters(ref.node):
                state = state.bind(param, Var(param))
            for extra in _star_parameters(ref.node):
                state = state.bind(extra, Unknown(f"the *args/**kwargs parameter {extra} is not supported"))
        else:
            try:
                state = self._bind_arguments(ref, list(args), {}, State((), conditions), frame, ref.module.line(ref.node))
            except Stuck as exc:
                return [Outcome(State((), conditions), "stuck", reason=exc.reason, line=ref.module.line(ref.node))]
        body = ref.node.body
        statements = body.body if isinstance(body, cst.IndentedBlock) else body.body
        return self.exec_block(statements, [state], frame)

    # -- statements

    def exec_block(self, statements: Sequence[cst.CSTNode], states: list[State], frame: Frame) -> list[Outcome]:
        live = [Outcome(s, "next") for s in states]
        done: list[Outcome] = []
        for stmt in statements:
            if not live:
                break
            following: list[Outcome] = []
            for outcome in live:
                for result in self.exec_statement(stmt, outcome.state, frame):
                    (following if result.status == "next" else done).append(result)
            if len(following) > MAX_PATHS:
                line = frame.module.line(stmt)
                return done + [Outcome(following[0].state, "stuck",
                                       reason=f"more than {MAX_PATHS} paths at line {line}", line=line,
                                       loops=frame.loops)]
            live = following
        return done + live

    def exec_statement(self, stmt: cst.CSTNode, state: State, frame: Frame) -> list[Outcome]:
        line = frame.module.line(stmt)
        try:
            return self._exec_statement(stmt, state, frame)
        except Stuck as exc:
            return [Outcome(state, "stuck", reason=exc.reason, line=line, loops=frame.loops)]
        except RecursionError:
            return [Outcome(state, "stuck", reason=f"the code at line {line} is nested too deeply", line=line,
                            loops=frame.loops)]

    def _exec_statement(self, stmt: cst.CSTNode, state: State, frame: Frame) -> list[Outcome]:
        module = frame.module
        line = module.line(stmt)
        if isinstance(stmt, (cst.SimpleStatementLine, cst.SimpleStatementSuite)):
            return self.exec_block(stmt.body, [state], frame)
        if isinstance(stmt, cst.If):
            return self._exec_if(stmt, state, frame)
        if isinstance(stmt, cst.For):
            return self._exec_for(stmt, state, frame)
        if isinstance(stmt, cst.Pass):
            return [Outcome(state, "next")]
        if isinstance(stmt, cst.Expr):
            return self._exec_expression_statement(stmt, state, frame)
        if isinstance(stmt, cst.Assign):
            return self._exec_assign(stmt, state, frame)
        if isinstance(stmt, cst.AnnAssign):
            if stmt.value is None:
                return [Outcome(state, "next")]
            return self._assign_alternatives(stmt, [stmt.target], stmt.value, state, frame)
        if isinstance(stmt, cst.AugAssign):
            return self._exec_augassign(stmt, state, frame)
        if isinstance(stmt, cst.Return):
            outcomes = []
            if stmt.value is None:
                alternatives = [(state, NONE)]
            else:
                alternatives = self.symbolic_value(stmt.value, state, frame)
            for after, value in alternatives:
                self._record(stmt, state, after, value, frame)
                outcomes.append(Outcome(after, "return", value, line=line))
            return outcomes
        if isinstance(stmt, cst.Break):
            return [Outcome(state, "break", line=line)]
        if isinstance(stmt, cst.Continue):
            return [Outcome(state, "continue", line=line)]
        if isinstance(stmt, cst.Raise):
            return [Outcome(state, "raise", line=line)]
        if isinstance(stmt, cst.Assert):
            # An assertion only removes executions (those that raise); ignoring it is sound.
            return [Outcome(state, "next")]
        raise Stuck(f"{_statement_name(stmt)} at line {line} is not supported")

    def _record(self, stmt: cst.CSTNode, before: State, after: State, value: Value, frame: Frame) -> None:
        key = self.claim_targets.get(stmt)
        if key is None or frame.depth != 0:
            return
        state = State(before.env, after.conditions, after.notes)
        self.visits.setdefault(key, []).append(Visit(state, value))

    def _exec_expression_statement(self, stmt: cst.Expr, state: State, frame: Frame) -> list[Outcome]:
        node = stmt.value
        line = frame.module.line(stmt)
        if isinstance(node, (cst.SimpleString, cst.ConcatenatedString, cst.FormattedString, cst.Ellipsis)):
            return [Outcome(state, "next")]  # docstrings and `...`
        if isinstance(node, (cst.Yield, cst.Await)):
            word = "yield" if isinstance(node, cst.Yield) else "await"
            raise Stuck(f"`{word}` at line {line} is not supported (generators and coroutines are not followed)")
        if isinstance(node, cst.Call):
            # `out.append(x)` on a local list is followed; other calls may change their list arguments
            func = node.func
            if (isinstance(func, cst.Attribute) and isinstance(func.value, cst.Name)
                    and func.attr.value == "append" and len(node.args) == 1):
                target = func.value.value
                current = state.get(target)
                if isinstance(current, Seq) and current.kind == "list":
                    outcomes = []
                    for after, value in self.symbolic_value(node.args[0].value, state, frame):
                        updated = Seq(current.items + (value,), "list", current.ident, current.owner)
                        outcomes.append(Outcome(self._replace_list(after, current, updated, frame, line), "next"))
                    return outcomes
            if isinstance(func, cst.Attribute):
                receiver = func.value
                if isinstance(receiver, cst.Name) and isinstance(state.get(receiver.value), Seq):
                    raise Stuck(f"the in-place method call {_spelling(func)}(...) at line {line} is not supported")
            outcomes = []
            for after, _ in self.symbolic_value(node, state, frame):
                for arg in node.args:
                    if isinstance(arg.value, cst.Name) and isinstance(after.get(arg.value.value), Seq):
                        bound = after.get(arg.value.value)
                        if isinstance(bound, Seq) and bound.kind in MUTABLE:
                            raise Stuck(f"the call at line {line} may change the list {arg.value.value}; "
                                        "calls for their side effects are not supported")
                outcomes.append(Outcome(after, "next"))
            return outcomes
        # any other bare expression has no effect on values, but evaluating it may split paths: skip it
        return [Outcome(state, "next")]

    def _replace_list(self, state: State, old: Seq, new: Seq, frame: Frame, line: int) -> State:
        if old.owner != frame.ident:
            raise Stuck(f"changing a list passed in from elsewhere at line {line} is not supported")
        env = []
        for name, value in state.env:
            if isinstance(value, Seq) and value.kind in MUTABLE and value.ident == old.ident:
                env.append((name, new))
            else:
                if _contains_list(value, old.ident):
                    raise Stuck(f"changing a list that another value holds at line {line} is not supported")
                env.append((name, value))
        return state.with_env(tuple(env))

    def _exec_assign(self, stmt: cst.Assign, state: State, frame: Frame) -> list[Outcome]:
        return self._assign_alternatives(stmt, [t.target for t in stmt.targets], stmt.value, state, frame)

    def _assign_alternatives(self, stmt: cst.CSTNode, targets: Sequence[cst.BaseExpression],
                             value_node: cst.BaseExpression, state: State, frame: Frame) -> list[Outcome]:
        outcomes = []
        for after, value in self.symbolic_value(value_node, state, frame):
            self._record(stmt, state, after, value, frame)
            current = after
            for target in targets:
                current = self._assign_target(target, value, current, frame)
            outcomes.append(Outcome(current, "next"))
        return outcomes

    def _assign_target(self, target: cst.BaseExpression, value: Value, state: State, frame: Frame) -> State:
        line = frame.module.line(target)
        if isinstance(target, cst.Name):
            return state.bind(target.value, value)
        if isinstance(target, (cst.Tuple, cst.List)):
            elements = target.elements
            if any(isinstance(el, cst.StarredElement) for el in elements):
                raise Stuck(f"starred unpacking at line {line} is not supported")
            parts = self._unpack(value, len(elements), line)
            for el, part in zip(elements, parts):
                state = self._assign_target(el.value, part, state, frame)
            return state
        if isinstance(target, cst.Subscript) and isinstance(target.value, cst.Name):
            current = state.get(target.value.value)
            index = self._constant_index(target, state, frame)
            if isinstance(current, Seq) and current.kind in MUTABLE and isinstance(index, int):
                items = list(current.items)
                if not -len(items) <= index < len(items):
                    raise Stuck(f"index {index} out of range at line {line}")
                items[index] = value
                updated = Seq(tuple(items), current.kind, current.ident, current.owner)
                return self._replace_list(state, current, updated, frame, line)
            raise Stuck(f"assignment to a subscript at line {line} is not supported")
        if (isinstance(target, cst.Subscript) and isinstance(target.value, cst.Subscript)
                and isinstance(target.value.value, cst.Name)):
            return self._assign_nested(target, value, state, frame, line)
        if isinstance(target, cst.Attribute):
            raise Stuck(f"attribute assignment at line {line} is not supported")
        raise Stuck(f"assignment to {type(target).__name__} at line {line} is not supported")

    def _assign_nested(self, target: cst.Subscript, value: Value, state: State, frame: Frame, line: int) -> State:
        """``m[i][j] = value`` on a local list of lists: the row is rebuilt and the outer list replaced.

        Only when the row is held by the outer list alone, at that one place (no other name, no other
        element): otherwise a change through one holder would have to show through the others.
        """
        outer_node = target.value
        assert isinstance(outer_node, cst.Subscript) and isinstance(outer_node.value, cst.Name)
        outer_name = outer_node.value.value
        outer = state.get(outer_name)
        row_index = self._constant_index(outer_node, state, frame)
        column = self._constant_index(target, state, frame)
        unsupported = Stuck(f"assignment to a nested subscript at line {line} is not supported")
        if not (isinstance(outer, Seq) and outer.kind in MUTABLE and isinstance(row_index, int)
                and isinstance(column, int) and -len(outer.items) <= row_index < len(outer.items)):
            raise unsupported
        row = outer.items[row_index]
        if not (isinstance(row, Seq) and row.kind in MUTABLE and row.owner == frame.ident):
            raise unsupported
        if not -len(row.items) <= column < len(row.items):
            raise Stuck(f"index {column} out of range at line {line}")
        held_elsewhere = any(name != outer_name and (_contains_list(held, row.ident) or
                                                     (isinstance(held, Seq) and held.ident == row.ident))
                             for name, held in state.env)
        position = row_index % len(outer.items)
        twice = any(k != position and ((isinstance(item, Seq) and item.ident == row.ident)
                                       or _contains_list(item, row.ident))
                    for k, item in enumerate(outer.items))
        if held_elsewhere or twice:
            raise Stuck(f"changing a row that another value holds at line {line} is not supported")
        items = list(row.items)
        items[column] = value
        rows = list(outer.items)
        rows[position] = Seq(tuple(items), row.kind, row.ident, row.owner)
        return self._replace_list(state, outer, Seq(tuple(rows), outer.kind, outer.ident, outer.owner), frame, line)

    def _unpack(self, value: Value, count: int, line: int) -> list[Value]:
        if isinstance(value, Seq):
            if len(value.items) != count:
                raise Stuck(f"unpacking {len(value.items)} values into {count} names at line {line}")
            return list(value.items)
        if isinstance(value, Var):
            return [Var(f"{value.name}[{i}]") for i in range(count)]
        if isinstance(value, Opaque):
            return [Opaque(f"{value.name}[{i}]", value.args) for i in range(count)]
        if isinstance(value, Unknown):
            return [value] * count
        raise Stuck(f"unpacking a single value into {count} names at line {line}")

    def _constant_index(self, node: cst.Subscript, state: State, frame: Frame) -> int | None:
        if len(node.slice) != 1 or not isinstance(node.slice[0].slice, cst.Index):
            return None
        alternatives = self.symbolic_value(node.slice[0].slice.value, state, frame)
        if len(alternatives) != 1:
            return None
        value = alternatives[0][1]
        if isinstance(value, Num) and value.value.denominator == 1:
            return int(value.value)
        return None

    def _exec_augassign(self, stmt: cst.AugAssign, state: State, frame: Frame) -> list[Outcome]:
        line = frame.module.line(stmt)
        op = _AUG_OPERATORS.get(type(stmt.operator))
        outcomes = []
        for after, right in self.symbolic_value(stmt.value, state, frame):
            for after2, left in self.symbolic_value(stmt.target, after, frame):
                if op is None:
                    value: Value = Unknown(f"the operator {stmt.operator.__class__.__name__} at line {line} "
                                           "is not supported")
                else:
                    value = self.binary(op, left, right, line)
                self._record(stmt, state, after2, value, frame)
                outcomes.append(Outcome(self._assign_target(stmt.target, value, after2, frame), "next"))
        return outcomes

    def _exec_if(self, stmt: cst.If, state: State, frame: Frame) -> list[Outcome]:
        outcomes: list[Outcome] = []
        for true_state in self.truth(stmt.test, state, frame, True):
            outcomes.extend(self.exec_block(stmt.body.body, [true_state], frame))
        for false_state in self.truth(stmt.test, state, frame, False):
            orelse = stmt.orelse
            if orelse is None:
                outcomes.append(Outcome(false_state, "next"))
            elif isinstance(orelse, cst.If):
                outcomes.extend(self.exec_statement(orelse, false_state, frame))
            else:
                outcomes.extend(self.exec_block(orelse.body.body, [false_state], frame))
        return outcomes

    def _exec_for(self, stmt: cst.For, state: State, frame: Frame) -> list[Outcome]:
        line = frame.module.line(stmt)
        if stmt.asynchronous is not None:
            raise Stuck(f"`async for` at line {line} is not supported")
        pos = frame.module.positions.get(stmt)
        loop_range = (pos.start.line, pos.end.line) if pos is not None else (line, line)
        outcomes: list[Outcome] = []
        inner = Frame(frame.module, frame.function, frame.depth, frame.stack, frame.ident,
                      frame.loops + (loop_range,))
        for start_state, items in self._iteration_values(stmt.iter, state, frame, line):
            if len(items) > self.unroll_limit:
                raise Stuck(f"the for loop at line {line} runs {len(items)} iterations, more than the unroll "
                            f"limit of {self.unroll_limit}")
            live = [start_state]
            finished: list[State] = []
            for item in items:
                following: list[State] = []
                for current in live:
                    bound = self._assign_target(stmt.target, item, current, inner)
                    for result in self.exec_block(stmt.body.body, [bound], inner):
                        if result.status in ("next", "continue"):
                            following.append(result.state)
                        elif result.status == "break":
                            finished.append(result.state)
                        else:
                            outcomes.append(result)
                if len(following) > MAX_PATHS:
                    raise Stuck(f"more than {MAX_PATHS} paths in the for loop at line {line}")
                live = following
            if stmt.orelse is not None:
                for result in self.exec_block(stmt.orelse.body.body, live, frame):
                    outcomes.append(result)
            else:
                outcomes.extend(Outcome(s, "next") for s in live)
            outcomes.extend(Outcome(s, "next") for s in finished)
        return outcomes

    def _iteration_values(self, node: cst.BaseExpression, state: State, frame: Frame,
                          line: int) -> list[tuple[State, list[Value]]]:
        result = []
        for after, value in self.symbolic_value(node, state, frame, iterable=True):
            if isinstance(value, Seq):
                result.append((after, list(value.items)))
            elif isinstance(value, Unknown):
                raise Stuck(f"the for loop at line {line} iterates over a value the tool cannot follow "
                            f"({value.reason})")
            else:
                raise Stuck(f"the for loop at line {line} iterates over something other than range(...) "
                            "with constant arguments or a sequence of known length")
        return result

    # -- conditions

    def truth(self, node: cst.BaseExpression, state: State, frame: Frame, want: bool) -> list[State]:
        """The states (with added branch conditions) in which ``node`` is truthy (``want``) or falsy."""
        line = frame.module.line(node)
        if isinstance(node, cst.UnaryOperation) and isinstance(node.operator, cst.Not):
            return self.truth(node.expression, state, frame, not want)
        if isinstance(node, cst.BooleanOperation):
            is_and = isinstance(node.operator, cst.And)
            first = self.truth(node.left, state, frame, is_and)  # the side that needs the right operand
            shortcut = self.truth(node.left, state, frame, not is_and)
            if want == is_and:
                return [s2 for s in first for s2 in self.truth(node.right, s, frame, want)]
            return shortcut + [s2 for s in first for s2 in self.truth(node.right, s, frame, want)]
        if isinstance(node, cst.Comparison):
            return self._compare_chain(node, state, frame, want, line)
        if isinstance(node, cst.Name) and node.value in ("True", "False") and state.get(node.value) is None:
            return [state] if (node.value == "True") == want else []
        states = []
        for after, value in self.symbolic_value(node, state, frame):
            states.extend(self._truth_of_value(value, after, want, line, frame))
        return states

    def _truth_of_value(self, value: Value, state: State, want: bool, line: int, frame: Frame) -> list[State]:
        if isinstance(value, Unknown):
            raise Stuck(f"the test at line {line} uses a value the tool cannot follow ({value.reason})")
        if isinstance(value, NoneValue):
            return [state] if not want else []
        if isinstance(value, Seq):
            return [state] if bool(value.items) == want else []
        return self._relation(value, "!=" if want else "==", Num(Fraction(0)), state, line)

    def _compare_chain(self, node: cst.Comparison, state: State, frame: Frame, want: bool,
                       line: int) -> list[State]:
        # a < b < c is (a < b) and (b < c); evaluate each operand once per path
        operands = [node.left] + [c.comparator for c in node.comparisons]
        operators = [c.operator for c in node.comparisons]
        paths: list[tuple[State, list[Value]]] = [(state, [])]
        for operand in operands:
            paths = [(after, values + [value]) for s, values in paths for after, value in self.symbolic_value(operand, s, frame)]
        result: list[State] = []
        for s, values in paths:
            result.extend(self._chain_truth(values, operators, s, want, line))
        return result

    def _chain_truth(self, values: list[Value], operators: list, state: State, want: bool, line: int) -> list[State]:
        if not operators:
            return [state] if want else []
        left, right, op = values[0], values[1], operators[0]
        if want:
            states = self._single_comparison(left, op, right, state, True, line)
            return [s2 for s in states for s2 in self._chain_truth(values[1:], operators[1:], s, True, line)]
        falsy = self._single_comparison(left, op, right, state, False, line)
        rest = [s2 for s in self._single_comparison(left, op, right, state, True, line)
                for s2 in self._chain_truth(values[1:], operators[1:], s, False, line)] if len(operators) > 1 else []
        return falsy + rest

    def _single_comparison(self, left: Value, op: cst.BaseCompOp, right: Value, state: State, want: bool,
                           line: int) -> list[State]:
        for v in (left, right):
            if isinstance(v, Unknown):
                raise Stuck(f"the test at line {line} uses a value the tool cannot follow ({v.reason})")
        if isinstance(op, (cst.Is, cst.IsNot)):
            if isinstance(left, NoneValue) or isinstance(right, NoneValue):
                same = isinstance(left, NoneValue) and isinstance(right, NoneValue)
                holds = same if isinstance(op, cst.Is) else not same
                return [state] if holds == want else []
            raise Stuck(f"`is` between values at line {line} is not supported")
        relation = _RELATIONS.get(type(op))
        if relation is None:
            raise Stuck(f"the comparison `{_op_name(op)}` at line {line} is not supported")
        if isinstance(left, NoneValue) or isinstance(right, NoneValue):
            if relation in ("==", "!="):
                same = isinstance(left, NoneValue) and isinstance(right, NoneValue)
                holds = same if relation == "==" else not same
                return [state] if holds == want else []
            raise Stuck(f"ordering comparison with None at line {line}")
        if isinstance(left, Seq) or isinstance(right, Seq):
            raise Stuck(f"comparison of sequences at line {line} is not supported")
        if not want:
            relation = _NEGATION[relation]
        return self._relation(left, relation, right, state, line)

    def _relation(self, left: Expr, relation: str, right: Expr, state: State, line: int) -> list[State]:
        if isinstance(left, Num) and isinstance(right, Num):
            return [state] if _holds(left.value, relation, right.value) else []
        if left == right and relation in ("==", "<=", ">="):
            return [state]
        if left == right:
            return []
        text = f"{expr_text(left)} {relation} {expr_text(right)}"
        condition = Condition(relation, left, right, text, origin=f"branch (line {line})")  # type: ignore[arg-type]
        if any(c.relation == relation and c.left == left and c.right == right for c in state.conditions):
            return [state]  # the same test already holds on this path
        negated = Condition(_NEGATION[relation], left, right, "", origin="")  # type: ignore[arg-type]
        if any(c.relation == negated.relation and c.left == left and c.right == right for c in state.conditions):
            return []  # the same test was already decided the other way on this path
        return [state.with_condition(condition)]

    # -- expressions

    def symbolic_value(self, node: cst.BaseExpression, state: State, frame: Frame,
             iterable: bool = False) -> list[tuple[State, Value]]:
        """Every (path state, value) ``node`` can have; the env never changes, conditions may be added."""
        module = frame.module
        line = module.line(node)
        if isinstance(node, cst.Integer):
            return [(state, Num(Fraction(int(node.value.replace("_", ""), 0))))]
        if isinstance(node, cst.Float):
            try:
                return [(state, Num(Fraction(node.value.replace("_", ""))))]
            except ValueError:
                return [(state, Unknown(f"the number {node.value} at line {line} is not supported"))]
        if isinstance(node, cst.Imaginary):
            return [(state, Unknown(f"the complex number {node.value} at line {line} is not supported"))]
        if isinstance(node, cst.Name):
            return [(state, self._name(node.value, state, frame, line))]
        if isinstance(node, cst.Attribute):
            return self._attribute(node, state, frame, line)
        if isinstance(node, cst.Subscript):
            return self._subscript(node, state, frame, line)
        if isinstance(node, cst.BinaryOperation):
            op = _BIN_OPERATORS.get(type(node.operator))
            result = []
            for s1, left in self.symbolic_value(node.left, state, frame):
                for s2, right in self.symbolic_value(node.right, s1, frame):
                    if op is None:
                        result.append((s2, self._other_binary(node, left, right, line)))
                    else:
                        result.append((s2, self.binary(op, left, right, line)))
            return result
        if isinstance(node, cst.UnaryOperation):
            result = []
            for s1, operand in self.symbolic_value(node.expression, state, frame):
                result.append((s1, self._bounded(self._unary(node, operand, line), line)))
            return result
        if isinstance(node, cst.IfExp):
            result = []
            for s in self.truth(node.test, state, frame, True):
                result.extend(self.symbolic_value(node.body, s, frame))
            for s in self.truth(node.test, state, frame, False):
                result.extend(self.symbolic_value(node.orelse, s, frame))
            return result
        if isinstance(node, (cst.Tuple, cst.List)):
            kind = "tuple" if isinstance(node, cst.Tuple) else "list"
            paths: list[tuple[State, tuple[Value, ...]]] = [(state, ())]
            for el in node.elements:
                if isinstance(el, cst.StarredElement):
                    return [(state, Unknown(f"a starred element at line {line} is not supported"))]
                paths = [(s2, items + (v,)) for s, items in paths for s2, v in self.symbolic_value(el.value, s, frame)]
            ident = self._new_ident() if kind == "list" else 0
            return [(s, Seq(items, kind, ident, frame.ident if kind == "list" else 0)) for s, items in paths]
        if isinstance(node, cst.Call):
            return self._call(node, state, frame, line, iterable)
        if isinstance(node, cst.Comparison):
            return [(state, Unknown(f"a comparison used as a value at line {line} is not supported"))]
        if isinstance(node, cst.BooleanOperation):
            word = "and" if isinstance(node.operator, cst.And) else "or"
            return [(state, Unknown(f"`{word}` used as a value at line {line} is not supported"))]
        return [(state, Unknown(f"{_expression_name(node)} at line {line} is not supported"))]

    def _name(self, name: str, state: State, frame: Frame, line: int) -> Value:
        bound = state.get(name)
        if bound is not None:
            return bound
        return self._global(name, frame.module, line)

    def _global(self, name: str, module: ModuleInfo, line: int) -> Value:
        if name == "None":
            return NONE
        if name in ("True", "False"):
            return Num(Fraction(1 if name == "True" else 0))
        if name in module.rebound:
            return Unknown(f"the module-level name {name} (line {line}) is bound in a way the tool does not follow")
        if name in module.constants:
            return self.module_constant(module, name, line)
        if name in module.imports:
            target = module.imports[name]
            if target[0] == "member":
                _, dotted, member = target
                base = dotted.lstrip(".")
                if base in MATH_MODULES:
                    return math_constant(base, member, line)
                other = None if base.split(".")[0] in MATH_MODULES else self.loader.find(dotted, module)
                if other is not None:
                    self.depend(other.path)
                    return self._global(member, other, line)
                return Var(f"{base}.{member}" if base else member)
            return Unknown(f"the module {name} used as a value at line {line}")
        if name in module.functions or name in module.classes:
            return Unknown(f"the function or class {name} used as a value at line {line} is not supported")
        if name in ("pi", "tau", "e") and any(m in MATH_MODULES for m in module.star_imports):
            return math_constant("math", name, line)
        if _other_star_imports(module):
            return Unknown(_star_reason(name, module, line))
        # an undefined global: any real number (a claim must hold for every value of it)
        return Var(name)

    def module_constant(self, module: ModuleInfo, name: str, line: int) -> Value:
        key = (module.path, name)
        if key in self._constant_cache:
            return self._constant_cache[key]
        nodes = module.constants[name]
        if len(nodes) != 1 or key in self._constant_busy:
            return Unknown(f"the module-level name {name} is assigned more than once (used at line {line})")
        self._constant_busy.add(key)
        try:
            frame = Frame(module, None, 0, (), self._new_ident())
            alternatives = self.symbolic_value(nodes[0], State(()), frame)
        except Stuck as exc:
            alternatives = [(State(()), Unknown(exc.reason))]
        finally:
            self._constant_busy.discard(key)
        if len(alternatives) != 1 or alternatives[0][0].conditions:
            value: Value = Unknown(f"the module-level constant {name} depends on a condition")
        else:
            value = alternatives[0][1]
            if isinstance(value, Seq) and value.kind in MUTABLE:
                value = Seq(value.items, value.kind, value.ident, -1)  # module lists must not be changed here
        self._constant_cache[key] = value
        if module.path not in self.dependencies:
            self.depend(module.path)
        return value

    def _attribute(self, node: cst.Attribute, state: State, frame: Frame, line: int) -> list[tuple[State, Value]]:
        dotted = _dotted(node)
        module_target = self._module_path(node.value, state, frame)
        attr = node.attr.value
        if module_target is not None:
            dotted_module, info = module_target
            if dotted_module in MATH_MODULES:
                return [(state, math_constant(dotted_module, attr, line))]
            if info is not None:
                self.depend(info.path)
                return [(state, self._global(attr, info, line))]
            return [(state, Var(dotted or attr))]
        result = []
        for after, base in self.symbolic_value(node.value, state, frame):
            if isinstance(base, Var):
                result.append((after, Var(f"{base.name}.{attr}")))
            elif isinstance(base, Opaque):
                result.append((after, Opaque(f"{base.name}.{attr}", base.args)))
            elif isinstance(base, Unknown):
                result.append((after, base))
            else:
                result.append((after, Unknown(f"the attribute .{attr} at line {line} is not supported")))
        return result

    def _module_path(self, node: cst.BaseExpression, state: State, frame: Frame) -> tuple[str, ModuleInfo | None] | None:
        """If ``node`` names an imported module (``np``, ``pkg.mod``), its dotted name and file (if in the project)."""
        dotted = _dotted(node)
        if dotted is None:
            return None
        head, _, rest = dotted.partition(".")
        if state.get(head) is not None:
            return None
        module = frame.module
        target = module.imports.get(head)
        if target is None:
            if head in MATH_MODULES and not rest and head not in module.constants and head not in module.functions:
                return ("numpy" if head == "np" else head, None)
            return None
        if target[0] == "module":
            full = target[1]
        else:
            full = target[1] + target[2] if target[1].endswith(".") else f"{target[1]}.{target[2]}"
        if rest:
            full += "." + rest
        base = full.lstrip(".")
        if base.split(".")[0] in MATH_MODULES:
            return ("numpy" if base == "np" else base, None)
        info = self.loader.find(full, module)
        if info is None:
            if target[0] == "member" and not rest:
                return None  # `from pkg import thing`: a value or function rather than a module
            return (base, None)
        return (base, info)

    def _subscript(self, node: cst.Subscript, state: State, frame: Frame, line: int) -> list[tuple[State, Value]]:
        result = []
        for after, base in self.symbolic_value(node.value, state, frame):
            if isinstance(base, Unknown):
                result.append((after, base))
                continue
            if len(node.slice) != 1:
                indices = []
                for element in node.slice:
                    if not isinstance(element.slice, cst.Index):
                        indices = None
                        break
                    alts = self.symbolic_value(element.slice.value, after, frame)
                    if len(alts) != 1 or not _is_int(alts[0][1]):
                        indices = None
                        break
                    indices.append(int(alts[0][1].value))  # type: ignore[union-attr]
                if indices is not None and isinstance(base, Var):
                    result.append((after, Var(f"{base.name}[{', '.join(str(i) for i in indices)}]")))
                elif indices is not None and isinstance(base, Seq):
                    current: Value = base
                    for i in indices:
                        if not isinstance(current, Seq) or not -len(current.items) <= i < len(current.items):
                            raise Stuck(f"the subscript at line {line} is out of range or too deep")
                        current = current.items[i]
                    result.append((after, current))
                else:
                    result.append((after, Unknown(f"the subscript at line {line} is not supported")))
                continue
            element = node.slice[0].slice
            if isinstance(element, cst.Slice):
                result.append((after, self._slice(base, element, after, frame, line)))
                continue
            for after2, index in self.symbolic_value(element.value, after, frame):
                if not _is_int(index):
                    result.append((after2, Unknown(f"a subscript with a non-constant index at line {line} "
                                                   "is not supported")))
                    continue
                i = int(index.value)  # type: ignore[union-attr]
                if isinstance(base, Seq):
                    if not -len(base.items) <= i < len(base.items):
                        raise Stuck(f"index {i} is out of range at line {line}")
                    result.append((after2, base.items[i]))
                elif isinstance(base, Var):
                    result.append((after2, Var(f"{base.name}[{i}]")))
                elif isinstance(base, Opaque):
                    result.append((after2, Opaque(f"{base.name}[{i}]", base.args)))
                else:
                    result.append((after2, Unknown(f"the subscript at line {line} is not supported")))
        return result

    def _slice(self, base: Value, element: cst.Slice, state: State, frame: Frame, line: int) -> Value:
        if not isinstance(base, Seq):
            return Unknown(f"a slice at line {line} is not supported")
        bounds = []
        for part in (element.lower, element.upper, element.step):
            if part is None:
                bounds.append(None)
                continue
            alts = self.symbolic_value(part, state, frame)
            if len(alts) != 1 or not _is_int(alts[0][1]):
                return Unknown(f"a slice with non-constant bounds at line {line} is not supported")
            bounds.append(int(alts[0][1].value))  # type: ignore[union-attr]
        if bounds[2] == 0:
            return Unknown(f"a slice with step 0 at line {line}")
        items = base.items[slice(*bounds)]
        ident = self._new_ident() if base.kind in MUTABLE else 0
        return Seq(tuple(items), base.kind, ident, frame.ident if base.kind in MUTABLE else 0)

    def _unary(self, node: cst.UnaryOperation, operand: Value, line: int) -> Value:
        if isinstance(operand, Unknown):
            return operand
        if isinstance(node.operator, cst.Minus) and _is_array(operand):
            return self._elementwise("*", Num(Fraction(-1)), operand, line)
        if isinstance(node.operator, cst.Minus):
            if isinstance(operand, Num):
                return Num(-operand.value)
            if is_expr(operand):
                return Neg(operand)  # type: ignore[arg-type]
            return Unknown(f"unary minus on a non-number at line {line}")
        if isinstance(node.operator, cst.Plus):
            return operand if is_expr(operand) else Unknown(f"unary plus on a non-number at line {line}")
        if isinstance(node.operator, cst.BitInvert):
            if _is_int(operand):
                return Num(Fraction(~int(operand.value)))  # type: ignore[union-attr]
            return Unknown(f"the bit operation `~` at line {line} is not supported")
        return Unknown(f"`not` used as a value at line {line} is not supported")

    def tree_size(self, value: Value) -> int:
        """Size of an expression as a tree; values built from shared parts can be exponentially large."""
        if not is_expr(value):
            return 1
        cached = self._sizes.get(id(value))
        if cached is not None and cached[0] is value:
            return cached[1]
        if isinstance(value, BinOp):
            size = 1 + self.tree_size(value.left) + self.tree_size(value.right)
        elif isinstance(value, (Neg,)):
            size = 1 + self.tree_size(value.operand)
        elif isinstance(value, Pow):
            size = 1 + self.tree_size(value.base)
        elif isinstance(value, (Call, Opaque)):
            size = 1 + sum(self.tree_size(a) for a in value.args)
        else:
            size = 1
        self._sizes[id(value)] = (value, size)
        return size

    def _bounded(self, value: Value, line: int) -> Value:
        if self.tree_size(value) > MAX_TREE_SIZE:
            return Unknown(f"the expression at line {line} grows beyond {MAX_TREE_SIZE} terms as a tree")
        return value

    def binary(self, op: str, left: Value, right: Value, line: int) -> Value:
        """``left op right`` for + - * / ** (constants folded, sequences concatenated/repeated)."""
        return self._bounded(self._binary(op, left, right, line), line)

    def _binary(self, op: str, left: Value, right: Value, line: int) -> Value:
        for v in (left, right):
            if isinstance(v, Unknown):
                return v
        if _is_array(left) or _is_array(right):
            return self._elementwise(op, left, right, line)
        if isinstance(left, Seq) or isinstance(right, Seq):
            if op == "+" and isinstance(left, Seq) and isinstance(right, Seq) and left.kind == right.kind:
                ident = self._new_ident() if left.kind == "list" else 0
                return Seq(left.items + right.items, left.kind, ident, left.owner if left.kind == "list" else 0)
            if op == "*":
                seq, count = (left, right) if isinstance(left, Seq) else (right, left)
                if isinstance(seq, Seq) and _is_int(count) and 0 <= int(count.value) <= 4096:  # type: ignore[union-attr]
                    ident = self._new_ident() if seq.kind == "list" else 0
                    return Seq(seq.items * int(count.value), seq.kind, ident, seq.owner)  # type: ignore[union-attr]
            return Unknown(f"arithmetic on a tuple or list at line {line} is not supported")
        if isinstance(left, NoneValue) or isinstance(right, NoneValue):
            return Unknown(f"arithmetic with None at line {line}")
        if op == "**":
            if not isinstance(right, Num):
                return Unknown(f"`**` with a non-constant exponent at line {line} is not supported")
            exponent = right.value
            if isinstance(left, Num) and exponent.denominator == 1 and abs(exponent) <= MAX_CONSTANT_EXPONENT:
                if left.value == 0 and exponent < 0:
                    return Unknown(f"division by zero at line {line}")
                return Num(left.value ** int(exponent))
            if exponent.denominator not in (1, 2):
                return Unknown(f"the exponent {_frac(exponent)} at line {line} is not supported")
            return Pow(left, exponent)  # type: ignore[arg-type]
        if isinstance(left, Num) and isinstance(right, Num):
            a, b = left.value, right.value
            if op == "+":
                return Num(a + b)
            if op == "-":
                return Num(a - b)
            if op == "*":
                return Num(a * b)
            if b == 0:
                return Unknown(f"division by zero at line {line}")
            return Num(a / b)
        return BinOp(op, left, right)  # type: ignore[arg-type]

    def _elementwise(self, op: str, left: Value, right: Value, line: int) -> Value:
        """numpy arithmetic: arrays (and lists or tuples beside them) elementwise, scalars broadcast."""
        if isinstance(left, Seq) and isinstance(right, Seq):
            if len(left.items) != len(right.items):
                return Unknown(f"arrays of different lengths at line {line}")
            items = tuple(self.binary(op, a, b, line) for a, b in zip(left.items, right.items))
        elif isinstance(left, Seq):
            items = tuple(self.binary(op, a, right, line) for a in left.items)
        elif isinstance(right, Seq):
            items = tuple(self.binary(op, left, b, line) for b in right.items)
        else:
            return self.binary(op, left, right, line)
        return Seq(tuple(_as_array(i) for i in items), "array", self._new_ident(), 0)

    def matmul(self, left: Value, right: Value, line: int) -> Value:
        """``left @ right`` (also ``np.dot``) for vectors and matrices of known shape."""
        if not (isinstance(left, Seq) and isinstance(right, Seq)) or not left.items or not right.items:
            return Unknown(f"`@` or dot of values that are not arrays at line {line} is not supported")
        left_matrix = isinstance(left.items[0], Seq)
        right_matrix = isinstance(right.items[0], Seq)
        if not left_matrix and not right_matrix:
            if len(left.items) != len(right.items):
                return Unknown(f"dot product of vectors of different lengths at line {line}")
            total: Value = Num(Fraction(0))
            for a, b in zip(left.items, right.items):
                total = self.binary("+", total, self.binary("*", a, b, line), line)
            return total
        if left_matrix and not right_matrix:
            return Seq(tuple(self.matmul(row, right, line) for row in left.items), "array", self._new_ident(), 0)
        columns = _transpose(right)
        if columns is None:
            return Unknown(f"a ragged matrix at line {line} is not supported")
        if not left_matrix:
            return Seq(tuple(self.matmul(left, col, line) for col in columns), "array", self._new_ident(), 0)
        rows = tuple(Seq(tuple(self.matmul(row, col, line) for col in columns), "array", self._new_ident(), 0)
                     for row in left.items)
        return Seq(rows, "array", self._new_ident(), 0)

    def _other_binary(self, node: cst.BinaryOperation, left: Value, right: Value, line: int) -> Value:
        symbol = _OTHER_OPERATORS.get(type(node.operator), type(node.operator).__name__)
        if symbol == "@":
            return self._bounded(self.matmul(left, right, line), line) if not _first_unknown(left, right) \
                else _first_unknown(left, right)  # type: ignore[return-value]
        if isinstance(left, Unknown):
            return left
        if isinstance(right, Unknown):
            return right
        if _is_int(left) and _is_int(right):
            a, b = int(left.value), int(right.value)  # type: ignore[union-attr]
            try:
                folded = _fold_integer(symbol, a, b)
            except (ZeroDivisionError, ValueError, OverflowError):
                folded = None
            if folded is not None:
                return Num(Fraction(folded))
        if symbol in ("//", "%") and isinstance(left, Num) and isinstance(right, Num) and right.value != 0:
            quotient = left.value // right.value
            return Num(Fraction(quotient) if symbol == "//" else left.value - quotient * right.value)
        kind = "the bit operation" if symbol in ("&", "|", "^", "<<", ">>") else "the operator"
        return Unknown(f"{kind} `{symbol}` at line {line} is not supported")

    # -- calls

    def _call(self, node: cst.Call, state: State, frame: Frame, line: int,
              iterable: bool) -> list[tuple[State, Value]]:
        func = node.func
        spelling = _spelling(func)
        # resolve the callee by syntax first: builtins, math functions, project functions
        target = self._resolve_callee(func, state, frame)
        kind = target[0]
        if kind == "builtin":
            return self._builtin(target[1], node, state, frame, line, iterable)
        if kind == "math":
            return self._math_call(target[1], node, state, frame, line)
        if kind == "function":
            ref: FunctionRef = target[1]
            return self._inline(ref, node, state, frame, line, receiver=None)
        if kind == "bound":
            receiver = state.get(target[2])
            return self._inline(target[1], node, state, frame, line, receiver=receiver)
        if kind == "method":
            # `value.name(...)` on a variable or unknown value: opaque in the receiver and arguments
            receiver_node = func.value  # type: ignore[union-attr]
            attr = func.attr.value  # type: ignore[union-attr]
            result = []
            for after, receiver in self.symbolic_value(receiver_node, state, frame):
                if isinstance(receiver, Var):
                    name = f"{receiver.name}.{attr}"
                    result.extend(self._opaque(name, node, after, frame, line, prefix=()))
                elif is_expr(receiver):
                    result.extend(self._opaque(f".{attr}", node, after, frame, line, prefix=(receiver,)))
                elif isinstance(receiver, Unknown):
                    result.append((after, receiver))
                else:
                    result.append((after, Unknown(f"the method call {spelling}(...) at line {line} is not supported")))
            return result
        if kind == "unknown":
            return [(state, Unknown(target[1]))]
        return self._opaque(target[1], node, state, frame, line, prefix=())

    def _resolve_callee(self, func: cst.BaseExpression, state: State, frame: Frame) -> tuple:
        module = frame.module
        line = module.line(func)
        if isinstance(func, cst.Name):
            name = func.value
            bound = state.get(name)
            if isinstance(bound, Unknown):
                return ("unknown", bound.reason)
            if bound is not None:
                return ("unknown", f"calling the local value {name} at line {line} is not supported")
            return self._resolve_global_callee(name, module, line, depth=0)
        if isinstance(func, cst.Attribute):
            attr = func.attr.value
            owner = self._module_path(func.value, state, frame)
            if owner is not None:
                dotted, info = owner
                if dotted in MATH_MODULES or dotted.split(".")[0] in MATH_MODULES:
                    return ("math", attr) if dotted in MATH_MODULES else ("opaque", f"{dotted}.{attr}")
                if info is not None:
                    self.depend(info.path)
                    return self._resolve_global_callee(attr, info, line, depth=0)
                return ("opaque", f"{dotted}.{attr}")
            bound = self._bound_method(func, frame)
            if bound is not None:
                return bound
            if isinstance(func.value, cst.Name) and state.get(func.value.value) is None:
                cls = module.classes.get(func.value.value)
                if cls is not None and func.value.value not in module.rebound:
                    method = cls.get(attr)
                    if method is not None and _static_like(method):
                        return ("function", FunctionRef(module, method, f"{func.value.value}.{attr}", func.value.value))
                    return ("opaque", f"{func.value.value}.{attr}")
            return ("method",)
        return ("unknown", f"the call at line {line} is not supported")

    def _bound_method(self, func: cst.Attribute, frame: Frame) -> tuple | None:
        """``self.method(...)`` inside a method of a class of this module: that class's method."""
        ref = frame.function
        if ref is None or ref.class_name is None or not isinstance(func.value, cst.Name):
            return None
        params = positional_parameters(ref.node)
        if not params or func.value.value != params[0] or ref.class_name in ref.module.rebound:
            return None
        method = ref.module.classes.get(ref.class_name, {}).get(func.attr.value)
        if method is None or not _neutral_decorators(method):
            return None
        target = FunctionRef(ref.module, method, f"{ref.class_name}.{func.attr.value}", ref.class_name)
        if _static_like(method):
            return ("function", target)
        return ("bound", target, func.value.value)

    def _resolve_global_callee(self, name: str, module: ModuleInfo, line: int, depth: int) -> tuple:
        if depth > 8:
            return ("unknown", f"the import chain for {name} (line {line}) is too long to follow")
        if name in module.rebound:
            return ("unknown", f"the module-level name {name} (line {line}) is bound in a way the tool does not follow")
        if name in module.functions:
            node = module.functions[name]
            if not _neutral_decorators(node):
                return ("opaque", _qualified(module, name))
            return ("function", FunctionRef(module, node, name))
        if name in module.classes or name in module.constants:
            return ("opaque", _qualified(module, name))
        if name in module.imports:
            target = module.imports[name]
            if target[0] == "module":
                return ("unknown", f"calling the module {name} at line {line} is not supported")
            _, dotted, member = target
            base = dotted.lstrip(".")
            if base in MATH_MODULES:
                return ("math", member)
            if base.split(".")[0] in MATH_MODULES:
                return ("opaque", f"{base}.{member}")
            other = self.loader.find(dotted, module)
            if other is None:
                # `from pkg import mod` then mod(...)? or an outside library: opaque
                return ("opaque", f"{base}.{member}" if base else member)
            self.depend(other.path)
            return self._resolve_global_callee(member, other, line, depth + 1)
        if name in _BUILTINS:
            return ("builtin", name)
        if any(m in MATH_MODULES for m in module.star_imports) and name in _STAR_MATH:
            return ("math", name)
        if _other_star_imports(module):
            return ("unknown", _star_reason(name, module, line))
        return ("opaque", name)

    def _arguments(self, node: cst.Call, state: State, frame: Frame, line: int
                   ) -> list[tuple[State, list[Value], dict[str, Value]]]:
        paths: list[tuple[State, list[Value], dict[str, Value]]] = [(state, [], {})]
        for arg in node.args:
            if arg.star == "**":
                raise Stuck(f"`**` arguments at line {line} are not supported")
            new_paths = []
            for s, positional, keywords in paths:
                for after, value in self.symbolic_value(arg.value, s, frame):
                    if arg.star == "*":
                        if not isinstance(value, Seq):
                            raise Stuck(f"`*` arguments at line {line} are not supported here")
                        new_paths.append((after, positional + list(value.items), keywords))
                    elif arg.keyword is not None:
                        new_paths.append((after, positional, {**keywords, arg.keyword.value: value}))
                    else:
                        new_paths.append((after, positional + [value], keywords))
            paths = new_paths
        return paths

    def _opaque(self, name: str, node: cst.Call, state: State, frame: Frame, line: int,
                prefix: tuple) -> list[tuple[State, Value]]:
        if _impure(name):
            # an opaque value stands for a pure function (same arguments, same value); random numbers,
            # clocks and I/O are not, and treating them so could prove random() - random() == 0
            return [(state, Unknown(f"the call {name}(...) at line {line} may give a different value each "
                                    "time (random numbers, clocks, I/O) and is not followed"))]
        result = []
        for after, positional, keywords in self._arguments(node, state, frame, line):
            args = list(prefix) + positional
            full_name = name
            if keywords:
                full_name += "[" + ",".join(f"{k}=" for k in sorted(keywords)) + "]"
                args += [keywords[k] for k in sorted(keywords)]
            bad = next((a for a in args if not is_expr(a)), None)
            if bad is not None:
                reason = bad.reason if isinstance(bad, Unknown) else (
                    f"the call {name}(...) at line {line} passes a tuple, list or None to a function the tool "
                    "cannot see into")
                result.append((after, Unknown(reason)))
                continue
            note = f"opaque call {name}(...) at line {line}" + (f" of {frame.module.path}" if frame.depth else "")
            result.append((after.with_note(note), Opaque(full_name, tuple(args))))  # type: ignore[arg-type]
        return result

    def _math_call(self, name: str, node: cst.Call, state: State, frame: Frame, line: int
                   ) -> list[tuple[State, Value]]:
        result = []
        for after, args, keywords in self._arguments(node, state, frame, line):
            if keywords:
                result.append((after, Unknown(f"keyword arguments to {name} at line {line} are not supported")))
                continue
            if any(isinstance(a, Seq) for a in args):
                value = self._bounded(self._array_call(name, args, line), line)
                result.append((after, _owned(value, frame.ident)))
                continue
            if name in ("zeros", "ones") and len(args) == 1 and _is_int(args[0]) and 0 <= int(args[0].value) <= 4096:
                fill = Num(Fraction(0 if name == "zeros" else 1))
                count = int(args[0].value)  # type: ignore[union-attr]
                result.append((after, Seq((fill,) * count, "array", self._new_ident(), frame.ident)))
                continue
            bad = next((a for a in args if not is_expr(a)), None)
            if bad is not None:
                result.append((after, bad if isinstance(bad, Unknown) else
                               Unknown(f"{name} of a tuple, list or None at line {line} is not supported")))
                continue
            value = self._math_value(name, args, line)  # type: ignore[arg-type]
            if value is not None:
                value = self._bounded(value, line)
            if value is None:
                note = f"opaque call {name}(...) at line {line}"
                result.extend([(after.with_note(note), Opaque(name, tuple(args)))])  # type: ignore[arg-type]
            else:
                result.append((after, value))
        return result

    def _array_call(self, name: str, args: list[Value], line: int) -> Value:
        """numpy functions of arrays (``np.array``, ``np.dot``, ``np.sum``, ``np.cross``, elementwise math)."""
        for a in args:
            if isinstance(a, Unknown):
                return a
        if name in ("array", "asarray") and len(args) == 1 and isinstance(args[0], Seq):
            return _as_array(args[0], fresh=self._new_ident)
        if name in ("dot", "matmul", "inner") and len(args) == 2:
            return self.matmul(_as_array(args[0]), _as_array(args[1]), line)
        if name == "sum" and len(args) == 1 and isinstance(args[0], Seq) and not any(
                isinstance(i, Seq) for i in args[0].items):
            total: Value = Num(Fraction(0))
            for item in args[0].items:
                total = self.binary("+", total, item, line)
            return total
        if name == "cross" and len(args) == 2 and all(isinstance(a, Seq) and len(a.items) == 3 for a in args):
            (ax, ay, az), (bx, by, bz) = args[0].items, args[1].items  # type: ignore[union-attr]
            b = self.binary

            def minus(p: Value, q: Value) -> Value:
                return b("-", p, q, line)

            items = (minus(b("*", ay, bz, line), b("*", az, by, line)),
                     minus(b("*", az, bx, line), b("*", ax, bz, line)),
                     minus(b("*", ax, by, line), b("*", ay, bx, line)))
            return Seq(items, "array", self._new_ident(), 0)
        if len(args) == 1 and isinstance(args[0], Seq) and name in ("sqrt", "sin", "cos", "tan", "exp", "log",
                                                                      "square"):
            items = []
            for item in args[0].items:
                if not is_expr(item):
                    return Unknown(f"{name} of a nested array at line {line} is not supported")
                value = self._math_value(name, [item], line)  # type: ignore[list-item]
                items.append(value if value is not None else Unknown(f"{name} at line {line}"))
            return Seq(tuple(items), "array", self._new_ident(), 0)
        return Unknown(f"{name}(...) of a tuple, list or array at line {line} is not supported")

    def _math_value(self, name: str, args: list[Expr], line: int) -> Value | None:
        n = len(args)
        if name in ("sqrt", "sin", "cos", "tan", "exp", "log") and n == 1:
            return Call(name, (args[0],))
        if name == "log" and n == 2:
            return BinOp("/", Call("log", (args[0],)), Call("log", (args[1],)))
        if name in ("log10", "log2") and n == 1:
            base = Num(Fraction(10 if name == "log10" else 2))
            return BinOp("/", Call("log", (args[0],)), Call("log", (base,)))
        if name == "hypot" and n == 2:
            return Call("hypot", (args[0], args[1]))
        if name == "hypot" and n >= 1:
            total: Expr = Pow(args[0], Fraction(2))
            for a in args[1:]:
                total = BinOp("+", total, Pow(a, Fraction(2)))
            return Call("sqrt", (total,))
        if name == "fma" and n == 3:
            return Call("fma", (args[0], args[1], args[2]))
        if name in ("pow", "power") and n == 2:
            return self.binary("**", args[0], args[1], line)
        if name == "square" and n == 1:
            return Pow(args[0], Fraction(2))
        if name in ("float64", "float32", "double", "float_") and n == 1:
            return args[0]
        if name in ("fabs", "abs", "absolute", "floor", "ceil", "trunc", "fmod", "copysign", "minimum",
                    "maximum", "sign", "round", "remainder", "modf", "frexp", "ldexp", "isqrt"):
            return Unknown(f"{name}(...) at line {line} is not supported")
        return None

    def _builtin(self, name: str, node: cst.Call, state: State, frame: Frame, line: int,
                 iterable: bool) -> list[tuple[State, Value]]:
        result = []
        for after, args, keywords in self._arguments(node, state, frame, line):
            result.append((after, self._builtin_value(name, args, keywords, line, iterable, frame)))
        return result

    def _builtin_value(self, name: str, args: list[Value], keywords: dict, line: int, iterable: bool,
                       frame: Frame) -> Value:
        for a in args:
            if isinstance(a, Unknown):
                return a
        if name == "pow" and len(args) == 2 and not keywords:
            return self.binary("**", args[0], args[1], line)
        if name == "float" and len(args) == 1 and is_expr(args[0]):
            return args[0]
        if name == "int" and len(args) == 1 and _is_int(args[0]):
            return args[0]
        if name in ("tuple", "list") and len(args) == 1 and isinstance(args[0], Seq):
            ident = self._new_ident() if name == "list" else 0
            return Seq(args[0].items, name, ident, frame.ident if name == "list" else 0)
        if name == "len" and len(args) == 1 and isinstance(args[0], Seq):
            return Num(Fraction(len(args[0].items)))
        if name == "sum" and 1 <= len(args) <= 2 and isinstance(args[0], Seq):
            total: Value = args[1] if len(args) == 2 else Num(Fraction(0))
            for item in args[0].items:
                total = self.binary("+", total, item, line)
            return total
        if name == "range" and not keywords and 1 <= len(args) <= 3:
            if all(_is_int(a) for a in args):
                bounds = [int(a.value) for a in args]  # type: ignore[union-attr]
                if len(bounds) == 3 and bounds[2] == 0:
                    return Unknown(f"range with step 0 at line {line}")
                r = range(*bounds)
                if len(r) > self.unroll_limit and iterable:
                    raise Stuck(f"the for loop at line {line} runs {len(r)} iterations, more than the unroll "
                                f"limit of {self.unroll_limit}")
                if len(r) > self.unroll_limit:
                    return Unknown(f"the range at line {line} has {len(r)} elements, more than the unroll limit "
                                   f"of {self.unroll_limit}")
                return Seq(tuple(Num(Fraction(i)) for i in r))
            return Unknown(f"range(...) with non-constant arguments at line {line} is not supported")
        if name == "enumerate" and len(args) in (1, 2) and isinstance(args[0], Seq):
            start = int(args[1].value) if len(args) == 2 and _is_int(args[1]) else 0  # type: ignore[union-attr]
            return Seq(tuple(Seq((Num(Fraction(start + i)), v)) for i, v in enumerate(args[0].items)))
        if name == "zip" and args and all(isinstance(a, Seq) for a in args):
            return Seq(tuple(Seq(t) for t in zip(*(a.items for a in args))))  # type: ignore[union-attr]
        if name == "reversed" and len(args) == 1 and isinstance(args[0], Seq):
            return Seq(tuple(reversed(args[0].items)))
        if name in ("abs", "min", "max", "round") and args and all(isinstance(a, Num) for a in args) and not keywords:
            values = [a.value for a in args]  # type: ignore[union-attr]
            if name == "abs" and len(values) == 1:
                return Num(abs(values[0]))
            if name == "min":
                return Num(min(values))
            if name == "max":
                return Num(max(values))
        return Unknown(f"`{name}` at line {line} is not supported")

    def _inline(self, ref: FunctionRef, node: cst.Call, state: State, frame: Frame, line: int,
                receiver: Value | None) -> list[tuple[State, Value]]:
        if ref.key in frame.stack:
            raise Stuck(f"the recursive call of {ref.qualname} at line {line} is not supported")
        if frame.depth + 1 > self.inline_depth:
            raise Stuck(f"the inlining depth limit of {self.inline_depth} was reached at the call of "
                        f"{ref.qualname} at line {line}")
        if _is_generator(ref.node):
            raise Stuck(f"the generator function {ref.qualname} called at line {line} is not supported")
        self.depend(ref.module.path)
        note = f"inlined {ref.qualname} from {ref.module.path}"
        if note not in self.inlined:
            self.inlined.append(note)
        callee = Frame(ref.module, ref, frame.depth + 1, frame.stack + (ref.key,), self._new_ident())
        result: list[tuple[State, Value]] = []
        for after, positional, keywords in self._arguments(node, state, frame, line):
            if receiver is not None:
                positional = [receiver] + positional
            start = self._bind_arguments(ref, positional, keywords, State((), after.conditions, after.notes),
                                         callee, line)
            body = ref.node.body
            statements = body.body if isinstance(body, cst.IndentedBlock) else body.body
            for outcome in self.exec_block(statements, [start], callee):
                back = State(after.env, outcome.state.conditions, outcome.state.notes)
                if outcome.status == "return":
                    result.append((back, outcome.value if outcome.value is not None else NONE))
                elif outcome.status == "next":
                    result.append((back, NONE))
                elif outcome.status == "stuck":
                    raise Stuck(f"{outcome.reason} (in {ref.qualname} of {ref.module.path}, called at line {line})")
                # "raise": this path of the caller raises too and returns nothing
        return result

    def _bind_arguments(self, ref: FunctionRef, positional: list[Value], keywords: dict[str, Value],
                        state: State, frame: Frame, line: int) -> State:
        params = ref.node.params
        ordered = list(params.posonly_params) + list(params.params)
        if len(positional) > len(ordered) and not isinstance(params.star_arg, cst.Param):
            raise Stuck(f"the call of {ref.qualname} at line {line} passes {len(positional)} positional "
                        f"arguments, it takes {len(ordered)}")
        if isinstance(params.star_arg, cst.Param) or params.star_kwarg is not None:
            raise Stuck(f"calling {ref.qualname} with *args/**kwargs parameters at line {line} is not supported")
        remaining = dict(keywords)
        for i, param in enumerate(ordered):
            name = param.name.value
            if i < len(positional):
                if name in remaining:
                    raise Stuck(f"the call of {ref.qualname} at line {line} gives {name} twice")
                state = state.bind(name, positional[i])
            elif name in remaining and param not in params.posonly_params:
                state = state.bind(name, remaining.pop(name))
            elif param.default is not None:
                state = state.bind(name, self._default(param.default, ref, line))
            else:
                raise Stuck(f"the call of {ref.qualname} at line {line} misses the argument {name}")
        for param in params.kwonly_params:
            name = param.name.value
            if name in remaining:
                state = state.bind(name, remaining.pop(name))
            elif param.default is not None:
                state = state.bind(name, self._default(param.default, ref, line))
            else:
                raise Stuck(f"the call of {ref.qualname} at line {line} misses the keyword argument {name}")
        if remaining:
            raise Stuck(f"the call of {ref.qualname} at line {line} passes unknown keyword arguments "
                        f"{', '.join(sorted(remaining))}")
        return state

    def _default(self, node: cst.BaseExpression, ref: FunctionRef, line: int) -> Value:
        frame = Frame(ref.module, None, 0, (), self._new_ident())
        alternatives = self.symbolic_value(node, State(()), frame)
        if len(alternatives) != 1 or alternatives[0][0].conditions:
            return Unknown(f"the default value of a parameter of {ref.qualname} is not supported")
        return alternatives[0][1]


# ---------------------------------------------------------------- helpers


def math_constant(module: str, name: str, line: int) -> Value:
    """``math.pi`` and friends: pi is the claim language's opaque constant ``PI``; e is exp(1)."""
    if name == "pi":
        return PI
    if name == "tau":
        return BinOp("*", Num(Fraction(2)), PI)
    if name == "e":
        return Call("exp", (Num(Fraction(1)),))
    return Unknown(f"the constant {module}.{name} at line {line} is not supported")


def _parameters(node: cst.FunctionDef) -> list[tuple[str, cst.Param]]:
    params = node.params
    out = [(p.name.value, p) for p in list(params.posonly_params) + list(params.params)]
    out += [(p.name.value, p) for p in params.kwonly_params]
    return out


def positional_parameters(node: cst.FunctionDef) -> list[str]:
    params = node.params
    return [p.name.value for p in list(params.posonly_params) + list(params.params)]


def _star_parameters(node: cst.FunctionDef) -> list[str]:
    params = node.params
    names = []
    if isinstance(params.star_arg, cst.Param):
        names.append(params.star_arg.name.value)
    if params.star_kwarg is not None:
        names.append(params.star_kwarg.name.value)
    return names


def _neutral_decorators(node: cst.FunctionDef) -> bool:
    for decorator in node.decorators:
        expr = decorator.decorator
        if isinstance(expr, cst.Call):
            expr = expr.func
        dotted = _dotted(expr)
        if dotted is None or dotted.split(".")[-1] not in NEUTRAL_DECORATORS:
            return False
    return True


def _static_like(node: cst.FunctionDef) -> bool:
    names = set()
    for decorator in node.decorators:
        dotted = _dotted(decorator.decorator if not isinstance(decorator.decorator, cst.Call)
                         else decorator.decorator.func)
        names.add((dotted or "?").split(".")[-1])
    return "staticmethod" in names and names <= NEUTRAL_DECORATORS


def _is_generator(node: cst.FunctionDef) -> bool:
    found = []

    class Visitor(cst.CSTVisitor):
        def visit_Yield(self, n: cst.Yield) -> None:
            found.append(n)

        def visit_FunctionDef(self, n: cst.FunctionDef) -> bool:
            return n is node

        def visit_Lambda(self, n: cst.Lambda) -> bool:
            return False

    node.visit(Visitor())
    return bool(found)


def _qualified(module: ModuleInfo, name: str) -> str:
    """A project name that cannot be seen into, qualified by its module so that equal names in
    different modules are different opaque values."""
    stem = module.path[:-3] if module.path.endswith(".py") else module.path
    return ".".join(part for part in stem.replace("\\", "/").split("/") if part not in ("", ".")) + "." + name


def _other_star_imports(module: ModuleInfo) -> list[str]:
    return [m for m in module.star_imports if m.lstrip(".").split(".")[0] not in MATH_MODULES]


def _star_reason(name: str, module: ModuleInfo, line: int) -> str:
    sources = ", ".join(_other_star_imports(module))
    return f"the name {name} at line {line} may come from `from {sources} import *`, which the tool does not follow"


def _owned(value: Value, owner: int) -> Value:
    if isinstance(value, Seq) and value.kind == "array":
        return Seq(value.items, value.kind, value.ident, owner)
    return value


def _is_array(value: object) -> bool:
    return isinstance(value, Seq) and value.kind == "array"


def _as_array(value: Value, fresh=None) -> Value:
    """A tuple or list (nested too) as a numpy array; other values unchanged."""
    if not isinstance(value, Seq):
        return value
    ident = fresh() if fresh is not None else value.ident
    return Seq(tuple(_as_array(item, fresh) for item in value.items), "array", ident, 0)


def _transpose(matrix: Seq) -> tuple[Seq, ...] | None:
    rows = matrix.items
    if not all(isinstance(r, Seq) and len(r.items) == len(rows[0].items) for r in rows):  # type: ignore[union-attr]
        return None
    width = len(rows[0].items)  # type: ignore[union-attr]
    return tuple(Seq(tuple(r.items[j] for r in rows), "array") for j in range(width))  # type: ignore[union-attr]


def _first_unknown(*values: Value) -> Unknown | None:
    for v in values:
        found = first_unknown(v)
        if found is not None:
            return found
    return None


_IMPURE_PREFIXES = ("random.", "np.random.", "numpy.random.", "time.", "os.", "sys.", "secrets.", "uuid.",
                    "datetime.", "io.", "socket.", "subprocess.", "rng.", "self.rng.")
_IMPURE_NAMES = frozenset({"random", "rand", "randn", "randint", "uniform", "normal", "gauss", "input", "open",
                           "print", "time", "perf_counter", "monotonic", "next", "id", "hash"})


def _impure(name: str) -> bool:
    """Calls whose value may differ between two calls with the same arguments (by name, conservatively)."""
    return name.startswith(_IMPURE_PREFIXES) or name.rsplit(".", 1)[-1] in _IMPURE_NAMES


def _contains_list(value: Value, ident: int) -> bool:
    if isinstance(value, Seq):
        return any((isinstance(i, Seq) and i.kind in MUTABLE and i.ident == ident) or _contains_list(i, ident)
                   for i in value.items)
    return False


def _is_int(value: object) -> bool:
    return isinstance(value, Num) and value.value.denominator == 1


def _holds(a: Fraction, relation: str, b: Fraction) -> bool:
    return {"==": a == b, "!=": a != b, "<": a < b, "<=": a <= b, ">": a > b, ">=": a >= b}[relation]


def _fold_integer(symbol: str, a: int, b: int) -> int | None:
    if symbol == "//":
        return a // b
    if symbol == "%":
        return a % b
    if symbol == "&":
        return a & b
    if symbol == "|":
        return a | b
    if symbol == "^":
        return a ^ b
    if symbol == "<<" and 0 <= b <= 64:
        return a << b
    if symbol == ">>" and b >= 0:
        return a >> b
    return None


def _spelling(node: cst.BaseExpression) -> str:
    dotted = _dotted(node)
    if dotted is not None:
        return dotted
    try:
        return cst.Module(body=[]).code_for_node(node)
    except Exception:  # pragma: no cover - printing is best effort
        return type(node).__name__


_BIN_OPERATORS: dict[type, str] = {
    cst.Add: "+", cst.Subtract: "-", cst.Multiply: "*", cst.Divide: "/", cst.Power: "**",
}
_OTHER_OPERATORS: dict[type, str] = {
    cst.FloorDivide: "//", cst.Modulo: "%", cst.BitAnd: "&", cst.BitOr: "|", cst.BitXor: "^",
    cst.LeftShift: "<<", cst.RightShift: ">>", cst.MatrixMultiply: "@",
}
_AUG_OPERATORS: dict[type, str] = {
    cst.AddAssign: "+", cst.SubtractAssign: "-", cst.MultiplyAssign: "*", cst.DivideAssign: "/",
    cst.PowerAssign: "**",
}
_RELATIONS: dict[type, str] = {
    cst.Equal: "==", cst.NotEqual: "!=", cst.LessThan: "<", cst.LessThanEqual: "<=", cst.GreaterThan: ">",
    cst.GreaterThanEqual: ">=",
}
_NEGATION = {"==": "!=", "!=": "==", "<": ">=", "<=": ">", ">": "<=", ">=": "<"}
_STAR_MATH = frozenset({"sqrt", "hypot", "fma", "sin", "cos", "tan", "exp", "log", "log10", "log2", "pow",
                        "square", "fabs", "floor", "ceil", "trunc", "fmod", "copysign"})
_BUILTINS = frozenset({"pow", "float", "int", "tuple", "list", "len", "sum", "range", "enumerate", "zip",
                       "reversed", "abs", "min", "max", "round", "divmod", "complex", "sorted", "map", "filter",
                       "any", "all", "print", "isinstance", "bool", "str"})


def _op_name(op: cst.BaseCompOp) -> str:
    return {cst.In: "in", cst.NotIn: "not in", cst.Is: "is", cst.IsNot: "is not"}.get(type(op), type(op).__name__)


_STATEMENT_NAMES = {
    "While": "the while loop", "Try": "the try statement", "TryStar": "the try statement",
    "With": "the with statement", "Match": "the match statement", "FunctionDef": "a nested function definition",
    "ClassDef": "a class definition", "Global": "the global statement", "Nonlocal": "the nonlocal statement",
    "Import": "an import statement", "ImportFrom": "an import statement", "Del": "the del statement",
}


def _statement_name(stmt: cst.CSTNode) -> str:
    return _STATEMENT_NAMES.get(type(stmt).__name__, f"the {type(stmt).__name__} statement")


_EXPRESSION_NAMES = {
    "ListComp": "a list comprehension", "SetComp": "a set comprehension", "DictComp": "a dict comprehension",
    "GeneratorExp": "a generator expression", "Lambda": "a lambda", "Dict": "a dict", "Set": "a set",
    "NamedExpr": "an assignment expression (:=)", "Await": "await", "Yield": "yield",
    "SimpleString": "a string", "ConcatenatedString": "a string", "FormattedString": "an f-string",
    "Ellipsis": "`...`", "StarredElement": "a starred expression",
}


def _expression_name(node: cst.CSTNode) -> str:
    return _EXPRESSION_NAMES.get(type(node).__name__, f"the expression {type(node).__name__}")

