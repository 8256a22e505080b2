"""The claim language: claim text -> expression trees and conditions.

Claim text comes from pull requests, so it is parsed with Python's ``ast`` and only a whitelist of node
types is accepted; nothing is ever evaluated (no eval, exec or sympify).  ``^`` means power inside claim
text: it is rewritten to ``**`` before parsing (an offset map keeps error columns right).
Text handling is in claim_syntax.py, expressions (and their printing) in expr_parser.py; this module
reads conditions, named condition sets and whole claims.

Offsets in ``ClaimSyntaxError`` are 0-based character offsets into the text given to the parser.
"""
from __future__ import annotations

import ast
import re
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Literal, Union

from verifier.claims.claim_syntax import (
    ClaimSource,
    ClaimSyntaxError,
    check_brackets,
    check_operator_characters,
    one_line,
    split_top_level,
    stripped,
    top_level_positions,
)
from verifier.claims.expr_parser import (
    COMPARISON_SPELLING,
    ExprConverter,
    Nested,
    convert_nested_text,
    convert_text,
    leaves,
    expression_text,
    parse_ast,
    parse_expression,
)
from verifier.model.claim import (
    Condition,
    ExtractionContext,
    NamedConditionSet,
    Relation,
)
from verifier.model.expr import Expr, substitute
from verifier.model.functions import CALL_SPELLINGS, MODULE_PREFIXES

# Views of the function table under their former names (callers outside claims/ may still read them).
FUNCTION_MODULES = MODULE_PREFIXES
FUNCTION_ALIASES = CALL_SPELLINGS

ClaimForm = Literal["equation", "same_as", "returns", "statement"]



@dataclass(frozen=True)
class ParsedClaim:
    """A parsed claim text.

    ``equation``: ``sides`` holds two or more expressions (a chain ``a == b == c``).
    ``returns`` / ``statement``: ``sides`` holds the target's scalar components (``returns a, b`` gives two,
    ``returns (a, b), (c, d)`` four) and ``nested`` the components as written (two rows of two).
    ``same_as``: ``other`` is the dotted name of the other function and ``sides`` is empty.
    """

    form: ClaimForm
    sides: tuple[Expr, ...]
    other: str | None
    conditions: tuple[Condition, ...]
    nested: tuple[Nested, ...] = ()


NamedSets = Union[Mapping[str, NamedConditionSet], ExtractionContext, None]


# ---------------------------------------------------------------- conditions


_RELATIONS: dict[type, Relation] = {
    ast.Eq: "==",
    ast.NotEq: "!=",
    ast.Lt: "<",
    ast.LtE: "<=",
    ast.Gt: ">",
    ast.GtE: ">=",
}
_GIVEN = re.compile(r"(?<![\w.])given(?![\w])")
_NAME = re.compile(r"[A-Za-z_]\w*")
_DOTTED = re.compile(r"[A-Za-z_]\w*(?:\.[A-Za-z_]\w*)*")


def _named_sets(named: NamedSets) -> dict[str, NamedConditionSet]:
    if named is None:
        return {}
    if isinstance(named, ExtractionContext):
        return {item.name: item for item in named.named_conditions}
    return dict(named)


def parse_relation(text: str, *, origin: str = "given", label: str | None = None) -> list[Condition]:
    """One comparison ``P op Q`` (a chain ``0 < x < 1`` gives one condition per link)."""
    source = ClaimSource(one_line(text))
    tree = parse_ast(source, "condition")
    converter = ExprConverter(source)
    if not isinstance(tree, ast.Compare):
        raise converter.error(
            "a condition must be a comparison (`==`, `!=`, `<`, `<=`, `>`, `>=`) or the name of a condition set", tree
        )
    operands = [tree.left, *tree.comparators]
    exprs = [converter.convert(item) for item in operands]
    conditions: list[Condition] = []
    shown = label if label is not None else text.strip()
    for index, op in enumerate(tree.ops):
        relation = _RELATIONS.get(type(op))
        if relation is None:
            raise converter.error(
                f"unsupported comparison `{COMPARISON_SPELLING.get(type(op), '?')}` in a condition", operands[index + 1]
            )
        if len(tree.ops) == 1:
            link_text = shown
        else:
            link_text = (
                f"{source.node_segment(operands[index]).strip()} {relation} {source.node_segment(operands[index + 1]).strip()}"
            )
            if label is not None:
                link_text = f"{label} ({link_text})"
        conditions.append(Condition(relation, exprs[index], exprs[index + 1], link_text, origin))
    return conditions


def expand_named_set(item: NamedConditionSet, args: tuple[Expr, ...] | None) -> list[Condition]:
    """The conditions of a named set, its variables replaced by ``args`` (positionally) when given."""
    origin = f"named:{item.name}"
    conditions: list[Condition] = []
    for given in item.given:
        try:
            parsed = parse_relation(given, origin=origin)
        except ClaimSyntaxError as exc:
            raise ClaimSyntaxError(f"in the condition set `{item.name}`, given `{given}`: {exc.message}", 0) from None
        for condition in parsed:
            if args is None:
                conditions.append(Condition(condition.relation, condition.left, condition.right,
                                            f"{item.name}: {condition.text}", origin))
                continue
            mapping = dict(zip(item.variables, args))
            left = substitute(condition.left, mapping)
            right = substitute(condition.right, mapping)
            text = f"{item.name}: {expression_text(left)} {condition.relation} {expression_text(right)}"
            conditions.append(Condition(condition.relation, left, right, text, origin))
    return conditions


def parse_conditions(text: str, named: NamedSets = None) -> tuple[Condition, ...]:
    """The comma-separated conditions after ``given``; offsets in errors are relative to ``text``."""
    sets = _named_sets(named)
    conditions: list[Condition] = []
    for raw_offset, raw in split_top_level(one_line(text)):
        offset, piece = stripped(raw_offset, raw)
        if not piece:
            raise ClaimSyntaxError("empty condition (a stray comma, or nothing after `given`)", offset)
        try:
            conditions.extend(_parse_condition(piece, sets))
        except ClaimSyntaxError as exc:
            raise exc.shifted(offset) from None
    return tuple(conditions)


def _parse_condition(piece: str, sets: dict[str, NamedConditionSet]) -> list[Condition]:
    name_match = _NAME.match(piece)
    if name_match:
        name = name_match.group(0)
        rest = piece[name_match.end():].strip()
        if not rest or (rest.startswith("(") and _closes_at_end(piece[name_match.end():].lstrip())):
            return _named_condition(piece, name, rest, sets)
    return parse_relation(piece)


def _closes_at_end(text: str) -> bool:
    depth = 0
    for index, char in enumerate(text):
        if char in "([{":
            depth += 1
        elif char in ")]}":
            depth -= 1
            if depth == 0:
                return index == len(text.rstrip()) - 1
    return False


def _named_condition(piece: str, name: str, rest: str, sets: dict[str, NamedConditionSet]) -> list[Condition]:
    item = sets.get(name)
    if item is None:
        known = ", ".join(sorted(sets)) or "none are configured"
        raise ClaimSyntaxError(
            f"unknown named condition `{name}` (known: {known}); a condition is a comparison like `x != 0` "
            "or the name of a set in [tool.idealcheck.conditions]",
            0,
        )
    if not rest:
        return expand_named_set(item, None)
    args_offset = piece.index("(")
    inner = piece[args_offset + 1 : piece.rindex(")")]
    args: list[Expr] = []
    if inner.strip():
        for raw_offset, raw in split_top_level(inner):
            offset, arg = stripped(raw_offset, raw)
            if not arg:
                raise ClaimSyntaxError(f"empty argument in `{name}(...)`", args_offset + 1 + offset)
            try:
                args.append(parse_expression(arg))
            except ClaimSyntaxError as exc:
                raise exc.shifted(args_offset + 1 + offset) from None
    if len(args) != len(item.variables):
        raise ClaimSyntaxError(
            f"the condition set `{name}` takes {len(item.variables)} arguments "
            f"({', '.join(item.variables)}), got {len(args)}",
            args_offset,
        )
    return expand_named_set(item, tuple(args))


# ---------------------------------------------------------------- whole claims


def split_given(text: str) -> tuple[str, str | None, int]:
    """``(head, conditions text or None, offset of the conditions text)`` at the first top-level ``given``."""
    matches = top_level_positions(text, _GIVEN)
    if not matches:
        return text, None, len(text)
    match = matches[0]
    return text[: match.start()], text[match.end():], match.end()


def parse_claim_text(text: str, named: NamedSets = None) -> ParsedClaim:
    """Parse what follows ``idealcheck:`` (offsets in errors are relative to ``text``)."""
    text = one_line(text)
    check_operator_characters(text)
    head, given_text, given_offset = split_given(text)
    conditions: tuple[Condition, ...] = ()
    if given_text is not None:
        if not given_text.strip():
            raise ClaimSyntaxError("nothing after `given`: expected conditions", given_offset)
        try:
            conditions = parse_conditions(given_text, named)
        except ClaimSyntaxError as exc:
            raise exc.shifted(given_offset) from None
    lead = len(head) - len(head.lstrip())
    body = head.strip()
    if not body:
        raise ClaimSyntaxError("empty claim: expected `LEFT == RIGHT`", lead)

    same_as = re.match(r"same\s+as(?![\w])", body)
    if same_as:
        other = body[same_as.end():].strip()
        where = lead + same_as.end() + (len(body[same_as.end():]) - len(body[same_as.end():].lstrip()))
        if not other:
            raise ClaimSyntaxError("`same as` needs the name of a function", where)
        if not _DOTTED.fullmatch(other):
            raise ClaimSyntaxError(f"`same as` needs a (dotted) function name, found `{other}`", where)
        return ParsedClaim("same_as", (), other, conditions)

    returns = re.match(r"returns(?![\w.\[])", body)
    if returns and not body[returns.end():].lstrip().startswith(("==", "=")):
        nested = _target(body, returns.end(), lead, "`returns`")
        return ParsedClaim("returns", leaves(nested), None, conditions, nested)

    if body.startswith("==") and not body.startswith("==="):
        nested = _target(body, 2, lead, "`==`")
        return ParsedClaim("statement", leaves(nested), None, conditions, nested)

    return ParsedClaim("equation", _equation_sides(body, lead), None, conditions)


def _target(body: str, start: int, lead: int, after: str) -> tuple[Nested, ...]:
    rest = body[start:]
    if not rest.strip():
        raise ClaimSyntaxError(f"empty expression after {after}", lead + start)
    try:
        return convert_nested_text(rest)
    except ClaimSyntaxError as exc:
        raise exc.shifted(lead + start) from None


def _equation_sides(body: str, lead: int) -> tuple[Expr, ...]:
    check_brackets(body)
    links = top_level_positions(body, re.compile(r"(?<![=!<>])==(?!=)"))
    if not links:
        single = top_level_positions(body, re.compile(r"(?<![=!<>])=(?!=)"))
        if single:
            raise ClaimSyntaxError("missing `==`: found a single `=`; write `LEFT == RIGHT`", lead + single[0].start())
        for spelling in ("!=", "<=", ">=", "<", ">"):
            found = top_level_positions(body, re.compile(re.escape(spelling)))
            if found:
                raise ClaimSyntaxError(
                    f"missing `==`: a claim states an equation `LEFT == RIGHT`, found `{spelling}` "
                    "(sign facts go after `given`)",
                    lead + found[0].start(),
                )
        raise ClaimSyntaxError("missing `==`: an expression claim reads `LEFT == RIGHT [given CONDITIONS]`", lead)
    sides: list[Expr] = []
    start = 0
    bounds = [(m.start(), m.end()) for m in links] + [(len(body), len(body))]
    for index, (stop, after) in enumerate(bounds):
        piece = body[start:stop]
        if not piece.strip():
            where = "left of the first" if index == 0 else "right of"
            raise ClaimSyntaxError(f"empty expression on the {where} `==`", lead + (stop if index == 0 else start))
        try:
            sides.append(convert_text(piece)[0])
        except ClaimSyntaxError as exc:
            raise exc.shifted(lead + start) from None
        start = after
    return tuple(sides)


def equation_side_texts(text: str) -> tuple[list[str], str | None]:
    """The side texts of an equation claim as written and its conditions text (for chain-link texts)."""
    head, given_text, _ = split_given(one_line(text))
    links = top_level_positions(head, re.compile(r"(?<![=!<>])==(?!=)"))
    sides: list[str] = []
    start = 0
    for match in links:
        sides.append(head[start : match.start()].strip())
        start = match.end()
    sides.append(head[start:].strip())
    return sides, None if given_text is None else given_text.strip()
