"""What an obligation's translation tells the trusted kernel: ``ClaimFacts`` (``kernel/tie.py``).

The translation is the bridge between a claim and polynomials; the kernel cannot translate (it imports
nothing of the search), so the facts it checks a certificate against are computed here: the ring, the
difference, the generators, the symbols known to be >= 0 and the sign hypotheses.
"""
from __future__ import annotations

from sympy.polys.rings import PolyElement

from verifier.algebra.clearing import inverse_pairs
from verifier.algebra.kernel.polynomial import poly_to_data, sign_pattern_ok
from verifier.algebra.kernel.tie import ClaimFacts
from verifier.algebra.translate import Translation


def nonnegative_symbols(tr: Translation) -> tuple[str, ...]:
    """Ring symbols known to be >= 0 wherever the obligation's assumptions hold: principal square roots,
    exponentials, variables with a hypothesis ``v > c`` or ``v >= c`` (c >= 0), and inverses of
    quantities that are themselves >= 0 (then > 0, since they are not zero)."""
    names = {a.name for a in tr.aux if a.kind in ("radical", "exp", "exp_inverse")}
    symbols = [str(x) for x in tr.ring.symbols]
    for hypothesis, _strict in tr.signs:
        # a*v - c >= 0 (or > 0) with a > 0 and c >= 0 makes v >= 0: hypotheses and square-root domains
        variable = _bounded_variable(hypothesis)
        if variable is not None:
            names.add(symbols[variable])
    inverses = [(symbols[index], u) for _, index, u in inverse_pairs(tr)]
    changed = True
    while changed:  # an inverse of an inverse of something >= 0 is >= 0 too
        changed = False
        for name, inverted in inverses:
            if name not in names and sign_pattern_ok(inverted, {symbols.index(n) for n in names}):
                names.add(name)
                changed = True
    return tuple(sorted(names))


def _bounded_variable(p: PolyElement) -> int | None:
    """The index of v when p == a*v - c with a > 0 and c >= 0, else None."""
    linear = None
    for monom, coeff in p.terms():
        degree = sum(monom)
        if degree == 1 and coeff > 0 and linear is None:
            linear = monom.index(1)
        elif degree == 0 and coeff <= 0:
            continue
        else:
            return None
    return linear


def claim_facts(tr: Translation) -> ClaimFacts:
    """The facts of one translated obligation, as the kernel's plain data."""
    return ClaimFacts(
        symbols=tuple(str(s) for s in tr.ring.symbols),
        target=poly_to_data(tr.difference),
        generators=tuple(poly_to_data(g.poly) for g in tr.generators),
        nonnegative_symbols=nonnegative_symbols(tr),
        signs=tuple((poly_to_data(p), strict) for p, strict in tr.signs),
    )
