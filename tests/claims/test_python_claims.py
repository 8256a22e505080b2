"""Python function and statement claims: the obligations symbolic execution produces.

The mathematical facts used as references are named beside each check.  Obligations without conditions
are checked by exact rational evaluation at a few points (a true identity vanishes everywhere, a wrong
one differs somewhere); conditional ones are checked for their structure (labels, conditions, notes).
"""
from __future__ import annotations

import random
import textwrap
from fractions import Fraction

import pytest

from verifier.claims import extract
from verifier.model.expr import PI, BinOp, Call, Expr, Neg, Num, Opaque, Pow, Var
from verifier.model.claim import Claim, ExtractionContext, NamedConditionSet

UNIT_QUATERNION = NamedConditionSet("unit_quaternion", ("w", "x", "y", "z"), ("w**2 + x**2 + y**2 + z**2 == 1",))


# ---------------------------------------------------------------- helpers


def claims_in(tmp_path, monkeypatch, source: str, *, files: dict[str, str] | None = None,
              path: str = "kernel.py", **context) -> list[Claim]:
    """The claims of ``source`` written to ``path`` under ``tmp_path`` (the working directory)."""
    monkeypatch.chdir(tmp_path)
    for name, text in (files or {}).items():
        target = tmp_path / name
        target.parent.mkdir(parents=True, exist_ok=True)
        target.write_text(textwrap.dedent(text))
    text = textwrap.dedent(source)
    (tmp_path / path).parent.mkdir(parents=True, exist_ok=True)
    (tmp_path / path).write_text(text)
    ctx = ExtractionContext(named_conditions=(UNIT_QUATERNION,), roots=(".",), **context)
    return extract(path, text, ctx)


def only(claims: list[Claim]) -> Claim:
    assert len(claims) == 1, claims
    return claims[0]


def opaque_value(name: str, args: tuple[Fraction, ...]) -> Fraction:
    # a fixed rational per (name, arguments): the same call on the same arguments is the same value
    return Fraction(hash((name, args)) % 1009 + 1, 7)


def value(expr: Expr, point: dict[str, Fraction]) -> Fraction:
    """Exact rational value (no square roots or trigonometry: those tests look at structure only)."""
    if isinstance(expr, Num):
        return expr.value
    if isinstance(expr, Var):
        return point.setdefault(expr.name, Fraction(random.randint(-40, 40), random.randint(1, 9)))
    if isinstance(expr, Neg):
        return -value(expr.operand, point)
    if isinstance(expr, BinOp):
        a, b = value(expr.left, point), value(expr.right, point)
        return {"+": a + b, "-": a - b, "*": a * b, "/": a / b if b else Fraction(10**9)}[expr.op]
    if isinstance(expr, Pow):
        assert expr.exponent.denominator == 1
        base = value(expr.base, point)
        return base ** int(expr.exponent) if base or expr.exponent >= 0 else Fraction(10**9)
    if isinstance(expr, Opaque):
        return opaque_value(expr.name, tuple(value(a, point) for a in expr.args))
    if isinstance(expr, Call) and expr.function == "fma":
        a, b, c = (value(x, point) for x in expr.args)
        return a * b + c
    raise AssertionError(f"not evaluable here: {expr!r}")


def vanishes(left: Expr, right: Expr, trials: int = 6) -> bool:
    rng_state = random.getstate()
    random.seed(20261201)
    try:
        for _ in range(trials):
            point: dict[str, Fraction] = {}
            if value(left, point) != value(right, point):
                return False
        return True
    finally:
        random.setstate(rng_state)


# ---------------------------------------------------------------- returns / same as, straight-line code


def test_returns_claim_gives_one_obligation_at_the_comment(tmp_path, monkeypatch):
    claim = only(claims_in(tmp_path, monkeypatch, """\
        import math


        # idealcheck: returns 4*x**3 - 3*x
        def chebyshev_t3(x):
            return x * (4 * x * x - 3)
        """))
    assert claim.kind == "function"
    assert (claim.location.line, claim.location.column) == (4, 3)
    assert claim.problem is None
    assert claim.dependencies == ("kernel.py",)
    (ob,) = claim.obligations
    assert ob.label == "" and ob.conditions == ()
    # Chebyshev T3(x) = 4x^3 - 3x (Abramowitz & Stegun, Handbook of Mathematical Functions, 1964, Table 22.3)
    assert vanishes(ob.left, ob.right)


def test_horner_loops_are_unrolled(tmp_path, monkeypatch):
    # Horner's rule (common practice): ((c0 t + c1) t + c2) t + c3 = c0 t^3 + c1 t^2 + c2 t + c3
    claims = claims_in(tmp_path, monkeypatch, """\
        COEFFS = (3, -2, 5, 7)


        # idealcheck: returns 3*t**3 - 2*t**2 + 5*t + 7
        def over_constants(t):
            acc = 0
            for c in COEFFS:
                acc = acc * t + c
            return acc


        # idealcheck: returns c[0]*t**3 + c[1]*t**2 + c[2]*t + c[3]
        def over_range(c, t):
            acc = c[0]
            for i in range(1, 4):
                acc = acc * t + c[i]
            return acc


        # wrong: one coefficient short
        # idealcheck: returns c[0]*t**3 + c[1]*t**2 + c[2]*t + c[3]
        def short(c, t):
            acc = c[0]
            for i in range(1, 3):
                acc = acc * t + c[i]
            return acc
        """)
    assert [c.problem for c in claims] == [None, None, None]
    assert vanishes(claims[0].obligations[0].left, claims[0].obligations[0].right)
    assert vanishes(claims[1].obligations[0].left, claims[1].obligations[0].right)
    assert not vanishes(claims[2].obligations[0].left, claims[2].obligations[0].right)
    # the coefficient vector's entries are variables named by their spelling, like in the claim
    names: set[str] = set()
    point: dict[str, Fraction] = {}
    value(claims[1].obligations[0].left, point)
    names = set(point)
    assert {"c[0]", "c[1]", "c[2]", "c[3]", "t"} == names


def test_same_as_compares_components_gauss_three_multiplications(tmp_path, monkeypatch):
    # (a+bi)(c+di) with three real multiplications (Gauss's trick; Knuth, TAOCP vol. 2, section 4.6.4,
    # from memory): k1 = c(a+b), k2 = a(d-c), k3 = b(c+d); real = k1 - k3, imaginary = k1 + k2.
    claims = claims_in(tmp_path, monkeypatch, """\
        def cmul(a, b, c, d):
            return a * c - b * d, a * d + b * c


        # idealcheck: same as cmul
        def cmul3(p, q, r, s):
            k1 = r * (p + q)
            k2 = p * (s - r)
            k3 = q * (r + s)
            return k1 - k3, k1 + k2


        # idealcheck: same as cmul
        def cmul3_wrong(a, b, c, d):
            k1 = c * (a + b)
            k2 = a * (d - c)
            k3 = b * (c - d)
            return k1 - k3, k1 + k2
        """)
    good, bad = claims
    assert [ob.label for ob in good.obligations] == ["component 1", "component 2"]
    assert all(vanishes(ob.left, ob.right) for ob in good.obligations)
    # the other function is called with this function's parameter names, matched by position
    point: dict[str, Fraction] = {}
    for ob in good.obligations:
        value(ob.right, point)
    assert set(point) == {"p", "q", "r", "s"}
    assert [vanishes(ob.left, ob.right) for ob in bad.obligations] == [False, True]


def test_tuple_unpacking_local_tuples_and_attribute_chains(tmp_path, monkeypatch):
    claim = only(claims_in(tmp_path, monkeypatch, """\
        # idealcheck: returns (q.w*m[1][2], v[0] + v[2], 7)
        def pick(q, v, m):
            a, b, c = v
            pair = (q.w, m[1][2])
            t = [pair[0] * pair[1], a + c]
            return t[0], t[-1], 7
        """))
    assert claim.problem is None
    assert [ob.label for ob in claim.obligations] == ["component 1", "component 2", "component 3"]
    assert claim.obligations[0].left == BinOp("*", Var("q.w"), Var("m[1][2]"))
    assert claim.obligations[1].left == BinOp("+", Var("v[0]"), Var("v[2]"))
    assert all(vanishes(ob.left, ob.right) for ob in claim.obligations)


def test_lists_changed_in_place_and_aliases(tmp_path, monkeypatch):
    # Python lists are shared objects (language reference, common practice): b = a then a[0] = 5 changes b
    claim = only(claims_in(tmp_path, monkeypatch, """\
        # idealcheck: returns (5, x)
        def alias(x):
            a = [0, 0]
            b = a
            a[0] = 5
            b.append(x)
            return b[0], a[2]
        """))
    assert claim.problem is None
    assert [(ob.left, ob.right) for ob in claim.obligations] == [(Num(Fraction(5)), Num(Fraction(5))),
                                                                 (Var("x"), Var("x"))]


def test_math_functions_and_powers(tmp_path, monkeypatch):
    claim = only(claims_in(tmp_path, monkeypatch, """\
        import math
        import numpy as np
        from math import fma, hypot


        # idealcheck: returns (x, x, x, x, x, x, x)
        def functions(x, y, z):
            return (math.sqrt(x), hypot(x, y), fma(x, y, z), pow(x, 3), math.pow(x, 0.5), np.cos(x) ** 2,
                    x ** -1)
        """))
    lefts = [ob.left for ob in claim.obligations]
    x, y, z = Var("x"), Var("y"), Var("z")
    assert lefts == [Call("sqrt", (x,)), Call("hypot", (x, y)), Call("fma", (x, y, z)), Pow(x, Fraction(3)),
                     Pow(x, Fraction(1, 2)), Pow(Call("cos", (x,)), Fraction(2)), Pow(x, Fraction(-1))]


def test_keyword_arguments_and_defaults_are_bound(tmp_path, monkeypatch):
    claim = only(claims_in(tmp_path, monkeypatch, """\
        def affine(x, scale=3, *, shift=2):
            return scale * x + shift


        # idealcheck: returns 3*a + 2 + 5*b + 2 + 3*a - 1
        def uses(a, b):
            return affine(a) + affine(b, scale=5) + affine(shift=-1, x=a)
        """))
    assert claim.problem is None
    assert vanishes(claim.obligations[0].left, claim.obligations[0].right)
    assert claim.notes == ("inlined affine from kernel.py",)


# ---------------------------------------------------------------- modules


def test_helpers_from_another_module_are_inlined(tmp_path, monkeypatch):
    # cross product (common practice): a x b = (ay bz - az by, az bx - ax bz, ax by - ay bx)
    helpers = """\
        def cross(ax, ay, az, bx, by, bz):
            return ay * bz - az * by, az * bx - ax * bz, ax * by - ay * bx


        def dot(ax, ay, az, bx, by, bz):
            return ax * bx + ay * by + az * bz
        """
    claims = claims_in(tmp_path, monkeypatch, """\
        import robo.geometry as geo
        from robo.geometry import cross

        from .geometry import dot


        # idealcheck: returns 0
        def triple_with_itself(ax, ay, az, bx, by, bz):
            cx, cy, cz = cross(ax, ay, az, bx, by, bz)
            return dot(ax, ay, az, cx, cy, cz) + geo.dot(bx, by, bz, cx, cy, cz)
        """, files={"robo/__init__.py": "", "robo/geometry.py": helpers}, path="robo/kinematics.py")
    claim = only(claims)
    assert claim.problem is None, claim.problem
    assert claim.dependencies == ("robo/kinematics.py", "robo/geometry.py")
    assert any("cross" in note and "robo/geometry.py" in note for note in claim.notes)
    assert vanishes(claim.obligations[0].left, claim.obligations[0].right)


def test_same_as_resolves_an_imported_function(tmp_path, monkeypatch):
    claims = claims_in(tmp_path, monkeypatch, """\
        import robo.geometry as geo


        # idealcheck: same as geo.norm2
        def norm2_expanded(x, y):
            return (x + y) ** 2 - 2 * x * y
        """, files={"robo/__init__.py": "", "robo/geometry.py": "def norm2(a, b):\n    return a*a + b*b\n"})
    claim = only(claims)
    assert claim.dependencies == ("kernel.py", "robo/geometry.py")
    assert vanishes(claim.obligations[0].left, claim.obligations[0].right)


def test_unresolved_calls_are_opaque_and_listed(tmp_path, monkeypatch):
    claims = claims_in(tmp_path, monkeypatch, """\
        from scipy.special import erf


        def smooth(x):
            e = erf(2 * x)
            y = e * e * (3 - 2 * e)  # idealcheck: == 3*e**2 - 2*e**3
            return y


        # idealcheck: returns 0
        def differs(x):
            return erf(x) - erf(x + 0)
        """)
    statement, function = claims
    assert statement.kind == "statement"
    (ob,) = statement.obligations
    assert Opaque("scipy.special.erf", (BinOp("*", Num(Fraction(2)), Var("x")),)) in _nodes(ob.left)
    assert vanishes(ob.left, ob.right)
    assert "opaque call scipy.special.erf(...) at line 5" in ob.notes
    assert "opaque call scipy.special.erf(...) at line 5" in statement.notes
    # erf(x) and erf(x + 0) are different opaque applications (no algebra on arguments here)
    assert function.problem is None


def _nodes(expr: Expr) -> list[Expr]:
    out = [expr]
    for child in getattr(expr, "args", ()) or ():
        out += _nodes(child)
    for attr in ("left", "right", "operand", "base"):
        child = getattr(expr, attr, None)
        if child is not None:
            out += _nodes(child)
    return out


# ---------------------------------------------------------------- control flow


def test_if_elif_else_paths_carry_branch_conditions(tmp_path, monkeypatch):
    claim = only(claims_in(tmp_path, monkeypatch, """\
        # idealcheck: returns (x**2 - y**2)/(x - y) given x != y
        def guarded(x, y):
            if x == -y:
                return 0
            elif x < y:
                return y + x
            else:
                return x + y
        """))
    labels = [ob.label for ob in claim.obligations]
    assert labels == ["path where x == -y", "path where x != -y and x < y", "path where x != -y and x >= y"]
    for ob in claim.obligations:
        assert ob.conditions[0].text == "x != y" and ob.conditions[0].origin == "given"
    branch = claim.obligations[2].conditions[1:]
    assert [(c.relation, c.origin) for c in branch] == [("!=", "branch (line 3)"), (">=", "branch (line 5)")]


def test_boolean_tests_split_into_exact_paths(tmp_path, monkeypatch):
    claim = only(claims_in(tmp_path, monkeypatch, """\
        # idealcheck: returns a*b
        def both(a, b):
            if a > 0 and not b <= 0:
                return b * a
            return a * b
        """))
    labels = [ob.label for ob in claim.obligations]
    # not (A and B) is (not A) or (A and not B): one path each
    assert labels == ["path where a > 0 and b > 0", "path where a <= 0", "path where a > 0 and b <= 0"]


def test_conditional_expressions_and_early_returns(tmp_path, monkeypatch):
    claim = only(claims_in(tmp_path, monkeypatch, """\
        # idealcheck: returns x
        def pick(x, d):
            if d == 0:
                return x
            y = x * d / d if d != 1 else x
            return y
            while True:
                pass
        """))
    assert claim.problem is None  # the loop after the last return is never reached
    labels = [ob.label for ob in claim.obligations]
    assert labels == ["path where d == 0", "path where d != 0 and d != 1", "path where d != 0 and d == 1"]


def test_constant_tests_are_decided_while_unrolling(tmp_path, monkeypatch):
    claim = only(claims_in(tmp_path, monkeypatch, """\
        # idealcheck: returns x**3 + 1
        def odd_terms(x):
            acc = 1
            for k in range(4):
                if k % 2 == 1:
                    acc += x ** k - x ** (k - 1) + x ** (k - 1)
            return acc - x
        """))
    (ob,) = claim.obligations
    assert ob.label == "" and vanishes(ob.left, ob.right)


def test_statement_claims_see_earlier_locals_on_every_path(tmp_path, monkeypatch):
    claims = claims_in(tmp_path, monkeypatch, """\
        def kernel(a, b, flag):
            half = a / 2
            energy = b * half * half * 2  # idealcheck: == b*a**2/2
            total: float = 0.0
            for k in range(3):
                total += energy  # idealcheck: == (k + 1)*energy
            if flag > 0:
                energy = -energy
            out = energy, total  # idealcheck: == (b*a**2/2, 3*b*a**2/2)
            return out[1] - half  # idealcheck: == 3*energy - a/2 given b != 0
        """)
    first, loop, pair, ret = claims
    assert [c.kind for c in claims] == ["statement"] * 4
    assert vanishes(first.obligations[0].left, first.obligations[0].right)
    assert [ob.label for ob in loop.obligations] == ["visit 1", "visit 2", "visit 3"]
    assert all(vanishes(ob.left, ob.right) for ob in loop.obligations)
    # the tuple claim fails on the path where flag > 0 (energy was negated), holds on the other
    by_label = {ob.label: vanishes(ob.left, ob.right) for ob in pair.obligations}
    assert by_label == {"path where flag > 0, component 1": False, "path where flag > 0, component 2": True,
                        "path where flag <= 0, component 1": True, "path where flag <= 0, component 2": True}
    # `energy` in the last claim means the value it has at that statement on each path
    assert [ob.label for ob in ret.obligations] == ["path where flag > 0", "path where flag <= 0"]
    assert [vanishes(ob.left, ob.right) for ob in ret.obligations] == [False, True]
    assert all(ob.conditions[0].text == "b != 0" for ob in ret.obligations)


def test_named_condition_sets_reach_every_obligation(tmp_path, monkeypatch):
    claim = only(claims_in(tmp_path, monkeypatch, """\
        def sandwich(w, x, y, z, v):
            return v * (w * w + x * x + y * y + z * z)


        # idealcheck: same as sandwich given unit_quaternion
        def fast(w, x, y, z, v):
            if v == 0:
                return 0
            return v
        """))
    assert len(claim.obligations) == 2
    for ob in claim.obligations:
        assert ob.conditions[0].origin == "named:unit_quaternion"


# ---------------------------------------------------------------- limits and unsupported constructs


UNSUPPORTED = [
    ("while x > 1:\n        x = x / 2\n    return x", "while loop at line 3"),
    ("try:\n        y = x\n    except ValueError:\n        y = 0\n    return y", "try statement at line 3"),
    ("with open('f') as h:\n        y = x\n    return y", "with statement at line 3"),
    ("return sum([t * t for t in (x, x)])", "list comprehension at line 3"),
    ("return x // (2, 3)", "`//` at line 3"),
    ("return x % (1, 2)", "`%` at line 3"),
    ("return x & 1", "bit operation `&` at line 3"),
    ("f = lambda t: t * x\n    x = 2\n    return f(x)", "at line 5"),
    ("global COUNT\n    return x", "global statement at line 3"),
    ("x.a.scale = 2\n    return x", "assignment to a nested attribute at line 3"),
    ("return x ** x", "non-constant exponent at line 3"),
    ("return x ** 0.25", "exponent 1/4 at line 3"),
    ("if x:\n        return x\n    return -x if x in (1, 2) else x", "`in` at line 5"),
]


@pytest.mark.parametrize("body, expected", UNSUPPORTED)
def test_unsupported_constructs_are_inconclusive_with_their_line(tmp_path, monkeypatch, body, expected):
    claim = only(claims_in(tmp_path, monkeypatch, f"# idealcheck: returns x\ndef kernel(x):\n    {body}\n"))
    assert claim.problem is not None
    assert claim.problem.verdict == "inconclusive"
    assert expected in claim.problem.message


def test_unsupported_code_off_the_claimed_paths_does_not_matter(tmp_path, monkeypatch):
    claims = claims_in(tmp_path, monkeypatch, """\
        def kernel(x):
            unused = abs(x)
            y = x * x  # idealcheck: == x**2
            while y > 1:
                y = y / 2
            return y


        # idealcheck: returns x + 1
        def ignores_unused(x):
            spare = min(x, 0)
            return x + 1
        """)
    assert [c.problem for c in claims] == [None, None]


def test_unroll_limit_and_depth_limit(tmp_path, monkeypatch):
    claims = claims_in(tmp_path, monkeypatch, """\
        def f1(x):
            return x + 1


        def f2(x):
            return f1(x) + 1


        def f3(x):
            return f2(x) + 1


        # idealcheck: returns 4*x
        def small_loop(x):
            acc = 0
            for _ in range(4):
                acc += x
            return acc


        # idealcheck: returns 5*x
        def large_loop(x):
            acc = 0
            for _ in range(5):
                acc += x
            return acc


        # idealcheck: returns x + 3
        def deep(x):
            return f3(x)


        # idealcheck: returns x
        def recursive(x):
            if x == 0:
                return x
            return recursive(x - 1) + 1
        """, unroll_limit=4, inline_depth=2)
    small, large, deep, recursive = claims
    assert small.problem is None
    assert large.problem.verdict == "inconclusive"
    assert "line 24" in large.problem.message and "unroll limit of 4" in large.problem.message
    assert deep.problem.verdict == "inconclusive" and "inlining depth limit of 2" in deep.problem.message
    assert recursive.problem.verdict == "inconclusive" and "recursive call of recursive" in recursive.problem.message


# ---------------------------------------------------------------- errors and placement


def test_placement_and_signature_errors(tmp_path, monkeypatch):
    claims = claims_in(tmp_path, monkeypatch, """\
        def pair(a, b):
            return a + b, a - b


        # idealcheck: same as pair

        def after_blank_line(a, b):
            return a + b, a - b


        # idealcheck: same as pair
        def fewer(a):
            return a, a


        # idealcheck: same as pair
        def three(a, b):
            return a + b, a - b, 0


        # idealcheck: same as missing
        def lonely(a, b):
            return a


        # idealcheck: returns a + b
        # (the claim sits in a comment block; decorators may follow)
        @functools.lru_cache(maxsize=None)
        @staticmethod
        def decorated(a, b):
            if a > 0:  # idealcheck: == a
                return a + b
            return b + a


        x = 1  # idealcheck: returns x
        """)
    blank, fewer, three, missing, decorated, statement, trailing_returns = claims
    assert blank.problem.verdict == "error" and "directly above a `def`" in blank.problem.message
    assert fewer.problem.verdict == "error" and "fewer takes 1" in fewer.problem.message
    assert three.problem.verdict == "error" and "three returns 3 values, pair returns 2 values" in three.problem.message
    assert missing.problem.verdict == "error" and "`missing`" in missing.problem.message
    assert decorated.problem is None and len(decorated.obligations) == 2
    assert statement.problem.verdict == "error" and "must trail an assignment" in statement.problem.message
    assert trailing_returns.problem.verdict == "error"


def test_python_syntax_error_gives_one_error_and_keeps_expression_claims(tmp_path, monkeypatch):
    claims = claims_in(tmp_path, monkeypatch, """\
        # idealcheck: (a + b)**2 == a**2 + 2*a*b + b**2

        # idealcheck: returns x
        def broken(x:
            return x

        y = 2  # idealcheck: == 2
        """)
    expression, problem = claims
    assert expression.kind == "expression" and expression.problem is None
    assert problem.problem.verdict == "error"
    assert problem.problem.message.startswith("cannot parse Python:")
    assert problem.location.line == 4  # the unclosed parenthesis of the def


def test_claim_text_errors_are_reported_with_their_column(tmp_path, monkeypatch):
    claim = only(claims_in(tmp_path, monkeypatch, """\
        # idealcheck: returns x +* 2
        def f(x):
            return x
        """))
    assert claim.kind == "function" and claim.problem.verdict == "error"


def test_methods_constants_and_module_state(tmp_path, monkeypatch):
    claims = claims_in(tmp_path, monkeypatch, """\
        import math

        SCALE = 0.5
        COUNTER = 0


        def bump():
            global COUNTER
            COUNTER = COUNTER + 1


        class Attitude:
            def norm2(self):
                return self.w * self.w + self.x * self.x

            # idealcheck: returns 2*pi*r*(self.w**2 + self.x**2)/2
            def scaled(self, r):
                return math.tau * r * self.norm2() * SCALE


        # idealcheck: returns x
        def uses_counter(x):
            return x + COUNTER


        # idealcheck: returns x
        def squares(x):
            for _ in range(40):
                x = x * x
            return x
        """)
    method, counter, squares = claims
    (ob,) = method.obligations
    # tau = 2 pi (common practice); the bound method self.norm2() is inlined with the same receiver
    assert ob.left == BinOp("*", BinOp("*", BinOp("*", BinOp("*", Num(Fraction(2)), PI), Var("r")),
                                           BinOp("+", BinOp("*", Var("self.w"), Var("self.w")),
                                                 BinOp("*", Var("self.x"), Var("self.x")))),
                            Num(Fraction(1, 2)))
    assert counter.problem.verdict == "inconclusive" and "COUNTER" in counter.problem.message
    # 2**40 factors as a tree: refused instead of hanging
    assert squares.problem.verdict == "inconclusive" and "grows beyond" in squares.problem.message


def test_numpy_arrays_are_elementwise_not_concatenated(tmp_path, monkeypatch):
    # numpy broadcasting and `@` (numpy documentation, common practice): [x, y] + array([1, 0]) is
    # elementwise, while two Python lists concatenate
    claims = claims_in(tmp_path, monkeypatch, """\
        import numpy as np


        # idealcheck: returns (x + 1, y, x, y, 1, 0)
        def mixed(x, y):
            v = [x, y] + np.array([1, 0])
            w = [x, y] + [1, 0]
            return v[0], v[1], w[0], w[1], w[2], w[3]


        # idealcheck: returns (a*x + b*y, c*x + d*y, a*d - b*c)
        def matvec(a, b, c, d, x, y):
            m = np.array([[a, b], [c, d]])
            r = m @ np.array([x, y])
            out = np.zeros(3)
            out[0] = r[0]
            out[1] = r[1]
            out[2] = m[0, 0] * m[1, 1] - m[0][1] * m[1][0]
            return out[0], out[1], out[2]
        """)
    for claim in claims:
        assert claim.problem is None
        assert all(vanishes(ob.left, ob.right) for ob in claim.obligations)


def test_returns_claims_may_name_module_constants(tmp_path, monkeypatch):
    claim = only(claims_in(tmp_path, monkeypatch, """\
        GAIN = 0.25
        OFFSET = 3


        # idealcheck: returns GAIN*x + OFFSET given x != OFFSET
        def calibrated(x):
            return x / 4 + 3
        """))
    (ob,) = claim.obligations
    assert ob.right == BinOp("+", BinOp("*", Num(Fraction(1, 4)), Var("x")), Num(Fraction(3)))
    assert ob.conditions[0].right == Num(Fraction(3))


def test_unseen_project_functions_are_different_per_module(tmp_path, monkeypatch):
    decorated = "import contextlib\n\n\n@contextlib.something\ndef helper(x):\n    return x\n"
    claims = claims_in(tmp_path, monkeypatch, """\
        import pkg.a
        import pkg.b
        from pkg.c import *


        # idealcheck: returns 0
        def differ(x):
            return pkg.a.helper(x) - pkg.b.helper(x)


        # idealcheck: returns x
        def starred(x):
            return x * K


        # idealcheck: returns x
        def outside(x):
            return x * L
        """, files={"pkg/__init__.py": "", "pkg/a.py": decorated, "pkg/b.py": decorated.replace("x\n", "2 * x\n"),
                    "pkg/c.py": "from somelib import *\nK = 1\n"})
    differ, starred, outside = claims
    (ob,) = differ.obligations
    # a decorator the tool does not know may replace the function: each module's helper is its own value
    assert ob.left == BinOp("-", Opaque("pkg.a.helper", (Var("x"),)), Opaque("pkg.b.helper", (Var("x"),)))
    # the star import of a project module is read: K is pkg.c's constant 1
    assert starred.problem is None and [(o.left, o.right) for o in starred.obligations] == [
        (BinOp("*", Var("x"), Num(Fraction(1))), Var("x"))]
    # L is bound nowhere in the project: it may come from the outside library's star import
    assert outside.problem.verdict == "inconclusive" and "from somelib import *" in outside.problem.message


def test_module_values_changed_at_top_level_are_not_constants(tmp_path, monkeypatch):
    claims = claims_in(tmp_path, monkeypatch, """\
        TABLE = [1, 2]
        TABLE.append(3)
        PAIR = (1, 2)


        # idealcheck: returns 3*x
        def f(x):
            return x * len(TABLE)


        # idealcheck: returns 2*x
        def g(x):
            return x * PAIR[1]
        """)
    f, g = claims
    assert f.problem.verdict == "inconclusive" and "TABLE" in f.problem.message
    assert g.problem is None


def test_a_parameter_named_pi_is_that_parameter_not_the_number(tmp_path, monkeypatch):
    from verifier.algebra.decide import Limits, decide

    claims = claims_in(tmp_path, monkeypatch, """
        # idealcheck: returns 2*pi
        def twice(pi):
            return pi + pi


        def area(r, pi):
            a = pi * r * r  # idealcheck: == pi*r**2
            return a
        """)
    for claim in claims:
        assert PI not in (claim.obligations[0].left, claim.obligations[0].right)
        assert decide(claim, Limits(timeout=10)).verdict == "proved"


def test_yield_is_reported_with_its_line(tmp_path, monkeypatch):
    claim = only(claims_in(tmp_path, monkeypatch, """
        # idealcheck: returns x
        def gen(x):
            yield x
        """))
    assert claim.problem is not None and claim.problem.verdict == "inconclusive"
    assert "yield" in claim.problem.message and "line 4" in claim.problem.message


def test_nested_subscript_assignment_follows_a_local_matrix(tmp_path, monkeypatch):
    from verifier.algebra.decide import Limits, decide

    claims = claims_in(tmp_path, monkeypatch, """
        # idealcheck: returns (a*c, a + c)
        def fill(a, c):
            m = [[0, 0], [0, 0]]
            m[0][1] = a * c
            m[1][0] += a
            m[1][0] += c
            return m[0][1], m[1][0]


        # idealcheck: returns a
        def aliased_row(a):
            row = [0, 0]
            m = [row, [0, 0]]
            m[0][0] = a
            return row[0]


        # idealcheck: returns a
        def shared_row(a):
            row = [0, 0]
            m = [row, row]
            m[0][0] = a
            return m[1][0]
        """)
    fill, aliased, shared = claims
    assert decide(fill, Limits(timeout=10)).verdict == "proved"
    # a change through one holder of a row would have to show through the other: not followed
    for claim in (aliased, shared):
        assert claim.problem is not None and claim.problem.verdict == "inconclusive", claim
        assert "line" in claim.problem.message


def test_random_numbers_are_not_opaque_pure_values(tmp_path, monkeypatch):
    # two calls of random() are two different numbers: the difference is not provably zero
    claim = only(claims_in(tmp_path, monkeypatch, """
        import random

        # idealcheck: returns 0
        def noise():
            return random.random() - random.random()
        """))
    assert claim.problem is not None and claim.problem.verdict == "inconclusive"
    assert "line 6" in claim.problem.message


def test_module_level_alternatives_keep_the_earlier_binding(tmp_path, monkeypatch):
    # an `if` without `else` may leave the earlier binding; a handler may keep what the try body bound
    # before it failed: both are candidates, and the claim is followed only when they agree
    root, grow = claims_in(tmp_path, monkeypatch, """\
        from math import sqrt
        from math import exp
        if FAST:
            from fastlib import sqrt
        try:
            from numpy import exp
            from numpy import not_in_every_version
        except ImportError:
            pass


        # idealcheck: returns x
        def root(x):
            return sqrt(x) ** 2


        # idealcheck: returns exp(x)
        def grow(x):
            return exp(x)
        """)
    assert root.problem is not None and root.problem.verdict == "inconclusive"
    assert "`from math import sqrt` (line 1) or `from fastlib import sqrt` (line 4)" in root.problem.message
    assert "`if` at line 3 of kernel.py" in root.problem.message
    assert grow.problem is None and [(o.left, o.right) for o in grow.obligations] == [
        (Call("exp", (Var("x"),)), Call("exp", (Var("x"),)))]


def test_star_imports_of_project_modules_are_read_through_their_own_star_imports(tmp_path, monkeypatch):
    direct, passed_on, shadowed = claims_in(tmp_path, monkeypatch, """\
        K = 5
        from pkg.mid import *


        # idealcheck: returns 3*x
        def direct(x):
            return J * x


        # idealcheck: returns 1
        def passed_on(t):
            return sin(t) ** 2 + cos(t) ** 2


        # idealcheck: returns 2*x
        def shadowed(x):
            return K * x
        """, files={"pkg/__init__.py": "", "pkg/base.py": "K = 2\nJ = 3\n",
                    "pkg/mid.py": "from .base import *\nfrom numpy import *\n"})
    assert [(o.left, o.right) for o in direct.obligations] == [(BinOp("*", Num(Fraction(3)), Var("x")),
                                                                BinOp("*", Num(Fraction(3)), Var("x")))]
    assert passed_on.problem is None and passed_on.obligations  # numpy's sin and cos, through pkg.mid
    # K = 5 comes before the star import, which binds K again (pkg.base's 2): not followed, and said so
    assert shadowed.problem is not None and "may be bound again by the later `from pkg.mid import *`" in \
        shadowed.problem.message


def test_star_imports_inside_a_fallback_count_like_any_star_import(tmp_path, monkeypatch):
    # either branch may have run, so a name the module does not bind may come from either library
    outside, both_math = claims_in(tmp_path, monkeypatch, """\
        try:
            from bigfloats import *
        except ImportError:
            from math import *


        # idealcheck: returns 1
        def outside(t):
            return sin(t) ** 2 + cos(t) ** 2
        """), claims_in(tmp_path, monkeypatch, """\
        try:
            from numpy import *
        except ImportError:
            from math import *


        # idealcheck: returns 1
        def both_math(t):
            return sin(t) ** 2 + cos(t) ** 2
        """, path="other.py")
    (outside,), (both_math,) = outside, both_math
    assert outside.problem is not None and "from bigfloats import *" in outside.problem.message
    assert both_math.problem is None and both_math.obligations[0].left == BinOp(
        "+", Pow(Call("sin", (Var("t"),)), Fraction(2)), Pow(Call("cos", (Var("t"),)), Fraction(2)))
