"""Hypothesis strategies for claims tied to code: Python, C, Rust and Julia kernels.

Each kernel is generated together with the sympy expression of what it computes (the generator's model;
the code text is never evaluated), and carries a ``returns``, ``same as`` or trailing ``== EXPR`` claim.
True claims state the model's expansion; false ones a perturbed expansion, or the code carries the bug (a
coefficient changed in the code, a branch changed).
"""
from __future__ import annotations

import random
import re
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from fractions import Fraction

import mpmath
import sympy
from hypothesis import strategies as st

from fuzz_expressions import Draw, X, Y, circle_sampler, decimal_text, perturb, polynomial, small_int
from fuzz_oracle import Case, Condition, as_mpf, free_sampler, uniform

A, B = sympy.symbols("a b")
LANGUAGE_SUFFIX = {"python": ".py", "c": ".c", "rust": ".rs", "julia": ".jl", "fortran": ".f90"}
COMMENT = {"python": "#", "c": "//", "rust": "///", "julia": "#", "fortran": "!"}
LANGUAGES = ["python", "c", "rust", "julia", "fortran"]


@dataclass(frozen=True)
class KernelCase:
    """A kernel snippet (``NAME`` stands for a unique function name) and the case of its claim; the claim
    is on line ``claim_line`` (from 0) of the snippet."""

    case: Case
    language: str
    snippet: str
    claim_line: int


def _poly_text(expr: sympy.Expr, language: str) -> str:
    """A polynomial in the parameters as the language writes it (floating literals, its power spelling)."""
    out = sympy.sstr(sympy.expand(expr))
    if language == "julia":
        return out.replace("**", "^")
    if language == "fortran":
        return re.sub(r"(?<![\w.*])(\d+)(?![\w.])", r"\1.0d0", out)  # exponents stay integers
    if language in ("c", "rust"):
        # integer literals would be integer arithmetic in C and a type error in Rust: write them as floats
        out = _float_literals(out)
        if language == "c":
            return _power_calls(out, lambda base, k: f"pow({base}, {k}.0)")
        return _power_calls(out, lambda base, k: f"{base}.powi({k})")
    return out


def _float_literals(text: str) -> str:
    return re.sub(r"(?<![\w.])(\d+)(?![\w.])", r"\1.0", text)


def _power_calls(text: str, spell: Callable[[str, str], str]) -> str:
    return re.sub(r"\b([a-z]\w*)\*\*(\d+)\.0", lambda m: spell(m.group(1), m.group(2)), text)


def _claim_text(expr: sympy.Expr) -> str:
    return sympy.sstr(expr)


def _coefficients(draw: Draw, degree: int) -> list[Fraction]:
    out = [Fraction(small_int(draw, -9, 9, nonzero=False), draw(st.sampled_from([1, 2, 4]))) for _ in
           range(degree + 1)]
    if out[0] == 0:
        out[0] = Fraction(1)
    return out


def _horner_value(coefficients: Sequence[Fraction], t: sympy.Symbol) -> sympy.Expr:
    total: sympy.Expr = sympy.Integer(0)
    for q in coefficients:
        total = total * t + sympy.Rational(q.numerator, q.denominator)
    return sympy.expand(total)


def _bug(draw: Draw, coefficients: list[Fraction]) -> list[Fraction]:
    changed = list(coefficients)
    where = draw(st.integers(0, len(changed) - 1))
    changed[where] += draw(st.sampled_from([Fraction(1), Fraction(-1), Fraction(1, 2)]))
    return changed


def _float_text(q: Fraction, language: str = "c") -> str:
    shown = decimal_text(q)
    shown = shown if "." in shown else shown + ".0"
    return shown + "d0" if language == "fortran" else shown


@st.composite
def horner_loop(draw: Draw, meant_true: bool) -> KernelCase:
    """Horner's rule over a constant coefficient array in a counted loop, with a ``returns`` claim."""
    language = draw(st.sampled_from(LANGUAGES))
    coefficients = _coefficients(draw, draw(st.integers(2, 5)))
    in_code = coefficients
    claimed = _horner_value(coefficients, X)
    if not meant_true:
        if draw(st.booleans()):
            in_code = _bug(draw, coefficients)
        else:
            claimed = perturb(draw, claimed, [X])
    computed = _horner_value(in_code, X)
    n = len(in_code)
    floats = ", ".join(_float_text(q) for q in in_code)
    claim = f"{COMMENT[language]} idealcheck: returns {_claim_text(claimed)}"
    if language == "python":
        snippet = (f"{claim}\ndef NAME(x):\n    c = ({floats})\n    r = c[0]\n    for i in range(1, {n}):\n"
                   f"        r = r * x + c[i]\n    return r\n")
    elif language == "c":
        snippet = (f"{claim}\nstatic double NAME(double x) {{\n    const double c[{n}] = {{{floats}}};\n"
                   f"    double r = c[0];\n    for (int i = 1; i < {n}; ++i) {{\n        r = r * x + c[i];\n"
                   f"    }}\n    return r;\n}}\n")
    elif language == "rust":
        snippet = (f"{claim}\npub fn NAME(x: f64) -> f64 {{\n    let c: [f64; {n}] = [{floats}];\n"
                   f"    let mut r = c[0];\n    for i in 1..{n} {{\n        r = r.mul_add(x, c[i]);\n    }}\n"
                   f"    r\n}}\n")
    elif language == "fortran":
        assignments = "".join(f"    c({i + 1}) = {_float_text(q, language)}\n" for i, q in enumerate(in_code))
        snippet = (f"{claim}\npure function NAME(x) result(r)\n    real(8), intent(in) :: x\n"
                   f"    real(8) :: r, c({n})\n    integer :: i\n{assignments}    r = c(1)\n    do i = 2, {n}\n"
                   f"        r = r*x + c(i)\n    end do\nend function NAME\n")
    else:
        snippet = (f"{claim}\nfunction NAME(x)\n    c = ({floats})\n    r = c[1]\n    for i in 2:{n}\n"
                   f"        r = r * x + c[i]\n    end\n    r\nend\n")
    case = Case(f"kernel_horner_{language}", claim, computed, claimed, (), free_sampler(["x"]), meant_true)
    return KernelCase(case, language, snippet, 0)


@st.composite
def statement(draw: Draw, meant_true: bool) -> KernelCase:
    """A local computed from earlier locals, with a trailing ``== EXPR`` claim in the parameters."""
    language = draw(st.sampled_from(LANGUAGES))
    first = polynomial(draw, [A, B], 1, 2)
    second = polynomial(draw, [A, B], 1, 2)
    product = sympy.expand(first * second)
    claimed = product if meant_true else perturb(draw, product, [A, B])
    claim = f"{COMMENT[language] if language != 'rust' else '//'} idealcheck: == {_claim_text(claimed)}"
    t1, t2 = _poly_text(first, language), _poly_text(second, language)
    if language == "python":
        snippet = f"def NAME(a, b):\n    t = {t1}\n    y = t * ({t2})  {claim}\n    return y\n"
    elif language == "c":
        snippet = f"double NAME(double a, double b) {{\n    double t = {t1};\n    double y = t * ({t2}); {claim}\n" \
                  f"    return y;\n}}\n"
    elif language == "rust":
        snippet = f"pub fn NAME(a: f64, b: f64) -> f64 {{\n    let t = {t1};\n    let y = t * ({t2}); {claim}\n" \
                  f"    y\n}}\n"
    elif language == "fortran":
        snippet = (f"pure function NAME(a, b) result(y)\n    real(8), intent(in) :: a, b\n    real(8) :: t, y\n"
                   f"    t = {t1}\n    y = t*({t2})  {claim}\nend function NAME\n")
        case = Case("kernel_statement_fortran", claim, product, claimed, (), free_sampler(["a", "b"]), meant_true)
        return KernelCase(case, language, snippet, 4)
    else:
        snippet = f"function NAME(a, b)\n    t = {t1}\n    y = t * ({t2})  {claim}\n    y\nend\n"
    case = Case(f"kernel_statement_{language}", claim, product, claimed, (), free_sampler(["a", "b"]), meant_true)
    return KernelCase(case, language, snippet, 2)


@st.composite
def branches(draw: Draw, meant_true: bool) -> KernelCase:
    """An ``if``/``else`` whose two paths compute the same polynomial in two forms (each path an obligation
    under its branch condition); false: the bug is in the ``else`` path, or in the claim."""
    language = draw(st.sampled_from(["python", "c"]))
    factor_a, factor_b = polynomial(draw, [X, Y], 1, 2), polynomial(draw, [X, Y], 1, 2)
    product = sympy.expand(factor_a * factor_b)
    other, claimed = product, product
    if not meant_true:
        if draw(st.booleans()):
            other = perturb(draw, product, [X, Y])
        else:
            claimed = perturb(draw, product, [X, Y])
    threshold = small_int(draw, -2, 2, nonzero=False)
    guard = Condition(X, ">", sympy.Integer(threshold))
    otherwise = Condition(X, "<=", sympy.Integer(threshold))
    factored_text = f"({_poly_text(factor_a, language)}) * ({_poly_text(factor_b, language)})"
    claim = f"{COMMENT[language]} idealcheck: returns {_claim_text(claimed)}"
    if language == "python":
        snippet = (f"{claim}\ndef NAME(x, y):\n    if x > {threshold}:\n        r = {factored_text}\n    else:\n"
                   f"        r = {_poly_text(other, language)}\n    return r\n")
    else:
        snippet = (f"{claim}\ndouble NAME(double x, double y) {{\n    double r;\n    if (x > {threshold}) {{\n"
                   f"        r = {factored_text};\n    }} else {{\n        r = {_poly_text(other, language)};\n"
                   f"    }}\n    return r;\n}}\n")
    def either_side(rng: random.Random) -> dict[str, mpmath.mpf]:
        return as_mpf({"x": threshold + uniform(rng), "y": uniform(rng)})  # both paths equally often

    case = Case(f"kernel_branches_{language}", claim, product, claimed, (), either_side, meant_true,
                branches=(((guard,), product), ((otherwise,), other)))
    return KernelCase(case, language, snippet, 0)


@st.composite
def same_as(draw: Draw, meant_true: bool) -> KernelCase:
    """Two Python functions of two parameters: a factored fast form ``same as`` the expanded reference."""
    factor_a, factor_b = polynomial(draw, [A, B], 1, 2), polynomial(draw, [A, B], 1, 2)
    reference = sympy.expand(factor_a * factor_b)
    fast = reference if meant_true else perturb(draw, reference, [A, B])
    extra = sympy.expand(fast - reference)
    tail = f" + ({sympy.sstr(extra)})" if extra != 0 else ""
    snippet = (f"def NAME_ref(a, b):\n    return {sympy.sstr(reference)}\n\n\n"
               f"# idealcheck: same as NAME_ref\ndef NAME(a, b):\n    u = {sympy.sstr(factor_a)}\n"
               f"    return u * ({sympy.sstr(factor_b)}){tail}\n")
    case = Case("kernel_same_as_python", "same as", fast, reference, (), free_sampler(["a", "b"]), meant_true)
    return KernelCase(case, "python", snippet, 4)


@st.composite
def rotation(draw: Draw, meant_true: bool) -> KernelCase:
    """A C rotation by (c, s) whose squared length is claimed under ``c**2 + s**2 == 1``."""
    sign = 1 if meant_true else draw(st.sampled_from([-1, 2]))
    claimed = X**2 + Y**2
    snippet = ("// idealcheck: returns x**2 + y**2 given c**2 + s**2 == 1\n"
               "double NAME(double x, double y, double c, double s) {\n"
               "    double u = c * x - s * y;\n"
               f"    double v = s * x + {'' if sign == 1 else '-' if sign == -1 else '2.0 * '}c * y;\n"
               "    return u * u + v * v;\n}\n")
    C, S = sympy.symbols("c s")
    computed = (C * X - S * Y) ** 2 + (S * X + sign * C * Y) ** 2
    case = Case("kernel_rotation_c", snippet.splitlines()[0], computed, claimed,
                (Condition(C**2 + S**2, "==", sympy.Integer(1)),), circle_sampler, meant_true)
    return KernelCase(case, "c", snippet, 0)


@st.composite
def lengths(draw: Draw, meant_true: bool) -> KernelCase:
    """A scaled length through a root: C writes it through an out-pointer with hypot or sqrt, Rust with
    ``.sqrt()`` and ``.powi(2)``; the claim is the root of the sum of squares."""
    language = draw(st.sampled_from(["c", "rust"]))
    k = draw(st.integers(1, 4))
    computed = k * sympy.sqrt(X**2 + Y**2)
    claimed = sympy.sqrt(k**2 * X**2 + k**2 * Y**2) if meant_true else \
        draw(st.sampled_from([sympy.sqrt(k * X**2 + k**2 * Y**2 + 1), k * (X + Y), -computed]))
    claim = f"{COMMENT[language]} idealcheck: returns {_claim_text(claimed)}"
    if language == "c":
        root = draw(st.sampled_from(["hypot(x, y)", "sqrt(x * x + y * y)", "sqrt(pow(x, 2) + pow(y, 2))"]))
        snippet = f"{claim}\nvoid NAME(double x, double y, double *out) {{\n    *out = {k}.0 * {root};\n}}\n"
    else:
        snippet = (f"{claim}\npub fn NAME(x: f64, y: f64) -> f64 {{\n    let r = (x.powi(2) + y.powi(2)).sqrt();\n"
                   f"    {k}.0 * r\n}}\n")
    case = Case(f"kernel_lengths_{language}", claim, computed, claimed, (), free_sampler(["x", "y"]), meant_true)
    return KernelCase(case, language, snippet, 0)


FAMILIES: dict[str, Callable[[bool], st.SearchStrategy[KernelCase]]] = {
    "kernel_horner": horner_loop,
    "kernel_statement": statement,
    "kernel_branches": branches,
    "kernel_same_as": same_as,
    "kernel_rotation": rotation,
    "kernel_lengths": lengths,
}
