"""Hypothesis strategies for expression claims (``LEFT == RIGHT [given ...]``), one per family.

Each family builds a claim true by construction (sympy expands, factors or reduces on the generator side
only) and, when asked, a false one by one perturbation (a coefficient changed, an operator swapped, a term
dropped, a condition weakened).  The claim text is printed from the generator's sympy expressions, with the
spellings of the claim language varied (``^``, ``pow``, ``math.``/``np.`` prefixes, decimals).
"""
from __future__ import annotations

import random
import re
from collections.abc import Callable, Sequence
from fractions import Fraction

import mpmath
import sympy
from hypothesis import strategies as st

from fuzz_oracle import Case, Condition, Sampler, as_mpf, free_sampler, uniform, value

Draw = Callable[..., object]
X, Y, Z, T, U = sympy.symbols("x y z t u")
S, C, V, W = sympy.symbols("s c v w")
PI = sympy.pi

_FUNCTION_CALL = re.compile(r"\b(sqrt|sin|cos|tan|exp|log)\(")
_SIMPLE_POWER = re.compile(r"(?<![\w.\]])([a-z][\w.]*(?:\[\d+\])?)\*\*(\d+)\b")
# names the claim language reads as plain variables: fields and constant subscripts (witnesses use them too)
FIELD_NAMES = [sympy.Symbol("q.w"), sympy.Symbol("v[0]"), sympy.Symbol("state.v[1]")]


def text(draw: Draw, expr: sympy.Expr) -> str:
    """The claim-language text of a sympy expression, in one of the language's spellings."""
    out = re.sub(r"\bE\b", "exp(1)", sympy.sstr(expr))
    if draw(st.booleans()):
        out = _SIMPLE_POWER.sub(lambda m: f"pow({m.group(1)}, {m.group(2)})", out)
    if draw(st.booleans()):
        out = out.replace("**", "^")
    prefix = draw(st.sampled_from(["", "", "math.", "np."]))
    if prefix:
        out = _FUNCTION_CALL.sub(lambda m: f"{prefix}{m.group(1)}(", out)
    return out


def condition_text(draw: Draw, conditions: Sequence[Condition]) -> str:
    if not conditions:
        return ""
    return " given " + ", ".join(f"{text(draw, c.left)} {c.relation} {text(draw, c.right)}" for c in conditions)


def claim(draw: Draw, family: str, left: sympy.Expr, right: sympy.Expr, conditions: Sequence[Condition],
          sampler: Sampler, meant_true: bool, left_text: str | None = None,
          conditions_shown: str | None = None, vacuous: bool = False) -> Case:
    if left_text is None and draw(st.booleans()):
        left, right = right, left  # either side may hold the rewritten form
    shown_left = left_text if left_text is not None else text(draw, left)
    shown_conditions = condition_text(draw, conditions) if conditions_shown is None else conditions_shown
    body = f"{shown_left} == {text(draw, right)}{shown_conditions}"
    return Case(family, body, left, right, tuple(conditions), sampler, meant_true, vacuous=vacuous)


def small_int(draw: Draw, low: int = -4, high: int = 4, nonzero: bool = True) -> int:
    return draw(st.sampled_from([k for k in range(low, high + 1) if k != 0 or not nonzero]))


def polynomial(draw: Draw, names: Sequence[sympy.Symbol], degree: int, terms: int) -> sympy.Expr:
    """A random polynomial with small integer coefficients and at least one non-constant term."""
    total = sympy.Integer(0)
    for _ in range(terms):
        monomial = sympy.Integer(small_int(draw))
        for _ in range(draw(st.integers(0, degree))):
            monomial *= draw(st.sampled_from(list(names)))
        total += monomial
    if not total.free_symbols:
        total += draw(st.sampled_from(list(names)))
    return total


def perturb(draw: Draw, expr: sympy.Expr, names: Sequence[sympy.Symbol]) -> sympy.Expr:
    """One small change that makes a nonzero difference: a coefficient moved, a term dropped, a sign flipped
    or a term added."""
    terms = sympy.Add.make_args(sympy.expand(expr))
    term = draw(st.sampled_from(terms))
    how = draw(st.sampled_from(["coefficient", "drop", "sign", "add"]))
    if how == "coefficient":
        coefficient, rest = term.as_coeff_Mul()
        return expr + small_int(draw, -2, 2) * rest
    if how == "drop" and len(terms) > 1:
        return expr - term
    if how == "sign":
        return expr - 2 * term
    return expr + small_int(draw, -3, 3) * draw(st.sampled_from(list(names))) ** draw(st.integers(0, 2))


def seed(draw: Draw) -> int:
    return draw(st.integers(0, 2**32 - 1))


@st.composite
def poly_expand(draw: Draw, meant_true: bool) -> Case:
    """A product of small factors (or a power of a sum) against its expansion."""
    names = draw(st.sampled_from([[X], [X, Y], [X, Y, Z], FIELD_NAMES[:2], [X] + FIELD_NAMES[1:]]))
    if draw(st.booleans()):
        factors = [polynomial(draw, names, 1, draw(st.integers(1, 3))) for _ in range(draw(st.integers(2, 3)))]
        factored = sympy.Mul(*factors, evaluate=False)
    else:
        factored = sympy.Pow(polynomial(draw, names, 1, 2), draw(st.integers(2, 4)), evaluate=False)
    expanded = sympy.expand(factored)
    if not meant_true:
        expanded = perturb(draw, expanded, names)
    return claim(draw, "poly_expand", factored, expanded, (), free_sampler([str(n) for n in names]), meant_true)


def decimal_text(q: Fraction) -> str:
    """A coefficient as the claim language writes it: an integer or an exact decimal."""
    if q.denominator == 1:
        return str(q.numerator)
    digits = 0
    while (q * 10**digits).denominator != 1:
        digits += 1
    scaled = abs(q.numerator * 10**digits // q.denominator)
    whole, frac = divmod(scaled, 10**digits)
    return f"{'-' if q < 0 else ''}{whole}.{frac:0{digits}d}"


@st.composite
def horner(draw: Draw, meant_true: bool) -> Case:
    """A Horner form (nested products or fma) against the expanded polynomial; decimals as coefficients."""
    degree = draw(st.integers(2, 6))
    coefficients = [Fraction(small_int(draw, -9, 9, nonzero=False), draw(st.sampled_from([1, 1, 2, 4, 5, 10])))
                    for _ in range(degree + 1)]
    if coefficients[0] == 0:
        coefficients[0] = Fraction(1)
    shown = list(coefficients)
    if not meant_true:
        where = draw(st.integers(0, degree))
        shown[where] += draw(st.sampled_from([Fraction(1), Fraction(-1), Fraction(1, 2), Fraction(-1, 10)]))
    use_fma = draw(st.booleans())
    horner_text = decimal_text(shown[0])
    horner_value: sympy.Expr = sympy.Rational(shown[0].numerator, shown[0].denominator)
    for q in shown[1:]:
        horner_value = horner_value * X + sympy.Rational(q.numerator, q.denominator)
        if use_fma:
            horner_text = f"fma({horner_text}, x, {decimal_text(q)})"
        else:
            sign = "-" if q < 0 else "+"
            horner_text = f"({horner_text})*x {sign} {decimal_text(abs(q))}"
    expanded = sum((sympy.Rational(q.numerator, q.denominator) * X ** (degree - i)
                    for i, q in enumerate(coefficients)), sympy.Integer(0))
    return claim(draw, "horner", horner_value, expanded, (), free_sampler(["x"]), meant_true, left_text=horner_text)


@st.composite
def rational(draw: Draw, meant_true: bool) -> Case:
    """A sum of two fractions against the fraction over the common denominator (denominators are assumed
    non-zero by the claim language); false: the operator of the numerator swapped."""
    names = [X, Y]
    p1, p2 = polynomial(draw, names, 1, 2), polynomial(draw, names, 1, 2)
    q1 = polynomial(draw, names, 1, 2)
    q2 = polynomial(draw, names, 1, 2)
    op = draw(st.sampled_from([1, -1]))
    left = sympy.Add(p1 / q1, op * p2 / q2, evaluate=False)
    numerator_op = op if meant_true else -op
    numerator = sympy.expand(p1 * q2 + numerator_op * p2 * q1)
    right = numerator / sympy.expand(q1 * q2)
    if meant_true and sympy.cancel(left - right) != 0:
        raise AssertionError("generator: the common-denominator form is wrong")
    if not meant_true and sympy.cancel(p2 / q2) == 0:
        meant_true = True  # the swapped term is zero: still true
    return claim(draw, "rational", left, right, (), free_sampler(["x", "y"]), meant_true)


@st.composite
def trig_angles(draw: Draw, meant_true: bool) -> Case:
    """Multiple-angle and angle-sum formulas (sympy's expand_trig), tan as sin/cos, rational multiples."""
    kind = draw(st.sampled_from(["multiple", "sum", "tan", "half"]))
    if kind == "multiple":
        k = draw(st.integers(2, 5))
        left = draw(st.sampled_from([sympy.sin, sympy.cos]))(k * T)
    elif kind == "sum":
        a, b = small_int(draw, -2, 2), small_int(draw, -2, 2)
        left = draw(st.sampled_from([sympy.sin, sympy.cos]))(a * T + b * U)
    elif kind == "tan":
        left = sympy.tan(draw(st.integers(1, 2)) * T)
    else:
        # sin(t)**2 written with the half angle t/2 as the base: 4 sin(t/2)^2 cos(t/2)^2
        left = sympy.sin(T) ** 2
    if kind == "tan":
        right = sympy.expand_trig(sympy.sin(left.args[0])) / sympy.expand_trig(sympy.cos(left.args[0]))
    elif kind == "half":
        right = 4 * sympy.sin(T / 2) ** 2 * sympy.cos(T / 2) ** 2
    else:
        right = sympy.expand(sympy.expand_trig(left))
    if not meant_true:
        right = perturb(draw, right, [sympy.sin(T), sympy.cos(T)])
    return claim(draw, "trig_angles", left, right, (), free_sampler(["t", "u"]), meant_true)


def circle_sampler(rng: random.Random) -> dict[str, mpmath.mpf]:
    """x, y, t at random and (s, c) = (sin t, cos t) on the unit circle (also the kernel families')."""
    point = as_mpf({"x": uniform(rng), "y": uniform(rng), "t": uniform(rng)})
    with mpmath.workdps(50):
        point["s"], point["c"] = mpmath.sin(point["t"]), mpmath.cos(point["t"])
    return point


@st.composite
def trig_circle(draw: Draw, meant_true: bool) -> Case:
    """s**2 + c**2 == 1 as a condition (or s, c defined as sin(t), cos(t)): rotations keep lengths, and a
    polynomial in s, c equals its remainder modulo the circle (sympy's reduced)."""
    circle = Condition(S**2 + C**2, "==", sympy.Integer(1))
    definitions = (Condition(S, "==", sympy.sin(T)), Condition(C, "==", sympy.cos(T)))
    conditions = draw(st.sampled_from([(circle,), definitions, (circle,)]))
    # the named set of the batch's pyproject.toml (tests/fuzz_run.py): unit_circle = c**2 + s**2 == 1
    named = " given unit_circle(c, s)" if conditions == (circle,) and draw(st.booleans()) else None
    if draw(st.booleans()):
        left = (C * X - S * Y) ** 2 + (S * X + C * Y) ** 2
        right = X**2 + Y**2
    else:
        left = polynomial(draw, [S, C], 3, draw(st.integers(2, 4)))
        _, right = sympy.reduced(sympy.expand(left), [S**2 + C**2 - 1], S, C)
    if not meant_true:
        right = perturb(draw, right, [S, C, X])
    return claim(draw, "trig_circle", left, right, conditions, circle_sampler, meant_true,
                 conditions_shown=named)


@st.composite
def substitution(draw: Draw, meant_true: bool) -> Case:
    """Definitions ``v == E(x, y)`` (and ``w == v*x + k``) in the conditions; the claim is a polynomial in
    v, w, x against its expansion after substituting them."""
    ev = polynomial(draw, [X, Y], 2, draw(st.integers(1, 3)))
    k = small_int(draw)
    definitions = [Condition(V, "==", ev)]
    chained = draw(st.booleans())
    if chained:
        definitions.append(Condition(W, "==", V * X + k))
    names = [V, W, X] if chained else [V, X, Y]
    left = polynomial(draw, names, 2, draw(st.integers(1, 3)))
    if V not in left.free_symbols:
        left += V
    right = sympy.expand(left.subs(W, V * X + k).subs(V, ev))
    if not meant_true:
        right = perturb(draw, right, [X, Y])

    def sample(rng: random.Random) -> dict[str, mpmath.mpf]:
        point = as_mpf({"x": uniform(rng), "y": uniform(rng)})
        point["v"] = value(ev, point)
        point["w"] = point["v"] * point["x"] + k
        return point

    return claim(draw, "substitution", left, right, definitions, sample, meant_true)


@st.composite
def sqrt_sign(draw: Draw, meant_true: bool) -> Case:
    """Principal square roots: sqrt of a square under a sign hypothesis, scaling out a square factor,
    products of roots, hypot of a Pythagorean triple."""
    kind = draw(st.sampled_from(["square", "scale", "product", "hypot", "reciprocal", "even_power"]))
    conditions: list[Condition] = []
    if kind == "square":
        a, c = draw(st.integers(1, 3)), small_int(draw, -3, 3, nonzero=False)
        inner = a * X - c
        radicand = draw(st.sampled_from([inner**2, sympy.expand(inner**2)]))
        left = sympy.sqrt(radicand, evaluate=False)
        relation = draw(st.sampled_from([">=", ">"]))
        hypothesis = draw(st.sampled_from([Condition(X, relation, sympy.Rational(c, a)),
                                           Condition(inner, relation, sympy.Integer(0))]))
        right = inner
        if draw(st.booleans()):  # the mirror image: below the root, sqrt((a*x - c)**2) == c - a*x
            right = -inner
            relation = {">=": "<=", ">": "<"}[relation]
            hypothesis = Condition(hypothesis.left, relation, hypothesis.right)
        if not meant_true:
            if draw(st.booleans()):
                right = -right
            else:
                flipped = {">": "<", ">=": "<=", "<": ">", "<=": ">="}[relation]
                hypothesis = Condition(hypothesis.left, flipped, hypothesis.right)
        conditions.append(hypothesis)
        boundary = Fraction(c, a)

        def around(rng: random.Random) -> dict[str, mpmath.mpf]:
            return as_mpf({"x": boundary + uniform(rng), "y": uniform(rng)})

        return claim(draw, "sqrt_sign", left, right, conditions, around, meant_true)
    elif kind == "even_power":
        # sqrt(x**4) == x**2 everywhere; sqrt(x**6) == x**3 and sqrt(x**2*y**2) == x*y need signs
        shape = draw(st.sampled_from(["fourth", "sixth", "product"]))
        if shape == "fourth":
            left, right = sympy.sqrt(X**4, evaluate=False), X**2 if meant_true else X**2 + 1
        elif shape == "sixth":
            left, right = sympy.sqrt(X**6, evaluate=False), X**3
            conditions.append(Condition(X, ">=", sympy.Integer(0)) if meant_true else
                              Condition(X, "<=", sympy.Integer(0)))
        else:
            left, right = sympy.sqrt(X**2 * Y**2, evaluate=False), X * Y
            if meant_true or draw(st.booleans()):
                conditions += [Condition(X, ">=", sympy.Integer(0)), Condition(Y, ">=", sympy.Integer(0))]
            if not meant_true:
                conditions = conditions[:1]  # only x's sign: y < 0 gives a counterexample
    elif kind == "scale":
        k = draw(st.integers(2, 5))
        left = sympy.sqrt(k**2 * X, evaluate=False)
        right = (k if meant_true else draw(st.sampled_from([-k, k + 1]))) * sympy.sqrt(X)
    elif kind == "product":
        left = sympy.sqrt(X) * sympy.sqrt(Y)
        right = sympy.sqrt(X * Y) if meant_true else sympy.sqrt(X + Y)
        # both roots need x, y >= 0: a free sampler meets that a quarter of the time, too seldom to judge
        return claim(draw, "sqrt_sign", left, right, conditions, free_sampler(["x", "y"], positive=["x", "y"]),
                     meant_true)
    elif kind == "hypot":
        a, b, h = draw(st.sampled_from([(3, 4, 5), (5, 12, 13), (8, 15, 17), (7, 24, 25)]))
        left = sympy.sqrt((a * X) ** 2 + (b * X) ** 2, evaluate=False)
        conditions.append(Condition(X, ">=", sympy.Integer(0)))
        right = h * X if meant_true else draw(st.sampled_from([(h + 1) * X, -h * X]))
        sides = f"hypot({a}*x, {b}*x) == {text(draw, right)}"
        return Case("sqrt_sign", sides + condition_text(draw, conditions), left, right, tuple(conditions),
                    free_sampler(["x", "y"]), meant_true)
    else:
        left = 1 / sympy.sqrt(X)
        right = sympy.Mul(sympy.sqrt(X), sympy.Pow(X, -1, evaluate=False), evaluate=False) if meant_true \
            else sympy.sqrt(X)
    return claim(draw, "sqrt_sign", left, right, conditions, free_sampler(["x", "y"]), meant_true)


@st.composite
def exp_log(draw: Draw, meant_true: bool) -> Case:
    """exp of a sum as a product of powers; log of a product of positive variables as a sum."""
    kind = draw(st.sampled_from(["exp_sum", "exp_inverse", "log_product", "log_power", "exp_constant"]))
    conditions: list[Condition] = []
    positive: list[str] = []
    if kind == "exp_sum":
        a, b = small_int(draw, -3, 3), small_int(draw, -3, 3)
        left = sympy.exp(a * X + b * Y)
        def power(base: sympy.Expr, k: int) -> sympy.Expr:
            return sympy.Pow(sympy.exp(base), k, evaluate=False)  # sympy would fold it into exp(k*base)

        right = sympy.Mul(power(X, a), power(Y, b), evaluate=False)
        if not meant_true:
            right = draw(st.sampled_from([sympy.Add(power(X, a), power(Y, b), evaluate=False),
                                          sympy.Mul(power(X, a + 1), power(Y, b), evaluate=False)]))
    elif kind == "exp_inverse":
        left = sympy.Add(sympy.Mul(sympy.exp(X), sympy.exp(-X), evaluate=False), X, evaluate=False)
        right = 1 + X if meant_true else 2 * X
    elif kind == "log_power":
        k = draw(st.integers(2, 4))
        conditions = [Condition(X, ">", sympy.Integer(0))]
        positive = ["x"]
        left = sympy.log(sympy.Pow(X, k, evaluate=False), evaluate=False)
        right = k * sympy.log(X) if meant_true else draw(st.sampled_from([(k + 1) * sympy.log(X),
                                                                          sympy.log(X) ** k]))
    elif kind == "log_product":
        conditions = [Condition(X, ">", sympy.Integer(0)), Condition(Y, ">", sympy.Integer(0))]
        positive = ["x", "y"]
        left = sympy.log(X * Y, evaluate=False)
        right = sympy.log(X) + sympy.log(Y)
        if not meant_true:
            if draw(st.booleans()):
                right = sympy.log(X) - sympy.log(Y)
            else:
                left = sympy.log(X + Y)
    else:
        k = small_int(draw, -3, 3)
        conditions = [Condition(Y, "==", sympy.Integer(k))]
        left = sympy.exp(Y) * X
        right = sympy.exp(k) * X if meant_true else sympy.exp(k + 1) * X
        sampler = free_sampler(["x"])

        def sample(rng: random.Random) -> dict[str, mpmath.mpf]:
            return {**sampler(rng), "y": mpmath.mpf(k)}

        return claim(draw, "exp_log", left, right, conditions, sample, meant_true)
    return claim(draw, "exp_log", left, right, conditions, free_sampler(["x", "y"], positive), meant_true)


@st.composite
def pi_values(draw: Draw, meant_true: bool) -> Case:
    """Exact values at k*pi/n (n = 1, 2, 3, 4, 6), shifts by such angles, and ``x == k*pi/n`` conditions."""
    n = draw(st.sampled_from([1, 2, 3, 4, 6]))
    k = draw(st.integers(-2 * n, 2 * n))
    angle = sympy.Rational(k, n) * PI
    function = draw(st.sampled_from([sympy.sin, sympy.cos, sympy.tan]))
    if function is sympy.tan and sympy.cos(angle) == 0:
        function = sympy.sin
    kind = draw(st.sampled_from(["value", "shift", "condition"]))
    exact = function(angle)
    conditions: list[Condition] = []
    if kind == "value":
        left, right = function(angle, evaluate=False), exact
        sample = free_sampler([])
    elif kind == "shift":
        function = draw(st.sampled_from([sympy.sin, sympy.cos]))
        left = function(sympy.Add(X, angle, evaluate=False), evaluate=False)
        right = sympy.expand(sympy.expand_trig(function(X + angle)))
        sample = free_sampler(["x"])
    else:
        conditions = [Condition(X, "==", angle)]
        left, right = function(X) * Y, exact * Y

        def sample(rng: random.Random) -> dict[str, mpmath.mpf]:
            with mpmath.workdps(50):
                return {**free_sampler(["y"])(rng), "x": value(angle, {})}
    if not meant_true:
        right = draw(st.sampled_from([right + sympy.Rational(1, 2), right - 1, -right + 3]))
    return claim(draw, "pi_values", left, right, conditions, sample, meant_true)


@st.composite
def nonzero(draw: Draw, meant_true: bool) -> Case:
    """Cancellation under the non-zero denominators the language assumes, and saturation by ``x != 0``."""
    kind = draw(st.sampled_from(["cancel", "saturate"]))
    if kind == "cancel":
        a = polynomial(draw, [X, Y], 1, 2)
        b = polynomial(draw, [X, Y], 1, 2)
        left = sympy.expand(a * b) / b
        right = a if meant_true else perturb(draw, a, [X, Y])
        return claim(draw, "nonzero", left, right, (), free_sampler(["x", "y"]), meant_true)
    factor = polynomial(draw, [X], 1, 2)
    conditions = [Condition(sympy.expand(factor * Y), "==", sympy.expand(factor * Z))]
    if meant_true:
        conditions.append(Condition(factor, "!=", sympy.Integer(0)))
    roots = sympy.solve(factor, X)

    def sample(rng: random.Random) -> dict[str, mpmath.mpf]:
        point = as_mpf({"x": uniform(rng), "y": uniform(rng), "z": uniform(rng)})
        if rng.random() < 0.5 and roots:
            point["x"] = value(roots[0], {})  # on the zero set of the factor, y and z are free
        else:
            point["z"] = point["y"]
        return point

    return claim(draw, "nonzero", Y, Z, conditions, sample, meant_true)


@st.composite
def real_sos(draw: Draw, meant_true: bool) -> Case:
    """A sum of squares that pins a point (of degree 2, or 4 with squared squares); conditions with no real
    point (a sum of squares plus a positive constant; exp or sqrt equal to a negative number), true
    vacuously; false: a difference of squares, a circle, a positive value, which have real points."""
    p, q = small_int(draw, -3, 3, nonzero=False), small_int(draw, -3, 3, nonzero=False)
    a, b = small_int(draw, -3, 3), small_int(draw, -3, 3)
    kind = draw(st.sampled_from(["pinned", "pinned", "quartic", "empty"]))
    if kind == "empty":
        return _empty_conditions(draw, meant_true, p, q, a, b)
    if kind == "quartic":
        # ((x - p)**2)**2 + (y - q)**2 == 0 pins (p, q) too; false: minus the second square
        sign = 1 if meant_true else -1
        squares = (X - p) ** 4 + sign * (Y - q) ** 2
        conditions = [Condition(draw(st.sampled_from([squares, sympy.expand(squares)])), "==", sympy.Integer(0))]

        def on_curve(rng: random.Random) -> dict[str, mpmath.mpf]:
            t = uniform(rng)
            return as_mpf({"x": Fraction(p), "y": Fraction(q)} if meant_true else {"x": p + t, "y": q + t * t})

        return claim(draw, "real_sos", a * X + b * Y, sympy.Integer(a * p + b * q), conditions, on_curve, meant_true)
    squares = (X - p) ** 2 + (Y - q) ** 2 if meant_true else (X - p) ** 2 - (Y - q) ** 2
    radicand = draw(st.sampled_from([squares, sympy.expand(squares)]))
    conditions = [Condition(radicand, "==", sympy.Integer(0))]

    def sample(rng: random.Random) -> dict[str, mpmath.mpf]:
        y = uniform(rng)
        x = p + (y - q) * rng.choice([1, -1])
        return as_mpf({"x": Fraction(p), "y": Fraction(q)} if meant_true else {"x": x, "y": y})

    return claim(draw, "real_sos", a * X + b * Y, sympy.Integer(a * p + b * q), conditions, sample, meant_true)


def _empty_conditions(draw: Draw, meant_true: bool, p: int, q: int, a: int, b: int) -> Case:
    """Conditions with no real point by construction, so any claim holds vacuously; the false twin moves the
    constant to the other sign, which gives the conditions real points where the claim fails."""
    k = draw(st.integers(1, 4))
    shape = draw(st.sampled_from(["squares", "quartic", "exp", "sqrt"]))
    right = sympy.Integer(a * p + b * q + 1)  # wrong at the point (p, q) itself
    if shape in ("squares", "quartic"):
        power = 2 if shape == "squares" else 4
        sign = 1 if meant_true else -1
        total = (X - p) ** power + (Y - q) ** 2 + sign * k**power
        conditions = [Condition(draw(st.sampled_from([total, sympy.expand(total)])), "==", sympy.Integer(0))]

        def sample(rng: random.Random) -> dict[str, mpmath.mpf]:
            if meant_true:
                return as_mpf({"x": p + uniform(rng), "y": q + uniform(rng)})
            # (x - p)**power == k**power with y == q: x == p +- k, the side where a*x + b*y misses right
            return as_mpf({"x": Fraction(p + k if a * k != 1 else p - k), "y": Fraction(q)})

        return claim(draw, "real_sos", a * X + b * Y, right, conditions, sample, meant_true, vacuous=meant_true)
    inner = a * X + b
    function = sympy.exp(inner) if shape == "exp" else sympy.sqrt(inner, evaluate=False)
    conditions = [Condition(function, "==", sympy.Integer(-k if meant_true else k))]

    def at_value(rng: random.Random) -> dict[str, mpmath.mpf]:
        with mpmath.workdps(50):
            if meant_true:
                return as_mpf({"x": uniform(rng), "y": uniform(rng)})
            inside = mpmath.log(k) if shape == "exp" else mpmath.mpf(k * k)
            return {"x": (inside - b) / a, "y": as_mpf({"y": uniform(rng)})["y"]}

    # false twin: Y == a*x + b + 1 at a point where the condition holds and y is free
    return claim(draw, "real_sos", Y, inner + 1, conditions, at_value, meant_true, vacuous=meant_true)


@st.composite
def powers(draw: Draw, meant_true: bool) -> Case:
    """Integer, negative and half-integer powers, zeroth powers (0**0 is 1, as in Python), and powers the
    algebra keeps opaque (a non-integer or symbolic exponent)."""
    kind = draw(st.sampled_from(["integer", "zeroth", "half", "opaque"]))
    conditions: list[Condition] = []
    sample = free_sampler(["x", "y"], positive=["x"])
    if kind == "integer":
        j, k = small_int(draw, -3, 4), small_int(draw, -3, 4)
        left = sympy.Mul(sympy.Pow(X, j, evaluate=False), sympy.Pow(X, k, evaluate=False), evaluate=False)
        right = X ** (j + k) if meant_true else X ** (j + k + draw(st.sampled_from([-1, 1])))
    elif kind == "zeroth":
        base = draw(st.sampled_from([X, X - Y, sympy.Add(X, -X, evaluate=False)]))
        left = sympy.Add(sympy.Pow(base, 0, evaluate=False), Y, evaluate=False)
        right = 1 + Y if meant_true else Y
        if draw(st.booleans()):
            conditions = [Condition(X, "==", sympy.Integer(0))]
            free = free_sampler(["y"])

            def sample(rng: random.Random) -> dict[str, mpmath.mpf]:
                return {**free(rng), "x": mpmath.mpf(0)}
    elif kind == "half":
        k = draw(st.sampled_from([1, 3, 5]))
        left = sympy.Pow(sympy.sqrt(X), k, evaluate=False)
        right = X ** ((k - 1) // 2) * sympy.sqrt(X)
        if not meant_true:
            right = -right if draw(st.booleans()) else X ** ((k + 1) // 2)
    else:
        base, k = draw(st.sampled_from([(8, 3), (27, 3), (4, 2), (16, 4), (32, 5)]))
        root = round(base ** (1 / k))
        left = sympy.Pow(sympy.Integer(base), sympy.Rational(1, k), evaluate=False)
        right = sympy.Integer(root) * X if meant_true else sympy.Integer(root + 1) * X
        shown = f"{base}**(1/{k})*x"
        return claim(draw, "powers", left * X, right, conditions, sample, meant_true, left_text=shown)
    return claim(draw, "powers", left, right, conditions, sample, meant_true)


@st.composite
def radical_subst(draw: Draw, meant_true: bool) -> Case:
    """Square roots of a variable defined equal to another (``u == x``): powers and sums of the roots."""
    k = draw(st.integers(1, 4))
    a = small_int(draw, -3, 3)
    rx, ru = sympy.sqrt(X), sympy.sqrt(U)
    left = sympy.Add(sympy.Pow(rx, k, evaluate=False), a * rx, evaluate=False)
    right = sympy.Add(sympy.Pow(ru, k, evaluate=False), a * ru, evaluate=False)
    if not meant_true:
        right = sympy.Add(sympy.Pow(ru, k, evaluate=False), (a + draw(st.sampled_from([-1, 1]))) * ru,
                          evaluate=False)
    positive = free_sampler(["x"], positive=["x"])

    def sample(rng: random.Random) -> dict[str, mpmath.mpf]:
        point = positive(rng)
        return {**point, "u": point["x"]}

    return claim(draw, "radical_subst", left, right, [Condition(U, "==", X)], sample, meant_true)


@st.composite
def large_angle(draw: Draw, meant_true: bool) -> Case:
    """Large multiples of one angle (the angle tables must not expand sin(10000*x) into a huge polynomial)."""
    k = draw(st.sampled_from([100, 360, 1000, 4096, 10000]))
    kind = draw(st.sampled_from(["same", "double", "pythagoras"]))
    if kind == "same":
        left, right = sympy.sin(k * X) + Y, sympy.sin(k * X) + Y
        if not meant_true:
            right = sympy.sin((k + 1) * X) + Y
    elif kind == "double":
        left = sympy.sin(2 * k * X)
        right = 2 * sympy.sin(k * X) * sympy.cos(k * X) if meant_true else 2 * sympy.sin(k * X)
    else:
        left = sympy.Add(sympy.sin(k * X) ** 2, sympy.cos(k * X) ** 2, evaluate=False)
        right = sympy.Integer(1) if meant_true else sympy.cos(k * X) ** 2
    return claim(draw, "large_angle", left, right, (), free_sampler(["x", "y"]), meant_true)


@st.composite
def conic(draw: Draw, meant_true: bool) -> Case:
    """Points of a circle x**2 + y**2 == r2 (r2 not a square, so witnesses are irrational) or a hyperbola
    x*y == k: identities on the curve, and false claims whose witness must lie on it."""
    kind = draw(st.sampled_from(["circle", "hyperbola"]))
    if kind == "circle":
        r2 = draw(st.sampled_from([2, 3, 5, 7, 10]))
        curve = Condition(X**2 + Y**2, "==", sympy.Integer(r2))
        a = small_int(draw)
        left = polynomial(draw, [X, Y], 2, 2) + a * X**2
        right = sympy.expand(left.subs(X**2, r2 - Y**2))
        conditions = [curve]
        if not meant_true:
            right = perturb(draw, right, [X, Y])

        def sample(rng: random.Random) -> dict[str, mpmath.mpf]:
            t = as_mpf({"t": uniform(rng)})["t"]
            with mpmath.workdps(50):
                return {"x": mpmath.sqrt(r2) * mpmath.cos(t), "y": mpmath.sqrt(r2) * mpmath.sin(t)}
    else:
        k = small_int(draw)
        conditions = [Condition(X * Y, "==", sympy.Integer(k))]
        j = draw(st.integers(1, 3))
        left = (X * Y) ** j + X
        right = sympy.Integer(k) ** j + X if meant_true else sympy.Integer(k) ** j + Y

        def sample(rng: random.Random) -> dict[str, mpmath.mpf]:
            x = as_mpf({"x": uniform(rng)})["x"]
            with mpmath.workdps(50):
                return {"x": x, "y": k / x} if x != 0 else {"x": mpmath.mpf(1), "y": mpmath.mpf(k)}
    return claim(draw, "conic", left, right, conditions, sample, meant_true)


@st.composite
def pi_nested(draw: Draw, meant_true: bool) -> Case:
    """Exact values at k*pi/n for n = 5, 8, 10 (nested roots; sympy's own radicals) and shifts by pi/5."""
    n = draw(st.sampled_from([5, 8, 10]))
    angle = sympy.Rational(draw(st.integers(-2 * n, 2 * n)), n) * PI
    function = draw(st.sampled_from([sympy.sin, sympy.cos]))
    if draw(st.booleans()):
        left, right = function(angle, evaluate=False), function(angle)
        sample = free_sampler([])
    else:
        left = function(sympy.Add(X, angle, evaluate=False), evaluate=False)
        right = sympy.expand(sympy.expand_trig(function(X + angle)))
        sample = free_sampler(["x"])
    if not meant_true:
        wrong = [right + sympy.Rational(1, 2), right - 1] + ([-right] if right != 0 else [])
        right = draw(st.sampled_from(wrong))
    return claim(draw, "pi_nested", left, right, (), sample, meant_true)


@st.composite
def real_only(draw: Draw, meant_true: bool) -> Case:
    """Reasoning true only over the reals: exp one-to-one, the zero of sin inside (-pi, pi), sign hypotheses
    c/P > 0, P**3 >= 0, exp(P) >= 1, and square roots whose domains pin a point."""
    kind = draw(st.sampled_from(["exp", "sin", "sign", "domain"]))
    a, b = small_int(draw), small_int(draw, nonzero=False)
    if kind == "exp":
        conditions = [Condition(sympy.exp(a * X + b), "==", sympy.exp(Y))]
        right = a * X + b + (0 if meant_true else 1)

        def sample(rng: random.Random) -> dict[str, mpmath.mpf]:
            x = uniform(rng)
            return as_mpf({"x": x, "y": a * x + b})

        return claim(draw, "real_only", Y, right, conditions, sample, meant_true)
    if kind == "sin":
        high = draw(st.sampled_from([1, 2, 3])) if meant_true else 4
        conditions = [Condition(sympy.sin(X), "==", sympy.Integer(0)), Condition(X, ">", sympy.Integer(-1)),
                      Condition(X, "<", sympy.Integer(high))]

        def sample(rng: random.Random) -> dict[str, mpmath.mpf]:
            with mpmath.workdps(50):
                return {"x": mpmath.pi if not meant_true and rng.random() < 0.5 else mpmath.mpf(0),
                        "y": as_mpf({"y": uniform(rng)})["y"]}

        return claim(draw, "real_only", X * Y + a * X, sympy.Integer(0), conditions, sample, meant_true)
    if kind == "sign":
        shifted = X - b
        hypothesis = draw(st.sampled_from([Condition(abs(a) / shifted, ">", sympy.Integer(0)),
                                           Condition(shifted**3, ">=", sympy.Integer(0)),
                                           Condition(sympy.exp(shifted), ">=", sympy.Integer(1))]))
        if not meant_true:
            hypothesis = Condition(shifted**2, ">=", sympy.Integer(0))

        def sample(rng: random.Random) -> dict[str, mpmath.mpf]:
            # around the kink at x == b, so a false claim (no sign hypothesis) meets both sides of it
            x = uniform(rng, 0, 3) + b if meant_true else uniform(rng) + b
            return as_mpf({"x": x if x != b else x + 1})

        left = sympy.sqrt(sympy.expand(shifted**2))
        return claim(draw, "real_only", left, sympy.expand(shifted), [hypothesis], sample, meant_true)
    left = sympy.sqrt(abs(a) * (X - Y)) + sympy.sqrt(abs(a) * (Y - X))

    def sample(rng: random.Random) -> dict[str, mpmath.mpf]:
        y = uniform(rng)
        return as_mpf({"x": y, "y": y})

    return claim(draw, "real_only", left, sympy.Integer(0 if meant_true else 1), (), sample, meant_true)


FAMILIES: dict[str, Callable[[bool], st.SearchStrategy[Case]]] = {
    "poly_expand": poly_expand,
    "horner": horner,
    "rational": rational,
    "trig_angles": trig_angles,
    "trig_circle": trig_circle,
    "substitution": substitution,
    "sqrt_sign": sqrt_sign,
    "exp_log": exp_log,
    "pi_values": pi_values,
    "nonzero": nonzero,
    "real_sos": real_sos,
    "powers": powers,
    "radical_subst": radical_subst,
    "large_angle": large_angle,
    "conic": conic,
    "pi_nested": pi_nested,
    "real_only": real_only,
}
