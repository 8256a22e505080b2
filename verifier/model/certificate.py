"""Proof certificates as plain data.

A certificate is stored in a form that needs no sympy object and no evaluation to read back: symbol
names and polynomials as tuples of (coefficient text, exponent vector) terms.  The trusted kernel
(``verifier/algebra/kernel``) re-verifies one by plain expansion.
"""
from __future__ import annotations

from dataclasses import dataclass

# A polynomial as data: ((coefficient as "p/q" or "p", (e1, e2, ...)), ...) over ``Certificate.symbols``.
PolyData = tuple[tuple[str, tuple[int, ...]], ...]


@dataclass(frozen=True)
class SignArgument:
    """The extra data of a proof by the conjugate argument (``algebra/sign.py``).

    With A, B defined by ``target == A*root + B`` and ``multiplier == A*root - B``: the certificate's
    cofactors show ``target * multiplier`` in the ideal, and ``nonnegative_cofactors`` show
    ``-A*B - nonnegative - sum(lam*S)`` in it, where ``nonnegative`` has positive coefficients and odd
    powers only of ``nonnegative_symbols`` (principal roots, exponentials, variables with a sign
    hypothesis, inverses of such) and each S is a sign hypothesis S >= 0 with weight lam >= 0.
    """

    root: str
    multiplier: PolyData
    nonnegative: PolyData
    nonnegative_cofactors: tuple[PolyData, ...]
    nonnegative_symbols: tuple[str, ...]
    # sign hypotheses S >= 0 used with weights lam >= 0: -A*B - nonnegative - sum(lam*S) is in the ideal
    hypotheses: tuple[tuple[PolyData, str], ...] = ()


@dataclass(frozen=True)
class SignContradiction:
    """Sign hypotheses that cannot hold together (``algebra/sign.py``): a vacuous proof.

    With ``first > 0`` (or ``>= 0``) and ``second > 0`` (or ``>= 0``, absent when empty) among the
    hypotheses, the certificate's cofactors show ``first - ratio*second - constant`` in the ideal, and
    ``ratio <= 0`` with ``constant < 0``, or ``constant == 0`` with a strict hypothesis that then fails.
    """

    first: PolyData
    first_strict: bool
    second: PolyData
    second_strict: bool
    ratio: str
    constant: str


@dataclass(frozen=True)
class ShiftContradiction:
    """Two sign hypotheses that cannot hold together once a variable is shifted by its lower bound.

    With ``bound`` = variable - shift (>= 0, or > 0 when strict) and ``other`` (>= 0 / > 0): writing the
    variable as t + shift, ``-other`` becomes a polynomial in t whose terms have positive coefficients and
    odd powers only of t and ``nonnegative_symbols``; so other <= 0, which fails when other is strict,
    when that polynomial has a positive constant term, or when the bound is strict and it has a pure
    power of t.  (``x > 1`` and ``x*x <= 1``: -(1 - (t + 1)**2) = t**2 + 2*t > 0.)
    """

    bound: PolyData
    bound_strict: bool
    variable: str
    shift: str
    other: PolyData
    other_strict: bool
    nonnegative_symbols: tuple[str, ...]


@dataclass(frozen=True)
class RealSquare:
    """``target**2 + remainder`` is in the ideal and ``remainder`` is >= 0 by its sign pattern (positive
    coefficients, odd powers only of ``nonnegative_symbols``): so target**2 <= 0, i.e. target == 0."""

    remainder: PolyData
    nonnegative_symbols: tuple[str, ...]


@dataclass(frozen=True)
class Certificate:
    """``target ** power == sum(cofactors[i] * generators[i])`` as polynomials over QQ in ``symbols``.

    With ``sign`` set, the identity is ``target * sign.multiplier == sum(...)`` plus the sign argument.
    """

    symbols: tuple[str, ...]
    target: PolyData
    power: int
    generators: tuple[PolyData, ...]
    cofactors: tuple[PolyData, ...]
    sign: SignArgument | None = None
    contradiction: SignContradiction | None = None
    real_square: RealSquare | None = None
    shift_contradiction: ShiftContradiction | None = None


