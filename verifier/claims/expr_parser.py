"""Claim-language expressions: ``ast`` trees of claim text -> expression trees, and back to text.

Claim text comes from pull requests, so it is parsed with Python's ``ast`` and only a whitelist of node
types is accepted; nothing is ever evaluated (no eval, exec or sympify).  Which calls and constants a
claim may spell is the function table's (verifier/model/functions.py).
"""
from __future__ import annotations

import ast
import re
from fractions import Fraction
from typing import Sequence, Union

from verifier.claims.claim_syntax import ClaimSource, ClaimSyntaxError, check_brackets, one_line
from verifier.claims.long_chains import parse_long_chains
from verifier.model.expr import PI, REAL_POWER, BinOp, Call, Expr, Neg, Num, Opaque, Pow, Var, fold
from verifier.model.functions import (
    BARE_ONLY,
    CALL_SPELLINGS,
    CONSTANT_SPELLINGS,
    MODULE_PREFIXES,
    POWER,
    REFUSED_CONSTANTS,
    VARIADIC,
    arity,
    known_names,
)

# A constant exponent larger than this is refused: it would only blow up the algebra.
MAX_EXPONENT = 1000
MAX_TEXT_LENGTH = 400_000  # a 5,000-term sum of products is about 70,000
# Nesting depth of a claim's syntax tree (a chain ``a + b - c*d`` is one level): the converter recurses.
MAX_NESTING = 200
# Limits that keep hostile constants (``1e99999999``, towers of powers) from exhausting time or memory.
MAX_LITERAL_EXPONENT = 4000
MAX_CONSTANT_BITS = 100_000

_OPERATOR_SPELLING = {
    ast.Add: "+", ast.Sub: "-", ast.Mult: "*", ast.Div: "/", ast.FloorDiv: "//", ast.Mod: "%", ast.MatMult: "@",
    ast.LShift: "<<", ast.RShift: ">>", ast.BitAnd: "&", ast.BitOr: "|", ast.BitXor: "^", ast.Pow: "**",
}
_CHAIN_OPERATORS = (ast.Add, ast.Sub, ast.Mult, ast.Div)
COMPARISON_SPELLING = {
    ast.Eq: "==", ast.NotEq: "!=", ast.Lt: "<", ast.LtE: "<=", ast.Gt: ">", ast.GtE: ">=", ast.Is: "is",
    ast.IsNot: "is not", ast.In: "in", ast.NotIn: "not in",
}
_UNSUPPORTED_NODES = {
    ast.Lambda: "a lambda",
    ast.IfExp: "a conditional expression (`x if c else y`)",
    ast.Dict: "a dict (braces do not group; use parentheses)",
    ast.Set: "a set (braces do not group; use parentheses)",
    ast.List: "a list",
    ast.ListComp: "a comprehension",
    ast.SetComp: "a comprehension",
    ast.DictComp: "a comprehension",
    ast.GeneratorExp: "a generator expression",
    ast.Await: "`await`",
    ast.Yield: "`yield`",
    ast.YieldFrom: "`yield from`",
    ast.JoinedStr: "a string literal",
    ast.FormattedValue: "a string literal",
    ast.Starred: "a starred expression",
    ast.NamedExpr: "an assignment expression (`:=`)",
    ast.Slice: "a slice",
    ast.Tuple: "a tuple",
}


def parse_ast(source: ClaimSource, what: str = "expression") -> ast.expr:
    text = source.original
    if not text.strip():
        raise ClaimSyntaxError(f"empty {what}", 0)
    if len(text) > MAX_TEXT_LENGTH:
        raise ClaimSyntaxError(f"the {what} is too long ({len(text)} characters, limit {MAX_TEXT_LENGTH})", 0)
    check_brackets(text)
    # Leading spaces are an IndentationError in eval mode; parse the stripped text and shift offsets.
    lead = len(source.text) - len(source.text.lstrip())
    body = source.text.strip()
    try:
        chained = parse_long_chains(body)
        tree = ast.Expression(chained) if chained is not None else ast.parse(body, mode="eval")
    except SyntaxError as exc:
        message = (exc.msg or "invalid syntax").rstrip(".")
        if not exc.offset or exc.offset > len(body):
            offset = lead + len(body)
            if message.startswith("invalid syntax"):
                message = f"the {what} ends too early (after `{source.original.strip()[-20:]}`)"
        else:
            offset = lead + exc.offset - 1
            if message.startswith("invalid syntax"):
                message = f"invalid syntax near `{source.original[source.original_offset(offset):][:20]}`"
        raise ClaimSyntaxError(message, source.original_offset(offset)) from None
    except (ValueError, MemoryError, RecursionError) as exc:
        raise ClaimSyntaxError(f"cannot parse the {what}: {exc}", 0) from None
    _check_nesting(tree, what)
    if lead:
        for node in ast.walk(tree):
            if hasattr(node, "col_offset"):
                node.col_offset += len(source.text[:lead].encode("utf-8"))  # type: ignore[attr-defined]
                node.end_col_offset = (node.end_col_offset or 0) + len(source.text[:lead].encode("utf-8"))  # type: ignore[attr-defined]
    return tree.body


def _check_nesting(tree: ast.AST, what: str) -> None:
    """ClaimSyntaxError when the tree is nested more than MAX_NESTING levels (walked without recursion);
    the left operand of ``+ - * /`` continues its parent's chain, a level the converter walks by a loop."""
    stack: list[tuple[ast.AST, int]] = [(tree, 0)]
    while stack:
        node, depth = stack.pop()
        if depth > MAX_NESTING:
            raise ClaimSyntaxError(f"the {what} is nested too deeply (more than {MAX_NESTING} levels)", 0)
        if isinstance(node, ast.BinOp) and type(node.op) in _CHAIN_OPERATORS:
            stack.extend(((node.left, depth), (node.right, depth + 1)))
            continue
        stack.extend((child, depth + 1) for child in ast.iter_child_nodes(node))


class ExprConverter:
    """Whitelisted ``ast`` nodes -> ``model`` expressions."""

    def __init__(self, source: ClaimSource) -> None:
        self.source = source

    def error(self, message: str, node: ast.AST) -> ClaimSyntaxError:
        return ClaimSyntaxError(message, self.source.node_offset(node))

    def convert(self, node: ast.AST) -> Expr:
        try:
            return self._convert(node)
        except RecursionError:
            raise self.error("the expression is nested too deeply", node) from None

    def _convert(self, node: ast.AST) -> Expr:
        if isinstance(node, ast.Constant):
            return self.constant(node)
        constant = self.named_constant(node)
        if constant is not None:
            return constant
        if isinstance(node, (ast.Name, ast.Attribute, ast.Subscript)):
            return Var(self.variable_name(node))
        if isinstance(node, ast.UnaryOp):
            if isinstance(node.op, ast.USub):
                return Neg(self._convert(node.operand))
            if isinstance(node.op, ast.UAdd):
                return self._convert(node.operand)
            spelling = "not" if isinstance(node.op, ast.Not) else "~"
            raise self.error(f"unsupported operator `{spelling}`", node)
        if isinstance(node, ast.BinOp):
            return self.binary(node)
        if isinstance(node, ast.Call):
            return self.call(node)
        if isinstance(node, ast.Compare):
            op = COMPARISON_SPELLING.get(type(node.ops[0]), "?")
            raise self.error(f"comparison `{op}` inside an expression", node)
        if isinstance(node, ast.BoolOp):
            op = "and" if isinstance(node.op, ast.And) else "or"
            raise self.error(f"boolean operator `{op}` is not supported", node)
        description = _UNSUPPORTED_NODES.get(type(node), f"`{type(node).__name__}` syntax")
        raise self.error(f"unsupported syntax: {description} is not allowed in a claim", node)

    def constant(self, node: ast.Constant) -> Num:
        value = node.value
        if isinstance(value, bool) or value is None or value is Ellipsis:
            raise self.error(f"unsupported constant `{value!r}`", node)
        if isinstance(value, (str, bytes)):
            raise self.error("unsupported syntax: a string literal is not allowed in a claim", node)
        if isinstance(value, complex):
            raise self.error("complex literals are not supported (variables are real numbers)", node)
        if isinstance(value, int):
            return Num(Fraction(value))
        if isinstance(value, float):
            # The exact decimal value of the literal as written (0.1 is 1/10), never the binary float.
            spelling = self.source.node_segment(node).replace("_", "")
            exponent = re.search(r"[eE]([+-]?\d+)$", spelling)
            if exponent and abs(int(exponent.group(1))) > MAX_LITERAL_EXPONENT:
                raise self.error(f"the number `{spelling}` is out of range (decimal exponent limit {MAX_LITERAL_EXPONENT})", node)
            try:
                return Num(Fraction(spelling))
            except (ValueError, ZeroDivisionError):
                raise self.error(f"cannot read the number `{spelling}`", node) from None
        raise self.error(f"unsupported constant `{value!r}`", node)

    def named_constant(self, node: ast.AST) -> Expr | None:
        """pi and tau (bare or prefixed by math./np./numpy.) and e (prefixed only).  pi is an opaque
        constant: proofs hold for any value of it, and a refutation needs a witness that does not depend
        on it (none is claimed)."""
        name = None
        if isinstance(node, ast.Name) and CONSTANT_SPELLINGS.get(node.id):
            name = node.id
        elif (isinstance(node, ast.Attribute) and isinstance(node.value, ast.Name)
              and node.value.id in MODULE_PREFIXES and node.attr in CONSTANT_SPELLINGS):
            name = node.attr
        if name == "pi":
            return PI
        if name == "tau":
            return BinOp("*", Num(Fraction(2)), PI)
        if name == "e":
            return Call("exp", (Num(Fraction(1)),))
        return None

    def variable_name(self, node: ast.AST) -> str:
        if isinstance(node, ast.Name):
            return node.id
        if isinstance(node, ast.Attribute):
            base = node.value
            if isinstance(base, ast.Name) and base.id in MODULE_PREFIXES and node.attr in REFUSED_CONSTANTS:
                raise self.error(
                    f"the constant `{base.id}.{node.attr}` is not supported (claims use rational constants only)", node
                )
            if not isinstance(base, (ast.Name, ast.Attribute, ast.Subscript)):
                raise self.error(
                    f"unsupported syntax: attribute `.{node.attr}` of {self.describe(base)}", node
                )
            return f"{self.variable_name(base)}.{node.attr}"
        if isinstance(node, ast.Subscript):
            base = node.value
            if not isinstance(base, (ast.Name, ast.Attribute, ast.Subscript)):
                raise self.error(f"unsupported syntax: subscript of {self.describe(base)}", node)
            return f"{self.variable_name(base)}[{self.index_text(node.slice)}]"
        raise self.error(f"unsupported syntax: {self.describe(node)}", node)

    def index_text(self, node: ast.AST) -> str:
        if isinstance(node, ast.Tuple):
            if not node.elts:
                raise self.error("an empty subscript is not supported", node)
            return ", ".join(self.index_text(item) for item in node.elts)
        if isinstance(node, ast.Constant) and isinstance(node.value, int) and not isinstance(node.value, bool):
            return str(node.value)
        if isinstance(node, ast.Constant) and isinstance(node.value, str):
            escaped = node.value.replace("\\", "\\\\").replace('"', '\\"')
            return f'"{escaped}"'
        if (
            isinstance(node, ast.UnaryOp)
            and isinstance(node.op, ast.USub)
            and isinstance(node.operand, ast.Constant)
            and isinstance(node.operand.value, int)
            and not isinstance(node.operand.value, bool)
        ):
            return str(-node.operand.value)
        raise self.error(
            "only constant subscripts are supported (like `v[0]` or `p[\"x\"]`); "
            f"found {self.describe(node)}",
            node,
        )

    def describe(self, node: ast.AST) -> str:
        if isinstance(node, ast.Constant):
            return "a string literal" if isinstance(node.value, str) else f"the constant `{node.value!r}`"
        if isinstance(node, ast.Call):
            return "a call result"
        if isinstance(node, (ast.Name, ast.Attribute, ast.Subscript)):
            return f"`{self.source.node_segment(node)}`"
        return _UNSUPPORTED_NODES.get(type(node), f"a `{type(node).__name__}` expression")

    def binary(self, node: ast.BinOp) -> Expr:
        op = type(node.op)
        if op in _CHAIN_OPERATORS:
            # a chain ``a + b - c * d ...`` leans left: walk down its left operands with a loop
            spine = [node]
            while isinstance(spine[-1].left, ast.BinOp) and type(spine[-1].left.op) in _CHAIN_OPERATORS:
                spine.append(spine[-1].left)  # type: ignore[arg-type]
            value = self._convert(spine[-1].left)
            for link in reversed(spine):
                value = BinOp(_OPERATOR_SPELLING[type(link.op)], value, self._convert(link.right))  # type: ignore[arg-type]
            return value
        if op in (ast.Pow, ast.BitXor):
            return self.power(self._convert(node.left), node.right, node)
        if op in (ast.Mod, ast.FloorDiv):
            # on reals, as Python computes them: a % b == a - b*floor(a/b), a // b == floor(a/b)
            name = "mod" if op is ast.Mod else "floordiv"
            return Call(name, (self._convert(node.left), self._convert(node.right)))
        raise self.error(f"unsupported operator `{_OPERATOR_SPELLING.get(op, '?')}`", node)

    def power(self, base: Expr, exponent_node: ast.AST, node: ast.AST) -> Expr:
        """``base ** exponent``; a power the algebra cannot represent (``2**x``, ``8**(1/3)``, ``x**1e400``)
        is well-formed text, so it is an opaque value, not an error: the claim is then inconclusive."""
        exponent_expr = self._convert(exponent_node)
        exponent = self.fold(exponent_expr, exponent_node)
        if exponent is None or exponent.denominator not in (1, 2) or abs(exponent) > MAX_EXPONENT:
            return Opaque(REAL_POWER, (base, exponent_expr))
        return Pow(base, exponent)

    def fold(self, expr: Expr, node: ast.AST) -> Fraction | None:
        """The rational value of a constant exponent, or None when it involves a variable or a function."""
        return fold(expr, _ConstantExponent(self, node))

    def call(self, node: ast.Call) -> Expr:
        if (isinstance(node.func, ast.Name) and node.func.id == "len" and len(node.args) == 1
                and isinstance(node.args[0], ast.Name) and not node.keywords):
            return Var(f"len({node.args[0].id})")  # a sequence's length: a variable (`given len(q) == 4`)
        name = self.function_name(node.func)
        if node.keywords:
            raise self.error(f"keyword arguments are not supported in a call of `{name}`", node)
        for arg in node.args:
            if isinstance(arg, ast.Starred):
                raise self.error(f"unsupported syntax: a starred argument in a call of `{name}`", arg)
        canonical = CALL_SPELLINGS[name]
        expected = arity(canonical)
        if canonical in VARIADIC and len(node.args) > expected:
            # min(a, b, c) == min(min(a, b), c)
            operands = [self._convert(arg) for arg in node.args]
            folded = Call(canonical, (operands[0], operands[1]))
            for operand in operands[2:]:
                folded = Call(canonical, (folded, operand))
            return folded
        if len(node.args) != expected:
            plural = "argument" if expected == 1 else "arguments"
            raise self.error(f"`{name}` takes {expected} {plural}, got {len(node.args)}", node)
        if canonical == POWER:
            return self.power(self._convert(node.args[0]), node.args[1], node)
        return Call(canonical, tuple(self._convert(arg) for arg in node.args))

    def function_name(self, func: ast.AST) -> str:
        if isinstance(func, ast.Name):
            if func.id in CALL_SPELLINGS:
                return func.id
            raise self.error(f"unknown function `{func.id}` (known: {known_names()})", func)
        if isinstance(func, ast.Attribute) and isinstance(func.value, ast.Name):
            module, attr = func.value.id, func.attr
            if module in MODULE_PREFIXES:
                if attr in BARE_ONLY:
                    raise self.error(f"`{module}.{attr}` is a reduction over an array; write `{attr}(a, b)` "
                                     f"or `{module}.{attr}imum(a, b)`", func)
                if attr in CALL_SPELLINGS:
                    return attr
                raise self.error(f"unknown function `{module}.{attr}` (known: {known_names()})", func)
            raise self.error(
                f"unsupported call `{module}.{attr}(...)`: only the functions {known_names()} are allowed, "
                "optionally prefixed by math., np. or numpy.",
                func,
            )
        if isinstance(func, (ast.Attribute, ast.Subscript)):
            raise self.error(
                f"unsupported call of `{self.source.node_segment(func)}`: only the functions {known_names()} "
                "are allowed",
                func,
            )
        raise self.error(f"unsupported syntax: a call of {self.describe(func)}", func)


def convert_text(text: str, *, allow_tuple: bool = False, what: str = "expression") -> tuple[Expr, ...]:
    source = ClaimSource(one_line(text))
    tree = parse_ast(source, what)
    converter = ExprConverter(source)
    if isinstance(tree, ast.Tuple) and allow_tuple:
        if not tree.elts:
            raise converter.error(f"empty {what}", tree)
        return tuple(converter.convert(item) for item in tree.elts)
    if isinstance(tree, ast.Compare):
        op = COMPARISON_SPELLING.get(type(tree.ops[0]), "?")
        raise converter.error(f"comparison `{op}` inside an expression", tree)
    return (converter.convert(tree),)


Nested = Union[Expr, tuple["Nested", ...]]


def convert_nested_text(text: str, *, what: str = "expression") -> tuple[Nested, ...]:
    """The components of a result as written: ``a, b``; ``(a, b), (c, d)`` and ``[[a, b], [c, d]]`` keep
    their rows (tuples and lists both become tuples: results are compared componentwise)."""
    source = ClaimSource(one_line(text))
    tree = parse_ast(source, what)
    converter = ExprConverter(source)
    if isinstance(tree, ast.Compare):
        op = COMPARISON_SPELLING.get(type(tree.ops[0]), "?")
        raise converter.error(f"comparison `{op}` inside an expression", tree)
    if isinstance(tree, ast.Tuple):
        if not tree.elts:
            raise converter.error(f"empty {what}", tree)
        return tuple(_nested(converter, item) for item in tree.elts)
    return (_nested(converter, tree),)


def _nested(converter: ExprConverter, node: ast.AST) -> Nested:
    if isinstance(node, (ast.Tuple, ast.List)):
        if not node.elts:
            raise converter.error("an empty tuple or list is not a result", node)
        return tuple(_nested(converter, item) for item in node.elts)
    return converter.convert(node)


def leaves(items: Sequence[Nested]) -> tuple[Expr, ...]:
    """The scalar components of nested results, row by row."""
    out: list[Expr] = []
    for item in items:
        if isinstance(item, tuple):
            out.extend(leaves(item))
        else:
            out.append(item)
    return tuple(out)


def parse_expression(text: str) -> Expr:
    """One expression of the claim language (no comparison, no tuple)."""
    return convert_text(text)[0]


# ---------------------------------------------------------------- printing (for condition texts)


def expression_text(expr: Expr) -> str:
    """Claim-language spelling of an expression (used for the text of expanded named conditions)."""
    return fold(expr, _Printer()).at(0)


_PRECEDENCE = {"+": 1, "-": 1, "*": 2, "/": 2}
_NEVER = 99  # a context no operator reaches: never parenthesized


class _Shown:
    """A printed sub-expression that needs parentheses where the context binds tighter than ``loose``."""

    def __init__(self, text: str, loose: int = _NEVER) -> None:
        self.text = text
        self.loose = loose

    def at(self, context: int) -> str:
        """The text inside an operand position of precedence ``context`` (0: top level or an argument)."""
        return f"({self.text})" if context > self.loose else self.text


class _Printer:
    def num(self, node: Num) -> _Shown:
        value = node.value
        text = str(value.numerator) if value.denominator == 1 else f"{value.numerator}/{value.denominator}"
        if value < 0:
            return _Shown(text, 0)
        return _Shown(text, 1 if value.denominator != 1 else _NEVER)

    def var(self, node: Var) -> _Shown:
        return _Shown(node.name)

    def neg(self, node: Neg, operand: _Shown) -> _Shown:
        return _Shown("-" + operand.at(3), 1)

    def binop(self, node: BinOp, left: _Shown, right: _Shown) -> _Shown:
        level = _PRECEDENCE[node.op]
        a, b = left.at(level), right.at(level + 1)
        return _Shown(f"{a} {node.op} {b}" if level == 1 else f"{a}{node.op}{b}", level)

    def pow(self, node: Pow, base: _Shown) -> _Shown:
        exponent = node.exponent
        shown = str(exponent.numerator) if exponent.denominator == 1 and exponent >= 0 else f"({exponent})"
        return _Shown(f"{base.at(5)}**{shown}", 4)

    def call(self, node: Call, args: Sequence[_Shown]) -> _Shown:
        return _Shown(f"{node.function}({', '.join(arg.at(0) for arg in args)})")

    def opaque(self, node: Opaque, args: Sequence[_Shown]) -> _Shown:
        name = "pow" if node.name == REAL_POWER else node.name
        return _Shown(f"{name}({', '.join(arg.at(0) for arg in args)})")


class _ConstantExponent:
    """The rational value of a constant exponent, or None when it involves a variable or a function."""

    def __init__(self, converter: ExprConverter, node: ast.AST) -> None:
        self.converter = converter
        self.node = node  # where errors are reported

    def _error(self, message: str) -> ClaimSyntaxError:
        return self.converter.error(message, self.node)

    def num(self, node: Num) -> Fraction | None:
        return node.value

    def var(self, node: Var) -> Fraction | None:
        return None

    def neg(self, node: Neg, operand: Fraction | None) -> Fraction | None:
        return None if operand is None else -operand

    def binop(self, node: BinOp, left: Fraction | None, right: Fraction | None) -> Fraction | None:
        if left is None or right is None:
            return None
        if node.op == "+":
            return left + right
        if node.op == "-":
            return left - right
        if node.op == "*":
            return left * right
        if right == 0:
            raise self._error("division by zero in a constant exponent")
        return left / right

    def pow(self, node: Pow, base: Fraction | None) -> Fraction | None:
        if base is None or node.exponent.denominator != 1:
            return None
        if base == 0 and node.exponent < 0:
            raise self._error("division by zero in a constant exponent")
        size = max(abs(base.numerator).bit_length(), base.denominator.bit_length()) * abs(int(node.exponent))
        if size > MAX_CONSTANT_BITS:
            raise self._error("the constant exponent is too large")
        return base ** int(node.exponent)

    def call(self, node: Call, args: Sequence[Fraction | None]) -> Fraction | None:
        return None

    def opaque(self, node: Opaque, args: Sequence[Fraction | None]) -> Fraction | None:
        return None
