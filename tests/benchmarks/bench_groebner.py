"""Times idealcheck's Groebner engine against sympy's own Buchberger on a few standard systems.

Run: ``python tests/benchmarks/bench_groebner.py``.  Prints seconds and ratios (ours / sympy) measured in
this one run; nothing is asserted about time.  Each row also checks that both bases agree.
"""
from __future__ import annotations

import sys
import time
from typing import Callable

from sympy.polys.domains import QQ
from sympy.polys.groebnertools import groebner as sympy_groebner
from sympy.polys.orderings import grevlex, lex
from sympy.polys.rings import PolyElement, ring

from verifier.algebra.groebner import GroebnerTimeout, groebner_basis

LIMIT = 120.0  # seconds per run of our engine before it is reported as a time-out


def cyclic(n: int, order=grevlex) -> list[PolyElement]:
    """Cyclic n-roots: Bjoerck and Froeberg, "A faster way to count the solutions of inhomogeneous
    systems of algebraic equations, with applications to cyclic n-roots", J. Symbolic Comput. 12, 1991."""
    _, *x = ring(",".join(f"x{i}" for i in range(n)), QQ, order)
    system = []
    for length in range(1, n):
        total = x[0].ring.zero
        for start in range(n):
            term = x[0].ring.one
            for k in range(length):
                term *= x[(start + k) % n]
            total += term
        system.append(total)
    product = x[0].ring.one
    for v in x:
        product *= v
    system.append(product - 1)
    return system


def katsura(n: int, order=grevlex) -> list[PolyElement]:
    """Katsura-n (n + 1 unknowns u0..un), as commonly used in Groebner basis benchmarks (definition from
    memory): u0 + 2*sum(u1..un) = 1 and sum_{l=-n..n} u_|l| * u_|m-l| = u_m for m = 0..n-1."""
    _, *u = ring(",".join(f"u{i}" for i in range(n + 1)), QQ, order)

    def var(i: int) -> PolyElement:
        i = abs(i)
        return u[i] if i <= n else u[0].ring.zero

    system = [u[0] + 2 * sum(u[1:], u[0].ring.zero) - 1]
    for m in range(n):
        system.append(sum((var(l) * var(m - l) for l in range(-n, n + 1)), u[0].ring.zero) - u[m])
    return system


def three_quadrics(order=lex) -> list[PolyElement]:
    """x^2+y+z=1, x+y^2+z=1, x+y+z^2=1: the lex example of Cox, Little, O'Shea, "Ideals, Varieties, and
    Algorithms", chapter 2 (from memory)."""
    _, x, y, z = ring("x,y,z", QQ, order)
    return [x**2 + y + z - 1, x + y**2 + z - 1, x + y + z**2 - 1]


SYSTEMS: list[tuple[str, Callable[[], list[PolyElement]]]] = [
    ("cyclic-4 grevlex", lambda: cyclic(4)),
    ("cyclic-4 lex", lambda: cyclic(4, lex)),
    ("katsura-3 grevlex", lambda: katsura(3)),
    ("katsura-4 grevlex", lambda: katsura(4)),
    ("katsura-5 grevlex", lambda: katsura(5)),
    ("cyclic-5 grevlex", lambda: cyclic(5)),
    ("katsura-3 lex", lambda: katsura(3, lex)),
    ("three quadrics lex (CLO)", three_quadrics),
    ("three quadrics grevlex (CLO)", lambda: three_quadrics(grevlex)),
]


def best_of(runs: int, action: Callable[[], object]) -> tuple[float, object]:
    best, value = float("inf"), None
    for _ in range(runs):
        start = time.perf_counter()
        value = action()
        best = min(best, time.perf_counter() - start)
    return best, value


def main() -> int:
    runs = int(sys.argv[1]) if len(sys.argv) > 1 else 3
    print(f"{'system':30} {'sympy s':>9} {'ours s':>9} {'ratio':>7} {'ours+cof s':>11} {'ratio':>7}  size")
    for name, build in SYSTEMS:
        system = build()
        ring_ = system[0].ring
        t_ref, ref = best_of(runs, lambda: sympy_groebner(system, ring_, method="buchberger"))
        t_plain, plain = best_of(
            runs, lambda: groebner_basis(system, track_cofactors=False, deadline=time.monotonic() + LIMIT)
        )
        assert list(plain.basis) == ref, f"{name}: basis differs from sympy's"
        try:
            t_cof, _ = best_of(
                1, lambda: groebner_basis(system, track_cofactors=True, deadline=time.monotonic() + LIMIT)
            )
            cof_text = f"{t_cof:11.4f} {t_cof / t_ref:7.2f}"
        except GroebnerTimeout:
            cof_text = f"{'>' + str(int(LIMIT)):>11} {'-':>7}"
        print(f"{name:30} {t_ref:9.4f} {t_plain:9.4f} {t_plain / t_ref:7.2f} {cof_text}  {len(ref)}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
