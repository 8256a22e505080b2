"""Known functions on executor values: math (``math``/``numpy``), numpy arrays, built-ins on sequences."""
from __future__ import annotations

from fractions import Fraction
from typing import Mapping

from verifier.claims.execute.arithmetic import MAX_REPEAT, Arithmetic, as_array
from verifier.claims.execute.arrays import array_function
from verifier.claims.execute.values import ARRAY, LIST, TUPLE, Seq, Stuck, Unknown, Value, as_expr, int_of
from verifier.model.expr import PI, BinOp, Call, Expr, Num, Pow
from verifier.model.functions import BARE_ONLY, CALL_SPELLINGS, FUNCTIONS, POWER, VARIADIC
from verifier.model.ir import SequenceKind

# math/numpy names of the function table (``math.atan2``, ``np.fabs``, ``np.minimum``); ``np.min`` and
# ``np.max`` are reductions over an array, not the two-argument min and max
TABLE_SPELLINGS = {spelling: name for spelling, name in CALL_SPELLINGS.items()
                   if name != POWER and spelling not in BARE_ONLY}
ELEMENTWISE = ("square",) + tuple(s for s, name in TABLE_SPELLINGS.items() if FUNCTIONS[name].arity == 1)
NOT_FOLLOWED = frozenset({"sign", "round", "remainder", "modf", "frexp", "ldexp", "isqrt"})


def opaque_note(value: Value, line: int) -> str | None:
    """The report's note for a call of a function that the algebra keeps opaque (atan, abs, ``%`` ...):
    the witness search knows its value, a proof cannot see into it."""
    if isinstance(value, Call) and FUNCTIONS[value.function].family == "opaque":
        return f"{value.function}(...) at line {line} is opaque to the algebra"
    return None


def table_call(name: str, args: list[Expr]) -> Expr | None:
    """A call of the function table (``name`` canonical), nested for min/max of more arguments; None when
    the number of arguments does not fit."""
    arity = FUNCTIONS[name].arity
    if name in VARIADIC and len(args) > arity:
        folded = Call(name, (args[0], args[1]))
        for arg in args[2:]:
            folded = Call(name, (folded, arg))
        return folded
    return Call(name, tuple(args)) if len(args) == arity else None


def math_constant(module: str, name: str, line: int) -> Value:
    """``math.pi`` and friends: pi is the claim language's opaque constant ``PI``; e is exp(1)."""
    if name == "pi":
        return PI
    if name == "tau":
        return BinOp("*", Num(Fraction(2)), PI)
    if name == "e":
        return Call("exp", (Num(Fraction(1)),))
    return Unknown(f"the constant {module}.{name} at line {line} is not supported")


class Functions(Arithmetic):
    """The values of known functions; None from ``math_value`` means an opaque call of that name."""

    unroll_limit: int

    def math_value(self, name: str, args: list[Expr], line: int) -> Value | None:
        n = len(args)
        if name == "log" and n == 2:
            return BinOp("/", Call("log", (args[0],)), Call("log", (args[1],)))
        if name in ("log10", "log2") and n == 1:
            base = Num(Fraction(10 if name == "log10" else 2))
            return BinOp("/", Call("log", (args[0],)), Call("log", (base,)))
        if name == "hypot" and n == 2:
            return Call("hypot", (args[0], args[1]))
        if name == "hypot" and n >= 1:
            total: Expr = Pow(args[0], Fraction(2))
            for a in args[1:]:
                total = BinOp("+", total, Pow(a, Fraction(2)))
            return Call("sqrt", (total,))
        if name == "fma" and n == 3:
            return Call("fma", (args[0], args[1], args[2]))
        if name in ("pow", "power") and n == 2:
            return self.binary("**", args[0], args[1], line)
        if name == "square" and n == 1:
            return Pow(args[0], Fraction(2))
        if name in ("float64", "float32", "double", "float_") and n == 1:
            return args[0]
        if name in TABLE_SPELLINGS:
            call = table_call(TABLE_SPELLINGS[name], args)
            if call is not None:
                return call
        if name in NOT_FOLLOWED:
            return Unknown(f"{name}(...) at line {line} is not supported")
        return None

    def zeros(self, name: str, args: list[Value], owner: int) -> Value | None:
        """``zeros(n)`` / ``ones(n)`` with a constant n: an array of the frame ``owner``; else None."""
        if name in ("eye", "identity"):
            return array_function(self, name, args, 0)
        count = int_of(args[0]) if name in ("zeros", "ones") and len(args) == 1 else None
        if count is None or not 0 <= count <= MAX_REPEAT:
            return None
        fill = Num(Fraction(0 if name == "zeros" else 1))
        return Seq((fill,) * count, ARRAY, self.new_ident(), owner)

    def array_call(self, name: str, args: list[Value], line: int) -> Value:
        """numpy functions of arrays (``np.array``, ``np.dot``, ``np.sum``, ``np.cross``, elementwise math)."""
        for a in args:
            if isinstance(a, Unknown):
                return a
        first = args[0] if args else None
        if name in ("array", "asarray") and len(args) == 1 and isinstance(first, Seq):
            return as_array(first, fresh=self)
        if name in ("dot", "matmul", "inner") and len(args) == 2:
            return self.matmul(as_array(args[0]), as_array(args[1]), line)
        if name == "sum" and len(args) == 1 and isinstance(first, Seq) and not any(
                isinstance(i, Seq) for i in first.items):
            total: Value = Num(Fraction(0))
            for item in first.items:
                total = self.binary("+", total, item, line)
            return total
        if name == "cross" and len(args) == 2:
            left, right = args
            if isinstance(left, Seq) and isinstance(right, Seq) and len(left.items) == len(right.items) == 3:
                return self._cross(left, right, line)
        if len(args) == 1 and isinstance(first, Seq) and name in ELEMENTWISE:
            items: list[Value] = []
            for item in first.items:
                expr = as_expr(item)
                if expr is None:
                    return Unknown(f"{name} of a nested array at line {line} is not supported")
                value = self.math_value(name, [expr], line)
                items.append(value if value is not None else Unknown(f"{name} at line {line}"))
            return Seq(tuple(items), ARRAY, self.new_ident(), 0)
        found = array_function(self, name, args, line)
        if found is not None:
            return found
        return Unknown(f"{name}(...) of a tuple, list or array at line {line} is not supported")

    def _cross(self, left: Seq, right: Seq, line: int) -> Value:
        (ax, ay, az), (bx, by, bz) = left.items, right.items
        b = self.binary

        def minus(p: Value, q: Value) -> Value:
            return b("-", p, q, line)

        items = (minus(b("*", ay, bz, line), b("*", az, by, line)),
                 minus(b("*", az, bx, line), b("*", ax, bz, line)),
                 minus(b("*", ax, by, line), b("*", ay, bx, line)))
        return Seq(items, ARRAY, self.new_ident(), 0)

    def builtin_value(self, name: str, args: list[Value], keywords: Mapping[str, Value], line: int,
                      iterable: bool, owner: int) -> Value:
        """Built-ins on numbers and sequences (``iterable``: the value is what a for loop runs over)."""
        for a in args:
            if isinstance(a, Unknown):
                return a
        first = args[0] if args else None
        if name == "pow" and len(args) == 2 and not keywords:
            return self.binary("**", args[0], args[1], line)
        if name == "float" and len(args) == 1 and as_expr(args[0]) is not None:
            return args[0]
        if name == "int" and len(args) == 1 and int_of(args[0]) is not None:
            return args[0]
        if name in ("tuple", "list") and len(args) == 1 and isinstance(first, Seq):
            kind = SequenceKind.LIST if name == "list" else TUPLE
            return Seq(first.items, kind, self.new_ident() if kind is LIST else 0, owner if kind is LIST else 0)
        if name == "len" and len(args) == 1 and isinstance(first, Seq):
            return Num(Fraction(len(first.items)))
        if name == "sum" and 1 <= len(args) <= 2 and isinstance(first, Seq):
            total: Value = args[1] if len(args) == 2 else Num(Fraction(0))
            for item in first.items:
                total = self.binary("+", total, item, line)
            return total
        if name == "range" and not keywords and 1 <= len(args) <= 3:
            return self._range(args, line, iterable)
        if name == "enumerate" and len(args) in (1, 2) and isinstance(first, Seq):
            start = (int_of(args[1]) if len(args) == 2 else None) or 0
            return Seq(tuple(Seq((Num(Fraction(start + i)), v)) for i, v in enumerate(first.items)))
        if name == "zip" and args:
            sequences = [a for a in args if isinstance(a, Seq)]
            if len(sequences) == len(args):
                return Seq(tuple(Seq(t) for t in zip(*(s.items for s in sequences))))
        if name == "reversed" and len(args) == 1 and isinstance(first, Seq):
            return Seq(tuple(reversed(first.items)))
        if name in ("abs", "min", "max", "round") and args and not keywords:
            values = [a.value for a in args if isinstance(a, Num)]
            if len(values) == len(args):
                if name == "abs" and len(values) == 1:
                    return Num(abs(values[0]))
                if name == "min":
                    return Num(min(values))
                if name == "max":
                    return Num(max(values))
            exprs = [as_expr(a) for a in args]
            if name in ("min", "max") and len(args) == 1 and isinstance(first, Seq):
                exprs = [as_expr(item) for item in first.items]  # min([a, b, c]), min of a tuple
            operands = [e for e in exprs if e is not None]
            if name != "round" and operands and len(operands) == len(exprs):
                call = table_call(name, operands)
                if call is not None:
                    return call
        return Unknown(f"`{name}` at line {line} is not supported")

    def _range(self, args: list[Value], line: int, iterable: bool) -> Value:
        bounds = [int_of(a) for a in args]
        if any(b is None for b in bounds):
            return Unknown(f"range(...) with non-constant arguments at line {line} is not supported")
        integers = [b for b in bounds if b is not None]
        if len(integers) == 3 and integers[2] == 0:
            return Unknown(f"range with step 0 at line {line}")
        r = range(*integers)
        if len(r) > self.unroll_limit and iterable:
            raise Stuck(f"the for loop at line {line} runs {len(r)} iterations, more than the unroll "
                        f"limit of {self.unroll_limit}")
        if len(r) > self.unroll_limit:
            return Unknown(f"the range at line {line} has {len(r)} elements, more than the unroll limit "
                           f"of {self.unroll_limit}")
        return Seq(tuple(Num(Fraction(i)) for i in r))
