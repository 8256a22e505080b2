"""The IR executor on hand-built IR (no front end): paths, loops, calls, out-parameters, unsupported constructs.

Expected values are worked out by hand from the semantics the IR documents (verifier/model/ir.py) and,
for arithmetic, checked with sympy's expand.
"""
from __future__ import annotations

from fractions import Fraction

import sympy

from verifier.claims.execute import FlatScope, Executor, Outcome, Seq, Status, Unknown, Value
from verifier.model import ir
from verifier.model.expr import BinOp, Call, Expr, Neg, Num, Opaque, Pow, Var


def num(value: int) -> Num:
    return Num(Fraction(value))


def name(text: str, line: int = 1) -> ir.Name:
    return ir.Name(text, line)


def function(body: tuple[ir.Statement, ...], *params: str | ir.Parameter, fname: str = "f") -> ir.Function:
    parameters = tuple(p if isinstance(p, ir.Parameter) else ir.Parameter(p) for p in params)
    return ir.Function(fname, parameters, body, "kernel.c", 1, 1)


def run(fn: ir.Function, scope: FlatScope | None = None, **options: int) -> list[Outcome]:
    return Executor(scope or FlatScope(), **options).run_function(fn)  # type: ignore[arg-type]


def to_sympy(expr: Value) -> sympy.Expr:
    """An independent reading of a claim-language expression (only the node kinds these tests produce)."""
    if isinstance(expr, Num):
        return sympy.Rational(expr.value.numerator, expr.value.denominator)
    if isinstance(expr, Var):
        return sympy.Symbol(expr.name)
    if isinstance(expr, Neg):
        return -to_sympy(expr.operand)
    if isinstance(expr, Pow):
        return to_sympy(expr.base) ** sympy.Rational(expr.exponent.numerator, expr.exponent.denominator)
    if isinstance(expr, BinOp):
        left, right = to_sympy(expr.left), to_sympy(expr.right)
        return {"+": left + right, "-": left - right, "*": left * right, "/": left / right}[expr.op]
    if isinstance(expr, Call) and expr.function == "sqrt":
        return sympy.sqrt(to_sympy(expr.args[0]))
    raise AssertionError(f"unexpected value {expr!r}")


def same(value: Value | None, expected: sympy.Expr) -> bool:
    assert value is not None
    return sympy.expand(to_sympy(value) - expected) == 0


X, Y = sympy.symbols("x y")


def returned(outcomes: list[Outcome]) -> list[Outcome]:
    assert all(o.status is not Status.STUCK for o in outcomes), [o.reason for o in outcomes]
    return [o for o in outcomes if o.status is Status.RETURN]


def test_straight_line_code_returns_the_expression_of_its_parameters() -> None:
    body = (
        ir.Assign((ir.ToLocal("t"),), ir.Binary("+", name("x"), name("y"), 2), 2, 5),
        ir.Assign((ir.ToLocal("t"),), ir.Binary("*", name("t"), name("t"), 3), 3, 5),
        ir.Return(ir.Binary("-", name("t"), ir.Binary("**", name("x"), num(2), 4), 4), 4, 5),
    )
    [outcome] = returned(run(function(body, "x", "y")))
    assert same(outcome.value, 2 * X * Y + Y**2)
    assert outcome.state.conditions == ()


def test_if_else_splits_the_path_and_carries_the_branch_condition() -> None:
    test = ir.Compare((name("x"), num(0)), (">",), 2)
    body = (ir.If(test, (ir.Return(name("x"), 3),), (ir.Return(ir.Unary("-", name("x"), 5), 5),), 2),)
    outcomes = returned(run(function(body, "x")))
    assert [(o.state.conditions[0].relation, o.state.conditions[0].text) for o in outcomes] == [
        (">", "x > 0"), ("<=", "x <= 0")]
    assert outcomes[0].value == Var("x") and outcomes[1].value == Neg(Var("x"))
    assert outcomes[0].state.conditions[0].origin == "branch (line 2)"


def test_a_test_decided_on_the_path_does_not_split_again() -> None:
    test = ir.Compare((name("x"), num(0)), (">",), 2)
    inner = ir.If(test, (ir.Return(num(1), 3),), (ir.Return(num(2), 4),), 3)
    body = (ir.If(test, (inner,), (ir.Return(num(3), 6),), 2),)
    values = [o.value for o in returned(run(function(body, "x")))]
    assert values == [num(1), num(3)]  # the inner else (x <= 0 under x > 0) is not a path


def test_logical_and_short_circuits_into_paths() -> None:
    both = ir.Logical("and", ir.Compare((name("x"), num(0)), (">",)), ir.Compare((name("y"), num(0)), (">",)), 2)
    body = (ir.If(both, (ir.Return(num(1), 3),), (ir.Return(num(0), 4),), 2),)
    outcomes = returned(run(function(body, "x", "y")))
    texts = [[c.text for c in o.state.conditions] for o in outcomes]
    # true: both hold; false: x <= 0, or x > 0 and y <= 0 (common short-circuit semantics)
    assert texts == [["x > 0", "y > 0"], ["x <= 0"], ["x > 0", "y <= 0"]]


def test_conditional_expression_gives_one_value_per_branch() -> None:
    value = ir.Conditional(ir.Compare((name("a"), name("b")), ("<",)), name("a"), name("b"), 2)
    outcomes = returned(run(function((ir.Return(value, 2),), "a", "b")))
    assert [o.value for o in outcomes] == [Var("a"), Var("b")]


def test_counted_loop_unrolls_with_an_exclusive_stop_and_element_reads() -> None:
    # s = 0; for (i = 0; i < 3; i++) s += v[i]; return s
    element = ir.Element(name("v"), (name("i"),), 3)
    body = (
        ir.Assign((ir.ToLocal("s"),), num(0), 2),
        ir.CountedLoop("i", num(0), num(3), num(1),
                       (ir.Assign((ir.ToLocal("s"),), ir.Binary("+", name("s"), element, 3), 3),), 3, 1, 3),
        ir.Return(name("s"), 4),
    )
    [outcome] = returned(run(function(body, ir.Parameter("v", ir.ParameterKind.ARRAY))))
    assert same(outcome.value, sum(sympy.symbols("v[0] v[1] v[2]")))


def test_counted_loop_counts_down_with_a_negative_step() -> None:
    # Fortran `do i = 3, 1, -1` lowers to stop 0 (exclusive); the last counter value is 1
    body = (
        ir.Assign((ir.ToLocal("p"),), num(1), 2),
        ir.CountedLoop("i", num(3), num(0), num(-1),
                       (ir.Assign((ir.ToLocal("p"),), ir.Binary("*", name("p"), name("i"), 3), 3),), 3),
        ir.Return(ir.Sequence((name("p"), name("i"))), 4),
    )
    [outcome] = returned(run(function(body)))
    assert outcome.value == Seq((num(6), num(1)))


def test_a_loop_beyond_the_unroll_limit_stops_the_path_with_the_reason() -> None:
    body = (ir.CountedLoop("i", num(0), num(10), num(1), (), 7),)
    [outcome] = run(function(body), unroll_limit=4)
    assert outcome.status is Status.STUCK
    assert outcome.reason == "the for loop at line 7 runs 10 iterations, more than the unroll limit of 4"


def test_out_parameters_report_their_final_values() -> None:
    # void f(double x, double *out) { *out = x * x; }
    body = (ir.Assign((ir.ToOut("out"),), ir.Binary("*", name("x"), name("x"), 2), 2),)
    fn = function(body, "x", ir.Parameter("out", ir.ParameterKind.OUT))
    [outcome] = run(fn)
    assert outcome.status is Status.NEXT
    assert dict(outcome.outputs) == {"out": BinOp("*", Var("x"), Var("x"))}


def test_an_inlined_call_writes_back_through_an_out_parameter() -> None:
    square = function((ir.Assign((ir.ToOut("out"),), ir.Binary("*", name("x"), name("x"), 2), 2),),
                      "x", ir.Parameter("out", ir.ParameterKind.OUT), fname="square")
    call = ir.Invoke(name("square"), (ir.Argument(name("a")), ir.Argument(name("r"))), "square", 5)
    caller = function((ir.Assign((ir.ToLocal("r"),), num(0), 4), ir.Evaluate(call, 5), ir.Return(name("r"), 6)),
                      "a", fname="caller")
    [outcome] = returned(run(caller, FlatScope({"square": square})))
    assert outcome.value == BinOp("*", Var("a"), Var("a"))


def test_struct_fields_written_and_read() -> None:
    # q.w = x; return q.w + q.z
    body = (ir.Assign((ir.ToField("q", "w"),), name("x"), 2),
            ir.Return(ir.Binary("+", ir.Field(name("q"), "w"), ir.Field(name("q"), "z"), 3), 3))
    [outcome] = returned(run(function(body, "x", ir.Parameter("q", ir.ParameterKind.STRUCT))))
    assert outcome.value == BinOp("+", Var("x"), Var("q.z"))


def test_elements_of_array_parameters_and_local_lists() -> None:
    # out[1] = x; v = [0, 0]; v[0] = y; return out[1] + out[0] + v[0]
    body = (
        ir.Assign((ir.ToElement("out", (num(1),)),), name("x"), 2),
        ir.Assign((ir.ToLocal("v"),), ir.Sequence((num(0), num(0)), ir.SequenceKind.LIST), 3),
        ir.Assign((ir.ToElement("v", (num(0),)),), name("y"), 4),
        ir.Return(ir.Binary("+", ir.Binary("+", ir.Element(name("out"), (num(1),)),
                                           ir.Element(name("out"), (num(0),))),
                            ir.Element(name("v"), (num(0),))), 5),
    )
    fn = function(body, "x", "y", ir.Parameter("out", ir.ParameterKind.ARRAY))
    [outcome] = returned(run(fn))
    assert same(outcome.value, X + sympy.Symbol("out[0]") + Y)


def test_writing_an_element_of_a_value_parameter_is_not_followed() -> None:
    body = (ir.Assign((ir.ToElement("v", (num(0),), 3),), num(1), 3),)
    [outcome] = run(function(body, "v"))
    assert outcome.status is Status.STUCK
    assert outcome.reason == "assignment to a subscript at line 3 is not supported"


def test_unsupported_statement_stops_the_path_naming_construct_and_line() -> None:
    body = (ir.Assign((ir.ToLocal("t"),), name("x"), 2), ir.Unsupported("the while loop", 7), ir.Return(name("t"), 9))
    [outcome] = run(function(body, "x"))
    assert (outcome.status, outcome.reason, outcome.line) == (
        Status.STUCK, "the while loop at line 7 is not supported", 7)


def test_unsupported_expression_matters_only_when_used() -> None:
    unused = (ir.Assign((ir.ToLocal("s"),), ir.Unsupported("a lambda", 2), 2), ir.Return(name("x"), 3))
    [outcome] = returned(run(function(unused, "x")))
    assert outcome.value == Var("x")
    used = (ir.Return(ir.Binary("+", name("x"), ir.Unsupported("a lambda", 4), 4), 4),)
    [outcome] = returned(run(function(used, "x")))
    assert outcome.value == Unknown("a lambda at line 4 is not supported")


def test_a_test_on_an_unknown_value_stops_the_path() -> None:
    body = (ir.If(ir.Compare((ir.Unsupported("a lambda", 2), num(0)), ("<",), 2), (ir.Return(num(1), 3),)),)
    [outcome] = run(function(body))
    assert outcome.status is Status.STUCK
    assert "uses a value the tool cannot follow (a lambda at line 2 is not supported)" in outcome.reason


def test_calls_are_inlined_math_is_known_and_the_rest_is_opaque() -> None:
    squares = ir.Binary("+", ir.Binary("*", name("a"), name("a")), ir.Binary("*", name("b"), name("b")))
    norm = function((ir.Return(ir.Invoke(name("sqrt"), (ir.Argument(squares),)), 2),), "a", "b", fname="norm")
    call = ir.Invoke(name("norm"), (ir.Argument(name("x")), ir.Argument(num(0))), "norm", 5)
    other = ir.Invoke(name("mystery"), (ir.Argument(name("x")),), "mystery", 6)
    caller = function((ir.Return(ir.Sequence((call, other)), 5),), "x", fname="caller")
    executor = Executor(FlatScope({"norm": norm}))
    [outcome] = returned(executor.run_function(caller))
    assert isinstance(outcome.value, Seq)
    first, second = outcome.value.items
    assert same(first, sympy.sqrt(X**2))
    assert second == Opaque("mystery", (Var("x"),))
    assert executor.inlined == ["inlined norm from kernel.c"]
    assert any("opaque call mystery(...) at line 6" in note for note in outcome.state.notes)


def test_impure_calls_are_not_opaque_values() -> None:
    # rand() - rand() must not be read as 0
    rand = ir.Invoke(name("rand"), (), "rand", 3)
    [outcome] = returned(run(function((ir.Return(ir.Binary("-", rand, rand, 3), 3),))))
    assert isinstance(outcome.value, Unknown) and "may give a different value each time" in outcome.value.reason


def test_recursion_is_reported_not_followed() -> None:
    call = ir.Invoke(name("f"), (ir.Argument(name("x")),), "f", 2)
    fn = function((ir.Return(call, 2),), "x")
    [outcome] = run(fn, FlatScope({"f": fn}))
    assert outcome.status is Status.STUCK
    assert outcome.reason.startswith("the recursive call of f at line 2 is not supported")


def test_marked_statements_record_their_value_on_every_path() -> None:
    test = ir.Compare((name("x"), num(0)), ("<",), 2)
    body = (
        ir.If(test, (ir.Assign((ir.ToLocal("x"),), ir.Unary("-", name("x")), 3, 9),)),
        ir.Assign((ir.ToLocal("y"),), ir.Binary("*", name("x"), num(2)), 4, 5),
        ir.Return(name("y"), 5),
    )
    executor = Executor(FlatScope(), marks={(4, 5)})
    executor.run_function(function(body, "x"))
    visits = executor.visits[(4, 5)]
    assert [v.value for v in visits] == [BinOp("*", Neg(Var("x")), num(2)), BinOp("*", Var("x"), num(2))]
    assert [c.text for c in visits[0].state.conditions] == ["x < 0"]
    assert visits[0].state.get("x") == Neg(Var("x"))  # the locals before the statement


def test_append_grows_a_local_list_and_raise_drops_its_path() -> None:
    body = (
        ir.Assign((ir.ToLocal("out"),), ir.Sequence((), ir.SequenceKind.LIST), 2),
        ir.Append("out", name("x"), None, 3),
        ir.Append("out", ir.Binary("+", name("x"), num(1)), None, 4),
        ir.If(ir.Compare((name("x"), num(0)), ("==",)), (ir.Raise(5),)),
        ir.Return(name("out"), 6),
    )
    outcomes = run(function(body, "x"))
    assert [o.status for o in outcomes] == [Status.RAISE, Status.RETURN]
    value = outcomes[1].value
    assert isinstance(value, Seq) and value.items == (Var("x"), BinOp("+", Var("x"), num(1)))


def test_foreach_over_a_tuple_and_unpacking() -> None:
    # for (a, b) in ((x, 1), (y, 2)): s = s + a * b
    pairs = ir.Sequence((ir.Sequence((name("x"), num(1))), ir.Sequence((name("y"), num(2)))))
    loop = ir.ForEach(ir.Unpack((ir.ToLocal("a"), ir.ToLocal("b"))), pairs,
                      (ir.Assign((ir.ToLocal("s"),), ir.Binary("+", name("s"), ir.Binary("*", name("a"), name("b")))),),
                      None, 3, 1, 4)
    body = (ir.Assign((ir.ToLocal("s"),), num(0), 2), loop, ir.Return(name("s"), 5))
    [outcome] = returned(run(function(body, "x", "y")))
    assert same(outcome.value, X + 2 * Y)


def test_constant_arithmetic_is_exact_and_division_by_zero_is_unknown() -> None:
    third = ir.Binary("/", num(1), num(3), 2)
    [outcome] = returned(run(function((ir.Return(ir.Binary("+", third, third, 2), 2),))))
    assert outcome.value == Num(Fraction(2, 3))
    [outcome] = returned(run(function((ir.Return(ir.Binary("/", num(2), ir.Binary("-", num(1), num(1)), 3), 3),))))
    assert outcome.value == Unknown("division by zero at line 3")


def _expr_nodes() -> tuple[type, ...]:
    return (Num, Var, BinOp, Neg, Pow, Call, Opaque)


def test_claim_language_nodes_are_fixed_values() -> None:
    fixed: Expr = Call("sqrt", (Var("x"),))
    [outcome] = returned(run(function((ir.Return(fixed, 2),))))
    assert outcome.value is fixed and isinstance(outcome.value, _expr_nodes())
