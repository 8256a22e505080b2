"""Unknown names in ``returns`` and trailing ``== EXPR`` claims: an error naming the name and the fix.

A name in such a claim stands for a parameter, a local variable at the statement, a module-level name,
or a variable the claim's own ``given`` conditions introduce.  Anything else is almost always a typo,
which would otherwise be read as a fresh variable and end as ``refuted`` with a witness.  The module is
only parsed (``ast.parse``), never imported or run.
"""
from __future__ import annotations

import ast
import difflib
import re
from dataclasses import replace

from verifier.claims.comments import CommentClaim
from verifier.claims.expectation import comment_place
from verifier.claims.language import ClaimSyntaxError, ParsedClaim, parse_claim_text
from verifier.model.claim import Claim, ExtractionContext, Problem
from verifier.model.expr import Expr, Var, preorder

_HEAD = re.compile(r"[^.\[]+")
_FUNCTIONS = (ast.FunctionDef, ast.AsyncFunctionDef)


def _expr_names(expr: Expr, into: list[str]) -> None:
    """The head names of the variables, left to right (a loop: claims may be 5,000-term sums)."""
    for node in preorder(expr):
        if isinstance(node, Var):
            head = _HEAD.match(node.name)
            into.append(head.group(0) if head else node.name)


def _parameters(node: ast.FunctionDef | ast.AsyncFunctionDef) -> list[str]:
    args = node.args
    names = [a.arg for a in args.posonlyargs + args.args + args.kwonlyargs]
    names += [a.arg for a in (args.vararg, args.kwarg) if a is not None]
    return names


def _bound_names(nodes: list[ast.stmt], *, into_functions: bool) -> set[str]:
    """Names bound by the statements (assignments, loop and with targets, imports, defs, globals)."""
    names: set[str] = set()
    stack: list[ast.AST] = list(nodes)
    while stack:
        node = stack.pop()
        if isinstance(node, ast.Name) and isinstance(node.ctx, (ast.Store, ast.Del)):
            names.add(node.id)
        elif isinstance(node, (ast.Import, ast.ImportFrom)):
            names.update((alias.asname or alias.name).split(".")[0] for alias in node.names)
        elif isinstance(node, (ast.Global, ast.Nonlocal)):
            names.update(node.names)
        elif isinstance(node, ast.arg):
            names.add(node.arg)
        elif isinstance(node, ast.NamedExpr) and isinstance(node.target, ast.Name):
            names.add(node.target.id)
        if isinstance(node, (*_FUNCTIONS, ast.ClassDef)):
            names.add(node.name)
            if not into_functions:
                continue
        stack.extend(ast.iter_child_nodes(node))
    return names


def _all_functions(tree: ast.Module) -> list[ast.FunctionDef | ast.AsyncFunctionDef]:
    return [node for node in ast.walk(tree) if isinstance(node, _FUNCTIONS)]


def _start(node: ast.FunctionDef | ast.AsyncFunctionDef) -> int:
    return min([node.lineno] + [d.lineno for d in node.decorator_list])


def _def_below(functions: list, comment: CommentClaim):
    if comment.subject_line is not None:  # a docstring claim: its function is named by the comment itself
        return next((f for f in functions if _start(f) == comment.subject_line), None)
    below = [f for f in functions if _start(f) > comment.end_line]
    return min(below, key=_start) if below else None


def _enclosing(functions: list, line: int) -> list:
    """The functions around ``line``, outermost first."""
    around = [f for f in functions if f.lineno <= line <= (f.end_lineno or f.lineno)]
    return sorted(around, key=lambda f: f.lineno)


def _unknown(parsed: ParsedClaim, known: set[str]) -> list[str]:
    given: list[str] = []
    for condition in parsed.conditions:  # a variable a condition mentions is the claim's own
        _expr_names(condition.left, given)
        _expr_names(condition.right, given)
    used: list[str] = []
    for side in parsed.sides:
        _expr_names(side, used)
    return [name for name in dict.fromkeys(used) if name not in known and name not in given]


def _stored_by_init(tree: ast.Module, function: ast.FunctionDef | ast.AsyncFunctionDef) -> dict[str, str]:
    """For a method: the parameters of its class's ``__init__`` stored unchanged, ``self.x = x`` (by name)."""
    for cls in (n for n in ast.walk(tree) if isinstance(n, ast.ClassDef)):
        if function not in cls.body:
            continue
        init = next((n for n in cls.body if isinstance(n, _FUNCTIONS) and n.name == "__init__"), None)
        receiver = _parameters(init)[0] if init is not None and _parameters(init) else None
        stored: dict[str, str] = {}
        for stmt in init.body if init is not None else []:
            if isinstance(stmt, ast.Assign) and isinstance(stmt.value, ast.Name):
                for target in stmt.targets:
                    if (isinstance(target, ast.Attribute) and isinstance(target.value, ast.Name)
                            and target.value.id == receiver):
                        stored.setdefault(stmt.value.id, f"{receiver}.{target.attr}")
        return stored
    return {}


def _message(unknown: list[str], what: str, candidates: list[str], stored: dict[str, str] | None = None) -> str:
    first = unknown[0]
    names = ", ".join(f"`{n}`" for n in unknown)
    noun = "name" if len(unknown) == 1 else "names"
    close = difflib.get_close_matches(first, candidates, n=1)
    hint = f"did you mean `{close[0]}`? " if close else ""
    if stored and first in stored:  # a claim on a method names the object's attributes
        hint = f"`__init__` stores `{first}` as `{stored[first]}`: write `{stored[first]}`; "
    listed = ", ".join(sorted(candidates)[:12]) or "none"
    return (f"unknown {noun} {names} in the claim: not {what} ({listed}), nor a module-level name, nor "
            f"introduced by a `given` condition; {hint}fix the spelling, or define it with "
            f"`given {first} == ...`")


def flag_unknown_names(path: str, text: str, claims: list[Claim], comments: list[CommentClaim],
                       context: ExtractionContext | None = None) -> list[Claim]:
    """``claims`` with each ``returns``/``== EXPR`` claim that uses an unknown name turned into an error."""
    targets = [c for c in claims if c.problem is None and c.kind in ("function", "statement")
               and not c.text.lstrip().startswith("same")]
    if not targets:
        return claims
    try:
        tree = ast.parse(text)
    except (SyntaxError, ValueError, RecursionError, MemoryError):
        return claims  # the Python reader reports an unparsable file itself
    functions = _all_functions(tree)
    module_names = _bound_names(tree.body, into_functions=False)
    by_place = {(c.line, c.column): c for c in comments}
    flagged: dict[str, Claim] = {}
    for claim in targets:
        place = comment_place(claim, path)
        comment = by_place.get(place) if place else None
        if comment is None:
            continue
        try:
            parsed = parse_claim_text(comment.text, context)
        except ClaimSyntaxError:
            continue
        if parsed.form == "returns":
            function = _def_below(functions, comment)
            if function is None:
                continue
            local = _parameters(function)
            what = f"a parameter of `{function.name}`"
            stored = _stored_by_init(tree, function)
        elif parsed.form == "statement":
            stored = {}
            around = _enclosing(functions, comment.line)
            if not around:
                continue
            local = sorted({name for f in around for name in _parameters(f) + sorted(
                _bound_names(f.body, into_functions=True))})
            what = f"a parameter or local variable of `{around[-1].name}`"
        else:
            continue
        unknown = _unknown(parsed, set(local) | module_names)
        if unknown:
            flagged[claim.id] = replace(claim, obligations=(),
                                        problem=Problem("error", _message(unknown, what, local, stored)))
    return [flagged.get(c.id, c) for c in claims]


__all__ = ["flag_unknown_names"]
