"""Plain data for claims: where a claim is, what it says, and under which conditions."""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Literal

from verifier.model.expr import Expr


@dataclass(frozen=True)
class Location:
    """A place in a scanned file; ``path`` is relative to the working directory, line and column 1-based.

    In a notebook ``cell`` is the 1-based position of the cell and ``line`` counts within that cell's source.
    """

    path: str
    line: int
    column: int
    cell: int | None = None

    def __str__(self) -> str:
        if self.cell is not None:
            return f"{self.path}:cell {self.cell}:{self.line}:{self.column}"
        return f"{self.path}:{self.line}:{self.column}"


Relation = Literal["==", "!=", "<", "<=", ">", ">="]


@dataclass(frozen=True)
class Condition:
    """``left RELATION right``.  ``==`` joins the ideal, ``!=`` the non-zero set, the rest are sign hypotheses."""

    relation: Relation
    left: Expr
    right: Expr
    text: str  # how it reads in the report, e.g. "x > 0" or "unit_quaternion: w**2 + ... == 1"
    origin: str = "given"  # "given", "named:NAME", "branch (line N)", "config"


@dataclass(frozen=True)
class NamedConditionSet:
    """A named set of conditions from ``[tool.idealcheck.conditions]`` (texts are parsed by the claims layer)."""

    name: str
    variables: tuple[str, ...]
    given: tuple[str, ...]


@dataclass(frozen=True)
class Obligation:
    """One equality to decide: ``left == right`` under ``conditions``.

    A claim usually has one; a function claim has one per returned component and control-flow path.
    ``label`` says which (empty for a lone obligation), e.g. "component 2" or "path where x > 0".
    """

    left: Expr
    right: Expr
    conditions: tuple[Condition, ...] = ()
    label: str = ""
    notes: tuple[str, ...] = ()  # facts the report should list for this obligation (opaque calls, ...)


ClaimKind = Literal["expression", "function", "statement"]


@dataclass(frozen=True)
class Problem:
    """Why a claim could not be turned into obligations; it becomes the claim's verdict directly."""

    verdict: Literal["error", "inconclusive"]
    message: str  # specific: what is wrong and where


@dataclass(frozen=True)
class Expectation:
    """An accepted known result: written on the claim (``expect inconclusive: REASON`` after the claim
    text) or recorded in a baseline file.

    The claim passes while its verdict is ``verdict``; any other verdict (a proof included) is reported and fails.
    """

    verdict: Literal["refuted", "inconclusive", "error"]
    reason: str
    baseline: str | None = None  # the baseline file that accepted it; None for the inline marker


@dataclass(frozen=True)
class Claim:
    id: str  # stable within a run: "path:line:col", with "#k" for the k-th link of a chain
    location: Location
    kind: ClaimKind
    text: str  # the claim text after "idealcheck:", continuation lines joined
    obligations: tuple[Obligation, ...] = ()
    problem: Problem | None = None  # set instead of obligations when the claim cannot be decided
    notes: tuple[str, ...] = ()  # claim-wide facts for the report (e.g. "inlined helpers.norm2 from geo/helpers.py")
    dependencies: tuple[str, ...] = field(default=())  # files (relative paths) the claim depends on, itself included
    expected: Expectation | None = None  # an accepted known verdict (inline `expect VERDICT: REASON`)


@dataclass(frozen=True)
class FileProblem:
    """A file that could not be read (binary, undecodable, unparsable Python ...)."""

    location: Location
    message: str


@dataclass(frozen=True)
class ExtractionContext:
    """What the claims layer needs besides the file itself."""

    named_conditions: tuple[NamedConditionSet, ...] = ()
    roots: tuple[str, ...] = (".",)  # scanned roots (relative paths), where Python imports are resolved
    unroll_limit: int = 256  # iterations of a `for ... in range(...)` loop unrolled at most
    inline_depth: int = 16  # nested inlined calls at most

    def named(self, name: str) -> NamedConditionSet | None:
        for item in self.named_conditions:
            if item.name == name:
                return item
        return None
