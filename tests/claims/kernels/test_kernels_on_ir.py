"""Kernel functions on the shared IR executor (``to_ir`` + ``ir_run``) against the kernel runner (``run``).

Both executors must give every path the same results (compared after sympy's ``expand``) and the same
branch conditions; what the IR does not model yet (integer parameters, integer division, casts, pointer
locals, places by reference that may overlap) must stay on the kernel runner, where C's truncating
division decides (common practice: ``1 / 2`` is 0 in C).  Places (structs, fixed-size arrays, pointers
and references to them) run on the IR: ``verifier.model.ir_places``.
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
from verifier.claims.kernels.to_ir import convert_function, refusal
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
    # places: structs through pointers, a local struct written by a callee, arrays with loop counters
    "quat.c": ("c", "norm_prod", """
typedef struct { double w, x, y, z; } quat;
static void conj(const quat *q, quat *c) { c->w = q->w; c->x = -q->x; c->y = -q->y; c->z = -q->z; }
double norm_prod(const quat *q) {
    quat c;
    conj(q, &c);
    return q->w * c.w - q->x * c.x - q->y * c.y - (*q).z * c.z;
}
"""),
    "dot.c": ("c", "dot3", """
double dot3(const double a[3], const double b[3]) {
    double s = 0.0;
    for (int i = 0; i < 3; i++) { s += a[i] * b[i]; }
    return s;
}
"""),
    "put.c": ("c", "put", "void put(double x, double *out) { out[1] = x; out[0] = x * x; }\n"),
    "local.c": ("c", "local_array", """
double local_array(double x) {
    double v[2];
    v[0] = x;
    v[1] = v[0] * x;
    const double c[3] = {1.0, 2.0, 3.0};
    return v[0] + v[1] + c[2];
}
"""),
    "cross.cpp": ("cpp", "cross_norm2", """
struct Vec3 { double x, y, z; };
void cross(const Vec3 &a, const Vec3 &b, Vec3 &c) {
    c.x = a.y * b.z - a.z * b.y;
    c.y = a.z * b.x - a.x * b.z;
    c.z = a.x * b.y - a.y * b.x;
}
double cross_norm2(const Vec3 &a, const Vec3 &b) {
    Vec3 c;
    cross(a, b, c);
    return c.x * c.x + c.y * c.y + c.z * c.z;
}
"""),
    "spread.f90": ("fortran", "spread", """
subroutine halves(x, lo, hi)
  real(8), intent(in) :: x
  real(8), intent(out) :: lo, hi
  lo = x / 2.0d0
  hi = x - lo
end subroutine halves
function spread(v) result(r)
  real(8), intent(in) :: v(3)
  real(8) :: r, a, b
  integer :: i
  r = 0.0d0
  do i = 3, 1, -1
    call halves(v(i), a, b)
    r = r + a * b
  end do
end function spread
"""),
    "turn.rs": ("rust", "turn", """
fn perp(a: [f64; 2]) -> [f64; 2] { [-a[1], a[0]] }
fn turn(a: [f64; 2], out: &mut f64) -> f64 {
    let p = perp(a);
    *out = p[0] * a[1];
    a[0] * p[0] + a[1] * p[1]
}
"""),
    "energy.jl": ("julia", "energy", """
function energy(v::NTuple{3,Float64})
    s = 0.0
    for i in 1:3
        s += v[i]^2
    end
    s
end
"""),
    # integer kinds: a symbolic integer parameter used as a real, C's truncating division, casts
    "halve.c": ("c", "halve", "double halve(int n) { return n * 0.5 + (double) n; }\n"),
    "cdiv.c": ("c", "cdiv", """
double cdiv(double x) {
    int q = -7 / 2;
    int r = (int) 2.0;
    return x * (1 / 2) + q * x + r;
}
"""),
    "casts.cpp": ("cpp", "half_gap", """
double half_gap(double a, double b, int k) {
    auto sum = a + k;
    return static_cast<double>(b - a) / 2.0 + sum * (k > 0 ? 1.0 : 0.5);
}
"""),
}

# results that are unknown on both executors, for the same reason
UNKNOWN = [
    ("int half_up(int k) { return (2 * k + 1) / 2; }", "half_up", "integer arithmetic may overflow (line 1)"),
    ("int back(int k) { return -k; }", "back", "may overflow (line 1)"),
    ("double h(double x) { return (double)(int) x; }", "h", "conversion to an integer truncates (line 1)"),
]


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


@pytest.mark.parametrize("source, name, reason", UNKNOWN)
def test_integer_arithmetic_the_ir_cannot_follow_is_unknown_on_both(source, name, reason):
    home, library = _load("k.c", source)
    function = home.named(name)
    on_ir = run_on_ir(function, library.resolver(home), 256, 16, None, [])
    assert on_ir is not None, "the function should convert to the IR"
    on_runner = [(o.results, o.conditions) for o in Runner(library.resolver(home)).run(function)]
    for results in (on_ir, on_runner):
        [(values, _)] = results
        assert [reason in getattr(v, "reason", "") for v in values] == [True], values


@pytest.mark.parametrize("source, name", [
    # a division whose operands' kinds the code does not say (an int on one branch, a double on the other)
    ("double g(double a, int k) { auto m = a > 0 ? k : 0.5; return m / 2; }", "g"),
    ("double s(const double *p) { const double *q = p + 1; return *p + *q; }", "s"),  # a pointer local
    # one place passed twice by reference: copying in and out would not be passing by reference
    ("void two(double *a, double *b) { *a = 1.0; *b = *a + 1.0; }\n"
     "double f(double x) { two(&x, &x); return x; }", "f"),
    # an index the call may change before its place is written back
    ("void bump(double *v, int *i) { *v = 1.0; }\ndouble g(double x) { double w[2] = {x, x}; int i = 0; "
     "bump(&w[i], &i); return w[0]; }", "g"),
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
    source = ("static double pair(const double *p) { const double *q = p + 1; return *p + *q; }\n"
              "double twice(const double *p) { return 2.0 * pair(p); }")
    home, library = _load("k.c", source)
    assert convert_function(home.named("twice"), library.resolver(home)) is None
    assert (refusal(home.named("twice"), library.resolver(home)) or "").startswith("pair: ")


def test_an_array_passed_to_a_pointer_parameter_is_written_through_it():
    # C passes an array as a pointer to its first element, so the callee's writes show in the caller
    # (common practice); the IR copies the place in and back out, the same as long as places do not overlap
    source = ("static void fill(double *p, double x) { p[0] = x; p[1] = 2.0 * x; }\n"
              "double f(double x) { double v[2] = {0.0, 0.0}; fill(v, x); return v[0] + v[1]; }")
    home, library = _load("k.c", source)
    [(values, conditions)] = run_on_ir(home.named("f"), library.resolver(home), 256, 16, None, []) or []
    assert conditions == () and sympy.expand(_sympy(values[0]) - 3 * sympy.Symbol("x")) == 0


def test_a_struct_written_through_a_pointer_is_proved_and_its_bug_refuted_end_to_end(cli, tmp_path):
    # the conjugate q* of a quaternion: q q* has scalar part |q|^2 (Hamilton's product, common practice)
    text = KERNELS["quat.c"][2]
    wrong = text.replace("c->y = -q->y;", "c->y = q->y;").replace("norm_prod", "norm_bad")
    claim = "// idealcheck: returns q.w**2 + q.x**2 + q.y**2 + q.z**2\n"
    (tmp_path / "k.c").write_text(text.replace("double norm_prod", claim + "double norm_prod") + "\n" +
                                  wrong.split("quat;", 1)[1].replace("conj", "conj2")
                                  .replace("double norm_bad", claim + "double norm_bad"))
    result = cli("check", "--no-cache", "--format", "json", "k.c", cwd=tmp_path)
    verdicts = [claim["verdict"] for claim in json.loads(result.out)["claims"]]
    assert verdicts == ["proved", "refuted"]


def test_integer_division_is_decided_the_c_way_end_to_end(cli, tmp_path):
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


def test_a_fortran_array_from_one_and_a_subroutine_with_intent_out_end_to_end(cli, tmp_path):
    # spread(v) = sum of (v(i)/2)*(v(i) - v(i)/2) = (v(1)**2 + v(2)**2 + v(3)**2)/4 (expanded by hand)
    body = KERNELS["spread.f90"][2].strip()
    claim = "! idealcheck: returns (v(1)**2 + v(2)**2 + v(3)**2)/4\n"
    wrong = "! idealcheck: returns (v(1)**2 + v(2)**2 + v(3)**2)/2\n"
    second = body.split("end subroutine halves\n", 1)[1].replace("spread", "spread2")
    text = body.replace("function spread(v)", claim + "function spread(v)") + "\n" + wrong + second + "\n"
    (tmp_path / "k.f90").write_text(text)
    result = cli("check", "--no-cache", "--format", "json", "k.f90", cwd=tmp_path)
    verdicts = [claim["verdict"] for claim in json.loads(result.out)["claims"]]
    assert verdicts == ["proved", "refuted"]
