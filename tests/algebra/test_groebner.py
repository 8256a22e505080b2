"""Tests of the Groebner engine against sympy (reference library) and published examples."""
from __future__ import annotations

import random

import pytest
from sympy.polys.domains import QQ
from sympy.polys.groebnertools import groebner as sympy_groebner
from sympy.polys.orderings import grevlex, grlex, lex
from sympy.polys.polytools import reduced as sympy_reduced
from sympy.polys.rings import PolyElement, ring

from verifier.model.limits import decision_clock
from verifier.algebra.groebner import (
    GroebnerResult,
    GroebnerTimeout,
    groebner_basis,
    membership_cofactors,
    reduce,
)

RANDOM_CASES = 240


def combination(cofactors, generators) -> PolyElement | int:
    if not generators:
        return 0
    total = generators[0].ring.zero
    for c, g in zip(cofactors, generators):
        total += c * g
    return total


def assert_cofactors_hold(result: GroebnerResult, generators) -> None:
    assert result.cofactors is not None
    assert len(result.cofactors) == len(result.basis)
    for element, row in zip(result.basis, result.cofactors):
        assert len(row) == len(generators)
        assert element == combination(row, generators)  # plain expansion


def random_poly(rng: random.Random, ring_, max_degree: int, max_terms: int) -> PolyElement:
    p = ring_.zero
    for _ in range(rng.randint(1, max_terms)):
        exponents = [0] * ring_.ngens
        for _ in range(rng.randint(0, max_degree)):
            exponents[rng.randrange(ring_.ngens)] += 1
        p += ring_({tuple(exponents): QQ(rng.randint(-4, 4), rng.randint(1, 3))})
    return p


def random_case(seed: int):
    """A small random ideal: 2-4 variables, 1-4 generators, total degree <= 3 (<= 2 with 4 variables)."""
    rng = random.Random(seed)
    nvars = rng.randint(2, 4)
    order = grevlex if seed % 2 == 0 else lex
    ring_, *_ = ring(",".join(f"x{i}" for i in range(nvars)), QQ, order)
    max_degree = 2 if nvars == 4 else 3
    generators = [random_poly(rng, ring_, max_degree, 3) for _ in range(rng.randint(1, 4))]
    if seed % 4 < 2:
        # Make every generator vanish at one rational point, so the ideal is proper (not all of 1).
        point = [QQ(rng.randint(-2, 2), rng.randint(1, 2)) for _ in range(nvars)]
        generators = [g - g.evaluate(list(zip(ring_.gens, point))) for g in generators]
    return rng, ring_, generators, max_degree


@pytest.mark.parametrize("seed", range(RANDOM_CASES))
def test_random_ideal_matches_sympy(seed: int) -> None:
    rng, ring_, generators, max_degree = random_case(seed)
    nonzero = [g for g in generators if g]
    # Reference library: sympy's groebner (Buchberger), reduced bases sorted largest leading monomial first.
    expected = sympy_groebner(nonzero, ring_, method="buchberger") if nonzero else []
    result = groebner_basis(generators)
    assert list(result.basis) == expected
    assert_cofactors_hold(result, generators)
    assert groebner_basis(generators, track_cofactors=False) == GroebnerResult(result.basis, False, len(generators))

    # Normal forms: our remainder equals sympy's remainder modulo the same Groebner basis.
    f = random_poly(rng, ring_, max_degree + 1, 4)
    quotients, remainder = reduce(f, result.basis)
    assert remainder == (f.rem(expected) if expected else f)
    assert f == combination(quotients, result.basis) + remainder

    # Membership: a combination of the generators is a member with valid cofactors; f is one iff its
    # remainder is zero.
    member = combination([random_poly(rng, ring_, 1, 2) for _ in generators], generators)
    cofactors = membership_cofactors(member, result)
    assert cofactors is not None and member == combination(cofactors, generators)
    f_cofactors = membership_cofactors(f, result)
    if remainder:
        assert f_cofactors is None
    else:
        assert f_cofactors is not None and f == combination(f_cofactors, generators)


@pytest.mark.parametrize("seed", range(0, RANDOM_CASES, 12))
def test_remainder_matches_sympy_reduced(seed: int) -> None:
    """Reference library: sympy.polys.polytools.reduced on expressions, same generators and order."""
    rng, ring_, generators, max_degree = random_case(seed)
    result = groebner_basis(generators, track_cofactors=False)
    if not result.basis:
        pytest.skip("zero ideal")
    f = random_poly(rng, ring_, max_degree + 1, 4)
    _, remainder = reduce(f, result.basis)
    gens = ring_.symbols
    _, expected = sympy_reduced(f.as_expr(), [b.as_expr() for b in result.basis], *gens, order=ring_.order)
    assert remainder == ring_.from_expr(expected)


@pytest.mark.parametrize("seed", range(60))
def test_division_by_any_list_matches_sympy_div(seed: int) -> None:
    """Division by a list that is no Groebner basis: same quotients and remainder as sympy's
    PolyElement.div (reference library), which also divides by the first divisor in list order."""
    rng = random.Random(1000 + seed)
    ring_, *_ = ring("x,y,z", QQ, grevlex if seed % 2 else lex)
    divisors = [random_poly(rng, ring_, 2, 3) for _ in range(rng.randint(1, 3))]
    divisors = [d for d in divisors if d] or [ring_.gens[0]]
    f = random_poly(rng, ring_, 4, 6) or ring_.gens[1]  # sympy's div gives no quotients for f = 0
    quotients, remainder = reduce(f, divisors)
    expected_q, expected_r = f.div(divisors)
    assert list(quotients) == list(expected_q)
    assert remainder == expected_r
    leads = [d.LM for d in divisors]
    for monom in remainder:
        assert not any(all(a >= b for a, b in zip(monom, lead)) for lead in leads)


# ---------------------------------------------------------------------------------- published examples


def test_cox_little_oshea_grlex_example() -> None:
    """Cox, Little, O'Shea, "Ideals, Varieties, and Algorithms", chapter 2 (from memory): the ideal of
    x^3 - 2xy and x^2y - 2y^2 + x under grlex has reduced Groebner basis x^2, xy, y^2 - x/2."""
    R, x, y = ring("x,y", QQ, grlex)
    generators = [x**3 - 2 * x * y, x**2 * y - 2 * y**2 + x]
    result = groebner_basis(generators)
    assert list(result.basis) == [x**2, x * y, y**2 - x / 2]
    assert list(result.basis) == sympy_groebner(generators, R, method="buchberger")
    assert_cofactors_hold(result, generators)


def test_cox_little_oshea_three_quadrics_lex() -> None:
    """Cox, Little, O'Shea, "Ideals, Varieties, and Algorithms", chapter 2 (from memory): x^2+y+z = 1,
    x+y^2+z = 1, x+y+z^2 = 1 in lex x > y > z; the last basis element is z^6 - 4z^4 + 4z^3 - z^2."""
    R, x, y, z = ring("x,y,z", QQ, lex)
    generators = [x**2 + y + z - 1, x + y**2 + z - 1, x + y + z**2 - 1]
    result = groebner_basis(generators)
    assert result.basis[0] == x + y + z**2 - 1
    assert result.basis[-1] == z**6 - 4 * z**4 + 4 * z**3 - z**2
    assert list(result.basis) == sympy_groebner(generators, R, method="buchberger")
    assert_cofactors_hold(result, generators)


def test_twisted_cubic_lex() -> None:
    """The twisted cubic y = x^2, z = x^3 (Cox, Little, O'Shea, chapter 1, from memory); its lex basis
    (x > y > z) x^2 - y, xy - z, xz - y^2, y^3 - z^2 is common practice."""
    R, x, y, z = ring("x,y,z", QQ, lex)
    generators = [x**2 - y, x**3 - z]
    result = groebner_basis(generators)
    assert set(result.basis) == {x**2 - y, x * y - z, x * z - y**2, y**3 - z**2}
    assert list(result.basis) == sympy_groebner(generators, R, method="buchberger")
    assert_cofactors_hold(result, generators)


def test_unit_circle_and_line() -> None:
    """x^2 + y^2 = 1 and x = y: the lex basis ends in y^2 - 1/2 (common practice)."""
    R, x, y = ring("x,y", QQ, lex)
    generators = [x**2 + y**2 - 1, x - y]
    result = groebner_basis(generators)
    assert list(result.basis) == [x - y, y**2 - QQ(1, 2)]
    assert_cofactors_hold(result, generators)


# ------------------------------------------------------------------------------------------ edge cases


def test_empty_and_zero_inputs() -> None:
    R, x, y = ring("x,y", QQ, grevlex)
    assert groebner_basis([]) == GroebnerResult((), True, 0)
    assert groebner_basis([]).cofactors == ()
    result = groebner_basis([R.zero, R.zero])
    assert result.basis == () and result.cofactors == ()
    assert membership_cofactors(R.zero, result) == (R.zero, R.zero)
    assert membership_cofactors(x, result) is None


def test_zero_generators_get_zero_cofactors() -> None:
    R, x, y = ring("x,y", QQ, grevlex)
    generators = [R.zero, x**2 - y, R.zero, x * y - 1]
    result = groebner_basis(generators)
    assert_cofactors_hold(result, generators)
    for row in result.cofactors:
        assert row[0] == 0 and row[2] == 0


def test_unit_ideal_gives_one_with_cofactors() -> None:
    """x*y = 1 and x = 0 have no common point, so 1 is in the ideal (common practice)."""
    R, x, y = ring("x,y", QQ, grevlex)
    generators = [x * y - 1, 2 * x]
    result = groebner_basis(generators)
    assert result.basis == (R.one,)
    assert_cofactors_hold(result, generators)
    anything = x**3 + y
    cofactors = membership_cofactors(anything, result)
    assert cofactors is not None and anything == combination(cofactors, generators)


def test_constant_generator() -> None:
    R, x, y = ring("x,y", QQ, lex)
    result = groebner_basis([x**2 + y, R(QQ(3, 7))])
    assert result.basis == (R.one,)
    assert_cofactors_hold(result, [x**2 + y, R(QQ(3, 7))])


def test_mixed_rings_rejected() -> None:
    R, x = ring("x", QQ, grevlex)
    S, y = ring("y", QQ, grevlex)
    with pytest.raises(ValueError):
        groebner_basis([x, y])


def test_membership_needs_tracked_cofactors() -> None:
    R, x, y = ring("x,y", QQ, grevlex)
    result = groebner_basis([x - y], track_cofactors=False)
    with pytest.raises(ValueError):
        membership_cofactors(x - y, result)


def test_reduce_skips_zero_divisors() -> None:
    R, x, y = ring("x,y", QQ, grevlex)
    quotients, remainder = reduce(x**2 + y, [R.zero, x])
    assert quotients == (R.zero, x) and remainder == y


# ---------------------------------------------------------------------------------------------- deadline


def katsura(n: int):
    """Katsura-n (definition from memory, as commonly used in Groebner basis benchmarks)."""
    R, *u = ring(",".join(f"u{i}" for i in range(n + 1)), QQ, grevlex)

    def var(i: int):
        i = abs(i)
        return u[i] if i <= n else R.zero

    system = [u[0] + 2 * sum(u[1:], R.zero) - 1]
    for m in range(n):
        system.append(sum((var(l) * var(m - l) for l in range(-n, n + 1)), R.zero) - u[m])
    return system


def test_heavy_ideal_with_tiny_deadline_times_out() -> None:
    system = katsura(6)
    with pytest.raises(GroebnerTimeout):
        groebner_basis(system, deadline=decision_clock() + 0.02)
    with pytest.raises(GroebnerTimeout):
        groebner_basis(system, track_cofactors=False, deadline=decision_clock() + 0.02)


def test_passed_deadline_stops_reduce_and_membership() -> None:
    R, x, y = ring("x,y", QQ, grevlex)
    result = groebner_basis([x**2 - y])
    past = decision_clock() - 1.0
    with pytest.raises(GroebnerTimeout):
        reduce(x**5, result.basis, deadline=past)
    with pytest.raises(GroebnerTimeout):
        membership_cofactors(x**5, result, deadline=past)
    with pytest.raises(GroebnerTimeout):
        groebner_basis([x**2 - y], deadline=past)



def test_non_rational_coefficients_rejected() -> None:
    from sympy.polys.domains import ZZ

    R, x, y = ring("x,y", ZZ, grevlex)
    with pytest.raises(ValueError):
        groebner_basis([x - y])


# ------------------------------------------------------------------------- lex through grevlex (FGLM)


def cyclic(n: int, order):
    """Cyclic n-roots (Bjoerck and Froeberg, J. Symbolic Comput. 12, 1991)."""
    R, *x = ring(",".join(f"x{i}" for i in range(n)), QQ, order)
    system = []
    for length in range(1, n):
        total = R.zero
        for start in range(n):
            term = R.one
            for k in range(length):
                term *= x[(start + k) % n]
            total += term
        system.append(total)
    product = R.one
    for v in x:
        product *= v
    return system + [product - 1]


@pytest.mark.parametrize("system", [
    pytest.param(lambda: cyclic(4, lex), id="cyclic-4"),
    pytest.param(lambda: [p.set_ring(ring("u0,u1,u2,u3", QQ, lex)[0]) for p in katsura(3)], id="katsura-3"),
])
def test_zero_dimensional_lex_matches_sympy(system) -> None:
    """Zero-dimensional lex bases come from grevlex and a change of order; reference: sympy's lex basis."""
    generators = system()
    R = generators[0].ring
    result = groebner_basis(generators)
    assert list(result.basis) == sympy_groebner(generators, R, method="buchberger")
    assert_cofactors_hold(result, generators)
    member = combination([R.gens[0] ** 2, R.gens[-1], R.one] + [R.zero] * (len(generators) - 3), generators)
    cofactors = membership_cofactors(member, result)
    assert cofactors is not None and member == combination(cofactors, generators)


def test_katsura_4_membership_lift_expands() -> None:
    """Cofactors lifted for one member only (not for the basis) still expand to it; reference: sympy's
    grevlex basis for the basis itself."""
    generators = katsura(4)
    R = generators[0].ring
    result = groebner_basis(generators)
    assert list(result.basis) == sympy_groebner(generators, R, method="buchberger")
    u = R.gens
    member = combination([u[1] ** 2, u[0] * u[2], R.one, u[3], u[4] ** 3], generators)
    cofactors = membership_cofactors(member, result)
    assert cofactors is not None and member == combination(cofactors, generators)
    assert result.basis != (R.one,)  # katsura-4 has solutions, so 1 is not a member
    assert membership_cofactors(member + R.one, result) is None


def test_tail_reduced_basis_matches_sympy_and_lifts() -> None:
    """katsura-4 in grevlex makes the engine re-reduce tails of basis elements (recorded as such in the
    trace); the basis must still be sympy's and every lifted cofactor must expand exactly."""
    from verifier.algebra.groebner_flint import TAIL_REDUCED

    generators = katsura(4)
    R = generators[0].ring
    result = groebner_basis(generators)
    assert list(result.basis) == sympy_groebner(generators, R, method="buchberger")
    assert result.lift is not None
    trace = result.lift.trace  # type: ignore[attr-defined]
    assert any(j == TAIL_REDUCED for _, j in trace.origins)
    assert_cofactors_hold(result, generators)
    x = R.gens
    member = combination([x[1] ** 2, x[0], R.one, x[4], x[2] * x[3]], generators)
    cofactors = membership_cofactors(member, result)
    assert cofactors is not None and member == combination(cofactors, generators)


# ------------------------------------------------------------------ membership lift through cheap divisors


def test_small_combination_keeps_small_cofactors() -> None:
    """A member built from the generators with small multipliers is lifted through the generators and early
    polynomials of the computation, not through the basis elements (whose cofactors have thousands of
    terms on cyclic-5): the certificate stays within a small multiple of the combination's own size.
    Reference for the basis and for membership: sympy's Buchberger and its ``reduced``."""
    generators = cyclic(5, grevlex)
    R = generators[0].ring
    x = R.gens
    result = groebner_basis(generators)
    expected = sympy_groebner(generators, R, method="buchberger")
    assert list(result.basis) == expected
    multipliers = [x[0] ** 2, x[1] ** 2, x[2] ** 2, x[3] ** 2, x[4] ** 2]
    member = combination(multipliers, generators) + x[0] * generators[-1] * generators[1]
    assert not member.rem(expected)  # sympy agrees it is a member
    cofactors = membership_cofactors(member, result)
    assert cofactors is not None and member == combination(cofactors, generators)
    own_size = sum(len(m.terms()) for m in multipliers) + len((x[0] * generators[1]).terms())
    assert sum(len(c.terms()) for c in cofactors) <= 10 * own_size
    outside = member + x[1] * x[2]
    assert outside.rem(expected)  # sympy: not a member
    assert membership_cofactors(outside, result) is None


def test_multiples_of_high_basis_elements_lift_exactly() -> None:
    """Members that need the last (highest-sugar) basis elements still lift, through their full history;
    reference: sympy's reduced basis (so the multiples are members by construction)."""
    generators = cyclic(5, grevlex)
    R = generators[0].ring
    x = R.gens
    result = groebner_basis(generators)
    basis = sympy_groebner(generators, R, method="buchberger")
    member = x[0] ** 2 * basis[0] + x[1] * basis[1] - basis[2]
    cofactors = membership_cofactors(member, result)
    assert cofactors is not None and member == combination(cofactors, generators)
