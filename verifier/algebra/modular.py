"""Evaluation modulo a prime at random points: a fast test that two rational expressions differ.

The fourth back end of the fold over expression trees: + - * /, integer powers and the functions of the
table that are polynomials (``Function.modular``); anything else (square roots, sin, opaque calls, ...)
is not evaluable mod p.  Agreement at random points is evidence, never a proof: callers use it only to
skip work or to choose, and every verdict is still certified or witnessed elsewhere.
"""
from __future__ import annotations

import random
from fractions import Fraction
from typing import Mapping, Sequence

from verifier.model.expr import BinOp, Call, Expr, Neg, Num, Opaque, Pow, Var, fold, variables
from verifier.model.functions import FUNCTIONS

PRIME = 2**61 - 1  # a Mersenne prime


class ZeroDivisorModP(Exception):
    """A denominator vanished modulo the prime at this point (try another point)."""


class NotModular(Exception):
    """The expression uses something that has no value modulo a prime."""


class _ModularValues:
    def __init__(self, point: Mapping[str, int], p: int) -> None:
        self.point = point
        self.p = p

    def _inverse(self, value: int) -> int:
        if value == 0:
            raise ZeroDivisorModP()
        return pow(value, -1, self.p)

    def num(self, node: Num) -> int:
        value = Fraction(node.value)
        if value.denominator % self.p == 0:
            raise NotModular()
        return value.numerator % self.p * pow(value.denominator, -1, self.p) % self.p

    def var(self, node: Var) -> int:
        return self.point[node.name]

    def neg(self, node: Neg, operand: int) -> int:
        return -operand % self.p

    def binop(self, node: BinOp, left: int, right: int) -> int:
        p = self.p
        if node.op == "+":
            return (left + right) % p
        if node.op == "-":
            return (left - right) % p
        if node.op == "*":
            return left * right % p
        if node.op == "/":
            return left * self._inverse(right) % p
        raise NotModular()

    def pow(self, node: Pow, base: int) -> int:
        exponent = Fraction(node.exponent)
        if exponent.denominator != 1:
            raise NotModular()
        k = exponent.numerator
        if k < 0:
            base, k = self._inverse(base), -k
        return pow(base, k, self.p)

    def call(self, node: Call, args: Sequence[int]) -> int:
        entry = FUNCTIONS.get(node.function)
        if entry is None or entry.modular is None:
            raise NotModular()
        return entry.modular(args, self.p)

    def opaque(self, node: Opaque, args: Sequence[int]) -> int:
        raise NotModular()


def mod_value(expr: Expr, point: Mapping[str, int], p: int = PRIME) -> int:
    """The value of ``expr`` modulo ``p`` at ``point`` (values in 0..p-1).

    Raises ZeroDivisorModP when a denominator vanishes there and NotModular when the expression is not
    a rational function of its variables (as far as the table knows).
    """
    return fold(expr, _ModularValues(point, p))


def differs_mod_p(left: Expr, right: Expr, *, seed: int = 0, trials: int = 3) -> bool | None:
    """True when the two rational expressions differ at a random point modulo 2**61-1 (so they differ
    as rational functions), False when they agree at ``trials`` points, None when an expression uses
    anything but + - * /, integer powers and fma, or no point with non-zero denominators was found."""
    rng = random.Random(seed)
    names = sorted(variables(left) | variables(right))
    agreed = 0
    attempts = 0
    while agreed < trials:
        attempts += 1
        if attempts > 4 * trials + 8:
            return None  # denominators keep vanishing (perhaps identically zero)
        point = {name: rng.randrange(1, PRIME) for name in names}
        try:
            a = mod_value(left, point)
            b = mod_value(right, point)
        except NotModular:
            return None
        except ZeroDivisorModP:
            continue
        if a != b:
            return True
        agreed += 1
    return False


def proportional_mod_p(first: Expr, second: Expr, rng: random.Random) -> bool:
    """True when ``second`` is a constant multiple of ``first`` as rational functions (tested at random
    points modulo 2**61-1): it then vanishes exactly wherever the first one does."""
    names = sorted(variables(first) | variables(second))
    ratio: int | None = None
    agreed = 0
    for _ in range(12):
        point = {name: rng.randrange(1, PRIME) for name in names}
        try:
            a = mod_value(first, point)
            b = mod_value(second, point)
        except NotModular:
            return False
        except ZeroDivisorModP:
            continue
        if a == 0:
            if b != 0:
                return False
            continue
        r = b * pow(a, -1, PRIME) % PRIME
        if ratio is None:
            ratio = r
        elif r != ratio:
            return False
        agreed += 1
        if agreed == 4:
            return True
    return False
