"""Which parameters of a claimed function are sequences, and of what shape: from the claim's spellings
(``q[3]``), ``len(q) == 4`` in its conditions, and the constant indices of the code (``verifier.claims.
execute.sequences``).  Only parameters the code uses whole (``np.dot(q, q)``) become sequences."""
from __future__ import annotations

from collections.abc import Mapping, Sequence

from verifier.claims.execute import Executor, Value

from verifier.claims.execute.sequences import (
    Shape,
    combined_shapes,
    indexed_shapes,
    parameter_sequence,
    spelled_shapes,
    stated_lengths,
    usable,
    whole_uses,
)
from verifier.claims.language import ParsedClaim
from verifier.model import ir
from verifier.model.expr import Num, Var, variables


def _claim_names(parsed: ParsedClaim) -> set[str]:
    names: set[str] = set()
    for side in parsed.sides:
        names |= variables(side)
    for condition in parsed.conditions:
        names |= variables(condition.left) | variables(condition.right)
    return names


def _stated(parsed: ParsedClaim) -> dict[str, int]:
    pairs: list[tuple[str, int | None]] = []
    for c in parsed.conditions:
        if c.relation == "==" and isinstance(c.left, Var) and isinstance(c.right, Num):
            value = c.right.value
            pairs.append((c.left.name, int(value) if value.denominator == 1 else None))
    return stated_lengths(pairs)


def parameter_shapes(parsed: ParsedClaim | None, function: ir.Function,
                     others: Sequence[ir.Function] = ()) -> tuple[dict[str, Shape], list[str]]:
    """Shapes of ``function``'s parameters used whole, and the notes saying where each came from.

    ``others`` are functions called with the same arguments by position (the reference of `same as`):
    their indexing counts for the parameter at the same position."""
    names = [p.name for p in function.parameters]
    whole = set(whole_uses(function))
    sources = [indexed_shapes(function)]
    for other in others:
        theirs = [p.name for p in other.parameters]
        used = whole_uses(other)
        indexed = indexed_shapes(other)
        whole |= {mine for mine, their in zip(names, theirs) if their in used}
        sources.append({mine: indexed[their] for mine, their in zip(names, theirs) if their in indexed})
    stated: dict[str, int] = {}
    if parsed is not None:
        sources.append(spelled_shapes(_claim_names(parsed)))
        stated = _stated(parsed)
    shapes = combined_shapes(*sources)
    result: dict[str, Shape] = {}
    notes: list[str] = []
    for name in names:
        if name not in whole:
            continue
        if name in stated:
            shape: Shape = (stated[name],) + shapes.get(name, ())[1:]
            how = "from the condition"
        elif name in shapes:
            shape = shapes[name]
            how = "the shortest the claim and the code index"
        else:
            continue
        if not usable(shape):
            continue
        result[name] = shape
        size = f"length {shape[0]}" if len(shape) == 1 else "shape " + "x".join(str(n) for n in shape)
        notes.append(f"{name} is taken as an array of {size} ({how})")
    return result, notes


def sequence_arguments(names: Sequence[str], shapes: Mapping[str, Shape], executor: Executor) -> list[Value]:
    """The top-level parameters ``names`` as arguments of a reference function: variables, or arrays of
    variables for those with a shape (the reference may read them, not change them in place)."""
    fresh = iter(executor.new_ident, -1)
    return [parameter_sequence(n, shapes[n], fresh, 0) if n in shapes else Var(n) for n in names]
