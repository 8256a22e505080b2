"""Functions passed as parameters: each stays one uninterpreted function (the same arguments give the same
value), which is what a proof for every such function needs.  To refute, one obligation more per
obligation that calls them: the same equality with each such function replaced by a particular
polynomial.  A claim about every function is false when it fails for that one, so a witness of the
particular obligation refutes the claim; proving it proves nothing more (the general obligation stays).

The polynomials are strictly increasing in each argument (t**3 + c*t), so calls at different points
give different values, as a bug that passes the wrong point needs; where calls nest (a Runge-Kutta stage
calls f at a point computed by f) lower degrees keep the expansion small.
"""
from __future__ import annotations

from dataclasses import replace
from fractions import Fraction

from verifier.claims.execute.calls import PARAMETER_FUNCTION
from verifier.model.claim import Condition, Obligation
from verifier.model.expr import BinOp, Expr, Num, Opaque, Pow, children, map_expr, preorder


def parameter_functions(expr: Expr) -> list[str]:
    """The names of the parameter functions ``expr`` calls, in order of appearance."""
    names = [node.name for node in preorder(expr) if isinstance(node, Opaque)
             and node.name.startswith(PARAMETER_FUNCTION) and "[" not in node.name and node.args]
    return list(dict.fromkeys(names))


def particular(index: int, args: tuple[Expr, ...], degree: int = 3) -> Expr:
    """The ``index``-th particular function at ``args``: the sum over the arguments of
    (i + 1)*(t_i**degree + (index + 2)*t_i) (just (i + 1)*(index + 2)*t_i for degree 1), plus index + 1."""
    total: Expr = Num(Fraction(index + 1))
    for position, arg in enumerate(args):
        linear = BinOp("*", Num(Fraction(index + 2)), arg)
        term = linear if degree == 1 else BinOp("+", Pow(arg, Fraction(degree)), linear)
        total = BinOp("+", total, BinOp("*", Num(Fraction(position + 1)), term))
    return total


def particular_text(index: int, name: str, arity: int, degree: int = 3) -> str:
    """How the report names the particular function: ``f(t) = t**3 + 2*t + 1``."""
    shown = name[len(PARAMETER_FUNCTION):]
    variables = ["t"] if arity == 1 else [f"t{i + 1}" for i in range(arity)]

    def term(v: str) -> str:
        return f"{index + 2}*{v}" if degree == 1 else f"{v}**{degree} + {index + 2}*{v}"

    terms = [f"{'' if i == 0 else f'{i + 1}*'}({term(v)})" if arity > 1 else term(v) for i, v in enumerate(variables)]
    return f"{shown}({', '.join(variables)}) = {' + '.join(terms)} + {index + 1}"


def nesting(expr: Expr, names: list[str]) -> int:
    """How deeply calls of the parameter functions ``names`` nest in ``expr`` (0: no call)."""
    def depth(node: Expr) -> int:
        inner = max((depth(child) for child in children(node)), default=0)
        return inner + 1 if isinstance(node, Opaque) and node.name in names else inner
    return depth(expr)


def _degree(depth: int) -> int:
    # a polynomial of degree d nested k deep has degree d**k: keep it small (cubic alone, quadratic
    # twice nested, affine deeper, as in Runge-Kutta stages)
    return 3 if depth <= 1 else 2 if depth == 2 else 1


def with_particular_functions(obligations: list[Obligation]) -> list[Obligation]:
    """``obligations`` followed by the particular copy of each one that calls a parameter function."""
    out = list(obligations)
    for ob in obligations:
        names: list[str] = []
        for expr in [ob.left, ob.right] + [side for c in ob.conditions for side in (c.left, c.right)]:
            names.extend(n for n in parameter_functions(expr) if n not in names)
        if not names:
            continue
        arities: dict[str, int] = {}
        degree = _degree(max(nesting(e, names) for e in [ob.left, ob.right]
                             + [side for c in ob.conditions for side in (c.left, c.right)]))

        def change(node: Expr) -> Expr:
            if isinstance(node, Opaque) and node.name in names:
                arities.setdefault(node.name, len(node.args))
                return particular(names.index(node.name), node.args, degree)
            return node

        left, right = map_expr(ob.left, change), map_expr(ob.right, change)
        conditions = tuple(Condition(c.relation, map_expr(c.left, change), map_expr(c.right, change), c.text,
                                     c.origin) for c in ob.conditions)
        if any(arities.get(n, 0) != _arity(ob, n) for n in names):
            continue  # one function called with different numbers of arguments: no single particular one
        shown = ", ".join(particular_text(i, n, arities[n], degree) for i, n in enumerate(names))
        label = ", ".join(part for part in (ob.label, f"with the particular function {shown}") if part)
        notes = tuple(n for n in ob.notes if not any(f"call {name}(" in n for name in names))
        out.append(replace(ob, left=left, right=right, conditions=conditions, label=label, notes=notes))
    return out


def _arity(ob: Obligation, name: str) -> int:
    counts = {len(node.args) for expr in [ob.left, ob.right] + [s for c in ob.conditions for s in (c.left, c.right)]
              for node in preorder(expr) if isinstance(node, Opaque) and node.name == name}
    return counts.pop() if len(counts) == 1 else -1
