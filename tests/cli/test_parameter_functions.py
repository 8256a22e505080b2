"""A function passed as a parameter is one uninterpreted function (the same arguments give the same
value), end to end through `idealcheck check`: two integrators that call the integrand `f` are proved the
same, and a one-line bug is refuted through a particular integrand, which the report names.

An invented module `quadrature.py` holds the rules.  References (common practice): the trapezoid rule
(b - a)(f(a) + f(b))/2, Simpson's rule (b - a)/6 (f(a) + 4 f((a + b)/2) + f(b)), the composite trapezoid
rule on two halves, Heun's step y + h/2 (f(t, y) + f(t + h, y + h f(t, y))) for y' = f(t, y), and the
classical fourth-order Runge-Kutta step with stages k1..k4 and weights 1, 2, 2, 1 over 6.  mpmath confirms
with the integrand exp (and f(t, y) = t*y + y**2) that each bug changes the value.
"""
from __future__ import annotations

import json

import mpmath
import pytest

QUADRATURE = '''\
def trapezoid(f, a, b):
    return (b - a) * (f(a) + f(b)) / 2


# idealcheck: same as trapezoid
def trapezoid_halves(f, a, b):
    h = b - a
    return h / 2 * f(a) + h / 2 * f(b)


# idealcheck: same as trapezoid
def trapezoid_halves_bug(f, a, b):
    h = b - a
    return h / 2 * f(a) + h / 2 * f(a)


def simpson(g, lo, hi):
    mid = (lo + hi) / 2
    return (hi - lo) / 6 * (g(lo) + 4 * g(mid) + g(hi))


# idealcheck: same as simpson
def simpson_steps(g, lo, hi):
    h = (hi - lo) / 2
    return h / 3 * (g(lo) + 4 * g(lo + h) + g(lo + 2 * h))


# idealcheck: same as simpson
def simpson_steps_bug(g, lo, hi):
    h = (hi - lo) / 2
    return h / 3 * (g(lo) + 4 * g(lo + h) + g(lo + h))


def two_panels(f, a, b):
    m = (a + b) / 2
    return trapezoid(f, a, m) + trapezoid(f, m, b)


# idealcheck: same as two_panels
def two_panels_weights(f, a, b):
    h = (b - a) / 4
    return h * (f(a) + 2 * f((a + b) / 2) + f(b))


# idealcheck: same as two_panels
def two_panels_weights_bug(f, a, b):
    h = (b - a) / 4
    return h * (f(a) + 2 * f((a + b) / 4) + f(b))


def heun(f, t, y, h):
    k1 = f(t, y)
    k2 = f(t + h, y + h * k1)
    return y + h / 2 * (k1 + k2)


# idealcheck: same as heun
def heun_predictor(f, t, y, h):
    guess = y + h * f(t, y)
    return (y + guess + h * f(t + h, guess)) / 2


# idealcheck: same as heun
def heun_predictor_bug(f, t, y, h):
    guess = y + h * f(t, y)
    return (y + guess + h * f(t, guess)) / 2


def rk4(f, t, y, h):
    k1 = f(t, y)
    k2 = f(t + h / 2, y + h / 2 * k1)
    k3 = f(t + h / 2, y + h / 2 * k2)
    k4 = f(t + h, y + h * k3)
    return y + h / 6 * (k1 + 2 * k2 + 2 * k3 + k4)


# idealcheck: same as rk4
def rk4_increments(f, t, y, h):
    d1 = h * f(t, y)
    d2 = h * f(t + 0.5 * h, y + 0.5 * d1)
    d3 = h * f(t + 0.5 * h, y + 0.5 * d2)
    d4 = h * f(t + h, y + d3)
    return y + (d1 + 2.0 * d2 + 2.0 * d3 + d4) / 6.0


# idealcheck: same as rk4
def rk4_increments_bug(f, t, y, h):
    d1 = h * f(t, y)
    d2 = h * f(t + 0.5 * h, y + 0.5 * d1)
    d3 = h * f(t + 0.5 * h, y + 0.5 * d1)
    d4 = h * f(t + h, y + d3)
    return y + (d1 + 2.0 * d2 + 2.0 * d3 + d4) / 6.0


# idealcheck: same as trapezoid
def not_the_parameter(f, a, b):
    return (b - a) * (integrand(a) + integrand(b)) / 2
'''

EXPECTED = {
    "trapezoid_halves": "proved", "trapezoid_halves_bug": "refuted",
    "simpson_steps": "proved", "simpson_steps_bug": "refuted",
    "two_panels_weights": "proved", "two_panels_weights_bug": "refuted",
    "heun_predictor": "proved", "heun_predictor_bug": "refuted",
    "rk4_increments": "proved", "rk4_increments_bug": "refuted",
    # a module-level function of another name is not the parameter: neither proved nor refuted
    "not_the_parameter": "inconclusive",
}


@pytest.fixture(scope="module")
def claims(cli, tmp_path_factory: pytest.TempPathFactory) -> dict[str, dict]:
    root = tmp_path_factory.mktemp("quadrature")
    (root / "quadrature.py").write_text(QUADRATURE)
    done = cli("check", "--no-cache", "--format", "json", "quadrature.py", cwd=root)
    lines = QUADRATURE.splitlines()
    found = {}
    for claim in json.loads(done.out)["claims"]:
        below = lines[claim["line"]]
        found[below[4:below.index("(")]] = claim
    return found


def test_the_bugs_change_the_value() -> None:
    f = mpmath.exp
    a, b, t, y, h = mpmath.mpf("0.2"), mpmath.mpf("1.3"), mpmath.mpf("0.5"), mpmath.mpf("0.7"), mpmath.mpf("0.1")
    assert abs((b - a) / 2 * (f(a) + f(a)) - (b - a) * (f(a) + f(b)) / 2) > 0.1
    m = (a + b) / 2
    assert abs((b - a) / 6 * (f(a) + 4 * f(m) + f(m)) - (b - a) / 6 * (f(a) + 4 * f(m) + f(b))) > 0.1
    assert abs((b - a) / 4 * 2 * (f((a + b) / 4) - f(m))) > 0.1
    g = lambda s, v: s * v + v ** 2  # noqa: E731 - an integrand that depends on t
    guess = y + h * g(t, y)
    assert abs((y + guess + h * g(t, guess)) / 2 - (y + guess + h * g(t + h, guess)) / 2) > 1e-3

    def rk4(third_from_first: bool) -> mpmath.mpf:
        d1 = h * g(t, y)
        d2 = h * g(t + h / 2, y + d1 / 2)
        d3 = h * g(t + h / 2, y + (d1 if third_from_first else d2) / 2)
        d4 = h * g(t + h, y + d3)
        return y + (d1 + 2 * d2 + 2 * d3 + d4) / 6

    assert abs(rk4(True) - rk4(False)) > 1e-6


def test_integrators_that_call_the_same_parameter_function_end_to_end(claims: dict[str, dict]) -> None:
    assert {name: claim["verdict"] for name, claim in claims.items()} == EXPECTED


def test_a_refutation_names_the_particular_function(claims: dict[str, dict]) -> None:
    refuted = claims["trapezoid_halves_bug"]
    assert "with the particular function f(t) = t**3 + 2*t + 1" in refuted["reason"]
    heun = claims["heun_predictor_bug"]
    # calls nest two deep in Heun's step (f at a point computed by f): a quadratic keeps the expansion small
    assert "f(t1, t2) = (t1**2 + 2*t1) + 2*(t2**2 + 2*t2) + 1" in heun["reason"]
