"""Times idealcheck's Groebner engine against Singular, sympy's own Buchberger and the previous engine.

Run: ``python tests/benchmarks/bench_groebner.py [runs]``.  Prints CPU seconds and ratios measured in this
one run; nothing is asserted about time.  Every row also checks that the bases agree.  Singular (Debian
package ``singular``) is only a reference here, never a runtime dependency; its rows are skipped with a
note when it is not installed.  The previous engine (pure Python, cofactors tracked during the run) is
loaded from git history (commit OLD_ENGINE_COMMIT) into a temporary module.
"""
from __future__ import annotations

import importlib.util
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path
from typing import Callable

from sympy.polys.domains import QQ
from sympy.polys.groebnertools import groebner as sympy_groebner
from sympy.polys.orderings import grevlex, lex
from sympy.polys.rings import PolyElement, ring

from verifier.model.limits import decision_clock
from verifier.algebra.groebner import GroebnerTimeout, groebner_basis, membership_cofactors

OLD_ENGINE_COMMIT = "fedfe9a"

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
    """Least CPU time over ``runs`` runs (CPU, so the figures do not depend on machine load)."""
    best, value = float("inf"), None
    for _ in range(runs):
        start = time.process_time()
        value = action()
        best = min(best, time.process_time() - start)
    return best, value


def old_engine():
    """The engine as of OLD_ENGINE_COMMIT, or None outside a git checkout."""
    root = Path(__file__).resolve().parents[2]
    shown = subprocess.run(["git", "show", f"{OLD_ENGINE_COMMIT}:verifier/algebra/groebner.py"], cwd=root,
                           capture_output=True, text=True)
    if shown.returncode != 0:
        return None
    path = Path(tempfile.mkdtemp()) / "old_groebner.py"
    path.write_text(shown.stdout)
    spec = importlib.util.spec_from_file_location("old_groebner", path)
    module = importlib.util.module_from_spec(spec)
    sys.modules["old_groebner"] = module  # dataclasses look their module up while decorating
    spec.loader.exec_module(module)
    return module


def singular_seconds(system: list[PolyElement], repeats: int) -> float | None:
    """CPU seconds of one reduced ``std`` in Singular (average over ``repeats``), or None without it."""
    if shutil.which("Singular") is None:
        return None
    ring_ = system[0].ring
    names = ",".join(str(s) for s in ring_.symbols)
    order = {"grevlex": "dp", "lex": "lp"}[ring_.order.alias]
    ideal = ",\n".join(str(p.as_expr()).replace("**", "^") for p in system)
    script = (f"ring r = 0, ({names}), {order}; ideal i = {ideal}; option(redSB);\n"
              f'system("--ticks-per-sec", 1000); ideal g; int t = timer;\n'
              f"for (int k = 1; k <= {repeats}; k++) {{ g = std(i); }}\n"
              f"print(timer - t); print(size(g)); quit;\n")
    out = subprocess.run(["Singular", "-q"], input=script, capture_output=True, text=True).stdout.split()
    return int(out[0]) / 1000.0 / repeats


def member_of(system: list[PolyElement]) -> PolyElement:
    """A member of the ideal of the kind a proof needs: a combination of the generators with polynomial
    multipliers (here x_i^2 times generator i, plus x_0 times the product of the last and second)."""
    x = system[0].ring.gens
    return sum((x[i % len(x)] ** 2 * g for i, g in enumerate(system)), system[0].ring.zero) \
        + x[0] * system[-1] * system[1]


def singular_rows(runs: int, old) -> None:
    print("\nagainst Singular (CPU seconds; goal <= 10x for grevlex, <= 100x for lex) and the previous engine")
    print(f"{'system':22} {'Singular s':>10} {'ours s':>8} {'ratio':>7} {'previous s':>10} {'new/prev':>8}")
    for name, build, repeats in [("katsura-7 grevlex", lambda: katsura(7), 3),
                                 ("cyclic-6 grevlex", lambda: cyclic(6), 20),
                                 ("katsura-4 lex", lambda: katsura(4, lex), 50)]:
        system = build()
        t_ours, ours = best_of(runs, lambda: groebner_basis(system, track_cofactors=False))
        t_sing = singular_seconds(system, repeats)
        sing_text = (f"{t_sing:10.4f} {t_ours:8.3f} {t_ours / t_sing:7.1f}" if t_sing
                     else f"{'(absent)':>10} {t_ours:8.3f} {'-':>7}")
        prev_text = f"{'-':>10} {'-':>8}"
        if old is not None:
            t_old, previous = best_of(1, lambda: old.groebner_basis(system, track_cofactors=False))
            assert list(previous.basis) == list(ours.basis), f"{name}: engines disagree"
            prev_text = f"{t_old:10.2f} {t_ours / t_old:8.3f}"
        print(f"{name:22} {sing_text} {prev_text}")
    if shutil.which("Singular") is None:
        print("(Singular is not installed: apt-get install singular for the reference rows)")


def top_member_of(basis: tuple[PolyElement, ...]) -> PolyElement:
    """A member that needs the last basis elements found (the largest leads, the longest histories):
    x_0^2 times the first element of the reduced basis plus x_1 times the second."""
    x = basis[0].ring.gens
    return x[0] ** 2 * basis[0] + x[1] * basis[1]


def cofactor_rows(runs: int) -> None:
    print("\ncofactors (what an ideal proof needs): tracked basis plus the lift of one member, against the "
          "plain basis; goal <= 3x")
    print("(member: a combination of the generators with small multipliers, as a proof's difference is; "
          "top member: multiples of the top basis elements, lifted through their whole history)")
    print(f"{'system':22} {'plain s':>8} {'proof s':>8} {'ratio':>7} {'terms':>6} {'top member s':>13} "
          f"{'ratio':>7} {'terms':>6} {'all basis cofactors s':>22}")
    for name, build in [("katsura-7 grevlex", lambda: katsura(7)), ("cyclic-6 grevlex", lambda: cyclic(6))]:
        system = build()
        member = member_of(system)
        t_plain, plain = best_of(runs, lambda: groebner_basis(system, track_cofactors=False))
        top = top_member_of(plain.basis)

        def proof(f: PolyElement):
            result = groebner_basis(system)
            return membership_cofactors(f, result)

        t_proof, cofactors = best_of(runs, lambda: proof(member))
        t_top, top_cofactors = best_of(1, lambda: proof(top))
        assert cofactors is not None and top_cofactors is not None
        terms = sum(len(c.terms()) for c in cofactors)
        top_terms = sum(len(c.terms()) for c in top_cofactors)
        t_all, _ = best_of(1, lambda: groebner_basis(system).cofactors)
        print(f"{name:22} {t_plain:8.3f} {t_proof:8.3f} {t_proof / t_plain:7.1f} {terms:6} {t_top:13.3f} "
              f"{t_top / t_plain:7.1f} {top_terms:6} {t_all:22.3f}")


def main() -> int:
    runs = int(sys.argv[1]) if len(sys.argv) > 1 else 3
    print("against sympy's Buchberger (CPU seconds)")
    print(f"{'system':30} {'sympy s':>9} {'ours s':>9} {'ratio':>7} {'ours+cof s':>11} {'ratio':>7}  size")
    for name, build in SYSTEMS:
        system = build()
        ring_ = system[0].ring
        t_ref, ref = best_of(runs, lambda: sympy_groebner(system, ring_, method="buchberger"))
        t_plain, plain = best_of(
            runs, lambda: groebner_basis(system, track_cofactors=False, deadline=decision_clock() + LIMIT)
        )
        assert list(plain.basis) == ref, f"{name}: basis differs from sympy's"
        try:
            t_cof, _ = best_of(
                1, lambda: groebner_basis(system, deadline=decision_clock() + LIMIT).cofactors
            )
            cof_text = f"{t_cof:11.4f} {t_cof / t_ref:7.2f}"
        except GroebnerTimeout:
            cof_text = f"{'>' + str(int(LIMIT)):>11} {'-':>7}"
        print(f"{name:30} {t_ref:9.4f} {t_plain:9.4f} {t_plain / t_ref:7.2f} {cof_text}  {len(ref)}")
    singular_rows(runs, old_engine())
    cofactor_rows(runs)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
