"""Newton's method on the equation conditions of a claim, with mpmath (used by the witness search and check).

Residuals are ``left - right`` of each equation; the Jacobian is taken by central differences; steps are
minimum-norm Gauss-Newton steps, so that under- and over-determined systems (dependent equations) work.
"""
from __future__ import annotations

from fractions import Fraction
from typing import Mapping, Sequence, Union

import mpmath
from mpmath import mp, mpf
# `mpmath.matrix` is a class built at run time on the context, so it cannot be an annotation: use its base
from mpmath.matrices.matrices import _matrix as Matrix

from verifier.model.limits import decision_clock
from verifier.algebra.evaluate import numeric_value, tiny, to_mpf
from verifier.model.claim import Condition

Real = Union[mpf, Fraction]

RANK_TOLERANCE = mpf(10) ** -12  # smallest singular value of the Jacobian, relative to max(1, largest entry)


def scale(*xs: mpf) -> mpf:
    """max(1, |x| for x in xs): the size a difference is measured against."""
    return max([mpf(1)] + [abs(x) for x in xs])


def residuals(equations: Sequence[Condition], point: Mapping[str, Real], prec: int,
              strict: bool = False) -> list[tuple[mpf, mpf]]:
    """(left - right, size) for each equation."""
    out = []
    for c in equations:
        a = numeric_value(c.left, point, prec, strict_radicands=strict)
        b = numeric_value(c.right, point, prec, strict_radicands=strict)
        out.append((a - b, scale(a, b)))
    return out


def jacobian(equations: Sequence[Condition], point: dict[str, mpf], unknowns: Sequence[str],
             prec: int) -> Matrix:
    """Central differences with step 10**-(prec/3) (error ~ 10**-(2 prec/3), enough for Newton)."""
    jac = mpmath.matrix(len(equations), len(unknowns))
    for j, name in enumerate(unknowns):
        x = point[name]
        h = mpf(10) ** (-(prec // 3)) * scale(x)
        plus = dict(point)
        plus[name] = x + h
        minus = dict(point)
        minus[name] = x - h
        rp = residuals(equations, plus, prec)
        rm = residuals(equations, minus, prec)
        for i in range(len(equations)):
            jac[i, j] = (rp[i][0] - rm[i][0]) / (2 * h)
    return jac


def min_singular_ratio(jac: Matrix) -> mpf:
    """Smallest singular value over max(1, largest entry): 0 when the rows are dependent, tiny near a
    singular point such as x = 1e-70 of x**2 == 0 (where no true solution need lie next to the point)."""
    rows, cols = jac.rows, jac.cols
    if rows > cols:
        return mpf(0)
    largest = max(abs(jac[i, j]) for i in range(rows) for j in range(cols))
    if largest == 0:
        return mpf(0)
    largest = max(largest, mpf(1))
    singular = mpmath.svd_r(jac, compute_uv=False)
    return min(abs(singular[i]) for i in range(rows)) / largest


def _minimum_norm_step(jac: Matrix, f: Matrix) -> list[mpf]:
    """step = J^T (J J^T + lambda I)^-1 f: the minimum-norm Newton step, with a tiny damping lambda (relative
    10**-(dps/3)) so that dependent equations (a circle stated twice in different forms) do not make the
    linear system singular."""
    gram = jac * jac.T
    size = max([abs(gram[i, i]) for i in range(gram.rows)] + [mpf(0)])
    if size == 0:
        raise ZeroDivisionError("zero Jacobian")
    damping = size * mpf(10) ** (-(mp.dps // 3))
    for i in range(gram.rows):
        gram[i, i] += damping
    y = mpmath.lu_solve(gram, f)
    step = jac.T * y
    return [step[j] for j in range(jac.cols)]


def newton(equations: Sequence[Condition], start: Mapping[str, Real], unknowns: Sequence[str], prec: int,
           iterations: int = 30, deadline: float | None = None, polish: int = 0) -> dict[str, mpf] | None:
    """Gauss-Newton steps (minimum norm) on ``unknowns`` until every residual is below 10**-(0.8 prec)
    relative to the size of its sides, then ``polish`` more steps; None when that does not happen.
    (A polishing step moves a point that was within the tolerance by the same tiny offset at every
    precision, so that such an offset cannot look like a real difference at both precisions.)"""
    with mp.workdps(prec + 10):
        point: dict[str, mpf] = {name: to_mpf(v) for name, v in start.items()}
        eps = tiny(prec)
        history: list[mpf] = []
        for _ in range(iterations + polish):
            if deadline is not None and decision_clock() > deadline:
                return None
            try:
                res = residuals(equations, point, prec)
                if all(abs(r) <= eps * s for r, s in res):
                    if polish == 0:
                        return point
                    polish -= 1
                else:
                    history.append(max(abs(r) / s for r, s in res))
                    if len(history) >= 7 and history[-1] > history[-4] / 2:
                        return None  # not converging (no real solution nearby, or a singular one)
                jac = jacobian(equations, point, unknowns, prec)
                step = _minimum_norm_step(jac, mpmath.matrix([r for r, _ in res]))
            except (ArithmeticError, ValueError):  # undefined on the way, or mpmath gave up
                return None
            for j, name in enumerate(unknowns):
                point[name] = point[name] - step[j]
                if not mpmath.isfinite(point[name]) or abs(point[name]) > mpf(10) ** 12:
                    return None
        return None


def independent_rows(jac: Matrix) -> list[int]:
    """A maximal set of rows of full rank, chosen greedily in order."""
    chosen: list[int] = []
    for i in range(jac.rows):
        trial = chosen + [i]
        sub = mpmath.matrix(len(trial), jac.cols)
        for r, row in enumerate(trial):
            for c in range(jac.cols):
                sub[r, c] = jac[row, c]
        if min_singular_ratio(sub) >= RANK_TOLERANCE:
            chosen = trial
    return chosen
