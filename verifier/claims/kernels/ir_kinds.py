"""Static kinds of lowered kernel expressions (``tree``): integer, real, or not known, from the code's types.

``to_ir`` lowers integer arithmetic to ``verifier.model.ir_ints`` by these kinds.  A declared kind wins
(``int``/``integer``/``i32`` locals and parameters, loop counters, ``double`` locals); an untyped local
(C++ ``auto``, Rust ``let``, Julia and Fortran implicit locals) has the kind of every value assigned to it
when they agree, else none.  Components of structs read as reals, as the kernel runner reads them (the
lowered tree does not record field types).
"""
from __future__ import annotations

from typing import Literal, Optional

from verifier.claims.kernels import tree as t

Kind = Optional[Literal["int", "real"]]
_PASSES = 3  # untyped locals assigned from one another: enough for chains in kernel code


def arithmetic_kind(left: Kind, right: Kind) -> Kind:
    """The kind of ``left op right``: real when either side is real, int when both are, else not known."""
    if "real" in (left, right):
        return "real"
    return "int" if left == right == "int" else None


class Kinds:
    def __init__(self, function: t.Function):
        self.language = function.language
        self.names: dict[str, Kind] = {}
        declared: set[str] = set()
        for param in function.params:
            self.names[param.name] = param.kind if param.kind in ("int", "real") else None
            declared.add(param.name)
        assigned: list[tuple[str, t.Node | None]] = []

        def collect(statements: tuple[t.Statement, ...]) -> None:
            for s in statements:
                if isinstance(s, t.Declare):
                    if s.kind in ("int", "real"):
                        self.names[s.name] = s.kind  # type: ignore[assignment]
                        declared.add(s.name)
                    else:
                        assigned.append((s.name, s.init))
                elif isinstance(s, t.Assign) and isinstance(s.target, t.Name):
                    assigned.append((s.target.name, s.value))
                elif isinstance(s, t.Destructure):
                    assigned.extend((name, None) for name in s.targets)
                elif isinstance(s, t.For):
                    self.names[s.var] = "int"
                    declared.add(s.var)
                    collect(s.body)
                elif isinstance(s, t.If):
                    collect(s.then)
                    collect(s.otherwise)

        collect(function.body)
        untyped = [(name, value) for name, value in assigned if name not in declared]
        for _ in range(_PASSES):
            found: dict[str, set[Kind]] = {}
            for name, value in untyped:
                found.setdefault(name, set()).add(None if value is None else self.of(value))
            for name, kinds in found.items():
                self.names[name] = kinds.pop() if len(kinds) == 1 else None

    def of(self, node: t.Node) -> Kind:
        if isinstance(node, t.Lit):
            return "int" if node.kind == "int" and node.value.denominator == 1 else "real"
        if isinstance(node, t.Name):
            return self.names.get(node.name)
        if isinstance(node, t.Negate):
            return self.of(node.operand)
        if isinstance(node, t.Binary):
            left, right = self.of(node.left), self.of(node.right)
            if node.op == "idiv":
                return "int" if left == right == "int" else None
            if node.op == "pow":
                return None if left == "int" else "real"  # an integer to a constant power may stay an integer
            if node.op == "/" and self.language == "julia":
                return "real"
            return arithmetic_kind(left, right)
        if isinstance(node, t.Choose):
            then, otherwise = self.of(node.then), self.of(node.otherwise)
            return then if then == otherwise else None
        if isinstance(node, t.MathCall):
            return "real"
        if isinstance(node, t.Cast):
            return node.kind if node.kind in ("int", "real") else None  # type: ignore[return-value]
        if isinstance(node, (t.Field, t.Index, t.Deref)):
            root: t.Node = node
            while isinstance(root, (t.Field, t.Index, t.Deref)):
                root = root.operand if isinstance(root, t.Deref) else root.base
            return "int" if isinstance(root, t.Name) and self.names.get(root.name) == "int" else "real"
        return None  # calls (their results keep the kind of the returned value), aggregates, unsupported
