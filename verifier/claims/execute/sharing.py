"""How values are shared between frames: objects changed in place, objects handed back by a call,
lambdas that read their maker's locals.  Each rule either keeps every holder of a value in step or stops
the path with a reason."""
from __future__ import annotations

from collections.abc import Sequence

from verifier.claims.execute.state import Frame, State
from verifier.claims.execute.values import FunctionValue, Record, Seq, Stuck, Unknown, Value, holds_object
from verifier.model import ir


def fields_written(node: ir.Invoke, state: State, line: int) -> None:
    """A call passing a local whose attributes this path assigned as plain names (``p.x = 1`` on a value that
    is no object of the project) would let the callee read the old attributes: not followed."""
    names = {a.value.name for a in node.arguments if isinstance(a.value, ir.Name)}
    if isinstance(node.callee, ir.Field) and isinstance(node.callee.base, ir.Name):
        names.add(node.callee.base.name)
    if not names:
        return
    for bound, _ in state.env:
        head, dot, _rest = bound.partition(".")
        if dot and head in names:
            raise Stuck(f"the call at line {line} passes {head}, whose attribute {bound} was assigned before; "
                        "this is not followed")


def writes_attributes(body: Sequence[ir.Statement]) -> bool:
    """Whether a body assigns an attribute anywhere (``obj.x = v``)."""
    def target_writes(target: ir.Target) -> bool:
        if isinstance(target, ir.Unpack):
            return any(target_writes(t) for t in target.items)
        return isinstance(target, ir.ToField)

    for stmt in body:
        if isinstance(stmt, ir.Assign) and any(target_writes(t) for t in stmt.targets):
            return True
        if isinstance(stmt, ir.If) and (writes_attributes(stmt.then) or writes_attributes(stmt.orelse)):
            return True
        if isinstance(stmt, (ir.ForEach, ir.CountedLoop)) and writes_attributes(stmt.body):
            return True
        if isinstance(stmt, ir.ForEach) and (target_writes(stmt.target) or writes_attributes(stmt.orelse or ())):
            return True
    return False


def current(value: FunctionValue, state: State, frame: Frame, line: int) -> None:
    """A lambda used in the frame that made it must see that frame's locals as they are now (Python reads
    them when the lambda runs, not when it is made)."""
    if value.frame != frame.ident:
        return
    for name, held in value.captured:
        if state.get(name) != held:
            raise Stuck(f"the lambda used at line {line} reads {name}, which changed after the lambda was made; "
                        "this is not followed")


def adopted(value: Value, callee: int, caller: int) -> Value:
    """A value a call returns: the objects and dicts the callee made now belong to the caller, which may
    change them (nothing else holds them once the callee has returned)."""
    if isinstance(value, Record):
        fields = tuple((k, adopted(v, callee, caller)) for k, v in value.fields)
        return Record(value.cls, fields, value.ident, caller if value.owner == callee else value.owner, value.label)
    if isinstance(value, FunctionValue) and value.frame == callee:
        return Unknown(f"a lambda returned by the function that made it ({value.function.name}) is not followed")
    if isinstance(value, Seq) and any(isinstance(i, (Record, Seq, FunctionValue)) for i in value.items):
        return Seq(tuple(adopted(i, callee, caller) for i in value.items), value.kind, value.ident, value.owner)
    return value


def replace_object(state: State, new: Record, frame: Frame, line: int) -> State:
    """``state`` with every local holding the object ``new.ident`` holding ``new`` (objects are shared);
    an object held inside another value (a list item, an attribute) is not followed when it changes."""
    env: list[tuple[str, Value]] = []
    for name, value in state.env:
        if isinstance(value, Record) and value.ident == new.ident:
            env.append((name, new))
        else:
            if holds_object(value, new.ident):
                raise Stuck(f"changing an object that another value holds ({name}) at line {line} is not "
                            "supported")
            env.append((name, value))
    return state.with_env(tuple(env))
