"""Kernel functions on the shared IR executor (``to_ir`` + ``ir_run``) against the kernel runner (``run``).

Both executors must give every path the same results (compared after sympy's ``expand``) and the same
branch conditions; what the IR does not model yet (pointers, integer parameters, integer division) must
stay on the kernel runner, where C's truncating division decides (common practice: ``1 / 2`` is 0 in C).
"""
from __future__ import annotations

import json
from collections.abc import Sequence

import pytest
import sympy

from verifier.claims.kernels import tree as t
from verifier.claims.kernels.ir_run import run_on_ir
from verifier.claims.kernels.library import KernelFile, KernelLibrary
from verifier.claims.kernels.run import Runner
from verifier.claims.kernels.to_ir import convert_function
from verifier.model.expr import BinOp, Call, Neg, Num, Opaque, Pow, Var

KERNELS = {
    "horner.c": ("c", "horner", """
double horner(double t) {
    double acc = 0.0;
    for (int i = 0; i < 3; i++) {
        acc = acc * t + (i + 1);
    }
    return acc;
}
"""),
    "branch.c": ("c", "clamp_sq", """
static double sq(double v) { return v * v; }
double clamp_sq(double a, double b) {
    double m = a > b ? a : b;
    if (m >= 1.0 && b != 0.0) {
        return sq(m) - 1;
    }
    return sqrt(m * m) + pow(a, 2);
}
"""),
    "mix.jl": ("julia", "mix", """
function mix(x, y)
    s = 0.0
    for k in 1:2:5
        s = s + k * x
    end
    return s / 3, x^2 - y
end
"""),
    "cube.rs": ("rust", "cube_diff", """
fn cube(u: f64) -> f64 { u * u * u }
fn cube_diff(a: f64, b: f64) -> f64 {
    let d = cube(a) - cube(b);
    if a < b { -d } else { d }
}
"""),
    "cmul.c": ("c", "cmul", """
void cmul(double a, double b, double c, double d, double *re, double *im) {
    double k1 = c * (a + b);
    *re = k1 - b * (c + d);
    *im = k1 + a * (d - c);
}
"""),
    "scale.cpp": ("cpp", "scale", """
double scale(double x, double& y) {
    y = y * x;
    return x + y;
}
"""),
    "split.f90": ("fortran", "split", """
subroutine split(x, lo, hi)
  real(8), intent(in) :: x
  real(8), intent(out) :: lo, hi
  lo = x - 1.0d0
  if (x > 0.0d0) then
    hi = x * x
  else
    hi = -x
  end if
end subroutine split
"""),
    "poly.f90": ("fortran", "poly", """
function poly(x) result(r)
  real(8), intent(in) :: x
  real(8) :: r
  integer :: i
  r = 1.0d0
  do i = 1, 3
    r = r * x + i
  end do
end function poly
"""),
}


def _sympy(expr: object) -> sympy.Expr:
    """The claim-language expression as sympy, to compare results by expansion."""
    if isinstance(expr, Num):
        return sympy.Rational(expr.value.numerator, expr.value.denominator)
    if isinstance(expr, Var):
        return sympy.Symbol(expr.name)
    if isinstance(expr, BinOp):
        a, b = _sympy(expr.left), _sympy(expr.right)
        return {"+": a + b, "-": a - b, "*": a * b, "/": a / b}[expr.op]
    if isinstance(expr, Neg):
        return -_sympy(expr.operand)
    if isinstance(expr, Pow):
        return _sympy(expr.base) ** sympy.Rational(expr.exponent.numerator, expr.exponent.denominator)
    if isinstance(expr, Call):
        return sympy.Function(expr.function)(*[_sympy(a) for a in expr.args])
    if isinstance(expr, Opaque):
        return sympy.Function(expr.name)(*[_sympy(a) for a in expr.args])
    raise AssertionError(f"not a number: {expr!r}")


def _paths(results: Sequence[tuple[Sequence[object], Sequence[object]]]) -> list[tuple[list[str], list[str]]]:
    out = []
    for values, conditions in results:
        expanded = [str(sympy.expand(_sympy(v))) for v in values]
        tests = [f"{c.relation} {sympy.expand(_sympy(c.left) - _sympy(c.right))}" for c in conditions]
        out.append((expanded, tests))
    return out


def _load(name: str, text: str) -> tuple[KernelFile, KernelLibrary]:
    library = KernelLibrary(("",))
    return library.add(name, text), library


@pytest.mark.parametrize("name", sorted(KERNELS))
def test_both_executors_agree(name):
    language, function_name, text = KERNELS[name]
    home, library = _load(name, text)
    function = home.named(function_name)
    assert function is not None and function.language == language
    resolve = library.resolver(home)
    notes: list[str] = []
    on_ir = run_on_ir(function, resolve, 256, 16, None, notes)
    assert on_ir is not None, "the function should convert to the IR"
    runner = Runner(resolve)
    on_runner = [(o.results, o.conditions) for o in runner.run(function)]
    assert sorted(_paths(on_ir)) == sorted(_paths(on_runner))  # the same paths, perhaps in another order
    assert notes == runner.inlined


def test_horner_loop_gives_the_expanded_polynomial():
    home, library = _load("horner.c", KERNELS["horner.c"][2])
    [(values, conditions)] = run_on_ir(home.named("horner"), library.resolver(home), 256, 16, None, []) or []
    tau = sympy.Symbol("t")
    assert conditions == () and sympy.expand(_sympy(values[0]) - (tau**2 + 2 * tau + 3)) == 0


@pytest.mark.parametrize("source, name", [
    ("void put(double x, double *out) { out[1] = x; }", "put"),  # an element through a pointer
    ("double halve(int n) { return n * 0.5; }", "halve"),  # an integer parameter may overflow
    ("double f(double x) { return x * (1 / 2); }", "f"),  # integer division truncates
    ("double g(double x) { double v[2]; v[0] = x; return v[0]; }", "g"),  # a local array
    ("double h(double x) { return (double)(int) x; }", "h"),  # casts
])
def test_what_the_ir_does_not_model_stays_on_the_kernel_runner(source, name):
    home, library = _load("k.c", source)
    function = home.named(name)
    assert isinstance(function, t.Function)
    assert convert_function(function, library.resolver(home)) is None


def test_a_pointer_written_on_some_paths_only_stays_on_the_kernel_runner():
    # read and written: the kernel runner reports it on the paths that change it, which the IR's out-parameters do not say
    home, library = _load("k.c", "void f(double x, double *p) { if (x > 0) { *p = *p + x; } }")
    assert convert_function(home.named("f"), library.resolver(home)) is None


def test_callee_that_does_not_convert_keeps_the_caller_on_the_kernel_runner():
    source = "void put(double x, double *out) { *out = x; }\ndouble twice(double x) { put(x, &x); return x; }"
    home, library = _load("k.c", source)
    assert convert_function(home.named("twice"), library.resolver(home)) is None


def test_integer_division_is_still_decided_the_c_way_end_to_end(cli, tmp_path):
    (tmp_path / "k.c").write_text("// idealcheck: returns 0\ndouble f(double x) { return x * (1 / 2); }\n"
                                  "// idealcheck: returns x / 2\ndouble g(double x) { return x * (1.0 / 2); }\n")
    result = cli("check", "--no-cache", "--format", "json", "k.c", cwd=tmp_path)
    verdicts = [claim["verdict"] for claim in json.loads(result.out)["claims"]]
    assert verdicts == ["proved", "proved"]


def test_a_loop_kernel_on_the_ir_is_proved_and_its_bug_refuted_end_to_end(cli, tmp_path):
    tau = sympy.Symbol("t")
    expected = sympy.sstr(sympy.expand(((tau + 1) * tau + 2) * tau + 3))  # Horner's rule, common practice
    body = KERNELS["horner.c"][2].replace("acc = 0.0", "acc = 1.0")
    (tmp_path / "k.c").write_text(f"// idealcheck: returns {expected}\n{body.strip()}\n"
                                  f"// idealcheck: returns {expected} + 1\n{body.strip().replace('horner', 'h2')}\n")
    result = cli("check", "--no-cache", "--format", "json", "k.c", cwd=tmp_path)
    verdicts = [claim["verdict"] for claim in json.loads(result.out)["claims"]]
    assert verdicts == ["proved", "refuted"]
