"""The ``self`` of a claim on a method: an object of its class, as ``__init__`` builds it when that is known.

A claim on a method speaks of ``self.x`` (the attribute) and of the method's other parameters.  When the
class is followed (see ``classes.py``) and no method but ``__init__`` assigns attributes of ``self``, the
object is the one ``__init__`` builds from arbitrary arguments: an argument stored unchanged
(``self.x = x``) is the variable ``self.x``; attributes computed from the arguments (``self.r2 = x*x +
y*y``) are those values, so a method reading ``self.r2`` is checked against what it means.  Otherwise
(methods that change the object, a class that is not followed, an ``__init__`` with branches) every
attribute of ``self`` is its own variable ``self.x``, as for any object passed in.  Either way methods and
properties called on ``self`` are inlined.  The claim's note says which reading was used.
"""
from __future__ import annotations

from verifier.claims.execute import Executor, Stuck
from verifier.claims.execute.scope import ConstructCallee
from verifier.claims.execute.values import Record, first_unknown
from verifier.claims.frontends.python.classes import argument_names, init_function
from verifier.claims.frontends.python.modules import FunctionRef
from verifier.claims.frontends.python.scope import PythonScope
from verifier.model import ir
from verifier.model.expr import Var


def method_receiver(executor: Executor, scope: PythonScope, ref: FunctionRef) -> tuple[dict[str, Record], str]:
    """``{first parameter: the object}`` for a method claim (empty for a function or static method), and
    the note saying how the object was read."""
    if ref.class_name is None:
        return {}, ""
    model = scope.class_model(ref.module, ref.class_name)
    names = ref.positional_names()
    if model is None or not names or ref.node.name.value not in model.methods or (
            ref.node.name.value in model.static):
        return {}, ""
    receiver = names[0]
    cls = (ref.module.path, ref.class_name)
    general = Record(cls, (), executor.new_ident(), 0, receiver)
    why = ""
    if model.reason:
        why = model.reason
    elif model.assigned:
        changed = ", ".join(sorted(f"{receiver}.{a}" for a in model.assigned if a != "*")) or "attributes"
        why = f"methods of {ref.class_name} change {changed}"
    if why:
        return {receiver: general}, f"{receiver} is any {ref.class_name} object: each attribute is its own variable ({why})"
    init = init_function(model)
    if init is None:
        return {receiver: general}, f"{receiver} is any {ref.class_name} object ({ref.class_name} has no __init__)"
    symbols = argument_names(init, receiver)
    call = ir.Invoke(ir.Name(ref.class_name), tuple(ir.Argument(ir.Name(s)) for s in symbols), ref.class_name,
                     init.line, init.column)
    try:
        built = executor.build_object(ConstructCallee(cls, init), call, dict(zip(symbols, map(Var, symbols))))
    except Stuck as stuck:
        return {receiver: general}, (f"{receiver} is any {ref.class_name} object: each attribute is its own "
                                     f"variable ({ref.class_name}.__init__ is not followed: {stuck.reason})")
    if len(built) != 1 or built[0][0].conditions:
        return {receiver: general}, (f"{receiver} is any {ref.class_name} object: each attribute is its own "
                                     f"variable ({ref.class_name}.__init__ has branches or calls it cannot see into)")
    record = built[0][1]
    fields = tuple((k, v) for k, v in record.fields if first_unknown(v) is None)
    free = [f"{receiver}.{k}" for k, v in record.fields if first_unknown(v) is not None]
    made = Record(cls, fields, record.ident, 0, receiver)
    listed = ", ".join(symbols) if symbols else "no arguments"
    note = (f"{receiver} is a {ref.class_name} object as {ref.class_name}.__init__ (line {init.line}) builds it "
            f"from {listed}")
    if free:
        note += f"; {', '.join(free)} cannot be followed there and are their own variables"
    return {receiver: made}, note
