"""Arithmetic on executor values: constants folded, sequences concatenated, arrays elementwise, sizes bounded."""
from __future__ import annotations

from fractions import Fraction

from verifier.claims.execute.values import (
    ARRAY,
    LIST,
    FunctionValue,
    NoneValue,
    Record,
    Seq,
    Unknown,
    Value,
    as_expr,
    first_unknown,
    int_of,
    is_array,
)
from verifier.model.expr import BinOp, Call, Expr, Neg, Num, Opaque, Pow, children
from verifier.model.numbers import fraction_text  # re-exported

MAX_TREE_SIZE = 250_000  # 20,000 chained `acc + c*p` are 80,000; nodes of an expression counted as a tree (shared parts counted each time)
MAX_CONSTANT_EXPONENT = 64  # folding n**k of constants beyond this is left symbolic
MAX_REPEAT = 4096  # longest sequence built by `seq * n` or zeros(n)
ARITHMETIC = frozenset({"+", "-", "*", "/", "**"})
BIT_OPERATORS = frozenset({"&", "|", "^", "<<", ">>"})



class Arithmetic:
    """Operations on values; keeps the counter of sequence identities and the cache of tree sizes."""

    def __init__(self) -> None:
        self._counter = 0
        self._sizes: dict[int, tuple[Value, int]] = {}

    def new_ident(self) -> int:
        self._counter += 1
        return self._counter

    def tree_size(self, value: Value) -> int:
        """Size of an expression as a tree; values built from shared parts can be exponentially large.

        Sizes are cached per node; nodes not yet sized are sized children first with a stack (no
        recursion: an accumulation chain is 20,000 levels deep)."""
        if as_expr(value) is None:
            return 1
        stack: list[tuple[Expr, bool]] = [(value, False)]  # type: ignore[list-item]
        while stack:
            node, expanded = stack.pop()
            if not expanded:
                if self._size_of(node) is None:
                    stack.append((node, True))
                    stack.extend((kid, False) for kid in children(node) if self._size_of(kid) is None)
                continue
            if self._size_of(node) is None:
                size = 1 + sum(self._size_of(kid) or 0 for kid in children(node))
                self._sizes[id(node)] = (node, size)
        return self._size_of(value) or 1  # type: ignore[arg-type]

    def _size_of(self, node: Expr) -> int | None:
        cached = self._sizes.get(id(node))
        return cached[1] if cached is not None and cached[0] is node else None

    def bounded(self, value: Value, line: int) -> Value:
        if self.tree_size(value) > MAX_TREE_SIZE:
            return Unknown(f"the expression at line {line} grows beyond {MAX_TREE_SIZE} terms as a tree")
        return value

    def binary(self, op: str, left: Value, right: Value, line: int) -> Value:
        """``left op right`` for + - * / ** (constants folded, sequences concatenated/repeated)."""
        return self.bounded(self._binary(op, left, right, line), line)

    def _binary(self, op: str, left: Value, right: Value, line: int) -> Value:
        for v in (left, right):
            if isinstance(v, Unknown):
                return v
        if is_array(left) or is_array(right):
            return self.elementwise(op, left, right, line)
        if isinstance(left, Seq) or isinstance(right, Seq):
            return self._sequence_arithmetic(op, left, right, line)
        if isinstance(left, NoneValue) or isinstance(right, NoneValue):
            return Unknown(f"arithmetic with None at line {line}")
        if isinstance(left, Record) or isinstance(right, Record):
            return Unknown(f"`{op}` on an object or dict at line {line} is not supported")
        if isinstance(left, FunctionValue) or isinstance(right, FunctionValue):
            return Unknown(f"`{op}` on a function at line {line} is not supported")
        a, b = as_expr(left), as_expr(right)
        if a is None or b is None:  # a struct or array of kernel code (values.Compound)
            return Unknown(f"an array, struct or pointer is used as a number at line {line}")
        if op == "**":
            if not isinstance(b, Num):
                return Unknown(f"`**` with a non-constant exponent at line {line} is not supported")
            exponent = b.value
            if isinstance(a, Num) and exponent.denominator == 1 and abs(exponent) <= MAX_CONSTANT_EXPONENT:
                if a.value == 0 and exponent < 0:
                    return Unknown(f"division by zero at line {line}")
                return Num(a.value ** int(exponent))
            if exponent.denominator not in (1, 2):
                return Unknown(f"the exponent {fraction_text(exponent)} at line {line} is not supported")
            return Pow(a, exponent)
        if isinstance(a, Num) and isinstance(b, Num):
            x, y = a.value, b.value
            if op == "+":
                return Num(x + y)
            if op == "-":
                return Num(x - y)
            if op == "*":
                return Num(x * y)
            if y == 0:
                return Unknown(f"division by zero at line {line}")
            return Num(x / y)
        if op == "+":
            return BinOp("+", a, b)
        if op == "-":
            return BinOp("-", a, b)
        if op == "*":
            return BinOp("*", a, b)
        return BinOp("/", a, b)

    def _sequence_arithmetic(self, op: str, left: Value, right: Value, line: int) -> Value:
        if op == "+" and isinstance(left, Seq) and isinstance(right, Seq) and left.kind == right.kind:
            ident = self.new_ident() if left.kind is LIST else 0
            return Seq(left.items + right.items, left.kind, ident, left.owner if left.kind is LIST else 0)
        if op == "*":
            seq, count = (left, int_of(right)) if isinstance(left, Seq) else (right, int_of(left))
            if isinstance(seq, Seq) and count is not None and 0 <= count <= MAX_REPEAT:
                ident = self.new_ident() if seq.kind is LIST else 0
                return Seq(seq.items * count, seq.kind, ident, seq.owner)
        return Unknown(f"arithmetic on a tuple or list at line {line} is not supported")

    def elementwise(self, op: str, left: Value, right: Value, line: int) -> Value:
        """numpy arithmetic: arrays (and lists or tuples beside them) elementwise, scalars broadcast."""
        if isinstance(left, Seq) and isinstance(right, Seq):
            if len(left.items) != len(right.items):
                return Unknown(f"arrays of different lengths at line {line}")
            items = tuple(self.binary(op, a, b, line) for a, b in zip(left.items, right.items))
        elif isinstance(left, Seq):
            items = tuple(self.binary(op, a, right, line) for a in left.items)
        elif isinstance(right, Seq):
            items = tuple(self.binary(op, left, b, line) for b in right.items)
        else:
            return self.binary(op, left, right, line)
        return Seq(tuple(as_array(i) for i in items), ARRAY, self.new_ident(), 0)

    def matmul(self, left: Value, right: Value, line: int) -> Value:
        """``left @ right`` (also ``np.dot``) for vectors and matrices of known shape."""
        if not (isinstance(left, Seq) and isinstance(right, Seq)) or not left.items or not right.items:
            return Unknown(f"`@` or dot of values that are not arrays at line {line} is not supported")
        left_matrix = isinstance(left.items[0], Seq)
        right_matrix = isinstance(right.items[0], Seq)
        if not left_matrix and not right_matrix:
            if len(left.items) != len(right.items):
                return Unknown(f"dot product of vectors of different lengths at line {line}")
            total: Value = Num(Fraction(0))
            for a, b in zip(left.items, right.items):
                total = self.binary("+", total, self.binary("*", a, b, line), line)
            return total
        if left_matrix and not right_matrix:
            return Seq(tuple(self.matmul(row, right, line) for row in left.items), ARRAY, self.new_ident(), 0)
        columns = transpose(right)
        if columns is None:
            return Unknown(f"a ragged matrix at line {line} is not supported")
        if not left_matrix:
            return Seq(tuple(self.matmul(left, col, line) for col in columns), ARRAY, self.new_ident(), 0)
        rows = tuple(Seq(tuple(self.matmul(row, col, line) for col in columns), ARRAY, self.new_ident(), 0)
                     for row in left.items)
        return Seq(rows, ARRAY, self.new_ident(), 0)

    def other_binary(self, symbol: str, left: Value, right: Value, line: int) -> Value:
        """``// % & | ^ << >> @``: folded on integer constants (``@`` on arrays); otherwise unknown."""
        if symbol == "@":
            unknown = first_unknown(left) or first_unknown(right)
            return unknown if unknown is not None else self.bounded(self.matmul(left, right, line), line)
        if isinstance(left, Unknown):
            return left
        if isinstance(right, Unknown):
            return right
        a, b = int_of(left), int_of(right)
        if a is not None and b is not None:
            try:
                folded = fold_integer(symbol, a, b)
            except (ZeroDivisionError, ValueError, OverflowError):
                folded = None
            if folded is not None:
                return Num(Fraction(folded))
        if symbol in ("//", "%") and isinstance(left, Num) and isinstance(right, Num) and right.value != 0:
            quotient = left.value // right.value
            return Num(Fraction(quotient) if symbol == "//" else left.value - quotient * right.value)
        operands = (as_expr(left), as_expr(right))
        if symbol in ("//", "%") and operands[0] is not None and operands[1] is not None:
            # on real values, as Python computes them on floats (verifier/model/real_functions.py)
            return Call("floordiv" if symbol == "//" else "mod", (operands[0], operands[1]))
        kind = "the bit operation" if symbol in BIT_OPERATORS else "the operator"
        return Unknown(f"{kind} `{symbol}` at line {line} is not supported")

    def unary(self, op: str, operand: Value, line: int) -> Value:
        if isinstance(operand, Unknown):
            return operand
        if op == "-" and is_array(operand):
            return self.elementwise("*", Num(Fraction(-1)), operand, line)
        expr = as_expr(operand)
        if op == "-":
            if isinstance(expr, Num):
                return Num(-expr.value)
            if expr is not None:
                return Neg(expr)
            return Unknown(f"unary minus on a non-number at line {line}")
        if op == "+":
            return expr if expr is not None else Unknown(f"unary plus on a non-number at line {line}")
        if op == "~":
            integer = int_of(operand)
            if integer is not None:
                return Num(Fraction(~integer))
            return Unknown(f"the bit operation `~` at line {line} is not supported")
        return Unknown(f"`not` used as a value at line {line} is not supported")


def as_array(value: Value, fresh: Arithmetic | None = None) -> Value:
    """A tuple or list (nested too) as a numpy array; other values unchanged."""
    if not isinstance(value, Seq):
        return value
    ident = fresh.new_ident() if fresh is not None else value.ident
    return Seq(tuple(as_array(item, fresh) for item in value.items), ARRAY, ident, 0)


def transpose(matrix: Seq) -> tuple[Seq, ...] | None:
    rows = matrix.items
    first = rows[0]
    if not isinstance(first, Seq):
        return None
    width = len(first.items)
    table: list[Seq] = []
    for row in rows:
        if not isinstance(row, Seq) or len(row.items) != width:
            return None
        table.append(row)
    return tuple(Seq(tuple(r.items[j] for r in table), ARRAY) for j in range(width))


def fold_integer(symbol: str, a: int, b: int) -> int | None:
    if symbol == "//":
        return a // b
    if symbol == "%":
        return a % b
    if symbol == "&":
        return a & b
    if symbol == "|":
        return a | b
    if symbol == "^":
        return a ^ b
    if symbol == "<<" and 0 <= b <= 64:
        return a << b
    if symbol == ">>" and b >= 0:
        return a >> b
    return None
