"""What Python names mean to the executor: module constants, imports (followed into project modules), math
and numpy, built-ins, classes and methods, star imports.  Decided when the function runs, since a local
bound on the path hides a global of the same name."""
from __future__ import annotations

from fractions import Fraction
from typing import Callable, TypeVar

import libcst as cst

from verifier.claims.execute.functions import TABLE_SPELLINGS, math_constant
from verifier.claims.execute.scope import (
    BuiltinCallee,
    Callee,
    ConstructCallee,
    Member,
    Host,
    InlineCallee,
    IsBound,
    MathCallee,
    MethodCallee,
    OpaqueCallee,
    UnknownCallee,
)
from verifier.claims.execute.expressions import dotted_name
from verifier.claims.execute.state import State
from verifier.claims.execute.values import MUTABLE, NONE, FunctionValue, Seq, Stuck, Unknown, Value
from verifier.claims.frontends.python.classes import ClassModel, init_function, method_function, read_class
from verifier.claims.frontends.python.lower import lower_expression, lower_function
from verifier.claims.frontends.python.modules import (
    MATH_MODULES,
    MemberImport,
    ModuleImport,
    ModuleInfo,
    ModuleLoader,
    dotted,
    star_exports,
)
from verifier.model import ir
from verifier.model.expr import Num, Var

T = TypeVar("T")
MAX_IMPORT_CHAIN = 8
_STAR_CYCLE = "the name {name} is passed around a cycle of `import *` statements"
# Decorators known not to change what a function computes (JIT compilers, caches, method kinds).
NEUTRAL_DECORATORS = frozenset(
    {"njit", "jit", "vectorize", "lru_cache", "cache", "staticmethod", "wraps", "profile", "cfunc", "guvectorize"}
)
_STAR_MATH = frozenset({"sqrt", "hypot", "fma", "sin", "cos", "tan", "exp", "log", "log10", "log2", "pow",
                        "square", "fabs", "floor", "ceil", "trunc", "fmod", "copysign"}) | frozenset(TABLE_SPELLINGS)
_BUILTINS = frozenset({"pow", "float", "int", "tuple", "list", "len", "sum", "range", "enumerate", "zip",
                       "reversed", "abs", "min", "max", "round", "divmod", "complex", "sorted", "map", "filter",
                       "any", "all", "print", "isinstance", "bool", "str"})


def neutral_decorators(node: cst.FunctionDef) -> bool:
    for decorator in node.decorators:
        expr = decorator.decorator
        if isinstance(expr, cst.Call):
            expr = expr.func
        name = dotted(expr)
        if name is None or name.split(".")[-1] not in NEUTRAL_DECORATORS:
            return False
    return True


def static_like(node: cst.FunctionDef) -> bool:
    names = set()
    for decorator in node.decorators:
        expr = decorator.decorator
        name = dotted(expr.func if isinstance(expr, cst.Call) else expr)
        names.add((name or "?").split(".")[-1])
    return "staticmethod" in names and names <= NEUTRAL_DECORATORS


def qualified(module: ModuleInfo, name: str) -> str:
    """A project name that cannot be seen into, qualified by its module so that equal names in
    different modules are different opaque values."""
    stem = module.path[:-3] if module.path.endswith(".py") else module.path
    return ".".join(part for part in stem.replace("\\", "/").split("/") if part not in ("", ".")) + "." + name


def _other_star_imports(module: ModuleInfo) -> list[str]:
    return [m for m in module.star_imports if m.lstrip(".").split(".")[0] not in MATH_MODULES]


def _star_reason(name: str, module: ModuleInfo, line: int) -> str:
    sources = ", ".join(_other_star_imports(module))
    return f"the name {name} at line {line} may come from `from {sources} import *`, which the tool does not follow"


class PythonScope:
    """The executor's ``Scope`` for Python; one per executor (module constants are cached per claim)."""

    def __init__(self, loader: ModuleLoader):
        self.loader = loader
        self._constants: dict[tuple[str, str], Value] = {}
        self._busy: set[tuple[str, str]] = set()
        self._star_busy: set[tuple[str, str]] = set()
        self._classes: dict[tuple[str, str], ClassModel | None] = {}

    def lower(self, module: ModuleInfo, node: cst.FunctionDef, qualname: str, owner: str | None = None
              ) -> ir.Function:
        return lower_function(module, node, qualname, owner)

    # -- values

    def global_value(self, host: Host, module: str, name: str, line: int) -> Value:
        return self._global(host, name, self.loader.module(module), line)

    def _global(self, host: Host, name: str, module: ModuleInfo, line: int) -> Value:
        if name == "None":
            return NONE
        if name in ("NotImplemented", "Ellipsis", "__name__", "__file__"):
            return Unknown(f"the built-in name {name} at line {line} is not a number")
        if name in ("True", "False"):
            return Num(Fraction(1 if name == "True" else 0))
        if name in module.conflicts:
            return Unknown(f"the module-level name {name} (used at line {line}) {module.conflicts[name]}")
        if name in module.maybe_none:
            return Unknown(f"the module-level name {name} (used at line {line}) {module.maybe_none[name]}, so its "
                           "value is not followed")
        if name in module.rebound:
            return Unknown(f"the module-level name {name} (line {line}) is bound in a way the tool does not follow")
        replaced = self._replaced_by_star(host, module, name, line)
        if replaced is not None:
            return Unknown(replaced)
        if name in module.constants:
            return self.module_constant(host, module, name, line)
        target = module.imports.get(name)
        if isinstance(target, MemberImport):
            base = target.dotted.lstrip(".")
            if base in MATH_MODULES:
                return math_constant(base, target.name, line)
            other = None if base.split(".")[0] in MATH_MODULES else self.loader.find(target.dotted, module)
            if other is not None:
                host.depend(other.path)
                return self._global(host, target.name, other, line)
            return Var(f"{base}.{target.name}" if base else target.name)
        if isinstance(target, ModuleImport):
            return Unknown(f"the module {name} used as a value at line {line}")
        if name in module.lambdas:
            return FunctionValue(module.lambdas[name], closure=True)
        if name in module.functions and neutral_decorators(module.functions[name]):
            return FunctionValue(self.lower(module, module.functions[name], name))
        if name in module.functions or name in module.classes:
            return Unknown(f"the function or class {name} used as a value at line {line} is not supported")
        source = self._star_source(host, module, name, line)
        if isinstance(source, str):
            return Unknown(source)
        if source is not None:
            cycle: Value = Unknown(_STAR_CYCLE.format(name=name))
            return self._followed_star(source, name, lambda: self._global(host, name, source, line), cycle)
        if name in ("pi", "tau", "e") and any(m in MATH_MODULES for m in module.star_imports):
            return math_constant("math", name, line)
        # an undefined global: any real number (a claim must hold for every value of it)
        return Var(name)

    def module_constant(self, host: Host, module: ModuleInfo, name: str, line: int) -> Value:
        """The value of the module-level constant ``name`` (assigned once at top level)."""
        key = (module.path, name)
        if key in self._constants:
            return self._constants[key]
        nodes = module.constants[name]
        if len(nodes) != 1 or key in self._busy:
            return Unknown(f"the module-level name {name} is assigned more than once (used at line {line})")
        self._busy.add(key)
        try:
            alternatives = host.evaluate_detached(lower_expression(module, nodes[0]), module.path)
        except Stuck as exc:
            alternatives = [(State(()), Unknown(exc.reason))]
        finally:
            self._busy.discard(key)
        value: Value
        if len(alternatives) != 1 or alternatives[0][0].conditions:
            value = Unknown(f"the module-level constant {name} depends on a condition")
        else:
            value = alternatives[0][1]
            if isinstance(value, Seq) and value.kind in MUTABLE:
                value = Seq(value.items, value.kind, value.ident, -1)  # module lists must not be changed here
        self._constants[key] = value
        host.depend(module.path)
        return value

    def member_value(self, host: Host, module: str, node: ir.Field, is_bound: IsBound, line: int) -> Value | None:
        info = self.loader.module(module)
        target = self._module_path(node.base, is_bound, info)
        if target is None:
            return None
        dotted_module, other = target
        if dotted_module in MATH_MODULES:
            return math_constant(dotted_module, node.name, line)
        if other is not None:
            host.depend(other.path)
            return self._global(host, node.name, other, line)
        return Var(dotted_name(node) or node.name)

    def _module_path(self, node: ir.Expr, is_bound: IsBound, module: ModuleInfo
                     ) -> tuple[str, ModuleInfo | None] | None:
        """If ``node`` names an imported module (``np``, ``pkg.mod``), its dotted name and file (if in the project)."""
        spelled = dotted_name(node)
        if spelled is None:
            return None
        head, _, rest = spelled.partition(".")
        if is_bound(head):
            return None
        return self._module_named(head, rest, module, 0)

    def _module_named(self, head: str, rest: str, module: ModuleInfo, depth: int
                      ) -> tuple[str, ModuleInfo | None] | None:
        if head in module.conflicts or depth > MAX_IMPORT_CHAIN:
            return None  # read as a value, which says why it is not followed
        target = module.imports.get(head)
        if target is None:
            if (head in MATH_MODULES and not rest and head not in module.constants and head not in module.functions
                    and head not in module.rebound):
                return ("numpy" if head == "np" else head, None)
            return None
        full = target.dotted if isinstance(target, ModuleImport) else target.full
        if rest:
            full += "." + rest
        base = full.lstrip(".")
        if base.split(".")[0] in MATH_MODULES:
            return ("numpy" if base == "np" else base, None)
        info = self.loader.find(full, module)
        if info is None:
            if isinstance(target, MemberImport):
                # `from .compat import np`: the project module compat may import a module under that name
                source = self.loader.find(target.dotted, module)
                if source is not None and target.name in source.imports and target.name not in source.rebound:
                    return self._module_named(target.name, rest, source, depth + 1)
                if not rest:
                    return None  # `from pkg import thing`: a value or function rather than a module
            return (base, None)
        return (base, info)

    # -- callees

    def callee(self, host: Host, module: str, caller: ir.Function | None, node: ir.Expr, is_bound: IsBound,
               line: int) -> Callee:
        info = self.loader.module(module)
        if isinstance(node, ir.Name):
            return self._global_callee(host, node.name, info, line, 0)
        if not isinstance(node, ir.Field):
            return UnknownCallee(f"the call at line {line} is not supported")
        attr = node.name
        owner = self._module_path(node.base, is_bound, info)
        if owner is not None:
            dotted_module, other = owner
            if dotted_module in MATH_MODULES or dotted_module.split(".")[0] in MATH_MODULES:
                return MathCallee(attr) if dotted_module in MATH_MODULES else OpaqueCallee(f"{dotted_module}.{attr}")
            if other is not None:
                host.depend(other.path)
                return self._global_callee(host, attr, other, line, 0)
            return OpaqueCallee(f"{dotted_module}.{attr}")
        bound = self._bound_method(node, caller, info)
        if bound is not None:
            return bound
        if isinstance(node.base, ir.Name) and not is_bound(node.base.name):
            class_name = node.base.name
            methods = info.classes.get(class_name)
            if methods is not None and class_name not in info.rebound:
                method = methods.get(attr)
                if method is not None and static_like(method):
                    return InlineCallee(self.lower(info, method, f"{class_name}.{attr}", class_name))
                return OpaqueCallee(f"{class_name}.{attr}")
        return MethodCallee(node.base, attr)

    def _bound_method(self, node: ir.Field, caller: ir.Function | None, module: ModuleInfo) -> Callee | None:
        """``self.method(...)`` inside a method of a class of this module: that class's method."""
        if caller is None or caller.owner is None or not isinstance(node.base, ir.Name):
            return None
        params = caller.positional_names()
        if not params or node.base.name != params[0] or caller.owner in module.rebound:
            return None
        method = module.classes.get(caller.owner, {}).get(node.name)
        if method is None or not neutral_decorators(method):
            return None
        function = self.lower(module, method, f"{caller.owner}.{node.name}", caller.owner)
        if static_like(method):
            return InlineCallee(function)
        return InlineCallee(function, receiver=node.base.name)

    def _global_callee(self, host: Host, name: str, module: ModuleInfo, line: int, depth: int) -> Callee:
        if depth > MAX_IMPORT_CHAIN:
            return UnknownCallee(f"the import chain for {name} (line {line}) is too long to follow")
        if name in module.conflicts:
            return UnknownCallee(f"the module-level name {name} (called at line {line}) {module.conflicts[name]}")
        if name in module.rebound:
            return UnknownCallee(f"the module-level name {name} (line {line}) is bound in a way the tool does not "
                                 "follow")
        replaced = self._replaced_by_star(host, module, name, line)
        if replaced is not None:
            return UnknownCallee(replaced)
        if name in module.functions:
            node = module.functions[name]
            if not neutral_decorators(node):
                return OpaqueCallee(qualified(module, name))
            return InlineCallee(self.lower(module, node, name))
        if name in module.classes:
            model = self.class_model(module, name)
            if model is not None and not model.reason:
                return ConstructCallee((module.path, name), init_function(model))
            return OpaqueCallee(qualified(module, name))
        if name in module.constants:
            return OpaqueCallee(qualified(module, name))
        target = module.imports.get(name)
        if isinstance(target, ModuleImport):
            return UnknownCallee(f"calling the module {name} at line {line} is not supported")
        if isinstance(target, MemberImport):
            base = target.dotted.lstrip(".")
            if base in MATH_MODULES:
                return MathCallee(target.name)
            if base.split(".")[0] in MATH_MODULES:
                return OpaqueCallee(f"{base}.{target.name}")
            other = self.loader.find(target.dotted, module)
            if other is None:
                # `from pkg import mod` then mod(...)? or an outside library: opaque
                return OpaqueCallee(f"{base}.{target.name}" if base else target.name)
            host.depend(other.path)
            return self._global_callee(host, target.name, other, line, depth + 1)
        source = self._star_source(host, module, name, line)
        if isinstance(source, str):
            return UnknownCallee(source)
        if source is not None:
            stuck: Callee = UnknownCallee(_STAR_CYCLE.format(name=name))
            return self._followed_star(source, name, lambda: self._global_callee(host, name, source, line, depth + 1),
                                       stuck)
        if name in _BUILTINS:
            return BuiltinCallee(name)
        if any(m in MATH_MODULES for m in module.star_imports) and name in _STAR_MATH:
            return MathCallee(name)
        return OpaqueCallee(name)

    # -- classes

    def class_model(self, module: ModuleInfo, name: str) -> ClassModel | None:
        key = (module.path, name)
        if key not in self._classes:
            self._classes[key] = None if name in module.rebound else read_class(module, name)
        return self._classes[key]

    def class_member(self, host: Host, cls: tuple[str, str], name: str, line: int) -> Member | None:
        """``obj.name`` on an object of the class ``cls`` that holds no attribute ``name``."""
        module = self.loader.module(cls[0])
        model = self.class_model(module, cls[1])
        if model is None:
            return None
        if name in model.others:
            return Member("unknown", reason=f"{model.others[name]} (line {line})")
        if name in model.properties:
            return Member("property", method_function(model, name))
        if name in model.methods:
            return Member("static" if name in model.static else "method", method_function(model, name))
        if name in model.constants and name not in model.assigned:
            value = host.evaluate_detached(lower_expression(module, model.constants[name]), module.path)
            if len(value) == 1 and not value[0][0].conditions:
                return Member("constant", value=value[0][1])
            return Member("unknown", reason=f"the class constant {cls[1]}.{name} (line {line}) is not followed")
        return None

    # -- star imports of project modules (read, never imported)

    def _star_source(self, host: Host, module: ModuleInfo, name: str, line: int, depth: int = 0
                     ) -> ModuleInfo | str | None:
        """The project module a ``from M import *`` of ``module`` takes ``name`` from (the last such import
        that binds it, itself or through its own star imports), None when none does, or the reason it
        cannot be told."""
        if depth > MAX_IMPORT_CHAIN:
            return f"the chain of `import *` statements that may bind {name} (line {line}) is too long to follow"
        for star in reversed(_other_star_imports(module)):
            other = self.loader.find(star, module)
            if other is None:
                return _star_reason(name, module, line)
            host.depend(other.path)
            exported = star_exports(other, name)
            if exported is None:
                return (f"the name {name} at line {line} may come from `from {star} import *`, whose `__all__` "
                        "the tool cannot read")
            if exported or (name in _STAR_MATH or name in ("pi", "tau", "e")) and any(
                    m in MATH_MODULES for m in other.star_imports):
                return other
            if "__all__" in other.constants:
                continue  # a literal __all__ without the name: not passed on
            passed_on = self._star_source(host, other, name, line, depth + 1)
            if passed_on is not None:
                return passed_on if isinstance(passed_on, str) else other
        return None

    def _followed_star(self, source: ModuleInfo, name: str, resolve: Callable[[], T], cycle: T) -> T:
        key = (source.path, name)
        if key in self._star_busy:  # star imports in a cycle: the name is bound nowhere along it
            return cycle
        self._star_busy.add(key)
        try:
            return resolve()
        finally:
            self._star_busy.discard(key)

    def _replaced_by_star(self, host: Host, module: ModuleInfo, name: str, line: int) -> str | None:
        """Why a name bound in ``module`` is not followed: a later ``from M import *`` may bind it again."""
        binding = module.bindings.get(name)
        for star in module.starred_over.get(name, []):
            if binding is not None and binding.bound == MemberImport(star, name):
                continue  # `from M import name` then `from M import *`: the same binding again
            other = self.loader.find(star, module)
            exported = star_exports(other, name) if other is not None else None
            if other is not None and exported is False:
                passes_math = (name in _STAR_MATH or name in ("pi", "tau", "e")) and any(
                    m in MATH_MODULES for m in other.star_imports)
                if passes_math or self._star_source(host, other, name, line) is not None:
                    exported = None
            if exported is not False:
                return (f"the module-level name {name} (used at line {line}) may be bound again by the later "
                        f"`from {star} import *` in {module.path}")
        return None
