"""Python's constant keys and lambdas in the kernel IR (``verifier.model.ir``).

``d["X"]`` is ``Element(d, (Text("X"),))`` and ``d["X"] = v`` is ``ToElement("d", (Text("X"),))``.  A dict
literal with constant keys ``{"X": a, 2: b}`` is a call of the built-in ``DICT_LITERAL`` (a name no Python
code can spell) whose keyword arguments are the keys as ``repr`` spells them: ``Invoke(Name(DICT_LITERAL),
(Argument(a, "'X'"), Argument(b, "2")))``.  The executor builds a dict value from it; nothing here is run.
A lambda is ``Name(LAMBDA_PREFIX + "LINE:COLUMN")``, a name the front end's scope binds to the lambda's
``Function`` (its body one ``Return``); the executor gives it the locals where it is made.
"""
from __future__ import annotations

from dataclasses import dataclass

DICT_LITERAL = "\0dict"
LAMBDA_PREFIX = "\0lambda:"


@dataclass(frozen=True)
class Text:
    """A string literal where the executor can use it: a constant key (``d["X"]``, ``d.get("X")``)."""

    value: str
    line: int = 0
    column: int = 0


__all__ = ["DICT_LITERAL", "LAMBDA_PREFIX", "Text"]
