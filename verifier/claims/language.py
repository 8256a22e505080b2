"""The claim language: claim text -> expression trees and conditions.

Claim text comes from pull requests, so it is parsed with Python's ``ast`` and only a whitelist of node
types is accepted; nothing is ever evaluated (no eval, exec or sympify).  ``^`` means power inside claim
text: it is rewritten to ``**`` before parsing (an offset map keeps error columns right).

Offsets in ``ClaimSyntaxError`` are 0-based character offsets into the text given to the parser.
"""
from __future__ import annotations

import ast
import re
from collections.abc import Mapping
from dataclasses import dataclass
from fractions import Fraction
from typing import Literal, Union

from verifier.model.claim import (
    Condition,
    ExtractionContext,
    NamedConditionSet,
    Relation,
)
from verifier.model.expr import (
    KNOWN_FUNCTIONS,
    PI,
    BinOp,
    Call,
    Expr,
    Neg,
    Num,
    Opaque,
    Pow,
    Var,
)

# Prefixes that may stand before a known function name (``math.sqrt``, ``np.sqrt``, ``numpy.sqrt``).
FUNCTION_MODULES = ("math", "np", "numpy")
# Spellings that mean a known function; ``pow``/``power`` become ``Pow`` nodes.
FUNCTION_ALIASES = {name: name for name in KNOWN_FUNCTIONS} | {"pow": "pow", "power": "pow"}
# A constant exponent larger than this is refused: it would only blow up the algebra.
MAX_EXPONENT = 1000
MAX_TEXT_LENGTH = 20000
# Limits that keep hostile constants (``1e99999999``, towers of powers) from exhausting time or memory.
MAX_LITERAL_EXPONENT = 4000
MAX_CONSTANT_BITS = 100_000


class ClaimSyntaxError(Exception):
    """A malformed claim: ``message`` says what is wrong, ``offset`` (0-based) where in the claim text."""

    def __init__(self, message: str, offset: int = 0) -> None:
        super().__init__(message)
        self.message = message
        self.offset = max(0, offset)

    def shifted(self, by: int) -> "ClaimSyntaxError":
        return ClaimSyntaxError(self.message, self.offset + by)


ClaimForm = Literal["equation", "same_as", "returns", "statement"]


@dataclass(frozen=True)
class ParsedClaim:
    """A parsed claim text.

    ``equation``: ``sides`` holds two or more expressions (a chain ``a == b == c``).
    ``returns`` / ``statement``: ``sides`` holds the target components (``returns a, b`` gives two).
    ``same_as``: ``other`` is the dotted name of the other function and ``sides`` is empty.
    """

    form: ClaimForm
    sides: tuple[Expr, ...]
    other: str | None
    conditions: tuple[Condition, ...]


NamedSets = Union[Mapping[str, NamedConditionSet], ExtractionContext, None]


# ---------------------------------------------------------------- text helpers


class _Source:
    """A piece of claim text prepared for ``ast``: ``^`` -> ``**``, with a map back to original offsets."""

    def __init__(self, text: str) -> None:
        self.original = text
        pieces: list[str] = []
        back: list[int] = []
        for index, char in enumerate(text):
            if char == "^":
                pieces.append("**")
                back.extend((index, index))
            else:
                pieces.append(char)
                back.append(index)
        back.append(len(text))
        self.text = "".join(pieces)
        self.back = back
        # ast columns are UTF-8 byte offsets per line; the text is made one line by the caller.
        self._ascii = self.text.isascii()

    def original_offset(self, parsed_offset: int) -> int:
        parsed_offset = min(max(parsed_offset, 0), len(self.back) - 1)
        return self.back[parsed_offset]

    def char_offset(self, byte_offset: int) -> int:
        if self._ascii:
            return byte_offset
        return len(self.text.encode("utf-8")[:byte_offset].decode("utf-8", errors="ignore"))

    def node_offset(self, node: ast.AST) -> int:
        return self.original_offset(self.char_offset(getattr(node, "col_offset", 0)))

    def node_segment(self, node: ast.AST) -> str:
        start = self.char_offset(getattr(node, "col_offset", 0))
        end = self.char_offset(getattr(node, "end_col_offset", start))
        return self.text[start:end]


def _one_line(text: str) -> str:
    # Continuation lines are joined by the comment scanner; a stray newline or tab becomes a space so that
    # character offsets and ast columns agree (and no statement boundary can be formed).
    return text.replace("\r", " ").replace("\n", " ").replace("\t", " ")


def _check_brackets(text: str) -> None:
    """Unbalanced brackets, reported where they are (clearer than the generic ast message)."""
    pairs = {")": "(", "]": "[", "}": "{"}
    stack: list[tuple[str, int]] = []
    quote: str | None = None
    for index, char in enumerate(text):
        if quote:
            if char == quote:
                quote = None
            continue
        if char in "\"'":
            quote = char
        elif char in "([{":
            stack.append((char, index))
        elif char in pairs:
            if not stack:
                raise ClaimSyntaxError(f"unbalanced parenthesis: `{char}` has no matching `{pairs[char]}`", index)
            opener, where = stack.pop()
            if opener != pairs[char]:
                raise ClaimSyntaxError(
                    f"unbalanced parenthesis: `{opener}` at column {where + 1} is closed by `{char}`", index
                )
    if stack:
        opener, where = stack[-1]
        raise ClaimSyntaxError(f"unbalanced parenthesis: `{opener}` is never closed", where)


def _top_level_positions(text: str, pattern: re.Pattern[str]) -> list[re.Match[str]]:
    """Matches of ``pattern`` outside brackets and quotes."""
    depth = 0
    quote: str | None = None
    inside = [False] * len(text)
    for index, char in enumerate(text):
        if quote:
            inside[index] = True
            if char == quote:
                quote = None
            continue
        if char in "\"'":
            quote = char
            inside[index] = True
        elif char in "([{":
            depth += 1
            inside[index] = depth > 0
        elif char in ")]}":
            inside[index] = depth > 0
            depth = max(0, depth - 1)
        else:
            inside[index] = depth > 0
    return [m for m in pattern.finditer(text) if not inside[m.start()]]


def split_top_level(text: str, separator: str = ",") -> list[tuple[int, str]]:
    """``text`` split at ``separator`` outside brackets and quotes, as (offset, piece) pairs."""
    parts: list[tuple[int, str]] = []
    start = 0
    for match in _top_level_positions(text, re.compile(re.escape(separator))):
        parts.append((start, text[start : match.start()]))
        start = match.end()
    parts.append((start, text[start:]))
    return parts


def _stripped(offset: int, piece: str) -> tuple[int, str]:
    lead = len(piece) - len(piece.lstrip())
    return offset + lead, piece.strip()


# ---------------------------------------------------------------- expressions


_OPERATOR_SPELLING = {
    ast.Add: "+",
    ast.Sub: "-",
    ast.Mult: "*",
    ast.Div: "/",
    ast.FloorDiv: "//",
    ast.Mod: "%",
    ast.MatMult: "@",
    ast.LShift: "<<",
    ast.RShift: ">>",
    ast.BitAnd: "&",
    ast.BitOr: "|",
    ast.BitXor: "^",
    ast.Pow: "**",
}
_COMPARISON_SPELLING = {
    ast.Eq: "==",
    ast.NotEq: "!=",
    ast.Lt: "<",
    ast.LtE: "<=",
    ast.Gt: ">",
    ast.GtE: ">=",
    ast.Is: "is",
    ast.IsNot: "is not",
    ast.In: "in",
    ast.NotIn: "not in",
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


def _parse_ast(source: _Source, what: str = "expression") -> ast.expr:
    text = source.original
    if not text.strip():
        raise ClaimSyntaxError(f"empty {what}", 0)
    if len(text) > MAX_TEXT_LENGTH:
        raise ClaimSyntaxError(f"the {what} is too long ({len(text)} characters, limit {MAX_TEXT_LENGTH})", 0)
    _check_brackets(text)
    # Leading spaces are an IndentationError in eval mode; parse the stripped text and shift offsets.
    lead = len(source.text) - len(source.text.lstrip())
    body = source.text.strip()
    try:
        tree = ast.parse(body, mode="eval")
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
    if lead:
        for node in ast.walk(tree):
            if hasattr(node, "col_offset"):
                node.col_offset += len(source.text[:lead].encode("utf-8"))  # type: ignore[attr-defined]
                node.end_col_offset = (node.end_col_offset or 0) + len(source.text[:lead].encode("utf-8"))  # type: ignore[attr-defined]
    return tree.body


class _Converter:
    """Whitelisted ``ast`` nodes -> ``model`` expressions."""

    def __init__(self, source: _Source) -> None:
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
            op = _COMPARISON_SPELLING.get(type(node.ops[0]), "?")
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
        """pi (bare or math./np./numpy.), tau and math.e.  pi is an opaque constant: proofs hold for any
        value of it, and a refutation needs a witness that does not depend on it (none is claimed)."""
        name = None
        if isinstance(node, ast.Name) and node.id in ("pi", "tau"):
            name = node.id
        elif (isinstance(node, ast.Attribute) and isinstance(node.value, ast.Name)
              and node.value.id in FUNCTION_MODULES and node.attr in ("pi", "tau", "e")):
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
            if isinstance(base, ast.Name) and base.id in FUNCTION_MODULES and node.attr in ("inf", "nan"):
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
        if op in (ast.Add, ast.Sub, ast.Mult, ast.Div):
            spelling = _OPERATOR_SPELLING[op]
            return BinOp(spelling, self._convert(node.left), self._convert(node.right))  # type: ignore[arg-type]
        if op in (ast.Pow, ast.BitXor):
            return self.power(self._convert(node.left), node.right, node)
        raise self.error(f"unsupported operator `{_OPERATOR_SPELLING.get(op, '?')}`", node)

    def power(self, base: Expr, exponent_node: ast.AST, node: ast.AST) -> Pow:
        exponent_expr = self._convert(exponent_node)
        exponent = self.fold(exponent_expr, exponent_node)
        if exponent is None:
            raise self.error("the exponent must be a constant number (like `2`, `-1` or `1/2`)", exponent_node)
        if exponent.denominator not in (1, 2):
            raise self.error(
                f"non-integer power {exponent} of a non-radical: only integer exponents and halves "
                "(square roots) are supported",
                exponent_node,
            )
        if abs(exponent) > MAX_EXPONENT:
            raise self.error(f"the exponent {exponent} is too large (limit {MAX_EXPONENT})", exponent_node)
        return Pow(base, exponent)

    def fold(self, expr: Expr, node: ast.AST) -> Fraction | None:
        """The rational value of a constant exponent, or None when it involves a variable or a function."""
        if isinstance(expr, Num):
            return expr.value
        if isinstance(expr, Neg):
            inner = self.fold(expr.operand, node)
            return None if inner is None else -inner
        if isinstance(expr, BinOp):
            left = self.fold(expr.left, node)
            right = self.fold(expr.right, node)
            if left is None or right is None:
                return None
            if expr.op == "+":
                return left + right
            if expr.op == "-":
                return left - right
            if expr.op == "*":
                return left * right
            if right == 0:
                raise self.error("division by zero in a constant exponent", node)
            return left / right
        if isinstance(expr, Pow):
            base = self.fold(expr.base, node)
            if base is None:
                return None
            if expr.exponent.denominator != 1:
                return None
            if base == 0 and expr.exponent < 0:
                raise self.error("division by zero in a constant exponent", node)
            size = max(abs(base.numerator).bit_length(), base.denominator.bit_length()) * abs(int(expr.exponent))
            if size > MAX_CONSTANT_BITS:
                raise self.error("the constant exponent is too large", node)
            return base ** int(expr.exponent)
        return None

    def call(self, node: ast.Call) -> Expr:
        name = self.function_name(node.func)
        if node.keywords:
            raise self.error(f"keyword arguments are not supported in a call of `{name}`", node)
        for arg in node.args:
            if isinstance(arg, ast.Starred):
                raise self.error(f"unsupported syntax: a starred argument in a call of `{name}`", arg)
        canonical = FUNCTION_ALIASES[name]
        expected = 2 if canonical == "pow" else KNOWN_FUNCTIONS[canonical]
        if len(node.args) != expected:
            plural = "argument" if expected == 1 else "arguments"
            raise self.error(f"`{name}` takes {expected} {plural}, got {len(node.args)}", node)
        if canonical == "pow":
            return self.power(self._convert(node.args[0]), node.args[1], node)
        return Call(canonical, tuple(self._convert(arg) for arg in node.args))

    def function_name(self, func: ast.AST) -> str:
        if isinstance(func, ast.Name):
            if func.id in FUNCTION_ALIASES:
                return func.id
            raise self.error(f"unknown function `{func.id}` (known: {_known_list()})", func)
        if isinstance(func, ast.Attribute) and isinstance(func.value, ast.Name):
            module, attr = func.value.id, func.attr
            if module in FUNCTION_MODULES:
                if attr in FUNCTION_ALIASES:
                    return attr
                raise self.error(f"unknown function `{module}.{attr}` (known: {_known_list()})", func)
            raise self.error(
                f"unsupported call `{module}.{attr}(...)`: only the functions {_known_list()} are allowed, "
                "optionally prefixed by math., np. or numpy.",
                func,
            )
        if isinstance(func, (ast.Attribute, ast.Subscript)):
            raise self.error(
                f"unsupported call of `{self.source.node_segment(func)}`: only the functions {_known_list()} "
                "are allowed",
                func,
            )
        raise self.error(f"unsupported syntax: a call of {self.describe(func)}", func)


def _known_list() -> str:
    return ", ".join(sorted(set(FUNCTION_ALIASES) - {"power"}))


def _convert_text(text: str, *, allow_tuple: bool = False, what: str = "expression") -> tuple[Expr, ...]:
    source = _Source(_one_line(text))
    tree = _parse_ast(source, what)
    converter = _Converter(source)
    if isinstance(tree, ast.Tuple) and allow_tuple:
        if not tree.elts:
            raise converter.error(f"empty {what}", tree)
        return tuple(converter.convert(item) for item in tree.elts)
    if isinstance(tree, ast.Compare):
        op = _COMPARISON_SPELLING.get(type(tree.ops[0]), "?")
        raise converter.error(f"comparison `{op}` inside an expression", tree)
    return (converter.convert(tree),)


def parse_expression(text: str) -> Expr:
    """One expression of the claim language (no comparison, no tuple)."""
    return _convert_text(text)[0]


# ---------------------------------------------------------------- printing (for condition texts)


def expression_text(expr: Expr) -> str:
    """Claim-language spelling of an expression (used for the text of expanded named conditions)."""
    return _show(expr, 0)


_PRECEDENCE = {"+": 1, "-": 1, "*": 2, "/": 2}


def _show(expr: Expr, context: int) -> str:
    if isinstance(expr, Num):
        value = expr.value
        text = str(value.numerator) if value.denominator == 1 else f"{value.numerator}/{value.denominator}"
        needs = value < 0 or (value.denominator != 1 and context >= 2)
        return f"({text})" if needs and context > 0 else text
    if isinstance(expr, Var):
        return expr.name
    if isinstance(expr, Neg):
        text = "-" + _show(expr.operand, 3)
        return f"({text})" if context > 1 else text
    if isinstance(expr, BinOp):
        level = _PRECEDENCE[expr.op]
        left = _show(expr.left, level)
        right = _show(expr.right, level + 1)
        text = f"{left} {expr.op} {right}" if level == 1 else f"{left}{expr.op}{right}"
        return f"({text})" if context > level else text
    if isinstance(expr, Pow):
        exponent = expr.exponent
        shown = str(exponent.numerator) if exponent.denominator == 1 else f"({exponent})"
        if exponent < 0 and exponent.denominator == 1:
            shown = f"({exponent})"
        text = f"{_show(expr.base, 5)}**{shown}"
        return f"({text})" if context > 4 else text
    if isinstance(expr, (Call, Opaque)):
        name = expr.function if isinstance(expr, Call) else expr.name
        return f"{name}({', '.join(_show(arg, 0) for arg in expr.args)})"
    raise TypeError(f"not an expression: {expr!r}")


def substitute(expr: Expr, mapping: Mapping[str, Expr]) -> Expr:
    """``expr`` with the variables named in ``mapping`` replaced, all at once."""
    if isinstance(expr, Var):
        return mapping.get(expr.name, expr)
    if isinstance(expr, Num):
        return expr
    if isinstance(expr, Neg):
        return Neg(substitute(expr.operand, mapping))
    if isinstance(expr, BinOp):
        return BinOp(expr.op, substitute(expr.left, mapping), substitute(expr.right, mapping))
    if isinstance(expr, Pow):
        return Pow(substitute(expr.base, mapping), expr.exponent)
    if isinstance(expr, Call):
        return Call(expr.function, tuple(substitute(arg, mapping) for arg in expr.args))
    if isinstance(expr, Opaque):
        return Opaque(expr.name, tuple(substitute(arg, mapping) for arg in expr.args))
    raise TypeError(f"not an expression: {expr!r}")


# ---------------------------------------------------------------- conditions


_RELATIONS: dict[type, Relation] = {
    ast.Eq: "==",
    ast.NotEq: "!=",
    ast.Lt: "<",
    ast.LtE: "<=",
    ast.Gt: ">",
    ast.GtE: ">=",
}
_GIVEN = re.compile(r"(?<![\w.])given(?![\w])")
_NAME = re.compile(r"[A-Za-z_]\w*")
_DOTTED = re.compile(r"[A-Za-z_]\w*(?:\.[A-Za-z_]\w*)*")


def _named_sets(named: NamedSets) -> dict[str, NamedConditionSet]:
    if named is None:
        return {}
    if isinstance(named, ExtractionContext):
        return {item.name: item for item in named.named_conditions}
    return dict(named)


def parse_relation(text: str, *, origin: str = "given", label: str | None = None) -> list[Condition]:
    """One comparison ``P op Q`` (a chain ``0 < x < 1`` gives one condition per link)."""
    source = _Source(_one_line(text))
    tree = _parse_ast(source, "condition")
    converter = _Converter(source)
    if not isinstance(tree, ast.Compare):
        raise converter.error(
            "a condition must be a comparison (`==`, `!=`, `<`, `<=`, `>`, `>=`) or the name of a condition set", tree
        )
    operands = [tree.left, *tree.comparators]
    exprs = [converter.convert(item) for item in operands]
    conditions: list[Condition] = []
    shown = label if label is not None else text.strip()
    for index, op in enumerate(tree.ops):
        relation = _RELATIONS.get(type(op))
        if relation is None:
            raise converter.error(
                f"unsupported comparison `{_COMPARISON_SPELLING.get(type(op), '?')}` in a condition", operands[index + 1]
            )
        if len(tree.ops) == 1:
            link_text = shown
        else:
            link_text = (
                f"{source.node_segment(operands[index]).strip()} {relation} {source.node_segment(operands[index + 1]).strip()}"
            )
            if label is not None:
                link_text = f"{label} ({link_text})"
        conditions.append(Condition(relation, exprs[index], exprs[index + 1], link_text, origin))
    return conditions


def expand_named_set(item: NamedConditionSet, args: tuple[Expr, ...] | None) -> list[Condition]:
    """The conditions of a named set, its variables replaced by ``args`` (positionally) when given."""
    origin = f"named:{item.name}"
    conditions: list[Condition] = []
    for given in item.given:
        try:
            parsed = parse_relation(given, origin=origin)
        except ClaimSyntaxError as exc:
            raise ClaimSyntaxError(f"in the condition set `{item.name}`, given `{given}`: {exc.message}", 0) from None
        for condition in parsed:
            if args is None:
                conditions.append(Condition(condition.relation, condition.left, condition.right,
                                            f"{item.name}: {condition.text}", origin))
                continue
            mapping = dict(zip(item.variables, args))
            left = substitute(condition.left, mapping)
            right = substitute(condition.right, mapping)
            text = f"{item.name}: {expression_text(left)} {condition.relation} {expression_text(right)}"
            conditions.append(Condition(condition.relation, left, right, text, origin))
    return conditions


def parse_conditions(text: str, named: NamedSets = None) -> tuple[Condition, ...]:
    """The comma-separated conditions after ``given``; offsets in errors are relative to ``text``."""
    sets = _named_sets(named)
    conditions: list[Condition] = []
    for raw_offset, raw in split_top_level(_one_line(text)):
        offset, piece = _stripped(raw_offset, raw)
        if not piece:
            raise ClaimSyntaxError("empty condition (a stray comma, or nothing after `given`)", offset)
        try:
            conditions.extend(_parse_condition(piece, sets))
        except ClaimSyntaxError as exc:
            raise exc.shifted(offset) from None
    return tuple(conditions)


def _parse_condition(piece: str, sets: dict[str, NamedConditionSet]) -> list[Condition]:
    name_match = _NAME.match(piece)
    if name_match:
        name = name_match.group(0)
        rest = piece[name_match.end():].strip()
        if not rest or (rest.startswith("(") and _closes_at_end(piece[name_match.end():].lstrip())):
            return _named_condition(piece, name, rest, sets)
    return parse_relation(piece)


def _closes_at_end(text: str) -> bool:
    depth = 0
    for index, char in enumerate(text):
        if char in "([{":
            depth += 1
        elif char in ")]}":
            depth -= 1
            if depth == 0:
                return index == len(text.rstrip()) - 1
    return False


def _named_condition(piece: str, name: str, rest: str, sets: dict[str, NamedConditionSet]) -> list[Condition]:
    item = sets.get(name)
    if item is None:
        known = ", ".join(sorted(sets)) or "none are configured"
        raise ClaimSyntaxError(
            f"unknown named condition `{name}` (known: {known}); a condition is a comparison like `x != 0` "
            "or the name of a set in [tool.idealcheck.conditions]",
            0,
        )
    if not rest:
        return expand_named_set(item, None)
    args_offset = piece.index("(")
    inner = piece[args_offset + 1 : piece.rindex(")")]
    args: list[Expr] = []
    if inner.strip():
        for raw_offset, raw in split_top_level(inner):
            offset, arg = _stripped(raw_offset, raw)
            if not arg:
                raise ClaimSyntaxError(f"empty argument in `{name}(...)`", args_offset + 1 + offset)
            try:
                args.append(parse_expression(arg))
            except ClaimSyntaxError as exc:
                raise exc.shifted(args_offset + 1 + offset) from None
    if len(args) != len(item.variables):
        raise ClaimSyntaxError(
            f"the condition set `{name}` takes {len(item.variables)} arguments "
            f"({', '.join(item.variables)}), got {len(args)}",
            args_offset,
        )
    return expand_named_set(item, tuple(args))


# ---------------------------------------------------------------- whole claims


def split_given(text: str) -> tuple[str, str | None, int]:
    """``(head, conditions text or None, offset of the conditions text)`` at the first top-level ``given``."""
    matches = _top_level_positions(text, _GIVEN)
    if not matches:
        return text, None, len(text)
    match = matches[0]
    return text[: match.start()], text[match.end():], match.end()


# Typographic operators (from papers, word processors, other languages) and what the claim language writes.
NON_ASCII_OPERATORS: dict[str, str] = {
    "\u00b7": "*", "\u22c5": "*", "\u2219": "*", "\u2022": "*", "\u00d7": "*", "\u2217": "*",
    "\u00f7": "/", "\u2215": "/", "\u2212": "-", "\u2013": "-", "\u2014": "-",
    "\u2264": "<=", "\u2266": "<=", "\u2265": ">=", "\u2267": ">=", "\u2260": "!=",
    "\u2261": "==", "\uff1d": "==", "\u00b2": "**2", "\u00b3": "**3", "\u221a": "sqrt(...)",
}


def check_operator_characters(text: str) -> None:
    """A ``ClaimSyntaxError`` with the fix at the first typographic operator (``a·b`` is not a name)."""
    for offset, char in enumerate(text):
        fix = NON_ASCII_OPERATORS.get(char)
        if fix is not None:
            raise ClaimSyntaxError(f"`{char}` (U+{ord(char):04X}) is not an operator of the claim language; "
                                   f"write `{fix}` instead", offset)


def parse_claim_text(text: str, named: NamedSets = None) -> ParsedClaim:
    """Parse what follows ``idealcheck:`` (offsets in errors are relative to ``text``)."""
    text = _one_line(text)
    check_operator_characters(text)
    head, given_text, given_offset = split_given(text)
    conditions: tuple[Condition, ...] = ()
    if given_text is not None:
        if not given_text.strip():
            raise ClaimSyntaxError("nothing after `given`: expected conditions", given_offset)
        try:
            conditions = parse_conditions(given_text, named)
        except ClaimSyntaxError as exc:
            raise exc.shifted(given_offset) from None
    lead = len(head) - len(head.lstrip())
    body = head.strip()
    if not body:
        raise ClaimSyntaxError("empty claim: expected `LEFT == RIGHT`", lead)

    same_as = re.match(r"same\s+as(?![\w])", body)
    if same_as:
        other = body[same_as.end():].strip()
        where = lead + same_as.end() + (len(body[same_as.end():]) - len(body[same_as.end():].lstrip()))
        if not other:
            raise ClaimSyntaxError("`same as` needs the name of a function", where)
        if not _DOTTED.fullmatch(other):
            raise ClaimSyntaxError(f"`same as` needs a (dotted) function name, found `{other}`", where)
        return ParsedClaim("same_as", (), other, conditions)

    returns = re.match(r"returns(?![\w.\[])", body)
    if returns and not body[returns.end():].lstrip().startswith(("==", "=")):
        return ParsedClaim("returns", _target(body, returns.end(), lead, "`returns`"), None, conditions)

    if body.startswith("==") and not body.startswith("==="):
        return ParsedClaim("statement", _target(body, 2, lead, "`==`"), None, conditions)

    return ParsedClaim("equation", _equation_sides(body, lead), None, conditions)


def _target(body: str, start: int, lead: int, after: str) -> tuple[Expr, ...]:
    rest = body[start:]
    if not rest.strip():
        raise ClaimSyntaxError(f"empty expression after {after}", lead + start)
    try:
        return _convert_text(rest, allow_tuple=True)
    except ClaimSyntaxError as exc:
        raise exc.shifted(lead + start) from None


def _equation_sides(body: str, lead: int) -> tuple[Expr, ...]:
    _check_brackets(body)
    links = _top_level_positions(body, re.compile(r"(?<![=!<>])==(?!=)"))
    if not links:
        single = _top_level_positions(body, re.compile(r"(?<![=!<>])=(?!=)"))
        if single:
            raise ClaimSyntaxError("missing `==`: found a single `=`; write `LEFT == RIGHT`", lead + single[0].start())
        for spelling in ("!=", "<=", ">=", "<", ">"):
            found = _top_level_positions(body, re.compile(re.escape(spelling)))
            if found:
                raise ClaimSyntaxError(
                    f"missing `==`: a claim states an equation `LEFT == RIGHT`, found `{spelling}` "
                    "(sign facts go after `given`)",
                    lead + found[0].start(),
                )
        raise ClaimSyntaxError("missing `==`: an expression claim reads `LEFT == RIGHT [given CONDITIONS]`", lead)
    sides: list[Expr] = []
    start = 0
    bounds = [(m.start(), m.end()) for m in links] + [(len(body), len(body))]
    for index, (stop, after) in enumerate(bounds):
        piece = body[start:stop]
        if not piece.strip():
            where = "left of the first" if index == 0 else "right of"
            raise ClaimSyntaxError(f"empty expression on the {where} `==`", lead + (stop if index == 0 else start))
        try:
            sides.append(_convert_text(piece)[0])
        except ClaimSyntaxError as exc:
            raise exc.shifted(lead + start) from None
        start = after
    return tuple(sides)


def equation_side_texts(text: str) -> tuple[list[str], str | None]:
    """The side texts of an equation claim as written and its conditions text (for chain-link texts)."""
    head, given_text, _ = split_given(_one_line(text))
    links = _top_level_positions(head, re.compile(r"(?<![=!<>])==(?!=)"))
    sides: list[str] = []
    start = 0
    for match in links:
        sides.append(head[start : match.start()].strip())
        start = match.end()
    sides.append(head[start:].strip())
    return sides, None if given_text is None else given_text.strip()
