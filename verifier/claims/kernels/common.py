"""What the language front ends share: math-library spellings, literals, and the lowering base class."""
from __future__ import annotations

import re
from fractions import Fraction
from typing import Any

from verifier.claims.kernels import tree as t
from verifier.claims.kernels.parse import ParsedSource

# Spelling in code (lower case, namespace and module prefixes removed) -> canonical function name.
MATH_SPELLINGS: dict[str, str] = {}
for _canonical, _spellings in (
    ("sqrt", "sqrt sqrtf sqrtl dsqrt csqrt"),
    ("hypot", "hypot hypotf hypotl"),
    ("fma", "fma fmaf fmal mul_add muladd"),
    ("sin", "sin sinf sinl dsin"),
    ("cos", "cos cosf cosl dcos"),
    ("tan", "tan tanf tanl dtan"),
    ("exp", "exp expf expl dexp"),
    ("log", "log logf logl dlog alog"),
    ("pow", "pow powf powl"),
    ("abs", "abs fabs fabsf fabsl dabs"),
    ("copysign", "copysign copysignf copysignl"),
    ("min", "min fmin fminf fminl amin1 dmin1 min0"),
    ("max", "max fmax fmaxf fmaxl amax1 dmax1 max0"),
):
    for _spelling in _spellings.split():
        MATH_SPELLINGS[_spelling] = _canonical

_INTEGER_TYPES = re.compile(
    r"\b(int|long|short|char|unsigned|signed|size_t|ssize_t|ptrdiff_t|bool|u?int\d+_t|integer|logical|"
    r"[iu](8|16|32|64|128|size)|Int\d*|UInt\d*|Bool)\b")
_REAL_TYPES = re.compile(r"\b(float|double|real|f32|f64|Float\d+|Real|AbstractFloat|__half|half)\b",
                         re.IGNORECASE)


def scalar_kind(type_text: str) -> t.ScalarKind:
    """``real`` for floating types (and unknown type names such as template parameters), ``int`` for integers."""
    if _REAL_TYPES.search(type_text):
        return "real"
    if _INTEGER_TYPES.search(type_text):
        return "int"
    return "real"


_C_NUMBER = re.compile(r"^(?P<body>(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?)(?P<suffix>[fFlLuUzZ]*)$")
_FORTRAN_NUMBER = re.compile(r"^(?P<body>(\d+\.?\d*|\.\d+))(?:(?P<letter>[eEdDqQ])(?P<exp>[+-]?\d+))?"
                             r"(?:_(?P<kind>\w+))?$")
_RUST_NUMBER = re.compile(r"^(?P<body>(\d[\d_]*\.?[\d_]*|\.\d+)([eE][+-]?[\d_]+)?)(?P<suffix>_?(f32|f64|"
                          r"[iu](8|16|32|64|128|size)))?$")
_JULIA_NUMBER = re.compile(r"^(?P<body>(\d[\d_]*\.?[\d_]*|\.\d+))(?:(?P<letter>[eEf])(?P<exp>[+-]?\d+))?$")


def number(text: str, language: str) -> tuple[Fraction, t.ScalarKind] | None:
    """The exact value and kind of a numeric literal as the language writes it, or None if not supported."""
    text = text.strip()
    if text.startswith("-"):
        inner = number(text[1:], language)
        return None if inner is None else (-inner[0], inner[1])
    if language in ("c", "cpp", "cuda"):
        match = _C_NUMBER.match(text.replace("'", ""))
        if match is None:
            return None
        body, suffix = match.group("body"), match.group("suffix").lower()
        is_real = any(ch in body for ch in ".eE") or "f" in suffix
        return Fraction(body), "real" if is_real else "int"
    if language == "fortran":
        match = _FORTRAN_NUMBER.match(text)
        if match is None:
            return None
        body = match.group("body")
        exponent = match.group("exp")
        value = Fraction(body) * (Fraction(10) ** int(exponent) if exponent else 1)
        is_real = "." in body or match.group("letter") is not None
        return value, "real" if is_real else "int"
    if language == "rust":
        match = _RUST_NUMBER.match(text)
        if match is None:
            return None
        body = match.group("body").replace("_", "")
        suffix = match.group("suffix") or ""
        is_real = any(ch in body for ch in ".eE") or "f" in suffix
        return Fraction(body), "real" if is_real else "int"
    if language == "julia":
        match = _JULIA_NUMBER.match(text)
        if match is None:
            return None
        body = match.group("body").replace("_", "")
        exponent = match.group("exp")
        value = Fraction(body) * (Fraction(10) ** int(exponent) if exponent else 1)
        is_real = "." in body or match.group("letter") is not None
        return value, "real" if is_real else "int"
    return None


class Lowering:
    """Shared state of one file's lowering: the parsed source, constants, struct layouts."""

    index_base = 0

    def __init__(self, source: ParsedSource, path: str):
        self.source = source
        self.path = path
        self.constants: dict[str, t.Node] = {}
        self.structs: dict[str, tuple[str, ...]] = {}
        self.scope: set[str] = set()

    def text(self, node: Any) -> str:
        return self.source.node_text(node)

    def line(self, node: Any) -> int:
        return self.source.line(node)

    def name_value(self, name: str, line: int) -> t.Node:
        """A plain name in an expression: a parameter or local, else a file constant, else unsupported."""
        if name in self.scope:
            return t.Name(name, line)
        if name in self.constants:
            return self.constants[name]
        return t.Unsupported(f"the name {name} is not a parameter, local or constant", line)

    def unsupported(self, node: Any, construct: str | None = None) -> t.Unsupported:
        what = construct or f"`{self.text(node).strip().splitlines()[0][:40]}` ({node.type.replace('_', ' ')})"
        return t.Unsupported(f"unsupported construct {what}", self.line(node))

    def stop(self, node: Any, construct: str | None = None) -> t.Stop:
        unsupported = self.unsupported(node, construct)
        return t.Stop(f"{unsupported.construct} at line {unsupported.line}", unsupported.line)

    def literal(self, node: Any) -> t.Node:
        parsed = number(self.text(node), self.source.language)
        if parsed is None:
            return self.unsupported(node, f"the literal `{self.text(node)}`")
        return t.Lit(parsed[0], parsed[1])

    def math_or_call(self, name: str, args: tuple[t.Node, ...], node: Any) -> t.Node:
        """A call by its spelled name: a known math function, or a user function to inline."""
        bare = name.split("::")[-1].split(".")[-1]
        if self.source.language == "fortran":
            bare = bare.lower()
            canonical = "copysign" if bare in ("sign", "dsign") else MATH_SPELLINGS.get(bare)
        else:
            canonical = MATH_SPELLINGS.get(bare)
        if canonical is not None and (name == bare or name.startswith(("std::", "Base.", "f64::", "f32::",
                                                                       "::", "cuda::"))):
            if canonical == "fma" and len(args) == 3:
                return t.MathCall("fma", args, self.line(node))
            return t.as_cases(t.MathCall(canonical, args, self.line(node)))
        return t.UserCall(name, args, self.line(node))
