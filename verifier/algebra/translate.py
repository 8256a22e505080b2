"""Expression trees -> polynomials in a sparse ring over QQ: the driver of one obligation's translation.

The rules for each construct (divisions, square roots, angles, exponentials, logarithms, pi, opaque
calls) are in verifier/algebra/translator.py.  Here: a condition ``v == constant`` is substituted into
everything else first; conditions become generators (equations), inverses (``!=`` and strict
inequalities) and sign hypotheses; and the final ring puts the auxiliary variables first.
"""
from __future__ import annotations

from dataclasses import dataclass, field, replace
from typing import Sequence

from sympy import QQ, Symbol
from sympy.polys.orderings import grevlex
from sympy.polys.rings import PolyElement, PolyRing

from verifier.algebra.polytext import format_poly  # noqa: F401  (re-exported: printing of translations)
from verifier.algebra.cases import resolve_by_cases
from verifier.algebra.translator import (
    GeneratorKind,
    TranslationError,
    Translator,
)
from verifier.model.claim import Condition, Obligation
from verifier.algebra.real_conditions import with_real_consequences
from verifier.model.explanation import AuxVariable
from verifier.model.expr import Expr, Num, Var, substitute, variables

__all__ = ["Generator", "Translation", "TranslationError", "format_poly", "translate"]


@dataclass(frozen=True)
class Generator:
    poly: PolyElement
    kind: GeneratorKind
    meaning: str  # e.g. "x*y - 1 == 0", "(x - y) != 0"
    variable: str = ""  # the auxiliary variable it defines: d of d*u - 1, r of r**2 - u


@dataclass(frozen=True)
class Translation:
    ring: PolyRing
    left: PolyElement
    right: PolyElement
    difference: PolyElement
    generators: tuple[Generator, ...]
    variables: tuple[str, ...]  # the original variables, in ring order
    aux: tuple[AuxVariable, ...]
    assumed: tuple[str, ...]  # what was assumed, for the report (non-zero denominators, radicands >= 0 ...)
    sign_conditions: tuple[Condition, ...] = field(default=())  # <, <=, >, >= as written
    # the same, normalized: (P, strict) meaning P > 0 (strict) or P >= 0, in ``ring``
    signs: tuple[tuple[PolyElement, bool], ...] = field(default=())

    def printed(self, poly: PolyElement) -> str:
        """The polynomial in the original variables: auxiliary variables shown as what they stand for."""
        names = {a.name: a.meaning for a in self.aux}
        return format_poly(poly, names)


_SIGN_RELATIONS = ("<", "<=", ">", ">=")


def _substitute_constants(obligation: Obligation) -> Obligation:
    """Replace v by c wherever a condition says ``v == c`` (c a constant: a number, ``-1``, ``pi/2``), except
    in those conditions themselves.  Sound because the two agree at every point where the conditions hold,
    and it lets ``exp(x) == 1 given x == 0`` see the value inside exp, sin and cos."""
    constants: dict[str, Expr] = {}
    defining: set[int] = set()
    for index, cond in enumerate(obligation.conditions):
        if cond.relation != "==":
            continue
        pair = (cond.left, cond.right) if isinstance(cond.left, Var) else (cond.right, cond.left)
        if isinstance(pair[0], Var) and _is_closed(pair[1]) and pair[0].name not in constants:
            constants[pair[0].name] = pair[1]
            defining.add(index)
    # v == w between two variables: w stands for v too (sqrt(u)**3 - 3*sqrt(u) given u == x then sees one
    # root); the representative of each class is its first name in sorted order
    same: dict[str, str] = {}
    for index, cond in enumerate(obligation.conditions):
        if cond.relation == "==" and isinstance(cond.left, Var) and isinstance(cond.right, Var):
            a, b = (_representative(same, cond.left.name), _representative(same, cond.right.name))
            if a != b and a not in constants and b not in constants:
                same[max(a, b)] = min(a, b)
                defining.add(index)
    constants.update({name: Var(_representative(same, name)) for name in same})
    if not constants:
        return obligation
    conditions = tuple(
        cond if index in defining else replace(cond, left=substitute(cond.left, constants),
                                               right=substitute(cond.right, constants))
        for index, cond in enumerate(obligation.conditions)
    )
    return replace(obligation, left=substitute(obligation.left, constants),
                   right=substitute(obligation.right, constants), conditions=conditions)


def _representative(same: dict[str, str], name: str) -> str:
    while name in same:
        name = same[name]
    return name


def _is_closed(expr: Expr) -> bool:
    """A constant expression: no variable anywhere in it (named constants such as pi are not variables)."""
    return not variables(expr)


def _positive_variables(conditions: Sequence[Condition]) -> set[str]:
    """Variables v with a hypothesis v > c (c >= 0) or v >= c (c > 0), in either orientation."""
    mirror = {"<": ">", "<=": ">=", ">": "<", ">=": "<="}
    out = set()
    relation: str
    for cond in conditions:
        left, right, relation = cond.left, cond.right, cond.relation
        if isinstance(right, Var) and isinstance(left, Num) and relation in mirror:
            left, right, relation = right, left, mirror[relation]
        if isinstance(left, Var) and isinstance(right, Num):
            if (relation == ">" and right.value >= 0) or (relation == ">=" and right.value > 0):
                out.add(left.name)
    return out


def _two_sided_bounds(signs: list[tuple[PolyElement, bool]], texts: list[str]
                      ) -> list[tuple[PolyElement, str]]:
    """``S >= 0`` and ``-c*S >= 0`` (c > 0) mean ``S == 0`` over the reals: the equation joins the ideal
    (``x == 1`` given ``x >= 1, x <= 1``; a branch ``x >= 0`` on a path that also has ``x <= 0``)."""
    found: list[tuple[PolyElement, str]] = []
    seen: set = set()
    for i, (first, first_strict) in enumerate(signs):
        for j in range(i + 1, len(signs)):
            second, second_strict = signs[j]
            if first_strict or second_strict or not first or not second:
                continue  # a strict bound against the other side is a contradiction, found elsewhere
            if first.LC * second.LC < 0 and first.monic() == second.monic():
                key = tuple(sorted(first.monic().terms()))
                if key not in seen:
                    seen.add(key)
                    found.append((first, f"{texts[i]} and {texts[j]}"))
    return found


def translate(obligation: Obligation) -> Translation:
    """Translate one obligation; raises TranslationError for what cannot be represented."""
    obligation = with_real_consequences(resolve_by_cases(obligation))
    substituted = _substitute_constants(obligation)
    if substituted is not obligation:
        try:
            return _translate(substituted)
        except TranslationError:
            # e.g. a/s on the path where s == 0: without the substitution, the inverse of s and s == 0
            # make the conditions contradictory, which the decision procedure proves vacuously
            pass
    return _translate(obligation)


def _translate(obligation: Obligation) -> Translation:
    exprs: list[Expr] = [obligation.left, obligation.right]
    for cond in obligation.conditions:
        exprs += [cond.left, cond.right]
    names: set[str] = set()
    for e in exprs:
        names |= variables(e)
    t = Translator(sorted(names))
    t.positive_variables = _positive_variables(obligation.conditions)
    t.prescan(exprs)
    sign_conditions: list[Condition] = []
    signs: list[tuple[PolyElement, bool]] = []
    for cond in obligation.conditions:
        left, right = t.value(cond.left), t.value(cond.right)
        diff = t.lift(left) - t.lift(right)
        if cond.relation == "==":
            if diff:
                t.add_generator(diff, "equation", cond.text)
        elif cond.relation == "!=":
            if not diff:
                # "a != a" can never hold: every point violates the conditions; 1 joins the ideal
                t.add_generator(t.const(1), "nonzero", cond.text)
            else:
                t.inverse(diff)
        elif cond.relation in _SIGN_RELATIONS:
            sign_conditions.append(cond)
            signs.append((diff if cond.relation in (">", ">=") else -diff, cond.relation in ("<", ">")))
            if cond.relation in ("<", ">"):
                # a strict inequality implies the difference is not zero (sound, and often what is needed)
                if not diff:
                    t.add_generator(t.const(1), "nonzero", cond.text)
                else:
                    t.inverse(diff)
        else:
            raise TranslationError(f"unknown relation {cond.relation!r}")
    left = t.value(obligation.left)
    right = t.value(obligation.right)
    # with the domains of square roots: sqrt(x - y) + sqrt(y - x) needs x - y >= 0 and y - x >= 0
    bounds = signs + [(t.lift(p), strict) for p, strict in t.domain_signs]
    texts = [c.text for c in sign_conditions] + [f"{t.printed(p)} >= 0 (domain)" for p, _ in t.domain_signs]
    for poly, meaning in _two_sided_bounds([(t.lift(p), strict) for p, strict in bounds], texts):
        t.add_generator(poly, "equation", meaning)
    # the final ring: auxiliary variables first (larger in the order), then the original variables
    aux_names = [a.name for a in t.aux]
    if not t.variables and not aux_names:
        symbols = [Symbol("$one")]
    else:
        symbols = [Symbol(n) for n in aux_names + t.variables]
    ring = PolyRing(symbols, QQ, grevlex)
    conv = lambda p: p.set_ring(ring)  # noqa: E731
    # assumptions, without duplicates, in the order they arose
    assumed = list(dict.fromkeys(t.assumed))
    for cond in obligation.conditions:
        assumed.append(f"{cond.text}" + ("" if cond.origin == "given" else f" [{cond.origin}]"))
    generators = tuple(Generator(conv(p), kind, meaning, variable) for p, kind, meaning, variable in t.generators)
    l, r = conv(left), conv(right)
    return Translation(
        ring=ring,
        left=l,
        right=r,
        difference=l - r,
        generators=generators,
        variables=tuple(t.variables),
        aux=tuple(t.aux),
        assumed=tuple(dict.fromkeys(assumed)),
        sign_conditions=tuple(sign_conditions),
        signs=tuple((conv(t.lift(p)), strict) for p, strict in signs + t.domain_signs),
    )
