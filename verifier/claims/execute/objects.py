"""Objects of the project's classes and dicts with constant keys: building, reading, changing, methods.

An object is a ``Record`` of its attributes.  Calling a class of the project builds a fresh object and
runs its ``__init__`` (or a dataclass's generated one) with the object as ``self``; its methods and
properties are inlined with the object first.  Python objects are shared by reference, so assigning an
attribute changes the object for every local holding it, and an inlined method hands the changed object
back to its caller.  What cannot be followed that way (an object held inside a list or another object
when it changes, an object given to a function the tool cannot see into) stops the path with a reason.
"""
from __future__ import annotations

from verifier.claims.execute.calls import CallEvaluator
from verifier.claims.execute.sharing import replace_object
from verifier.claims.execute.expressions import Alternatives
from verifier.claims.execute.scope import ConstructCallee, Member
from verifier.claims.execute.state import Frame, State
from verifier.claims.execute.values import NONE, Record, Stuck, Unknown, Value, int_of
from verifier.model import ir
from verifier.model.expr import Num, Var

Key = str | int
OPERAND = "\0operand"  # the other operand of an operator method: a name no Python code can spell
OPERATORS = {"+": ("__add__", "__radd__"), "-": ("__sub__", "__rsub__"), "*": ("__mul__", "__rmul__"),
             "/": ("__truediv__", "__rtruediv__"), "@": ("__matmul__", "__rmatmul__"),
             "**": ("__pow__", "__rpow__")}
UNARY_OPERATORS = {"-": ("__neg__", ""), "+": ("__pos__", "")}


def _class_of(left: Value, right: Value | None) -> str:
    record = left if isinstance(left, Record) else right
    return f"{record.class_name} object" if isinstance(record, Record) and record.cls else "dict"


def key_of(value: Value | ir.Text) -> Key | None:
    """A constant dict key: a string literal or an integer constant."""
    if isinstance(value, ir.Text):
        return value.value
    return int_of(value) if isinstance(value, Num) else None


def field_name(key: Key) -> str:
    """How a dict entry is held in a ``Record``: string keys quoted, so they never meet attribute names."""
    return repr(key)


class ObjectCalls(CallEvaluator):
    """Objects and constant-key dicts on top of calls (the ``Executor`` adds statements)."""

    def class_member(self, cls: tuple[str, str], name: str, line: int) -> Member | None:
        finder = getattr(self.scope, "class_member", None)  # optional for a scope (see Scope)
        found = finder(self, cls, name, line) if finder is not None else None
        return found if isinstance(found, Member) else None

    # -- building

    def construct(self, callee: ConstructCallee, node: ir.Invoke, state: State, frame: Frame,
                  label: str = "") -> list[tuple[State, Record]]:
        """Every (path, object) of calling the class ``callee.cls``."""
        record = Record(callee.cls, (), self.new_ident(), frame.ident, label)
        if callee.init is None:
            if node.arguments:
                raise Stuck(f"the class {callee.cls[1]} called at line {node.line} takes no arguments")
            return [(state, record)]
        built: list[tuple[State, Record]] = []
        receiver = callee.init.positional_names()[0] if callee.init.positional_names() else None
        for back, _, inside in self.inline_paths(callee.init, node, state, frame, record):
            final = inside.get(receiver) if receiver is not None else None
            if not isinstance(final, Record) or final.ident != record.ident:
                raise Stuck(f"{callee.init.name} (called at line {node.line}) rebinds its first parameter; "
                            "this is not followed")
            built.append((back, final))
        return built

    def build_object(self, callee: ConstructCallee, node: ir.Invoke, bindings: dict[str, Value]
                     ) -> list[tuple[State, Record]]:
        """Every (path, object) of calling a class at the top level, the call's names bound by ``bindings``."""
        frame = Frame(callee.cls[0], None, 0, (), self.new_ident())
        return self.construct(callee, node, State(tuple(bindings.items())), frame)

    # -- reading

    def object_field(self, record: Record, node: ir.Field, state: State, frame: Frame) -> Alternatives:
        """``obj.name`` on an object: its attribute, else the class's property or constant."""
        line = node.line
        held = record.get(node.name)
        if held is not None:
            return [(state, held)]
        if record.cls is None:
            return [(state, Unknown(f"the attribute .{node.name} of a dict at line {line} is not supported"))]
        member = self.class_member(record.cls, node.name, line)
        if member is None or member.kind == "method":
            if member is None and record.label:  # the claim's own `self`: an attribute it did not set is free
                return [(state, Var(f"{record.label}.{node.name}"))]
            what = "a method used as a value" if member is not None else "not set on the object"
            return [(state, Unknown(f"the attribute .{node.name} of the {record.class_name} object at line {line} "
                                    f"is {what}; this is not followed"))]
        if member.kind == "constant" and member.value is not None:
            return [(state, member.value)]
        if member.kind == "property" and member.function is not None:
            call = ir.Invoke(node, (), f"{record.class_name}.{node.name}", line, node.column)
            return self.inline(member.function, call, state, frame, record)
        return [(state, Unknown(member.reason or f"the attribute .{node.name} at line {line} is not supported"))]

    def dict_item(self, record: Record, index: Value | ir.Text, state: State, line: int) -> Value:
        key = key_of(index)
        if key is None:
            return Unknown(f"a dict subscript at line {line} whose key is not a constant is not supported")
        held = record.get(field_name(key))
        if held is None:
            raise Stuck(f"the key {key!r} is not in the dict at line {line}")
        return held

    def mapping(self, node: ir.Invoke, state: State, frame: Frame) -> Alternatives:
        """A dict literal (``ir_keys.DICT_LITERAL``: its keywords are the keys as held)."""
        paths: list[tuple[State, tuple[tuple[str, Value], ...]]] = [(state, ())]
        for argument in node.arguments:
            paths = [(s2, fields + ((argument.keyword or "", v),)) for s, fields in paths
                     for s2, v in self.evaluate(argument.value, s, frame)]
        return [(s, Record(None, fields, self.new_ident(), frame.ident)) for s, fields in paths]

    # -- operators

    def object_operator(self, node: ir.Binary | ir.Unary, left: Value, right: Value | None, state: State,
                        frame: Frame) -> Alternatives:
        """``a + b`` (``-a``) with an object: its class's ``__add__`` (``__radd__`` of the right operand,
        ``__neg__``) inlined; without one the value is unknown."""
        line = node.line
        names = OPERATORS.get(node.op) if isinstance(node, ir.Binary) else UNARY_OPERATORS.get(node.op)
        if names is None:
            return [(state, Unknown(f"`{node.op}` on an object at line {line} is not supported"))]
        forward, reflected = names
        candidates: list[tuple[Value, str, Value | None]] = [(left, forward, right)]
        if right is not None and reflected:
            candidates.append((right, reflected, left))
        for receiver, method, other in candidates:
            if not isinstance(receiver, Record) or receiver.cls is None:
                continue
            member = self.class_member(receiver.cls, method, line)
            if member is None or member.kind != "method" or member.function is None:
                continue
            operand = ir.Name(OPERAND, line)
            call = ir.Invoke(ir.Field(operand, method, line), () if other is None else (ir.Argument(operand),),
                             f"{receiver.class_name}.{method}", line, node.column)
            inside = state.bind(OPERAND, other) if other is not None else state
            return [(after.bind(OPERAND, NONE), value)
                    for after, value in self.inline(member.function, call, inside, frame, receiver)]
        return [(state, Unknown(f"`{node.op}` on a {_class_of(left, right)} at line {line}: its class defines no "
                                f"{forward} the tool can follow"))]

    # -- methods

    def object_method(self, record: Record, node: ir.Invoke, name: str, state: State, frame: Frame) -> Alternatives:
        line = node.line
        if record.cls is None:
            if name == "get" and len(node.arguments) in (1, 2) and all(a.keyword is None for a in node.arguments):
                return self._dict_get(record, node, state, frame)
            return [(state, Unknown(f"the dict method .{name}(...) at line {line} is not supported"))]
        member = self.class_member(record.cls, name, line)
        if member is not None and member.kind in ("method", "static") and member.function is not None:
            receiver = record if member.kind == "method" else None
            return self.inline(member.function, node, state, frame, receiver)
        if member is None and record.label and not record.fields:
            # the claim's `self` read as any object: a method its class does not define (inherited) is an
            # opaque function of its arguments, as for any value whose methods the tool cannot see
            return self.opaque(f"{record.label}.{name}", node, state, frame, prefix=())
        if member is None:
            raise Stuck(f"the method {record.class_name}.{name} called at line {line} is not defined in the "
                        "class; this is not followed")
        reason = member.reason if member is not None and member.reason else (
            f"the method {record.class_name}.{name} called at line {line} is not followed")
        raise Stuck(reason)

    def _dict_get(self, record: Record, node: ir.Invoke, state: State, frame: Frame) -> Alternatives:
        key_node = node.arguments[0].value
        key = key_of(key_node) if isinstance(key_node, ir.Text) else None
        if key is None:
            for _, value in self.evaluate(key_node, state, frame):
                key = key_of(value)
        if key is None:
            return [(state, Unknown(f"d.get(...) at line {node.line} with a key that is not a constant"))]
        held = record.get(field_name(key))
        if held is not None:
            return [(state, held)]
        if len(node.arguments) == 2:
            return self.evaluate(node.arguments[1].value, state, frame)
        return [(state, Unknown(f"d.get({key!r}) at line {node.line} gives None (the key is not in the dict)"))]

    # -- changing

    def set_field(self, name: str, record: Record, field: str, value: Value, state: State, frame: Frame,
                  line: int) -> State:
        """``name.field = value`` (or ``name[key] = value`` on a dict, ``field`` the held key)."""
        if record.owner != frame.ident and record.ident not in frame.objects:
            raise Stuck(f"changing the object {name} at line {line}, which came from elsewhere, is not supported")
        if record.cls is not None:
            member: Member | None = self.class_member(record.cls, field, line)
            if member is not None and member.kind in ("property", "unknown"):
                raise Stuck(f"assigning {name}.{field} at line {line}, a property or special member of "
                            f"{record.class_name}, is not supported")
        return replace_object(state, record.with_field(field, value), frame, line)


__all__ = ["ObjectCalls", "key_of", "field_name"]
