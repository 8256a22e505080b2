"""The cheap counterexample search: the difference polynomial, evaluated modulo a prime, says where to look.

The translation has already expanded LEFT - RIGHT into a polynomial f.  When f involves only the claim's
own variables and inverse variables (``$d`` = 1/u of a denominator u; no root, angle or opaque stands in
for part of it), f at a point, with every inverse set to 1/u there, is exactly LEFT - RIGHT wherever the
claim is defined.  Conditions:
- definitions ``m1 == (a11 + a22)*(b11 + b22)`` are computed exactly from the free variables;
- other equations (a unit circle or quaternion, ``a*d == -b*c``, ``x**2 == 1``) are solved exactly in a
  triangular order (``witness_variety.py``), so every candidate lies on them;
- inequalities and ``!=`` are left to the exact check.
First, three random points modulo 2**61-1 (free variables random, definitions and inverses computed mod
p) tell whether f vanishes wherever the definitions and denominators allow: then the claim is probably
true and the search stands aside at once (the proof comes next).  Otherwise the candidate points are the
ones the full search tries first (``witness_points.rational_points``, same order, same seed), or points
of the equations; f is evaluated at each mod p, one multiplication per factor of a term, instead of
evaluating the claim's expression tree in fractions.  A non-zero residue only says where to look: the
point is then checked exactly on the claim as written (``witness_check.exact_check``: conditions,
domains, real arithmetic), and only a point that passes that check is returned.  A residue of zero skips
the point (the difference may still be a non-zero multiple of the prime there: skipping loses nothing
but time); on the equations, many zeros in a row mean the claim probably holds there, and the search
stops.
"""
from __future__ import annotations

import random
from dataclasses import dataclass
from fractions import Fraction
from itertools import islice
from math import isqrt
from typing import Any, Iterator, Mapping, Sequence

from sympy.polys.rings import PolyElement

from verifier.model.limits import decision_clock
from verifier.algebra.evaluate import DomainError, NotEvaluable, exact_value
from verifier.algebra.modular import PRIME, NotModular
from verifier.algebra.translate import Generator, Translation
from verifier.algebra.witness_check import exact_check
from verifier.algebra.witness_points import Bound, bounded_point, random_rational, rational_points, \
    small_rational, variable_bounds
from verifier.algebra.witness_problem import WitnessProblem, searchable_problem
from verifier.algebra.witness_variety import MODULAR, Residue, Step, equation_plan, solve_plan
from verifier.model.claim import Condition
from verifier.model.expr import Expr, Var, variables
from verifier.model.verdict import Witness

_CANDIDATES = 2_000  # points screened at most (the full search's rational points are fewer)
_EXACT_CHECKS = 20  # exact checks at most (a point with a non-zero residue nearly always passes)
_GENERIC_TRIALS = 3  # random points mod p that decide whether f vanishes where the claim is defined
_VARIETY_CANDIDATES = 300  # points of the equations tried at most
_VARIETY_ZEROS = 16  # zero residues on the equations after which the claim is taken to hold there
_VARIETY_MISSES = 40  # candidates in a row where the equations could not be solved: the search gives up

_ROOT_ZEROS = 32  # zero residues after which a claim with roots is taken to hold at the points tried
_ROOT_MISSES = 400  # candidates in a row where a radicand was not a rational square: the search gives up

# a term: its coefficient modulo the prime and the (slot, exponent) pairs of its monomial
_Term = tuple[int, tuple[tuple[int, int], ...]]


def _residue(value: Fraction) -> int | None:
    if value.denominator % PRIME == 0:
        return None
    return value.numerator % PRIME * pow(value.denominator, -1, PRIME) % PRIME


def _terms(poly: PolyElement, slot: Mapping[str, int]) -> list[_Term] | None:
    symbols = [str(s) for s in poly.ring.symbols]
    terms: list[_Term] = []
    for monom, coefficient in poly.terms():
        factors = []
        for symbol, exponent in zip(symbols, monom):
            if exponent:
                if symbol not in slot:
                    return None
                factors.append((slot[symbol], int(exponent)))
        residue = _residue(Fraction(int(coefficient.numerator), int(coefficient.denominator)))
        if residue is None:
            return None
        terms.append((residue, tuple(factors)))
    return terms


def sparse_terms(difference: PolyElement, names: Sequence[str]) -> list[_Term] | None:
    """The terms of ``difference`` over the positions of ``names``, or None when it involves any other ring
    variable (an auxiliary one) or a coefficient has no residue."""
    return _terms(difference, {name: index for index, name in enumerate(names)})


def value_mod_p(terms: Sequence[_Term], values: Sequence[int]) -> int:
    total = 0
    for coefficient, factors in terms:
        product = coefficient
        for index, exponent in factors:
            base = values[index]
            product = product * (base if exponent == 1 else pow(base, exponent, PRIME)) % PRIME
            if not product:
                break
        total += product
    return total % PRIME


# an exact term: its coefficient and the (slot, exponent) pairs of its monomial
_ExactTerm = tuple[Fraction, tuple[tuple[int, int], ...]]


@dataclass(frozen=True)
class Slot:
    """An auxiliary variable f needs: an inverse 1/u or a principal root sqrt(u), u over earlier slots."""

    kind: str  # "inverse" or "radical"
    argument: list[_Term]  # u mod p
    exact_argument: list[_ExactTerm]  # u in rationals


@dataclass(frozen=True)
class Screen:
    """f over slots: the claim's variables first, then the inverse and root variables it needs, in an order
    where each one's argument uses only slots before it."""

    names: tuple[str, ...]
    slots: tuple[Slot, ...]
    terms: list[_Term]

    @property
    def denominators(self) -> bool:
        return bool(self.slots)

    @property
    def roots(self) -> bool:
        return any(s.kind == "radical" for s in self.slots)

    def value(self, residues: Sequence[int]) -> int | None:
        """f mod p at the point (the claim's variables' residues), None where a denominator is 0 mod p or a
        radicand has no square root mod p (a root is then one of its two square roots, no branch known)."""
        values = list(residues)
        for slot in self.slots:
            u = value_mod_p(slot.argument, values)
            if slot.kind == "inverse":
                if not u:
                    return None
                values.append(pow(u, -1, PRIME))
            else:
                root = pow(u, (PRIME + 1) // 4, PRIME)  # p = 3 mod 4
                if root * root % PRIME != u:
                    return None
                values.append(root)
        return value_mod_p(self.terms, values)

    def value_at(self, point: Mapping[str, Fraction]) -> int | None:
        """f mod p at an exact rational point, None where it is undefined there (a zero denominator) or,
        with roots, where a radicand is not the square of a rational (its principal root is taken)."""
        if not self.roots:
            residues = [_residue(point[name]) for name in self.names]
            values = [r for r in residues if r is not None]
            return self.value(values) if len(values) == len(residues) else None
        exact = [Fraction(point[name]) for name in self.names]
        for slot in self.slots:
            u = _exact_sum(slot.exact_argument, exact)
            if slot.kind == "inverse":
                if not u:
                    return None
                exact.append(1 / u)
            else:
                root = _rational_sqrt(u)
                if root is None:
                    return None
                exact.append(root)
        residues = [_residue(v) for v in exact]
        values = [r for r in residues if r is not None]
        return value_mod_p(self.terms, values) if len(values) == len(residues) else None


def _exact_sum(terms: Sequence[_ExactTerm], values: Sequence[Fraction]) -> Fraction:
    total = Fraction(0)
    for coefficient, factors in terms:
        product = coefficient
        for index, exponent in factors:
            product *= values[index] ** exponent
        total += product
    return total


def _rational_sqrt(value: Fraction) -> Fraction | None:
    if value < 0:
        return None
    n, d = isqrt(value.numerator), isqrt(value.denominator)
    return Fraction(n, d) if n * n == value.numerator and d * d == value.denominator else None


def _arguments(generators: Sequence[Generator], ring) -> dict[str, tuple[str, PolyElement]]:
    """Inverse variable d -> ("inverse", u) from d*u - 1; root variable r -> ("radical", u) from r**2 - u."""
    symbols = [str(s) for s in ring.symbols]
    found: dict[str, tuple[str, PolyElement]] = {}
    for g in generators:
        if g.variable not in symbols:
            continue
        variable = ring.gens[symbols.index(g.variable)]
        if g.kind == "inverse":
            found[g.variable] = ("inverse", g.poly.diff(variable))
        elif g.kind == "radical":
            radicand = variable**2 - g.poly
            if radicand.degree(variable) <= 0:
                found[g.variable] = ("radical", radicand)
    return found


def build_screen(difference: PolyElement, names: Sequence[str], generators: Sequence[Generator]) -> Screen | None:
    """The screen of ``difference``, or None when it involves an auxiliary variable other than an inverse
    or a root (an angle, an exponential, an opaque call), the root of a constant that is not a rational
    square (no rational point helps), or a coefficient has no residue mod p."""
    ring = difference.ring
    symbols = [str(s) for s in ring.symbols]
    arguments = _arguments(generators, ring)
    slot = {name: index for index, name in enumerate(names)}
    needed = _used(difference, symbols) - set(slot)
    pending = set(needed)
    while pending:  # the inverses and roots that the needed ones' arguments use
        name = pending.pop()
        if name not in arguments:
            return None
        kind, argument = arguments[name]
        if kind == "radical" and argument.is_ground:
            return None  # sqrt(2): irrational at every point
        for other in _used(argument, symbols) - set(slot) - needed:
            needed.add(other)
            pending.add(other)
    ordered: list[Slot] = []
    while needed:
        ready = sorted(name for name in needed if _used(arguments[name][1], symbols) <= set(slot))
        if not ready:
            return None  # circular (cannot happen for arguments built before their variable, but never loop)
        for name in ready:
            kind, argument = arguments[name]
            terms = _terms(argument, slot)
            if terms is None:
                return None
            exact = [(Fraction(int(c.numerator), int(c.denominator)), factors)
                     for (_, factors), (_, c) in zip(terms, argument.terms())]
            slot[name] = len(slot)
            ordered.append(Slot(kind, terms, exact))
            needed.discard(name)
    terms = _terms(difference, slot)
    return None if terms is None else Screen(tuple(names), tuple(ordered), terms)


def _used(poly: PolyElement, symbols: Sequence[str]) -> set[str]:
    used: set[str] = set()
    for monom in poly.monoms():
        used.update(symbols[i] for i, e in enumerate(monom) if e)
    return used


_AUXILIARY = "the difference involves"


@dataclass(frozen=True)
class _Prepared:
    problem: WitnessProblem
    screen: Screen
    order: list[tuple[str, Expr]] | None  # the equations as definitions, when they all are
    plan: list[Step]


def _prepare(left: Expr, right: Expr, conditions: Sequence[Condition], difference: PolyElement,
             generators: Sequence[Generator], seed: int) -> _Prepared | str:
    """What the search runs on, or why it stands aside (a short reason, for the benchmark's counts)."""
    if not difference:
        return "the sides expand to the same polynomial"
    problem = searchable_problem(left, right, conditions)
    if problem is None:
        return "an opaque call"
    screen = build_screen(difference, problem.names, generators)
    if screen is None:
        return _AUXILIARY
    order = definitions(conditions)
    plan = equation_plan(problem.equations)
    if plan is None:
        return "equations with no private variables (no triangular order)"
    if order or screen.denominators or problem.equations:
        try:
            vanishes = _vanishes_generically(screen, plan, random.Random(seed))
        except NotModular:
            return "an equation with a root or an angle (no value mod p)"
        if vanishes is None:
            return "no point of the equations found mod p"
        if vanishes:
            return "the difference vanishes on the equations mod p (probably true)"
    return _Prepared(problem, screen, order, plan)


def screen_obstacle(translation: Translation, left: Expr, right: Expr, conditions: Sequence[Condition], *,
                    seed: int = 0) -> str | None:
    """Why the cheap search stands aside for this obligation (its translation given), or None when it
    searches: a short reason, for the benchmark's counts."""
    prepared = _prepare(left, right, conditions, translation.difference, translation.generators, seed)
    if not isinstance(prepared, str) or not prepared.startswith(_AUXILIARY):
        return prepared if isinstance(prepared, str) else None
    kind_of = {a.name: a.kind for a in translation.aux}
    used = _used(translation.difference, [str(s) for s in translation.ring.symbols])
    kinds = sorted({kind_of[name] for name in used if name in kind_of} - {"inverse"})
    return f"{_AUXILIARY} {'/'.join(kinds)}" if kinds else "a variable or coefficient the screen cannot take"


def polynomial_witness(left: Expr, right: Expr, conditions: Sequence[Condition], difference: PolyElement, *,
                       deadline: float, seed: int = 0, generators: Sequence[Generator] = ()) -> Witness | None:
    """A witness found with the difference polynomial, checked exactly on the claim; None when the cheap
    search does not apply (an auxiliary variable other than an inverse in ``difference``, equations it
    cannot solve, an opaque call), when f vanishes wherever the claim is defined, or when it found nothing
    before ``deadline``.  ``generators``: the translation's, for the denominators of inverse variables."""
    prepared = _prepare(left, right, conditions, difference, generators, seed)
    if isinstance(prepared, str):
        return None
    problem, screen, rng = prepared.problem, prepared.screen, random.Random(seed)
    if prepared.order is not None:
        return _search(problem, screen, _defined_points(problem, prepared.order, rng), deadline, None)
    return _search(problem, screen, _variety_points(problem, prepared.plan, rng), deadline, _VARIETY_ZEROS)


def _search(problem: WitnessProblem, screen: Screen, candidates: Iterator[dict[str, Fraction] | None],
            deadline: float, zero_limit: int | None) -> Witness | None:
    checks = zeros = misses = 0
    if screen.roots and zero_limit is None:
        zero_limit = _ROOT_ZEROS  # a root's sign may make a claim true only where it is principal
    for point in candidates:
        if decision_clock() > deadline or checks >= _EXACT_CHECKS:
            return None
        value = screen.value_at(point) if point is not None else None
        if point is None or value is None:
            misses += 1
            if screen.roots and misses >= _ROOT_MISSES:
                return None  # the radicands are seldom rational squares at these points
            continue
        misses = 0
        if not value:
            zeros += 1
            if zero_limit is not None and zeros >= zero_limit:
                return None
            continue
        checks += 1
        witness = _checked(problem, point)
        if witness is not None:
            return witness
    return None


def _defined_points(problem: WitnessProblem, order: Sequence[tuple[str, Expr]], rng: random.Random
                    ) -> Iterator[dict[str, Fraction] | None]:
    for candidate in islice(rational_points(problem, rng, variable_bounds(problem)), _CANDIDATES):
        yield _defined(candidate, order) if order else candidate


def _variety_points(problem: WitnessProblem, plan: Sequence[Step], rng: random.Random
                    ) -> Iterator[dict[str, Fraction] | None]:
    """Points on the equations: free values small at first (zero left out: it makes points special), then
    random fractions, within the bounds that conditions put on single variables."""
    bounds: Mapping[str, Bound] = variable_bounds(problem)
    misses = 0
    for index in range(_VARIETY_CANDIDATES):
        if index < _VARIETY_CANDIDATES // 3:
            point = bounded_point(problem, bounds, rng, lambda: small_rational(rng))
        else:
            size = 1 + index * 3 // _VARIETY_CANDIDATES
            point = bounded_point(problem, bounds, rng, lambda: random_rational(rng, size))
        if solve_plan(plan, point, rng):
            misses = 0
            yield point
        else:
            misses += 1
            if misses >= _VARIETY_MISSES:
                return
            yield None


def _vanishes_generically(screen: Screen, plan: Sequence[Step], rng: random.Random) -> bool | None:
    """True when f is 0 mod p at random points of the equations (solved mod p, inverses computed mod p):
    f then vanishes wherever the claim is defined on them, up to a chance of about deg/p per point (or on
    the part of them the points fall on).  False when it does not; None when no such point was found."""
    agreed = attempts = 0
    while agreed < _GENERIC_TRIALS:
        attempts += 1
        if attempts > 4 * _GENERIC_TRIALS:
            return None
        point: dict[str, Any] = {name: Residue(rng.randrange(1, PRIME)) for name in screen.names}
        if not solve_plan(plan, point, rng, MODULAR):
            continue
        value = screen.value([point[name].value for name in screen.names])
        if value is None:
            continue
        if value:
            return False
        agreed += 1
    return True


def definitions(conditions: Sequence[Condition]) -> list[tuple[str, Expr]] | None:
    """The equation conditions as definitions ``v == E`` (v a variable not in E, each defined once), in an
    order where every E uses only variables defined before it or free; None when some equation is not a
    definition or they are circular (``witness_variety.py`` solves those)."""
    defined: dict[str, Expr] = {}
    for c in conditions:
        if c.relation != "==":
            continue
        if isinstance(c.left, Var) and c.left.name not in variables(c.right) and c.left.name not in defined:
            defined[c.left.name] = c.right
        elif isinstance(c.right, Var) and c.right.name not in variables(c.left) and c.right.name not in defined:
            defined[c.right.name] = c.left
        else:
            return None
    order: list[tuple[str, Expr]] = []
    done: set[str] = set()
    while len(order) < len(defined):
        ready = [name for name, e in defined.items()
                 if name not in done and not (variables(e) & (set(defined) - done))]
        if not ready:
            return None  # circular
        for name in sorted(ready):
            order.append((name, defined[name]))
            done.add(name)
    return order


def _defined(point: Mapping[str, Fraction], order: Sequence[tuple[str, Expr]]) -> dict[str, Fraction] | None:
    """The point with every defined variable set exactly from its definition (None where one is undefined)."""
    values = dict(point)
    for name, definition in order:
        try:
            value = exact_value(definition, values)
        except (DomainError, NotEvaluable, ArithmeticError, KeyError, ValueError, TypeError):
            return None
        if value is None:
            return None
        values[name] = value
    return values


def _checked(problem: WitnessProblem, point: Mapping[str, Fraction]) -> Witness | None:
    try:
        outcome, witness = exact_check(problem, point)
    except (DomainError, ZeroDivisionError, NotEvaluable, ArithmeticError, KeyError, ValueError, TypeError):
        return None
    return witness if outcome == "witness" else None
