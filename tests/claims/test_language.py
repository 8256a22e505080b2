"""The claim language parser: expressions, claim forms, conditions, named sets and errors with offsets.

Expected trees follow the operator precedence of the Python Language Reference (section 6.17, "Operator
precedence": `**` binds tighter than unary minus on its left and is right-associative), which the claim
language adopts; decimal literals denote their exact decimal value (common practice for exact arithmetic).
"""
from __future__ import annotations

import builtins
from fractions import Fraction

import pytest

from verifier.claims.language import (
    ClaimSyntaxError,
    expression_text,
    parse_claim_text,
    parse_conditions,
    parse_expression,
)
from verifier.model.expr import BinOp, Call, Neg, Num, Pow, Var
from verifier.model.claim import ExtractionContext, NamedConditionSet

x, y, a, b = Var("x"), Var("y"), Var("a"), Var("b")


def num(value: int | str) -> Num:
    return Num(Fraction(value))


# ---------------------------------------------------------------- numbers and names


@pytest.mark.parametrize(
    "text, value",
    [
        ("0.1", Fraction(1, 10)),
        ("1e-3", Fraction(1, 1000)),
        ("2.5e2", Fraction(250)),
        ("1_000", Fraction(1000)),
        ("0x10", Fraction(16)),
        ("3.", Fraction(3)),
        (".125", Fraction(1, 8)),
        ("0.30000000000000004", Fraction(30000000000000004, 10**17)),
    ],
)
def test_literals_are_exact(text: str, value: Fraction) -> None:
    assert parse_expression(text) == Num(value)


def test_point_one_plus_point_two_is_exactly_point_three() -> None:
    # In binary floating point 0.1 + 0.2 != 0.3 (common practice); the claim language is exact.
    tree = parse_expression("0.1 + 0.2")
    assert tree == BinOp("+", Num(Fraction(1, 10)), Num(Fraction(2, 10)))
    assert tree.left.value + tree.right.value == Fraction(3, 10)


@pytest.mark.parametrize(
    "text, name",
    [
        ("q.w", "q.w"),
        ("self.x", "self.x"),
        ("v[0]", "v[0]"),
        ("v[ 0 ]", "v[0]"),
        ("m[1][2]", "m[1][2]"),
        ("m[1, 2]", "m[1, 2]"),
        ("v[-1]", "v[-1]"),
        ('p["x"]', 'p["x"]'),
        ("p['x']", 'p["x"]'),
        ("state.q[3].re", "state.q[3].re"),
    ],
)
def test_dotted_names_and_constant_subscripts_are_variables(text: str, name: str) -> None:
    assert parse_expression(text) == Var(name)


# ---------------------------------------------------------------- operators and powers


def test_caret_is_power_with_power_precedence() -> None:
    assert parse_expression("a^2*b") == BinOp("*", Pow(a, Fraction(2)), b)
    assert parse_expression("a^2*b") == parse_expression("a**2*b")
    assert parse_expression("-x^2") == Neg(Pow(x, Fraction(2)))


def test_power_is_right_associative_and_constant_exponents_fold() -> None:
    assert parse_expression("x**2**3") == Pow(x, Fraction(8))
    assert parse_expression("2^3^2") == Pow(num(2), Fraction(9))


@pytest.mark.parametrize(
    "text, exponent",
    [
        ("x**(1/2)", Fraction(1, 2)),
        ("x**0.5", Fraction(1, 2)),
        ("x**1.5", Fraction(3, 2)),
        ("x**-2", Fraction(-2)),
        ("x**(-1/2)", Fraction(-1, 2)),
        ("x**(2 - 1)", Fraction(1)),
        ("x**(2*3)", Fraction(6)),
        ("x**+3", Fraction(3)),
        ("pow(x, 3)", Fraction(3)),
        ("math.pow(x, 0.5)", Fraction(1, 2)),
    ],
)
def test_rational_exponents(text: str, exponent: Fraction) -> None:
    assert parse_expression(text) == Pow(x, exponent)


def test_arithmetic_tree_shape() -> None:
    assert parse_expression("a - b - x") == BinOp("-", BinOp("-", a, b), x)
    assert parse_expression("a / (b * x)") == BinOp("/", a, BinOp("*", b, x))
    assert parse_expression("+-x") == Neg(x)
    assert parse_expression("--x") == Neg(Neg(x))


@pytest.mark.parametrize("prefix", ["", "math.", "np.", "numpy."])
def test_known_functions_with_module_prefixes(prefix: str) -> None:
    assert parse_expression(f"{prefix}sqrt(x)") == Call("sqrt", (x,))
    assert parse_expression(f"{prefix}cos(x) + {prefix}sin(y)") == BinOp("+", Call("cos", (x,)), Call("sin", (y,)))
    assert parse_expression(f"{prefix}hypot(a, b)") == Call("hypot", (a, b))
    for name in ("tan", "exp", "log"):
        assert parse_expression(f"{prefix}{name}(x)") == Call(name, (x,))


def test_fma_is_a_call() -> None:
    assert parse_expression("fma(a, b, x)") == Call("fma", (a, b, x))


def test_expression_text_round_trips() -> None:
    for text in ["(a + b)**2 - a*b/x", "-x**2 + 1/2*y", "sqrt(a**2 + b**2) - x**(-1)", "a - (b - x)", "x**(1/2)",
                 "(x**2)**3", "(-x)**2 - (-2)**3", "-(a + b)*(1/2)", "a/(b/x)", "fma(a, -b, x**(-1/2))"]:
        tree = parse_expression(text)
        assert parse_expression(expression_text(tree)) == tree


# ---------------------------------------------------------------- errors


def _error(text: str) -> ClaimSyntaxError:
    with pytest.raises(ClaimSyntaxError) as info:
        parse_expression(text)
    return info.value


@pytest.mark.parametrize(
    "text, words, at",
    [
        ("foo(x) + 1", "unknown function `foo`", "foo"),
        ("1 + math.gamma(x)", "unknown function `math.gamma`", "math.gamma"),
        ("sqrt(x, y)", "`sqrt` takes 1 argument, got 2", "sqrt"),
        ("fma(a, b)", "`fma` takes 3 arguments, got 2", "fma"),
        ("x + (y", "unbalanced parenthesis", "(y"),
        ("x + y)", "unbalanced parenthesis", ")"),
        ("(x + y]", "unbalanced parenthesis", "]"),
        ("x + 'a'", "string literal", "'a'"),
        ("x + (y < 1)", "comparison `<` inside an expression", "y < 1"),
        ("x and y", "boolean operator `and`", "x and"),
        ("x + (lambda: 1)()", "lambda", "lambda"),
        ("os.system(x)", "unsupported call `os.system(...)`", "os.system"),
        ("x.conjugate()", "unsupported call `x.conjugate(...)`", "x.conjugate"),
        ("sqrt(x=1)", "keyword arguments", "sqrt"),
        ("x << y", "unsupported operator `<<`", "x <<"),
        ("x & y", "unsupported operator `&`", "x &"),
        ("x @ y", "unsupported operator `@`", "x @"),
        ("2j", "complex literals", "2j"),
        ("True + x", "unsupported constant `True`", "True"),
        ("v[i]", "only constant subscripts", "i"),
        ("v[1:2]", "only constant subscripts", "1:2"),
        ("math.inf * x", "`math.inf` is not supported", "math.inf"),
        ("not x", "unsupported operator `not`", "not"),
        ("x if y else a", "conditional expression", "x if"),
        ("(x := 2)", "assignment expression", "x :="),
        ("[x, y]", "a list", "[x"),
        ("{x: y}", "a dict", "{x"),
        ("f'{x}'", "string literal", "f'"),
        ("sqrt(*x)", "starred", "*x"),
        ("x, y", "a tuple", "x, y"),
        ("x +* 2", "invalid syntax", "* 2"),
        ("x +", "ends too early", "x +"),
    ],
)
def test_errors_are_specific_and_located(text: str, words: str, at: str) -> None:
    error = _error(text)
    assert words in error.message
    expected = text.index(at) if words != "ends too early" else len(text)
    assert error.offset == expected, (error.message, error.offset)


@pytest.mark.parametrize("text", ["", "   "])
def test_empty_expression(text: str) -> None:
    assert "empty expression" in _error(text).message


def test_error_offset_survives_caret_rewriting_and_non_ascii() -> None:
    text = "a^2 + é^2 + foo(x)"
    assert _error(text).offset == text.index("foo")


def test_deep_nesting_is_an_error_not_a_crash() -> None:
    error = _error("(" * 300 + "x" + ")" * 300)
    assert error.message


# ---------------------------------------------------------------- code execution attempts


ATTACKS = [
    "__import__('os').system('touch PWNED') == 0",
    "(lambda: __import__('os').system('touch PWNED'))() == 0",
    "().__class__.__bases__[0].__subclasses__() == 0",
    "open('PWNED', 'w').write('x') == 1",
    "exec('open(\"PWNED\", \"w\")') == 0",
    "eval('1') == 1",
    "x == 1 given __import__('os').system('touch PWNED') == 0",
    "x == 1 given unit(__import__('os').system('touch PWNED'))",
    "returns __import__('os').system('touch PWNED')",
    "getattr(x, 'y') == 1",
    "[c for c in ().__class__.__mro__] == 1",
]


@pytest.mark.parametrize("text", ATTACKS)
def test_code_execution_attempts_are_errors_and_run_nothing(
    text: str, tmp_path, monkeypatch: pytest.MonkeyPatch
) -> None:
    monkeypatch.chdir(tmp_path)
    calls: list[str] = []

    def forbidden(name):
        def guard(*args, **kwargs):
            calls.append(name)
            raise AssertionError(f"{name} called")
        return guard

    monkeypatch.setattr(builtins, "eval", forbidden("eval"))
    monkeypatch.setattr(builtins, "exec", forbidden("exec"))
    monkeypatch.setattr(builtins, "open", forbidden("open"))
    named = {"unit": NamedConditionSet("unit", ("c",), ("c**2 == 1",))}
    with pytest.raises(ClaimSyntaxError):
        parse_claim_text(text, named)
    assert calls == []
    assert list(tmp_path.iterdir()) == []


# ---------------------------------------------------------------- claim forms


def test_equation_and_chain() -> None:
    parsed = parse_claim_text(" (x + 1)**2 == x**2 + 2*x + 1")
    assert parsed.form == "equation" and len(parsed.sides) == 2 and parsed.conditions == ()
    chain = parse_claim_text("a == b == x")
    assert chain.sides == (a, b, x)


def test_same_as_returns_and_statement_forms() -> None:
    same = parse_claim_text("same as geometry.rotate_reference given x != 0")
    assert (same.form, same.other, same.sides) == ("same_as", "geometry.rotate_reference", ())
    assert same.conditions[0].relation == "!="
    returns = parse_claim_text("returns (a + b, a - b)")
    assert returns.form == "returns" and returns.sides == (BinOp("+", a, b), BinOp("-", a, b))
    assert parse_claim_text("returns a, b").sides == (a, b)
    assert parse_claim_text("returns(a)").sides == (a,)
    assert parse_claim_text("returns 4*x**3").sides == (BinOp("*", num(4), Pow(x, Fraction(3))),)
    statement = parse_claim_text("== a*b/2 given b > 0")
    assert statement.form == "statement" and statement.sides == (BinOp("/", BinOp("*", a, b), num(2)),)


def test_nested_results_keep_their_rows() -> None:
    # a 2x2 matrix written as rows (tuples or lists): sides lists its four entries, nested keeps the rows
    for text in ("returns (a, b), (x, a)", "returns ((a, b), (x, a))"):
        parsed = parse_claim_text(text)
        assert parsed.sides == (a, b, x, a), text
        assert parsed.nested == ((a, b), (x, a)), text
    listed = parse_claim_text("returns [[a, b], [x, a]]")  # one result, a list of two rows
    assert listed.sides == (a, b, x, a) and listed.nested == (((a, b), (x, a)),)
    assert parse_claim_text("returns [a, b]").nested == ((a, b),)
    assert parse_claim_text("== (a, (b, x))").nested == (a, (b, x))
    assert parse_claim_text("returns a, b").nested == (a, b)
    with pytest.raises(ClaimSyntaxError) as info:
        parse_claim_text("returns (a, []), b")
    assert "empty tuple or list" in info.value.message and info.value.offset == 12


def test_a_variable_named_returns_still_makes_an_equation() -> None:
    assert parse_claim_text("returns == x").form == "equation"


def test_given_is_a_whole_word_at_top_level() -> None:
    parsed = parse_claim_text("givenx == forgiven given x > 0")
    assert parsed.sides == (Var("givenx"), Var("forgiven"))
    assert len(parsed.conditions) == 1


@pytest.mark.parametrize("relation", ["==", "!=", "<", "<=", ">", ">="])
def test_every_condition_relation(relation: str) -> None:
    (condition,) = parse_claim_text(f"a == a given x {relation} y + 1").conditions
    assert condition.relation == relation
    assert (condition.left, condition.right) == (x, BinOp("+", y, num(1)))
    assert condition.text == f"x {relation} y + 1" and condition.origin == "given"


def test_conditions_split_on_top_level_commas_only() -> None:
    conditions = parse_conditions("hypot(a, b) != 0, x == fma(a, b, y), 0 < y < 1")
    assert [c.relation for c in conditions] == ["!=", "==", "<", "<"]
    assert [c.text for c in conditions[2:]] == ["0 < y", "y < 1"]


@pytest.mark.parametrize(
    "text, words, offset",
    [
        ("a + b", "missing `==`", 0),
        ("a = b", "missing `==`: found a single `=`", 2),
        ("a < b", "found `<`", 2),
        ("a == ", "empty expression on the right", 4),
        ("== ", "empty expression after `==`", 2),
        ("returns ", "empty expression after `returns`", 7),
        ("same as", "needs the name of a function", 7),
        ("same as f(x)", "dotted) function name", 8),
        ("a == b given", "nothing after `given`", 12),
        ("a == b given x > 0,", "empty condition", 19),
        ("a == b given x", "unknown named condition `x`", 13),
        ("a == b given x is y", "unsupported comparison `is`", 18),
        ("a == b given x + 1", "must be a comparison", 13),
        ("a == b given x > foo(y)", "unknown function `foo`", 17),
        ("a == (b", "unbalanced parenthesis", 5),
        ("", "empty claim", 0),
    ],
)
def test_claim_errors(text: str, words: str, offset: int) -> None:
    with pytest.raises(ClaimSyntaxError) as info:
        parse_claim_text(text, {})
    assert words in info.value.message
    assert info.value.offset == offset, info.value.message


# ---------------------------------------------------------------- named condition sets

UNIT_QUATERNION = NamedConditionSet("unit_quaternion", ("w", "x", "y", "z"), ("w**2 + x**2 + y**2 + z**2 == 1",))
BOX = NamedConditionSet("box", ("t",), ("0 < t", "t < 1"))


def test_named_set_without_arguments_keeps_its_variables() -> None:
    (condition,) = parse_claim_text("a == a given unit_quaternion", {"unit_quaternion": UNIT_QUATERNION}).conditions
    assert condition.origin == "named:unit_quaternion"
    assert condition.text == "unit_quaternion: w**2 + x**2 + y**2 + z**2 == 1"
    assert condition.right == num(1)


def test_named_set_with_arguments_substitutes_positionally_and_simultaneously() -> None:
    context = ExtractionContext((UNIT_QUATERNION, BOX))
    parsed = parse_claim_text("a == a given unit_quaternion(q.x, q.w, y, 2*z), box(s)", context)
    first = parsed.conditions[0]
    expected = parse_expression("q.x**2 + q.w**2 + y**2 + (2*z)**2")
    assert first.left == expected
    assert first.text == "unit_quaternion: q.x**2 + q.w**2 + y**2 + (2*z)**2 == 1"
    assert [c.relation for c in parsed.conditions[1:]] == ["<", "<"]
    assert parsed.conditions[1].right == Var("s") and parsed.conditions[2].left == Var("s")
    # swapping variables must not cascade: unit_quaternion(x, w, y, z) swaps w and x once
    (swapped,) = parse_claim_text("a == a given unit_quaternion(x, w, y, z)", context).conditions
    assert swapped.left == parse_expression("x**2 + w**2 + y**2 + z**2")


def test_named_set_arity_mismatch_and_unknown_name() -> None:
    with pytest.raises(ClaimSyntaxError) as info:
        parse_claim_text("a == a given box(s, t)", {"box": BOX})
    assert "takes 1 arguments (t), got 2" in info.value.message
    assert info.value.offset == len("a == a given box")
    with pytest.raises(ClaimSyntaxError) as info:
        parse_claim_text("a == a given boxes(s)", {"box": BOX})
    assert "unknown named condition `boxes`" in info.value.message and "box" in info.value.message


def test_bad_text_inside_a_named_set_names_the_set() -> None:
    broken = NamedConditionSet("broken", ("t",), ("t >> 1",))
    with pytest.raises(ClaimSyntaxError) as info:
        parse_claim_text("a == a given broken", {"broken": broken})
    assert "`broken`" in info.value.message


def _random_tree(rng, depth: int):
    from fractions import Fraction as F

    if depth == 0 or rng.random() < 0.25:
        choice = rng.random()
        if choice < 0.4:
            return Var(rng.choice(["x", "y", "q.w", "v[0]"]))
        return Num(F(rng.randint(-5, 9), rng.choice([1, 1, 2, 3])))
    kind = rng.randrange(5)
    if kind == 0:
        return BinOp(rng.choice(["+", "-", "*", "/"]), _random_tree(rng, depth - 1), _random_tree(rng, depth - 1))
    if kind == 1:
        return Neg(_random_tree(rng, depth - 1))
    if kind == 2:
        return Pow(_random_tree(rng, depth - 1), F(rng.randint(-3, 5), rng.choice([1, 2])))
    if kind == 3:
        return Call(rng.choice(["sqrt", "sin", "exp"]), (_random_tree(rng, depth - 1),))
    return Call("hypot", (_random_tree(rng, depth - 1), _random_tree(rng, depth - 1)))


def test_expression_text_round_trips_random_trees() -> None:
    # Printing and parsing back must give the same value tree: named-set conditions are shown with this printer.
    # Constants are compared by value ("-5/2" reads back as a division of literals).
    import random

    rng = random.Random(20261201)
    for _ in range(400):
        tree = _random_tree(rng, 4)
        text = expression_text(tree)
        assert _fold_constants(parse_expression(text)) == _fold_constants(tree), text


def _fold_constants(tree):
    if isinstance(tree, Neg):
        inner = _fold_constants(tree.operand)
        return Num(-inner.value) if isinstance(inner, Num) else Neg(inner)
    if isinstance(tree, BinOp):
        left, right = _fold_constants(tree.left), _fold_constants(tree.right)
        if tree.op == "/" and isinstance(left, Num) and isinstance(right, Num) and right.value != 0:
            return Num(left.value / right.value)
        return BinOp(tree.op, left, right)
    if isinstance(tree, Pow):
        return Pow(_fold_constants(tree.base), tree.exponent)
    if isinstance(tree, Call):
        return Call(tree.function, tuple(_fold_constants(a) for a in tree.args))
    return tree


@pytest.mark.parametrize(
    "text, words",
    [
        ("x + 1e99999999", "out of range"),
        ("x**(((10**1000)**1000)**1000)", "too large"),
        ("x" + " + x" * 120_000, "too long"),
        ("a^{2}", "braces do not group"),
    ],
)
def test_hostile_constants_and_sizes_are_refused_quickly(text: str, words: str) -> None:
    assert words in _error(text).message


@pytest.mark.parametrize("text", ["x**(1/3)", "x**y", "x**1001", "x**(2**2**2**2**2)", "8**(1/3)"])
def test_powers_the_algebra_cannot_represent_are_opaque_values_not_errors(text: str) -> None:
    """Fuzzing defect D5: well-formed text is never an error; such a power is an opaque value."""
    from verifier.model.expr import REAL_POWER, Opaque

    tree = parse_expression(text)
    assert isinstance(tree, Opaque) and tree.name == REAL_POWER and len(tree.args) == 2


def test_pi_tau_and_e_are_the_constants_not_variables() -> None:
    from verifier.model.expr import PI, Call, Opaque

    assert parse_expression("pi") == PI == parse_expression("math.pi") == parse_expression("np.pi")
    assert isinstance(PI, Opaque) and PI.args == ()
    assert parse_expression("tau") == parse_expression("2*pi")
    assert parse_expression("math.e") == Call("exp", (parse_expression("1"),))
    assert parse_expression("e") != parse_expression("math.e")  # a bare e is an ordinary variable
