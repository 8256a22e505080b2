"""Hand-made verdicts for the report tests (invented claims; no algebra involved)."""
from __future__ import annotations

from verifier.model.verdict import ObligationResult, Verdict, Witness
from verifier.model.claim import Claim, Location


def claim(path: str, line: int, column: int, text: str, *, suffix: str = "", kind: str = "expression") -> Claim:
    return Claim(id=f"{path}:{line}:{column}{suffix}", location=Location(path, line, column), kind=kind, text=text,
                 dependencies=(path,))


def proved(path: str = "src/a.py", line: int = 3, text: str = "(a+b)**2 == a**2 + 2*a*b + b**2") -> Verdict:
    return Verdict(claim(path, line, 3, text), "proved", "expansion", "the two sides expand to the same polynomial",
                   None, None, (), 0.01234)


def refuted(path: str = "src/b.c", line: int = 10) -> Verdict:
    witness = Witness((("a", "1"), ("b", "2")), "9", "5", True)
    return Verdict(claim(path, line, 4, "(a+b)**2 == a**2 + b**2"), "refuted", None,
                   "the two sides differ at a real point", "2*a*b", witness, ("b != 0",), 0.5678)


def inconclusive(path: str = "src/c.jl", line: int = 7) -> Verdict:
    return Verdict(claim(path, line, 2, "sqrt(x**2) == x"), "inconclusive", None,
                   "needs sign reasoning: x >= 0 is not among the conditions", "r - x", None,
                   ("sqrt(x**2) >= 0",), 0.25)


def error(path: str = "src/d.f90", line: int = 1) -> Verdict:
    return Verdict(claim(path, line, 1, "a == (b"), "error", None, "unbalanced parenthesis at column 8",
                   None, None, (), 0.0)


def several_obligations(path: str = "src/e.py", line: int = 20) -> Verdict:
    results = (
        ObligationResult("component 1", "proved", "ideal", "in the ideal"),
        ObligationResult("component 2", "refuted", None, "differs", "x - y",
                         Witness((("x", "0"), ("y", "1")), "0", "1", True)),
    )
    return Verdict(claim(path, line, 1, "same as slow_rotate", kind="function"), "refuted", None,
                   "component 2: differs", "x - y", results[1].witness, (), 1.0, results)


def every_kind() -> list[Verdict]:
    return [error(), inconclusive(), refuted(), proved(), several_obligations()]
