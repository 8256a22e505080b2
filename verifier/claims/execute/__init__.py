"""The symbolic executor of the kernel IR (``verifier.model.ir``), one for every front end.

Parameters are variables; locals hold symbolic values; ``if``/``else`` and conditional expressions split
the execution into paths, each carrying its branch conditions; loops over constant ranges are unrolled;
calls of project functions are inlined, math functions become the claim language's functions, anything
else is an opaque value.  Unsupported expressions give an ``Unknown`` value that only matters when it is
used (returned, tested, claimed); unsupported statements stop their path with a reason.  Either way the
reason names the construct and its line.

Modules, bottom to top: ``values`` and ``state`` (data), ``sharing`` (values shared between frames),
``scope`` (what front ends supply),
``arithmetic`` and ``functions`` (operations on values), ``expressions`` (values and tests of
expressions), ``calls`` (callees, arguments, inlining), ``objects`` (objects of classes, dicts),
``statements`` (the ``Executor``).
"""
from verifier.claims.execute.scope import (
    BuiltinCallee,
    Callee,
    FlatScope,
    Host,
    InlineCallee,
    MathCallee,
    MethodCallee,
    OpaqueCallee,
    Scope,
    UnknownCallee,
)
from verifier.claims.execute.state import Frame, Mark, Outcome, State, Status, Visit
from verifier.claims.execute.statements import Executor
from verifier.claims.execute.values import NONE, NoneValue, Seq, Stuck, Unknown, Value, first_unknown, is_expr

__all__ = [
    "Executor", "Scope", "FlatScope", "Host", "Callee", "InlineCallee", "MathCallee", "BuiltinCallee",
    "MethodCallee", "OpaqueCallee", "UnknownCallee", "State", "Status", "Outcome", "Visit", "Frame", "Mark",
    "Value", "Seq", "Unknown", "NoneValue", "NONE", "Stuck", "first_unknown", "is_expr",
]
