"""Expression claims (``LEFT == RIGHT [given ...]``) from a found comment, one claim per link of a chain."""
from __future__ import annotations

import os

from verifier.claims.comments import CommentClaim
from verifier.claims.language import (
    ClaimSyntaxError,
    equation_side_texts,
    parse_claim_text,
)
from verifier.model.claim import Claim, ExtractionContext, Location, Obligation, Problem

PYTHON_EXTENSIONS = (".py", ".pyi")
_FORM_NAMES = {"same_as": "`same as`", "returns": "`returns`", "statement": "statement (`== EXPR`)"}


def error_claim(comment: CommentClaim, path: str, error: ClaimSyntaxError, kind: str = "expression") -> Claim:
    """A claim whose text cannot be parsed: verdict ``error`` with the place of the problem."""
    line, column = comment.position(error.offset)
    where = f"line {line}, column {column}" if line != comment.line else f"column {column}"
    return Claim(
        id=f"{path}:{comment.line}:{comment.column}",
        location=Location(path, line, column),
        kind=kind,  # type: ignore[arg-type]
        text=comment.text,
        problem=Problem("error", f"{error.message} ({where})"),
        dependencies=(path,),
    )


def expression_claims(comment: CommentClaim, path: str, context: ExtractionContext) -> list[Claim]:
    """The claims of one ``idealcheck:`` comment read as an expression claim."""
    location = Location(path, comment.line, comment.column)
    claim_id = f"{path}:{comment.line}:{comment.column}"
    try:
        parsed = parse_claim_text(comment.text, context)
    except ClaimSyntaxError as error:
        return [error_claim(comment, path, error)]
    if parsed.form != "equation":
        form = _FORM_NAMES[parsed.form]
        if os.path.splitext(path)[1].lower() in PYTHON_EXTENSIONS:
            message = f"a {form} claim needs the Python extractor, which could not read it here"
        else:
            message = (
                f"a {form} claim is Python-only (it belongs above a `def` or after a statement in a .py file); "
                "in other files write `LEFT == RIGHT`"
            )
        return [Claim(claim_id, location, "expression", comment.text, problem=Problem("error", message),
                      dependencies=(path,))]
    sides = parsed.sides
    if len(sides) == 2:
        obligation = Obligation(sides[0], sides[1], parsed.conditions)
        return [Claim(claim_id, location, "expression", comment.text, (obligation,), dependencies=(path,))]
    texts, given = equation_side_texts(comment.text)
    claims: list[Claim] = []
    for index in range(len(sides) - 1):
        text = f"{texts[index]} == {texts[index + 1]}" if len(texts) == len(sides) else comment.text
        if given is not None:
            text += f" given {given}"
        obligation = Obligation(sides[index], sides[index + 1], parsed.conditions)
        claims.append(
            Claim(f"{claim_id}#{index + 1}", location, "expression", text, (obligation,), dependencies=(path,))
        )
    return claims
