"""A refuted claim's remaining difference in plain terms ("the right side lacks 2*a*b").

The normal forms of the two sides modulo the same Groebner basis differ exactly by the counter-normal-form
(reduction is linear).  When that difference has only a few terms, each term is explained by comparing
its coefficient on the two sides: present on one side only, or with different coefficients.

For the decision procedure (``decide.py``): after computing ``basis`` for a refuted obligation, call
``describe_translation(tr, basis, deadline=deadline)`` and append the result (when not None) to the
reason, e.g. ``reason + "; " + text``.  It never raises for an ordinary refuted claim and returns None
when the difference is too large to describe usefully.
"""
from __future__ import annotations

from fractions import Fraction
from typing import Callable, Sequence

from sympy import QQ
from sympy.polys.rings import PolyElement

from verifier.algebra.groebner import reduce
from verifier.algebra.translate import Translation, format_poly
from verifier.model.numbers import fraction_text as _show

MAX_DESCRIBED_TERMS = 4  # a larger difference is left to the counter-normal-form itself

Printer = Callable[[PolyElement], str]


def _fraction(coeff) -> Fraction:
    return Fraction(int(coeff.numerator), int(coeff.denominator))


def _term(ring, monom, value: Fraction) -> PolyElement:
    return ring({monom: QQ(value.numerator, value.denominator)})


def describe_difference(
    left_normal_form: PolyElement,
    right_normal_form: PolyElement,
    printed: Printer = format_poly,
    *,
    max_terms: int = MAX_DESCRIBED_TERMS,
) -> str | None:
    """Plain words for ``left_normal_form - right_normal_form`` when it has at most ``max_terms`` terms.

    ``printed`` shows a polynomial (use ``Translation.printed`` so auxiliary variables read as what they
    stand for).  Returns None when the two normal forms are equal or the difference is larger.
    Examples: "the right side lacks 2*a*b"; "the left side lacks x**3"; "the coefficient of a*b is 2 on the
    left and 3 on the right".
    """
    difference = left_normal_form - right_normal_form
    if not difference or len(difference.terms()) > max_terms:
        return None
    ring = difference.ring
    left_terms = dict(left_normal_form.terms())
    right_terms = dict(right_normal_form.terms())
    phrases: list[str] = []
    for monom, _ in sorted(difference.terms(), key=lambda t: ring.order(t[0]), reverse=True):
        left = _fraction(left_terms[monom]) if monom in left_terms else Fraction(0)
        right = _fraction(right_terms[monom]) if monom in right_terms else Fraction(0)
        if right == 0:
            phrases.append(f"the right side lacks {printed(_term(ring, monom, left))}")
        elif left == 0:
            phrases.append(f"the left side lacks {printed(_term(ring, monom, right))}")
        else:
            unit = printed(_term(ring, monom, Fraction(1)))
            if unit == "1":
                phrases.append(f"the constant term is {_show(left)} on the left and {_show(right)} on the right")
            else:
                phrases.append(f"the coefficient of {unit} is {_show(left)} on the left and {_show(right)} on the right")
    return "; ".join(phrases)


def normal_forms(
    tr: Translation, basis: Sequence[PolyElement], *, deadline: float | None = None
) -> tuple[PolyElement, PolyElement]:
    """The normal forms of the two sides of ``tr`` modulo ``basis`` (a Groebner basis in ``tr.ring``)."""
    if not basis:
        return tr.left, tr.right
    _, left = reduce(tr.left, basis, deadline=deadline)
    _, right = reduce(tr.right, basis, deadline=deadline)
    return left, right


def describe_translation(
    tr: Translation, basis: Sequence[PolyElement], *, deadline: float | None = None
) -> str | None:
    """``describe_difference`` for a translated obligation whose conditions have Groebner basis ``basis``.

    May raise ``GroebnerTimeout`` when ``deadline`` passes during the reductions.
    """
    left, right = normal_forms(tr, basis, deadline=deadline)
    return describe_difference(left, right, tr.printed)
