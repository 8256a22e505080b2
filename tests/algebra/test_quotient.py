"""Dimension and standard monomials read off the leading-term ideal (algebra/quotient.py)."""
from __future__ import annotations

import math

import pytest
from sympy import QQ, groebner, symbols
from sympy.polys.orderings import grevlex
from sympy.polys.rings import ring

from verifier.algebra.groebner import groebner_basis
from verifier.algebra.quotient import (
    largest_independent_set,
    minimal_monomial_generators,
    quotient_structure,
    standard_monomials,
)


def cyclic_system(n: int):
    """The cyclic n-roots system: elementary-symmetric-like cyclic sums for k < n, and x0*...*x(n-1) = 1."""
    R, *xs = ring(",".join(f"x{i}" for i in range(n)), QQ, grevlex)
    equations = []
    for k in range(1, n):
        equations.append(sum((math.prod(xs[(i + j) % n] for j in range(k)) for i in range(n)), R.zero))
    equations.append(math.prod(xs) - 1)
    return R, equations


def katsura_system(n: int):
    """Katsura's system in u0..un: sum over l = -n..n of u_l = 1 and sum_l u_l*u_(m-l) = u_m for m < n."""
    R, *u = ring(",".join(f"u{i}" for i in range(n + 1)), QQ, grevlex)

    def U(i: int):
        return u[abs(i)] if abs(i) <= n else R.zero

    equations = [sum((U(l) for l in range(-n, n + 1)), R.zero) - 1]
    for m in range(n):
        equations.append(sum((U(l) * U(m - l) for l in range(-n, n + 1)), R.zero) - U(m))
    return R, equations


def _structure(R, equations):
    basis = groebner_basis(equations, track_cofactors=False).basis
    return quotient_structure(basis, R), basis


@pytest.mark.parametrize(("n", "published"), [(3, 6), (5, 70)])
def test_cyclic_n_roots_counts(n, published):
    # Björck and Fröberg, "A faster way to count the solutions of inhomogeneous systems of algebraic
    # equations, with applications to cyclic n-roots", J. Symbolic Computation 12 (1991): cyclic 5-roots
    # has 70 solutions; cyclic 3-roots has 6 (counts from memory, cross-checked with sympy below).
    R, equations = cyclic_system(n)
    structure, basis = _structure(R, equations)
    assert structure.zero_dimensional and structure.dimension == 0
    assert structure.standard_monomial_count == published
    if n == 3:  # (sympy's basis for cyclic 5 is compared in test_explain.py)
        assert groebner([e.as_expr() for e in equations], *R.symbols, order="grevlex").is_zero_dimensional


def test_cyclic_4_roots_is_one_dimensional():
    # Björck and Fröberg (1991, from memory): cyclic 4-roots has infinitely many solutions (curves);
    # sympy's groebner agrees that the ideal is not zero-dimensional
    R, equations = cyclic_system(4)
    structure, _ = _structure(R, equations)
    assert not groebner([e.as_expr() for e in equations], *R.symbols, order="grevlex").is_zero_dimensional
    assert not structure.zero_dimensional
    assert structure.dimension == 1
    assert structure.standard_monomial_count is None


@pytest.mark.parametrize("n", [2, 3, 4])
def test_katsura_counts_meet_the_bezout_bound(n):
    # Katsura's system (as stated in the usual polynomial-system benchmark collections) has 2**n solutions,
    # the Bezout bound of one linear and n quadratic equations (count from memory)
    R, equations = katsura_system(n)
    structure, _ = _structure(R, equations)
    assert structure.zero_dimensional
    assert structure.standard_monomial_count == 2**n


def test_standard_monomials_listed_when_few():
    R, x, y = ring("x,y", QQ, grevlex)
    # x**2 - 1, y**2 - 1: four points (+-1, +-1), standard monomials 1, y, x, x*y (common practice)
    structure = quotient_structure(groebner_basis([x**2 - 1, y**2 - 1], track_cofactors=False).basis, R)
    assert structure.standard_monomial_count == 4
    assert set(structure.standard_monomials) == {(0, 0), (1, 0), (0, 1), (1, 1)}


def test_dimension_of_a_surface_and_the_unit_ideal():
    R, x, y, z = ring("x,y,z", QQ, grevlex)
    sphere = quotient_structure(groebner_basis([x**2 + y**2 + z**2 - 1], track_cofactors=False).basis, R)
    assert sphere.dimension == 2 and len(sphere.independent_variables) == 2
    empty = quotient_structure(groebner_basis([x - 1, x - 2], track_cofactors=False).basis, R)
    assert empty.dimension == -1 and empty.standard_monomial_count == 0
    free = quotient_structure((), R)
    assert free.dimension == 3


def test_monomial_helpers():
    assert minimal_monomial_generators([(2, 0), (2, 1), (0, 3), (1, 3)]) == ((2, 0), (0, 3))
    # supports {x}, {y, z}: the largest set avoiding both is {y} or {z} plus nothing else containing x
    assert len(largest_independent_set([(1, 0, 0), (0, 1, 1)], 3)) == 1
    monomials, complete = standard_monomials([(2, 0), (1, 1), (0, 2)], 2)
    assert complete and sorted(monomials) == [(0, 0), (0, 1), (1, 0)]
    with pytest.raises(ValueError):
        standard_monomials([(1, 1)], 2)


def test_dimension_search_agrees_with_brute_force_on_random_monomial_ideals():
    # the Krull dimension of a monomial ideal is the size of a largest set of variables containing no
    # generator's support (Cox, Little, O'Shea, "Ideals, Varieties, and Algorithms", chapter 9, section 1,
    # from memory): checked against all subsets
    import itertools
    import random

    rng = random.Random(7)
    for _ in range(60):
        n = rng.randint(1, 6)
        gens = [tuple(rng.choice((0, 0, 1, 2)) for _ in range(n)) for _ in range(rng.randint(1, 5))]
        gens = [g for g in gens if any(g)] or [tuple([1] + [0] * (n - 1))]
        supports = [{i for i, e in enumerate(g) if e} for g in gens]
        brute = max(len(s) for k in range(n + 1) for s in map(set, itertools.combinations(range(n), k))
                    if not any(sup <= s for sup in supports))
        found = largest_independent_set(gens, n)
        assert len(found) == brute
        assert not any(sup <= set(found) for sup in supports)


def test_a_large_search_settles_for_a_bound(monkeypatch):
    import verifier.algebra.quotient as quotient

    monkeypatch.setattr(quotient, "SEARCH_NODE_LIMIT", 3)
    n = 12
    # x_i * x_(i+1) for a cycle of 12 variables: the largest independent set has 6 variables
    gens = [tuple(1 if j in (i, (i + 1) % n) else 0 for j in range(n)) for i in range(n)]
    R = ring(",".join(f"v{i}" for i in range(n)), QQ, grevlex)[0]
    basis = [R({g: 1}) for g in gens]
    structure = quotient.quotient_structure(basis, R)
    assert not structure.dimension_exact and 1 <= structure.dimension <= 6
    monkeypatch.setattr(quotient, "SEARCH_NODE_LIMIT", 200_000)
    assert quotient.quotient_structure(basis, R).dimension == 6
