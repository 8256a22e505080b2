"""Claim text with long operator chains -> the ``ast`` tree Python would build, without its depth limit.

``ast.parse`` refuses left-leaning chains deeper than about three times the recursion limit
(``a0*b0 + a1*b1 + ...`` with 3,000 terms).  Such a chain is parsed here piece by piece: the text is
tokenized (never evaluated), every run of arithmetic tokens with more than ``CHAIN_SPLIT`` binary
operators is split at its binary ``+``/``-`` and then at ``*``/``/``/``//``/``%``/``@``, each factor is
parsed by ``ast`` on its own, and the pieces are joined left to right exactly as Python's grammar joins
them (the same nodes, the same columns).  Runs are handled innermost bracket first; a handled run is
replaced in the working text by a placeholder name of the same length in bytes, so every column the
final ``ast.parse`` reports is a column of the claim as written.  Whatever this cannot split is left to
``ast.parse``, which then reports its own error.
"""
from __future__ import annotations

import ast
import io
import keyword
import tokenize
from dataclasses import dataclass

# More binary operators than this in one run: parsed piecewise (fewer: ``ast.parse`` as it is).
CHAIN_SPLIT = 100
_SUM = {"+": ast.Add, "-": ast.Sub}
_PRODUCT = {"*": ast.Mult, "/": ast.Div, "//": ast.FloorDiv, "%": ast.Mod, "@": ast.MatMult}
# Tokens that may stand inside one factor; anything else (a comma, a comparison, a keyword) ends a run.
_FACTOR_OPERATORS = {"**", "~", "."}
_OPENERS = {"(": ")", "[": "]", "{": "}"}
_OPERAND_KEYWORDS = {"True", "False", "None"}


@dataclass
class _Token:
    text: str
    start: int  # byte offsets into the claim text
    end: int
    operand_end: bool  # a name, number, string or closing bracket: a following + - * is binary
    group: bool = False  # a whole bracket group, collapsed to one token


def parse_long_chains(body: str) -> ast.expr | None:
    """The ``ast`` expression of ``body`` with long chains parsed piecewise; None when there are none
    (or the text is malformed: then ``ast.parse`` says why)."""
    if sum(body.count(op) for op in "+-*/") <= CHAIN_SPLIT:
        return None
    tokens = _tokens(body)
    if tokens is None:
        return None
    parser = _ChainParser(body.encode("utf-8"))
    if not parser.run(tokens):
        return None
    try:
        tree = ast.parse(parser.working.decode("utf-8"), mode="eval").body
    except (SyntaxError, ValueError, MemoryError, RecursionError):
        return None
    return parser.resolve(tree)


def _tokens(body: str) -> list[_Token] | None:
    # columns from tokenize count characters; ast columns count UTF-8 bytes
    offsets = [0]
    for char in body:
        offsets.append(offsets[-1] + len(char.encode("utf-8")))
    out: list[_Token] = []
    try:
        for item in tokenize.generate_tokens(io.StringIO(body).readline):
            if item.type in (tokenize.NEWLINE, tokenize.NL, tokenize.ENDMARKER, tokenize.INDENT, tokenize.DEDENT):
                continue
            if item.type in (tokenize.ERRORTOKEN, tokenize.COMMENT) or item.start[0] != 1 or item.end[0] != 1:
                return None
            operand = (item.type in (tokenize.NUMBER, tokenize.STRING) or item.string in (")", "]", "}")
                       or (item.type == tokenize.NAME and (not keyword.iskeyword(item.string)
                                                           or item.string in _OPERAND_KEYWORDS)))
            out.append(_Token(item.string, offsets[item.start[1]], offsets[item.end[1]], operand))
    except (tokenize.TokenError, SyntaxError, IndexError):
        return None
    return out


class _ChainParser:
    def __init__(self, data: bytes) -> None:
        self.working = bytearray(data)
        self.pieces: dict[str, ast.expr] = {}
        prefix = "_chain"
        while prefix.encode() in data:
            prefix = "_" + prefix
        self.prefix = prefix

    def run(self, tokens: list[_Token]) -> bool:
        """Collapse bracket groups innermost first, handling the runs of each level; False on a mismatch."""
        levels: list[list[_Token]] = [[]]
        for token in tokens:
            if token.text in _OPENERS:
                levels[-1].append(token)
                levels.append([])
            elif token.text in (")", "]", "}"):
                if len(levels) == 1:
                    return False
                inner = levels.pop()
                self._level(inner)
                opener = levels[-1].pop()
                levels[-1].append(_Token(opener.text + token.text, opener.start, token.end, True, group=True))
            else:
                levels[-1].append(token)
        if len(levels) != 1:
            return False
        self._level(levels[0])
        return True

    def _level(self, tokens: list[_Token]) -> None:
        run: list[_Token] = []
        for token in tokens + [_Token(",", -1, -1, False)]:
            if token.group or token.operand_end or token.text in _SUM or token.text in _PRODUCT \
                    or token.text in _FACTOR_OPERATORS:
                run.append(token)
                continue
            self._run(run)
            run = []

    def _run(self, run: list[_Token]) -> None:
        binary = [index for index, token in enumerate(run)
                  if index and run[index - 1].operand_end and (token.text in _SUM or token.text in _PRODUCT)]
        if len(binary) <= CHAIN_SPLIT:
            return
        tree = self._chain(run, binary)
        if tree is None:
            return
        start, end = run[0].start, run[-1].end
        name = f"{self.prefix}{len(self.pieces)}_"
        if len(name) > end - start:
            return
        name += "_" * (end - start - len(name))  # the name spans the run: the parent's columns stay right
        self.pieces[name] = tree
        self.working[start:end] = name.encode()

    def _chain(self, run: list[_Token], binary: list[int]) -> ast.expr | None:
        """The run joined as Python joins it: terms at ``+``/``-``, factors at ``*``, ``/``, ... ."""
        bounds = [-1] + binary + [len(run)]
        # each piece with the byte span of its text: a joined node spans its operands' text, parentheses
        # included (``(a + b)*c`` starts at the parenthesis, as ast has it)
        factors: list[tuple[ast.expr, int, int]] = []
        operators: list[str] = []
        for left, right in zip(bounds, bounds[1:]):
            if left + 1 >= right:
                return None
            start, end = run[left + 1].start, run[right - 1].end
            parsed = self._factor(start, end)
            if parsed is None:
                return None
            factors.append((parsed, start, end))
            if right < len(run):
                operators.append(run[right].text)
        terms: list[tuple[ast.expr, int, int]] = []
        signs: list[str] = []
        term = factors[0]
        for operator, piece in zip(operators, factors[1:]):
            if operator in _PRODUCT:
                term = _joined(term, _PRODUCT[operator](), piece)
            else:
                terms.append(term)
                signs.append(operator)
                term = piece
        terms.append(term)
        total = terms[0]
        for sign, summand in zip(signs, terms[1:]):
            total = _joined(total, _SUM[sign](), summand)
        return total[0]

    def _factor(self, start: int, end: int) -> ast.expr | None:
        try:
            tree = ast.parse(self.working[start:end].decode("utf-8"), mode="eval").body
        except (SyntaxError, ValueError, MemoryError, RecursionError, UnicodeDecodeError):
            return None
        for node in ast.walk(tree):
            if hasattr(node, "col_offset"):
                node.col_offset += start
                node.end_col_offset = (getattr(node, "end_col_offset", 0) or 0) + start  # type: ignore[attr-defined]
        return self.resolve(tree)

    def resolve(self, tree: ast.expr) -> ast.expr:
        """``tree`` with its placeholder names replaced by the pieces they stand for."""
        if isinstance(tree, ast.Name) and tree.id in self.pieces:
            return self.pieces[tree.id]
        for node in ast.walk(tree):  # placeholders are leaves here: the walk never enters a piece
            for field, value in ast.iter_fields(node):
                if isinstance(value, ast.Name) and value.id in self.pieces:
                    setattr(node, field, self.pieces[value.id])
                elif isinstance(value, list):
                    value[:] = [self.pieces[item.id] if isinstance(item, ast.Name) and item.id in self.pieces
                                else item for item in value]
        return tree


def _joined(left: tuple[ast.expr, int, int], op: ast.operator,
            right: tuple[ast.expr, int, int]) -> tuple[ast.expr, int, int]:
    node = ast.BinOp(left=left[0], op=op, right=right[0], lineno=1, col_offset=left[1], end_lineno=1,
                     end_col_offset=right[2])
    return node, left[1], right[2]
