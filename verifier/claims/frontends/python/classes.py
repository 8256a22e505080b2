"""Python classes as numeric code writes them: what calling a class builds, and what ``obj.name`` means.

A class is followed when nothing in it can change what building an object or reading an attribute does
behind the code's back: no base classes, no metaclass, no ``__new__``/``__getattr__``/``__setattr__``, and
only the decorator ``dataclass``.  Then calling the class runs its ``__init__`` (a dataclass gets the one
its fields imply, then ``__post_init__``), methods and properties are inlined, and class-level constants
read as their values.  Anything else about a class gives a reason, never a guess.
"""
from __future__ import annotations

from dataclasses import dataclass

import libcst as cst

from verifier.claims.frontends.python.lower import lower_expression, lower_function
from verifier.claims.frontends.python.modules import ModuleInfo, dotted
from verifier.model import ir

PROPERTY_DECORATORS = frozenset({"property", "cached_property"})
METHOD_DECORATORS = frozenset({"njit", "jit", "lru_cache", "cache", "wraps", "profile"})
SPECIAL = ("__new__", "__getattr__", "__getattribute__", "__setattr__", "__delattr__", "__init_subclass__",
           "__class_getitem__")


@dataclass(frozen=True)
class ClassModel:
    """One class of a module, read for building objects and their members."""

    name: str
    module: ModuleInfo
    node: cst.ClassDef
    methods: dict[str, cst.FunctionDef]  # plain methods (and static ones, in ``static``)
    static: frozenset[str]
    properties: dict[str, cst.FunctionDef]
    constants: dict[str, cst.BaseExpression]  # class-level NAME = value (no dataclass field)
    fields: tuple["DataField", ...] | None  # a dataclass's fields, else None
    others: dict[str, str]  # members that are not followed, with the reason
    assigned: frozenset[str]  # attributes of self assigned by methods other than __init__/__post_init__
    reason: str  # why objects of this class are not built ('' when they are)


def _decorator_names(node: cst.FunctionDef | cst.ClassDef) -> list[str]:
    names = []
    for decorator in node.decorators:
        expr = decorator.decorator
        name = dotted(expr.func if isinstance(expr, cst.Call) else expr)
        names.append((name or "?").split(".")[-1])
    return names


def _first_parameter(node: cst.FunctionDef) -> str | None:
    params = list(node.params.posonly_params) + list(node.params.params)
    return params[0].name.value if params else None


def _self_attributes(node: cst.FunctionDef) -> set[str]:
    """Attributes of the method's first parameter it assigns (``self.x = ...``, ``self.x += ...``)."""
    receiver = _first_parameter(node)
    found: set[str] = set()

    class Visitor(cst.CSTVisitor):
        def _target(self, target: cst.BaseExpression) -> None:
            if isinstance(target, (cst.Tuple, cst.List)):
                for element in target.elements:
                    self._target(element.value)
            elif isinstance(target, cst.Attribute) and isinstance(target.value, cst.Name) and (
                    target.value.value == receiver):
                found.add(target.attr.value)

        def visit_AssignTarget(self, n: cst.AssignTarget) -> None:
            self._target(n.target)

        def visit_AugAssign(self, n: cst.AugAssign) -> None:
            self._target(n.target)

        def visit_AnnAssign(self, n: cst.AnnAssign) -> None:
            self._target(n.target)

        def visit_Call(self, n: cst.Call) -> None:
            if dotted(n.func) in ("setattr", "object.__setattr__"):
                found.add("*")

    node.body.visit(Visitor())
    return found


@dataclass(frozen=True)
class DataField:
    """A dataclass field: its default (None: none; the ``field(...)`` call itself when it is not a plain
    ``default=``) and whether ``__init__`` takes it (``field(init=False)`` does not)."""

    name: str
    default: cst.BaseExpression | None
    init: bool = True


def _data_field(name: str, value: cst.BaseExpression | None) -> DataField:
    if isinstance(value, cst.Call) and (dotted(value.func) or "").split(".")[-1] == "field":
        keywords = {arg.keyword.value: arg.value for arg in value.args if arg.keyword is not None}
        flag = keywords.get("init")
        init = not (isinstance(flag, cst.Name) and flag.value == "False")
        if "default" in keywords:
            return DataField(name, keywords["default"], init)
        return DataField(name, value if len(keywords) > ("init" in keywords) else None, init)
    return DataField(name, value)


def read_class(module: ModuleInfo, name: str) -> ClassModel | None:
    node = module.class_nodes.get(name)
    if node is None or name not in module.classes:
        return None
    reason = ""
    decorators = _decorator_names(node)
    is_dataclass = "dataclass" in decorators
    if any(d != "dataclass" for d in decorators):
        reason = f"the class {name} has a decorator the tool does not follow"
    elif any(dotted(base.value) not in ("object",) for base in node.bases) or node.keywords:
        reason = f"the class {name} has base classes or a metaclass, which the tool does not follow"
    elif is_dataclass and isinstance(node.decorators[0].decorator, cst.Call) and any(
            arg.keyword is not None and arg.keyword.value == "init" for arg in node.decorators[0].decorator.args):
        reason = f"the dataclass {name} sets init=..., which the tool does not follow"
    methods: dict[str, cst.FunctionDef] = {}
    static: set[str] = set()
    properties: dict[str, cst.FunctionDef] = {}
    constants: dict[str, cst.BaseExpression] = {}
    fields: list[DataField] = []
    others: dict[str, str] = {}
    assigned: set[str] = set()
    body = node.body.body if isinstance(node.body, cst.IndentedBlock) else ()
    for item in body:
        if isinstance(item, cst.FunctionDef):
            member = item.name.value
            names = _decorator_names(item)
            if member in methods or member in properties or member in others:
                others[member] = f"{name}.{member} is defined more than once (a setter, an overload)"
                methods.pop(member, None)
                properties.pop(member, None)
            elif names and names[0] in PROPERTY_DECORATORS and len(names) == 1:
                properties[member] = item
            elif set(names) <= METHOD_DECORATORS | {"staticmethod"}:
                methods[member] = item
                if "staticmethod" in names:
                    static.add(member)
            else:
                others[member] = f"the method {name}.{member} has a decorator the tool does not follow"
            if member in SPECIAL:
                reason = reason or f"the class {name} defines {member}, which the tool does not follow"
            if member not in ("__init__", "__post_init__") and "staticmethod" not in names:
                assigned |= _self_attributes(item)
        elif not isinstance(item, cst.SimpleStatementLine):  # `if FAST: def norm(...)`, a nested class
            reason = reason or (f"the class {name} has a {type(item).__name__} statement in its body, which the "
                                "tool does not follow")
        else:
            for small in item.body:
                if isinstance(small, cst.AnnAssign) and isinstance(small.target, cst.Name):
                    annotation = dotted(small.annotation.annotation) or ""
                    if is_dataclass and not annotation.split(".")[-1].startswith(("ClassVar", "InitVar")):
                        fields.append(_data_field(small.target.value, small.value))
                    elif small.value is not None:
                        constants[small.target.value] = small.value
                elif isinstance(small, cst.Assign) and len(small.targets) == 1 and isinstance(
                        small.targets[0].target, cst.Name):
                    constants[small.targets[0].target.value] = small.value
    for member in set(constants) & (set(methods) | set(properties)):  # `norm = staticmethod(...)` after `def norm`
        others[member] = f"{name}.{member} is bound more than once in the class body"
        methods.pop(member, None)
        properties.pop(member, None)
        constants.pop(member, None)
    if is_dataclass and "__init__" in methods:
        reason = reason or f"the dataclass {name} defines its own __init__, which the tool does not follow"
    return ClassModel(name, module, node, methods, frozenset(static), properties, constants,
                      tuple(fields) if is_dataclass else None, others, frozenset(assigned), reason)


def method_function(model: ClassModel, member: str) -> ir.Function:
    node = model.methods[member] if member in model.methods else model.properties[member]
    return lower_function(model.module, node, f"{model.name}.{member}", model.name)


def init_function(model: ClassModel) -> ir.Function | None:
    """The function calling the class runs on the new object: ``__init__``, or a dataclass's own."""
    if model.fields is None:
        return method_function(model, "__init__") if "__init__" in model.methods else None
    line, column = model.module.position(model.node)
    parameters = [ir.Parameter("self")]
    body: list[ir.Statement] = []
    for data in model.fields:
        default = data.default
        lowered = lower_expression(model.module, default) if default is not None else None
        if isinstance(default, cst.Call) and (dotted(default.func) or "").split(".")[-1] == "field":
            lowered = ir.Unsupported(f"the default of the dataclass field {model.name}.{data.name}", line, column)
        if data.init:
            parameters.append(ir.Parameter(data.name, default=lowered))
            body.append(ir.Assign((ir.ToField("self", data.name, line, column),), ir.Name(data.name, line, column),
                                  line, column))
        elif lowered is not None:  # field(init=False, default=v): set, not taken
            body.append(ir.Assign((ir.ToField("self", data.name, line, column),), lowered, line, column))
    if "__post_init__" in model.methods:
        call = ir.Invoke(ir.Field(ir.Name("self", line, column), "__post_init__", line, column), (),
                         "self.__post_init__", line, column)
        body.append(ir.Evaluate(call, line, column))
    return ir.Function(f"{model.name}.__init__", tuple(parameters), tuple(body), model.module.path, line, column,
                       model.name)


def argument_names(init: ir.Function, prefix: str) -> list[str]:
    """The variables a claim on a method gives ``__init__``'s parameters (``prefix`` is the method's first
    parameter, ``self``): a parameter stored unchanged in an attribute by the body itself (``self.x = x``)
    is that attribute's variable ``self.x``; any other is ``self.__init__.<name>`` (no attribute reads so)."""
    receiver = (init.positional_names() or [""])[0]
    names = init.positional_names()[1:]
    stored: dict[str, str] = {}
    for stmt in init.body:  # stored unchanged on every path: a statement of the body itself
        if isinstance(stmt, ir.Assign) and isinstance(stmt.value, ir.Name) and stmt.value.name in names:
            for target in stmt.targets:
                if (isinstance(target, ir.ToField) and target.base == receiver and stmt.value.name not in stored
                        and target.field not in stored.values()):
                    stored[stmt.value.name] = target.field
    return [f"{prefix}.{stored[name]}" if name in stored else f"{prefix}.__init__.{name}" for name in names]

