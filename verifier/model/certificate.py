"""Proof certificates as plain data: one frozen class per proof kind, and their union ``Certificate``.

A certificate is stored in a form that needs no sympy object and no evaluation to read back: symbol
names and polynomials as tuples of (coefficient text, exponent vector) terms.  Every class has the three
fields that tie it to a claim - ``symbols`` (the ring), ``target`` (LEFT - RIGHT) and ``generators`` (the
equations the claim's conditions give) - and then the evidence of its own argument.  The trusted kernel
(``verifier/algebra/kernel``) re-verifies each kind by plain expansion, and reads and writes them as JSON
field by field, by the type of each field (so a field's type must be one of str, bool, int and tuples
of these).  ``kind`` names the class in that JSON.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import ClassVar, Union

# A polynomial as data: ((coefficient as "p/q" or "p", (e1, e2, ...)), ...) over the certificate's symbols.
PolyData = tuple[tuple[str, tuple[int, ...]], ...]


@dataclass(frozen=True)
class IdealCertificate:
    """``target ** power == sum(cofactors[i] * generators[i])`` as polynomials over QQ in ``symbols``: the
    target vanishes wherever the generators do (ideal membership; radical membership when power > 1)."""

    kind: ClassVar[str] = "ideal"
    symbols: tuple[str, ...]
    target: PolyData
    power: int
    generators: tuple[PolyData, ...]
    cofactors: tuple[PolyData, ...]


@dataclass(frozen=True)
class ConjugateCertificate:
    """The conjugate argument for a principal root ``root`` (``algebra/sign_search.py``).

    ``form`` is the target with every power root**k (k >= 2) reduced by root**2 == radicand, so linear
    in the root, and ``form_cofactors`` show ``target - form`` in the ideal (all zero when the target is
    linear in the root already).  With A, B defined by ``form == A*root + B`` and ``multiplier ==
    A*root - B``: ``cofactors`` show ``target * multiplier`` in the ideal, and ``nonnegative_cofactors``
    show ``-A*B - nonnegative - sum(lam*S)`` in it, where ``nonnegative`` has positive coefficients and
    odd powers only of ``nonnegative_symbols`` (principal roots, exponentials, variables with a sign
    hypothesis, inverses of such) and each S is a sign hypothesis S >= 0 with weight lam >= 0.
    """

    kind: ClassVar[str] = "conjugate"
    symbols: tuple[str, ...]
    target: PolyData
    generators: tuple[PolyData, ...]
    cofactors: tuple[PolyData, ...]
    root: str
    multiplier: PolyData
    nonnegative: PolyData
    nonnegative_cofactors: tuple[PolyData, ...]
    nonnegative_symbols: tuple[str, ...]
    form: PolyData
    form_cofactors: tuple[PolyData, ...]
    # sign hypotheses S >= 0 used with weights lam >= 0 (as fraction text)
    hypotheses: tuple[tuple[PolyData, str], ...] = ()
    # M > 0 (positive coefficients, odd powers only of nonnegative symbols, a positive constant term):
    # the ideal part is then ``-A*B*M - P - sum(lam*S)``, so -A*B >= 0 from M > 0 and P >= 0 (empty: M = 1;
    # sqrt(2) - 1 >= 0 is (sqrt(2) - 1)*(sqrt(2) + 1) == 1)
    positive_factor: PolyData = ()
    # M only >= 0 (by its sign pattern), and -A*B + M has a nonnegative sign pattern: where M == 0 that gives
    # -A*B >= 0 directly (sqrt(a) - sqrt(b) >= 0 from (sqrt(a) - sqrt(b))*(sqrt(a) + sqrt(b)) == a - b >= 0
    # and sqrt(a) - sqrt(b) + (sqrt(a) + sqrt(b)) == 2*sqrt(a) >= 0)
    factor_may_vanish: bool = False


@dataclass(frozen=True)
class RealSquareCertificate:
    """``target**2 + remainder == sum(cofactors[i] * generators[i])`` and ``remainder`` is >= 0: it is
    ``sum(w * s**2 for w, s in squares)`` (weights >= 0) plus a rest >= 0 by its sign pattern (positive
    coefficients, odd powers only of ``nonnegative_symbols``).  So target**2 <= 0, i.e. target == 0 at
    every real point of the conditions."""

    kind: ClassVar[str] = "real_square"
    symbols: tuple[str, ...]
    target: PolyData
    generators: tuple[PolyData, ...]
    cofactors: tuple[PolyData, ...]
    remainder: PolyData
    nonnegative_symbols: tuple[str, ...]
    squares: tuple[tuple[str, PolyData], ...] = ()  # (weight "p/q", polynomial) of the squares in remainder


@dataclass(frozen=True)
class SignContradictionCertificate:
    """Sign hypotheses that cannot hold together: a vacuous proof (``algebra/sign_search.py``).

    With ``first > 0`` (or ``>= 0``) and ``second > 0`` (or ``>= 0``; empty when unused) among the
    hypotheses, ``cofactors`` show ``first - ratio*second - constant`` in the ideal, and ``ratio <= 0``
    with ``constant < 0``, or ``constant == 0`` with a strict hypothesis that then fails.
    """

    kind: ClassVar[str] = "sign_contradiction"
    symbols: tuple[str, ...]
    target: PolyData
    generators: tuple[PolyData, ...]
    cofactors: tuple[PolyData, ...]
    first: PolyData
    first_strict: bool
    second: PolyData
    second_strict: bool
    ratio: str
    constant: str


@dataclass(frozen=True)
class ShiftContradictionCertificate:
    """Two sign hypotheses that cannot hold together once a variable is shifted by its lower bound.

    With ``bound`` = variable - shift (>= 0, or > 0 when strict) and ``other`` (>= 0 / > 0): writing the
    variable as t + shift, ``-other`` becomes a polynomial in t whose terms have positive coefficients and
    odd powers only of t and ``nonnegative_symbols``; so other <= 0, which fails when other is strict,
    when that polynomial has a positive constant term, or when the bound is strict and it has a pure
    power of t.  (``x > 1`` and ``x*x <= 1``: -(1 - (t + 1)**2) = t**2 + 2*t > 0.)  No equation is used.
    """

    kind: ClassVar[str] = "shift_contradiction"
    symbols: tuple[str, ...]
    target: PolyData
    generators: tuple[PolyData, ...]
    bound: PolyData
    bound_strict: bool
    variable: str
    shift: str
    other: PolyData
    other_strict: bool
    nonnegative_symbols: tuple[str, ...]


# The proofs a lemma chain may use as steps (no chain inside a chain, so the depth of the data stays fixed)
LemmaProof = Union[IdealCertificate, ConjugateCertificate, RealSquareCertificate]


@dataclass(frozen=True)
class LemmaChainCertificate:
    """Lemmas first, then the claim (``algebra/lemmas.py``).

    Step i (``lemmas[i]``, then ``final``) is a certificate of its own kind over the same ``symbols`` whose
    generators are the claim's ``generators`` followed by the targets of the lemmas before it: each proves
    its target is 0 wherever the claim's conditions hold, given the earlier lemmas, so the lemma targets
    may be used as equations afterwards.  ``final`` proves ``target``.  (``x == 0 given x**4 + y**4 == 0``:
    the lemma x**2 by a real square, then x from x**2 by radical membership; ``sqrt(a + b + 2*sqrt(a*b))
    == sqrt(a) + sqrt(b)``: the lemma sqrt(a*b) - sqrt(a)*sqrt(b), then the conjugate argument.)
    """

    kind: ClassVar[str] = "lemma_chain"
    symbols: tuple[str, ...]
    target: PolyData
    generators: tuple[PolyData, ...]
    lemmas: tuple[LemmaProof, ...]
    final: LemmaProof


Certificate = Union[
    IdealCertificate,
    ConjugateCertificate,
    RealSquareCertificate,
    SignContradictionCertificate,
    ShiftContradictionCertificate,
    LemmaChainCertificate,
]
