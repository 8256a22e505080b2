"""Expression trees -> polynomials in a sparse ring over QQ, with auxiliary variables and generators.

Every construct that is not a polynomial gets a fresh variable and the equations that tie it down:
- a division by u: an inverse variable d per irreducible factor of u, with ``d*u - 1`` (u assumed non-zero);
- ``sqrt(u)``: a radical variable r with ``r**2 - u`` (u assumed >= 0; equal radicands share one r);
- ``sin``/``cos`` of integer-linear combinations of angles: one (s, c) pair per base angle with
  ``s**2 + c**2 - 1``; the multiple-angle and addition formulas are expanded exactly;
- ``exp`` of linear combinations: one e and its inverse per base quantity with ``e*ei - 1``;
- ``log`` and opaque calls: one variable per distinct argument (nothing else is known about it), except
  that the logarithm of a product of variables with positive hypotheses splits into a sum;
- ``pi``: an opaque constant whose sine and cosine at pi/n (n = 1, 2, 3, 4, 6) are known exactly;
- a square root of a rational constant: one radical per prime of its square-free part.
A condition ``v == constant`` is substituted into everything else first.  Radicands (>= 0) and log
arguments (> 0) join the sign hypotheses.  Each auxiliary variable is shown in the original variables
when a polynomial is printed.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field
from fractions import Fraction
from typing import Literal, Sequence

from sympy import QQ, Symbol, factorint
from sympy.polys.orderings import grevlex
from sympy.polys.rings import PolyElement, PolyRing

from verifier.algebra.evaluate import rational_sqrt as _rational_sqrt  # callers pass only values > 0
from verifier.model.claim import Condition, Obligation
from verifier.model.explanation import AuxKind, AuxVariable
from verifier.model.expr import BinOp, Call, Expr, Neg, Num, Opaque, Pow, Var
from verifier.model.numbers import fraction_text as _fraction_text

GeneratorKind = Literal["equation", "nonzero", "inverse", "radical", "trig", "exp"]


# Auxiliary names start with "$": no claim-language name (identifier, dotted name, subscript) can.
_AUX_PREFIX = "$"
MAX_POWER = 4096  # exponents beyond this are refused rather than expanded


class TranslationError(Exception):
    """The obligation uses something the polynomial translation cannot represent (reason is specific)."""


@dataclass(frozen=True)
class Generator:
    poly: PolyElement
    kind: GeneratorKind
    meaning: str  # e.g. "x*y - 1 == 0", "(x - y) != 0"
    variable: str = ""  # the auxiliary variable it defines: d of d*u - 1, r of r**2 - u


@dataclass(frozen=True)
class Translation:
    ring: PolyRing
    left: PolyElement
    right: PolyElement
    difference: PolyElement
    generators: tuple[Generator, ...]
    variables: tuple[str, ...]  # the original variables, in ring order
    aux: tuple[AuxVariable, ...]
    assumed: tuple[str, ...]  # what was assumed, for the report (non-zero denominators, radicands >= 0 ...)
    sign_conditions: tuple[Condition, ...] = field(default=())  # <, <=, >, >= as written
    # the same, normalized: (P, strict) meaning P > 0 (strict) or P >= 0, in ``ring``
    signs: tuple[tuple[PolyElement, bool], ...] = field(default=())

    def printed(self, poly: PolyElement) -> str:
        """The polynomial in the original variables: auxiliary variables shown as what they stand for."""
        names = {a.name: a.meaning for a in self.aux}
        return format_poly(poly, names)


# ---------------------------------------------------------------- printing


def _atom(text: str) -> str:
    """Parenthesize a printed sub-expression unless it is a single name or call."""
    simple = all(ch.isalnum() or ch in "._[]$'\"" for ch in text)
    if simple:
        return text
    if text.endswith(")") and _balanced_call(text):
        return text
    return f"({text})"


def _balanced_call(text: str) -> bool:
    head = text.split("(", 1)[0]
    if not head or not all(ch.isalnum() or ch in "._" for ch in head):
        return False
    depth = 0
    for i, ch in enumerate(text):
        if ch == "(":
            depth += 1
        elif ch == ")":
            depth -= 1
            if depth == 0 and i != len(text) - 1:
                return False
    return True


def format_poly(poly: PolyElement, names: dict[str, str] | None = None) -> str:
    """Deterministic text of a polynomial, largest term first; ``names`` renames ring symbols."""
    names = names or {}
    if not poly:
        return "0"
    ring = poly.ring
    symbols = [names.get(str(s), str(s)) for s in ring.symbols]
    parts: list[str] = []
    for monom, coeff in sorted(poly.terms(), key=lambda t: ring.order(t[0]), reverse=True):
        value = Fraction(int(coeff.numerator), int(coeff.denominator))
        factors = []
        for sym, exp in zip(symbols, monom):
            if exp == 0:
                continue
            base = _atom(sym)
            factors.append(base if exp == 1 else f"{base}**{exp}")
        sign = "-" if value < 0 else "+"
        magnitude = abs(value)
        if not factors:
            body = _fraction_text(magnitude)
        elif magnitude == 1:
            body = "*".join(factors)
        else:
            body = _fraction_text(magnitude) + "*" + "*".join(factors)
        parts.append((sign, body))  # type: ignore[arg-type]
    first_sign, first_body = parts[0]  # type: ignore[misc]
    text = ("-" if first_sign == "-" else "") + first_body
    for sign, body in parts[1:]:  # type: ignore[misc]
        text += f" {sign} {body}"
    return text


def poly_key(poly: PolyElement) -> tuple:
    """A ring-independent canonical key: terms as ((symbol, exponent), ...) with the coefficient."""
    symbols = [str(s) for s in poly.ring.symbols]
    items = []
    for monom, coeff in poly.terms():
        mono = tuple((symbols[i], e) for i, e in enumerate(monom) if e)
        items.append((mono, (int(coeff.numerator), int(coeff.denominator))))
    return tuple(sorted(items))


# ---------------------------------------------------------------- the translator


class _Translator:
    def __init__(self, variables: Sequence[str]):
        self.variables = list(variables)
        self.ring = PolyRing([Symbol(n) for n in self.variables] or [Symbol("$one")], QQ, grevlex)
        self.aux: list[AuxVariable] = []
        self.generators: list[tuple[PolyElement, GeneratorKind, str, str]] = []
        self.assumed: list[str] = []
        self._atoms: dict[tuple, str] = {}  # canonical key -> aux variable name
        self._inverse_of: dict[str, PolyElement] = {}  # inverse variable -> the factor it inverts
        self._memo: dict[Expr, PolyElement] = {}
        self._counter = 0
        self._angle_scale: dict[tuple, int] = {}  # direction key -> lcm of coefficient denominators
        self.domain_signs: list[tuple[PolyElement, bool]] = []  # radicands >= 0, log arguments > 0
        self.positive_variables: set[str] = set()  # variables with a hypothesis v > 0 (or v >= c > 0)
        self._exp_scale: dict[tuple, int] = {}

    # -- ring management

    def lift(self, p: PolyElement) -> PolyElement:
        return p if p.ring is self.ring else p.set_ring(self.ring)

    def const(self, value: Fraction | int) -> PolyElement:
        value = Fraction(value)
        return self.ring.ground_new(QQ(value.numerator, value.denominator))

    def _new_symbol(self, stem: str, meaning: str, kind: AuxKind) -> str:
        self._counter += 1
        name = f"{_AUX_PREFIX}{stem}{self._counter}"
        self.aux.append(AuxVariable(name, meaning, kind))
        self.ring = PolyRing(list(self.ring.symbols) + [Symbol(name)], QQ, grevlex)
        return name

    def gen(self, name: str) -> PolyElement:
        index = [str(s) for s in self.ring.symbols].index(name)
        return self.ring.gens[index]

    def printed(self, p: PolyElement) -> str:
        return format_poly(p, {a.name: a.meaning for a in self.aux})

    def add_generator(self, poly: PolyElement, kind: GeneratorKind, meaning: str, variable: str = "") -> None:
        self.generators.append((poly, kind, meaning, variable))

    # -- expressions

    def value(self, expr: Expr) -> PolyElement:
        cached = self._memo.get(expr)
        if cached is not None:
            return self.lift(cached)
        result = self._value(expr)
        self._memo[expr] = result
        return self.lift(result)

    def _value(self, expr: Expr) -> PolyElement:
        if isinstance(expr, Num):
            return self.const(expr.value)
        if isinstance(expr, Var):
            return self.gen(expr.name)
        if isinstance(expr, Neg):
            return -self.value(expr.operand)
        if isinstance(expr, BinOp):
            left = self.value(expr.left)
            right = self.value(expr.right)
            left = self.lift(left)
            if expr.op == "+":
                return left + right
            if expr.op == "-":
                return left - right
            if expr.op == "*":
                return left * right
            if expr.op == "/":
                inverse = self.inverse(right)
                return self.lift(left) * inverse
            raise TranslationError(f"unsupported operator {expr.op!r}")
        if isinstance(expr, Pow):
            return self.power(expr.base, expr.exponent)
        if isinstance(expr, Call):
            return self.call(expr)
        if isinstance(expr, Opaque):
            args = [self.value(a) for a in expr.args]
            key = ("opaque", expr.name, tuple(poly_key(self.lift(a)) for a in args))
            shown = (f"{expr.name}({', '.join(self.printed(self.lift(a)) for a in args)})" if expr.args
                     else expr.name)
            return self.atom(key, "f", shown, "opaque")
        raise TranslationError(f"unsupported expression node {type(expr).__name__}")

    def atom(self, key: tuple, stem: str, meaning: str, kind: AuxKind) -> PolyElement:
        name = self._atoms.get(key)
        if name is None:
            name = self._new_symbol(stem, meaning, kind)
            self._atoms[key] = name
        return self.gen(name)

    def power(self, base_expr: Expr, exponent: Fraction) -> PolyElement:
        if exponent.denominator not in (1, 2):
            raise TranslationError(f"power {exponent} is neither an integer nor a half-integer")
        if abs(exponent.numerator) > MAX_POWER:
            raise TranslationError(f"exponent {exponent} is larger than {MAX_POWER}")
        base = self.value(base_expr)
        if exponent.denominator == 2:
            base = self.sqrt(base)
        k = exponent.numerator
        if k >= 0:
            return self.lift(base) ** k
        if not base:
            raise TranslationError("division by zero: a negative power of 0")
        return self.inverse(base) ** (-k)

    # -- non-polynomial constructs

    def inverse(self, u: PolyElement, shown: str | None = None) -> PolyElement:
        """1/u, with one inverse variable per irreducible factor of u (so equal denominators share).

        ``shown`` names u in the report when it is a single factor (``cos(t)`` rather than its expansion).
        """
        u = self.lift(u)
        if not u:
            raise TranslationError("division by zero: a denominator is identically 0")
        if u.is_ground:
            c = u.LC
            return self.const(Fraction(int(c.denominator), int(c.numerator)))
        coeff, factors = u.factor_list()
        if len(factors) != 1 or factors[0][1] != 1:
            shown = None
        result = self.const(Fraction(int(coeff.denominator), int(coeff.numerator)))
        for factor, multiplicity in factors:
            factor = self.lift(factor)
            if factor.LC < 0:  # canonical sign, so that 1/(y - x) shares 1/(x - y)
                factor = -factor
                if multiplicity % 2:
                    result = -result
            inverse_factor = self._factor_inverse(factor, shown) ** multiplicity
            result = self.lift(result) * self.lift(inverse_factor)
        return self.lift(result)

    def _factor_inverse(self, factor: PolyElement, shown: str | None = None) -> PolyElement:
        # the inverse of an inverse variable is what it inverts; an exp variable has its own inverse
        if len(factor.terms()) == 1 and factor.LC == 1:
            monom = factor.LM
            if sum(monom) == 1:
                name = str(self.ring.symbols[monom.index(1)])
                if name in self._inverse_of:
                    return self.lift(self._inverse_of[name])
                partner = self._exp_partner(name)
                if partner is not None:
                    return self.gen(partner)
        key = ("inverse", poly_key(factor))
        if key in self._atoms:
            return self.gen(self._atoms[key])
        if shown is None or factor.LC != 1:
            shown = self.printed(factor)
        name = self._new_symbol("d", f"1/{_atom(shown)}", "inverse")
        self._atoms[key] = name
        self._inverse_of[name] = factor
        d = self.gen(name)
        self.add_generator(d * self.lift(factor) - 1, "inverse", f"{shown} != 0", name)
        self.assumed.append(f"{shown} != 0")
        return d

    def sqrt(self, u: PolyElement) -> PolyElement:
        u = self.lift(u)
        if u.is_ground:
            value = Fraction(int(u.LC.numerator), int(u.LC.denominator)) if u else Fraction(0)
            if value < 0:
                raise TranslationError(f"square root of the negative constant {value}")
            root = _rational_sqrt(value)
            if root is not None:
                return self.const(root)
            split = _split_constant_radicand(value)
            if split is not None:
                # sqrt(12) = 2*sqrt(3), sqrt(6) = sqrt(2)*sqrt(3): one radical per prime (all >= 0)
                outside, primes = split
                result = self.const(outside)
                for prime in primes:
                    key = ("sqrt", poly_key(self.const(prime)))
                    radical = self.gen(self._atoms[key]) if key in self._atoms else self._new_radical(
                        self.const(prime), key)
                    result = self.lift(result) * self.lift(radical)
                return self.lift(result)
        else:
            content, primitive = u.primitive()
            content_value = Fraction(int(content.numerator), int(content.denominator))
            root = _rational_sqrt(content_value) if content_value > 0 else None
            if root is not None and content_value != 1:
                radical = self.sqrt(self.lift(primitive))
                return self.const(root) * radical
        key = ("sqrt", poly_key(u))
        if key in self._atoms:
            return self.gen(self._atoms[key])
        return self._new_radical(u, key)

    def _new_radical(self, u: PolyElement, key: tuple) -> PolyElement:
        shown = self.printed(u)
        name = self._new_symbol("r", f"sqrt({shown})", "radical")
        self._atoms[key] = name
        r = self.gen(name)
        self.add_generator(r**2 - self.lift(u), "radical", f"sqrt({shown})**2 == {shown}", name)
        if not u.is_ground:
            self.assumed.append(f"{shown} >= 0 (square root)")
            self.domain_signs.append((u, False))
        return r

    def call(self, expr: Call) -> PolyElement:
        f, args = expr.function, expr.args
        if f == "sqrt":
            return self.sqrt(self.value(args[0]))
        if f == "hypot":
            a, b = self.value(args[0]), self.value(args[1])
            a = self.lift(a)
            return self.sqrt(a**2 + b**2)
        if f == "fma":
            a, b, c = (self.value(x) for x in args)
            return self.lift(a) * self.lift(b) + self.lift(c)
        if f in ("sin", "cos", "tan"):
            argument = self.value(args[0])
            cos_value, sin_value = self.angle(argument)
            if f == "sin":
                return sin_value
            if f == "cos":
                return cos_value
            inverse_cos = self.inverse(cos_value, f"cos({self.printed(self.lift(argument))})")
            return self.lift(sin_value) * inverse_cos
        if f == "exp":
            return self.exponential(self.value(args[0]))
        if f == "log":
            u = self.lift(self.value(args[0]))
            if u.is_ground and u == 1:
                return self.const(0)
            split = self._positive_factors(u)
            if split is not None:
                # log(c*x**2*y) = log(c) + 2*log(x) + log(y) when x, y > 0 are hypotheses of the claim
                constant, factors = split
                result = self._log_atom(self.const(constant)) if constant != 1 else self.const(0)
                for factor, multiplicity in factors:
                    logarithm = self._log_atom(factor)  # may extend the ring: compute before lifting
                    result = self.lift(result) + multiplicity * self.lift(logarithm)
                return self.lift(result)
            return self._log_atom(u)
        raise TranslationError(f"unsupported function {f}")

    def _log_atom(self, u: PolyElement) -> PolyElement:
        u = self.lift(u)
        shown = self.printed(u)
        key = ("log", poly_key(u))
        if key not in self._atoms:
            self.assumed.append(f"{shown} > 0 (logarithm)")
            if not u.is_ground:
                self.domain_signs.append((u, True))
        return self.atom(key, "l", f"log({shown})", "log")

    def _positive_factors(self, u: PolyElement) -> tuple[Fraction, list[tuple[PolyElement, int]]] | None:
        """u == c * prod(v**k) with c > 0 and every v a variable with a hypothesis v > 0 (or v >= c > 0)."""
        if u.is_ground or len(u.terms()) != 1:
            return None
        monom, coeff = u.terms()[0]
        constant = Fraction(int(coeff.numerator), int(coeff.denominator))
        if constant <= 0:
            return None
        symbols = [str(x) for x in self.ring.symbols]
        factors = []
        for index, exponent in enumerate(monom):
            if exponent:
                if symbols[index] not in self.positive_variables:
                    return None
                factors.append((self.ring.gens[index], exponent))
        return constant, factors

    # -- angles and exponentials: split an argument into base directions with integer multiples

    def _directions(self, arg: PolyElement) -> list[tuple[tuple, PolyElement, Fraction]]:
        """Split arg into sum(coefficient * direction): one per linear original variable, one for the
        primitive non-linear rest, one for the constant."""
        arg = self.lift(arg)
        symbols = [str(s) for s in self.ring.symbols]
        linear: dict[int, Fraction] = {}
        constant = Fraction(0)
        rest = self.ring.zero
        for monom, coeff in arg.terms():
            value = Fraction(int(coeff.numerator), int(coeff.denominator))
            degree = sum(monom)
            if degree == 0:
                constant = value
            elif degree == 1 and not symbols[monom.index(1)].startswith(_AUX_PREFIX):
                linear[monom.index(1)] = value
            else:
                rest += self.ring({monom: coeff})
        parts: list[tuple[tuple, PolyElement, Fraction]] = []
        for index in sorted(linear):
            parts.append((("var", symbols[index]), self.ring.gens[index], linear[index]))
        if rest:
            content, primitive = rest.primitive()
            if primitive.LC < 0:
                primitive, content = -primitive, -content
            parts.append((("poly", poly_key(primitive)), primitive,
                          Fraction(int(content.numerator), int(content.denominator))))
        if constant:
            parts.append((("const",), self.ring.one, constant))
        return parts

    def angle(self, arg: PolyElement) -> tuple[PolyElement, PolyElement]:
        """(cos(arg), sin(arg)) as polynomials in (s, c) pairs of base angles."""
        cos_value, sin_value = self.const(1), self.const(0)
        for key, direction, coeff in self._directions(arg):
            scale = self._angle_scale.get(key, coeff.denominator)
            if scale % coeff.denominator:
                raise TranslationError(
                    f"angle {self.printed(direction)} appears with incompatible fractions; "
                    "pre-scan should have fixed its scale"
                )
            multiple = coeff.numerator * (scale // coeff.denominator)
            c, s = self._angle_pair(key, direction, scale)
            ck, sk = _multiple_angle(self.lift(c), self.lift(s), abs(multiple), self.const(1))
            if multiple < 0:
                sk = -sk
            cos_value, sin_value = (
                self.lift(cos_value) * ck - self.lift(sin_value) * sk,
                self.lift(sin_value) * ck + self.lift(cos_value) * sk,
            )
        return self.lift(cos_value), self.lift(sin_value)

    def _angle_pair(self, key: tuple, direction: PolyElement, scale: int) -> tuple[PolyElement, PolyElement]:
        base_text = _scaled(self.printed(direction), scale)
        c = self.atom(("cos", key, scale), "c", f"cos({base_text})", "cos")
        s = self.atom(("sin", key, scale), "s", f"sin({base_text})", "sin")
        pair_key = ("pair", key, scale)
        if pair_key not in self._atoms:
            self._atoms[pair_key] = ""
            c, s = self.lift(c), self.lift(s)
            self.add_generator(s**2 + c**2 - 1, "trig", f"sin({base_text})**2 + cos({base_text})**2 == 1")
            pi_name = self._atoms.get(("opaque", "pi", ()))
            if pi_name and key == ("poly", poly_key(self.gen(pi_name))) and scale in _PI_FRACTIONS:
                # exact values at pi/scale (common practice): sin(pi) = 0, cos(pi/3) = 1/2, ...
                for relation, text in _PI_FRACTIONS[scale]:
                    self.add_generator(relation(self.lift(c), self.lift(s)), "trig",
                                       text.replace("X", base_text))
        return self.lift(c), self.lift(s)

    def exponential(self, arg: PolyElement) -> PolyElement:
        result = self.const(1)
        for key, direction, coeff in self._directions(arg):
            scale = self._exp_scale.get(key, coeff.denominator)
            if scale % coeff.denominator:
                raise TranslationError(f"exponent {self.printed(direction)} appears with incompatible fractions")
            multiple = coeff.numerator * (scale // coeff.denominator)
            base_text = _scaled(self.printed(direction), scale)
            e = self.atom(("exp", key, scale), "e", f"exp({base_text})", "exp")
            ei = self.atom(("exp_inv", key, scale), "ei", f"exp(-{_atom(base_text)})", "exp_inverse")
            pair_key = ("exp_pair", key, scale)
            if pair_key not in self._atoms:
                self._atoms[pair_key] = ""
                e, ei = self.lift(e), self.lift(ei)
                self.add_generator(e * ei - 1, "exp", f"exp({base_text})*exp(-{_atom(base_text)}) == 1")
            factor = self.lift(e) ** multiple if multiple >= 0 else self.lift(ei) ** (-multiple)
            result = self.lift(result) * factor
        return self.lift(result)

    def _exp_partner(self, name: str) -> str | None:
        for key, value in self._atoms.items():
            if value == name and key[0] in ("exp", "exp_inv"):
                other = ("exp_inv" if key[0] == "exp" else "exp",) + key[1:]
                return self._atoms.get(other)
        return None

    # -- pre-scan: the common scale of every angle / exponential direction

    def prescan(self, exprs: Sequence[Expr]) -> None:
        for expr in exprs:
            for call in _calls(expr):
                if call.function not in ("sin", "cos", "tan", "exp"):
                    continue
                table = self._exp_scale if call.function == "exp" else self._angle_scale
                for key, _direction, coeff in self._directions(self.value(call.args[0])):
                    table[key] = _lcm(table.get(key, 1), coeff.denominator)
        # the pre-scan created no auxiliary variables for angles (only for the arguments' own
        # divisions and radicals); translation proper starts from a clean memo so that calls are redone
        self._memo = {k: v for k, v in self._memo.items() if not _has_trig_or_exp(k)}


# Exact values of cos and sin at pi/scale, as polynomial relations in (c, s).
_PI_FRACTIONS = {
    1: ((lambda c, s: c + 1, "cos(X) == -1"), (lambda c, s: s, "sin(X) == 0")),
    2: ((lambda c, s: c, "cos(X) == 0"), (lambda c, s: s - 1, "sin(X) == 1")),
    3: ((lambda c, s: 2 * c - 1, "cos(X) == 1/2"), (lambda c, s: 4 * s**2 - 3, "sin(X)**2 == 3/4")),
    4: ((lambda c, s: 2 * c**2 - 1, "cos(X)**2 == 1/2"), (lambda c, s: s - c, "sin(X) == cos(X)")),
    6: ((lambda c, s: 4 * c**2 - 3, "cos(X)**2 == 3/4"), (lambda c, s: 2 * s - 1, "sin(X) == 1/2")),
}


def _has_trig_or_exp(expr: Expr) -> bool:
    return any(c.function in ("sin", "cos", "tan", "exp") for c in _calls(expr))


def _calls(expr: Expr):
    if isinstance(expr, Call):
        yield expr
        for a in expr.args:
            yield from _calls(a)
    elif isinstance(expr, Opaque):
        for a in expr.args:
            yield from _calls(a)
    elif isinstance(expr, BinOp):
        yield from _calls(expr.left)
        yield from _calls(expr.right)
    elif isinstance(expr, Neg):
        yield from _calls(expr.operand)
    elif isinstance(expr, Pow):
        yield from _calls(expr.base)


def _lcm(a: int, b: int) -> int:
    return a * b // math.gcd(a, b)


def _scaled(text: str, scale: int) -> str:
    return text if scale == 1 else f"{_atom(text)}/{scale}"


_FACTOR_LIMIT = 10**12  # constant radicands beyond this are not factored


def _split_constant_radicand(value: Fraction) -> tuple[Fraction, list[int]] | None:
    """sqrt(value) == outside * prod(sqrt(p) for p in primes), value > 0 rational, primes distinct."""
    numerator = value.numerator * value.denominator  # sqrt(n/d) = sqrt(n*d)/d
    if value <= 0 or numerator > _FACTOR_LIMIT:
        return None
    outside = Fraction(1, value.denominator)
    primes = []
    for prime, exponent in sorted(factorint(numerator).items()):
        outside *= prime ** (exponent // 2)
        if exponent % 2:
            primes.append(int(prime))
    if len(primes) <= 1 and outside == 1:
        return None  # already a single prime radical: nothing to split
    return outside, primes


def _multiple_angle(c: PolyElement, s: PolyElement, k: int, one: PolyElement) -> tuple[PolyElement, PolyElement]:
    """(cos(k*u), sin(k*u)) from c = cos(u), s = sin(u): the real and imaginary parts of (c + i*s)**k."""
    re, im = one, one * 0
    base_re, base_im = c, s
    while k:
        if k & 1:
            re, im = re * base_re - im * base_im, re * base_im + im * base_re
        k >>= 1
        if k:
            base_re, base_im = base_re**2 - base_im**2, 2 * base_re * base_im
    return re, im


def expr_variables(expr: Expr) -> set[str]:
    if isinstance(expr, Var):
        return {expr.name}
    if isinstance(expr, BinOp):
        return expr_variables(expr.left) | expr_variables(expr.right)
    if isinstance(expr, Neg):
        return expr_variables(expr.operand)
    if isinstance(expr, Pow):
        return expr_variables(expr.base)
    if isinstance(expr, (Call, Opaque)):
        out: set[str] = set()
        for a in expr.args:
            out |= expr_variables(a)
        return out
    return set()


_SIGN_RELATIONS = ("<", "<=", ">", ">=")


def _substitute_constants(obligation: Obligation) -> Obligation:
    """Replace v by c wherever a condition says ``v == c`` (c a constant), except in those conditions
    themselves.  Sound because the two agree at every point where the conditions hold, and it lets
    ``exp(x) == 1 given x == 0`` see the value inside exp, sin and cos."""
    from dataclasses import replace

    from verifier.model.rewrite import substitute

    constants: dict[str, Expr] = {}
    defining: set[int] = set()
    for index, cond in enumerate(obligation.conditions):
        if cond.relation != "==":
            continue
        pair = (cond.left, cond.right) if isinstance(cond.left, Var) else (cond.right, cond.left)
        if isinstance(pair[0], Var) and isinstance(pair[1], Num) and pair[0].name not in constants:
            constants[pair[0].name] = pair[1]
            defining.add(index)
    if not constants:
        return obligation
    conditions = tuple(
        cond if index in defining else replace(cond, left=substitute(cond.left, constants),
                                               right=substitute(cond.right, constants))
        for index, cond in enumerate(obligation.conditions)
    )
    return replace(obligation, left=substitute(obligation.left, constants),
                   right=substitute(obligation.right, constants), conditions=conditions)


def _positive_variables(conditions: Sequence[Condition]) -> set[str]:
    """Variables v with a hypothesis v > c (c >= 0) or v >= c (c > 0), in either orientation."""
    mirror = {"<": ">", "<=": ">=", ">": "<", ">=": "<="}
    out = set()
    for cond in conditions:
        left, right, relation = cond.left, cond.right, cond.relation
        if isinstance(right, Var) and isinstance(left, Num) and relation in mirror:
            left, right, relation = right, left, mirror[relation]
        if isinstance(left, Var) and isinstance(right, Num):
            if (relation == ">" and right.value >= 0) or (relation == ">=" and right.value > 0):
                out.add(left.name)
    return out


def translate(obligation: Obligation) -> Translation:
    """Translate one obligation; raises TranslationError for what cannot be represented."""
    substituted = _substitute_constants(obligation)
    if substituted is not obligation:
        try:
            return _translate(substituted)
        except TranslationError:
            # e.g. a/s on the path where s == 0: without the substitution, the inverse of s and s == 0
            # make the conditions contradictory, which the decision procedure proves vacuously
            pass
    return _translate(obligation)


def _translate(obligation: Obligation) -> Translation:
    exprs: list[Expr] = [obligation.left, obligation.right]
    for cond in obligation.conditions:
        exprs += [cond.left, cond.right]
    names: set[str] = set()
    for e in exprs:
        names |= expr_variables(e)
    t = _Translator(sorted(names))
    t.positive_variables = _positive_variables(obligation.conditions)
    t.prescan(exprs)
    sign_conditions: list[Condition] = []
    signs: list[tuple[PolyElement, bool]] = []
    for cond in obligation.conditions:
        left, right = t.value(cond.left), t.value(cond.right)
        diff = t.lift(left) - t.lift(right)
        if cond.relation == "==":
            if diff:
                t.add_generator(diff, "equation", cond.text)
        elif cond.relation == "!=":
            if not diff:
                # "a != a" can never hold: every point violates the conditions; 1 joins the ideal
                t.add_generator(t.const(1), "nonzero", cond.text)
            else:
                t.inverse(diff)
        elif cond.relation in _SIGN_RELATIONS:
            sign_conditions.append(cond)
            signs.append((diff if cond.relation in (">", ">=") else -diff, cond.relation in ("<", ">")))
            if cond.relation in ("<", ">"):
                # a strict inequality implies the difference is not zero (sound, and often what is needed)
                if not diff:
                    t.add_generator(t.const(1), "nonzero", cond.text)
                else:
                    t.inverse(diff)
        else:
            raise TranslationError(f"unknown relation {cond.relation!r}")
    left = t.value(obligation.left)
    right = t.value(obligation.right)
    # the final ring: auxiliary variables first (larger in the order), then the original variables
    aux_names = [a.name for a in t.aux]
    if not t.variables and not aux_names:
        symbols = [Symbol("$one")]
    else:
        symbols = [Symbol(n) for n in aux_names + t.variables]
    ring = PolyRing(symbols, QQ, grevlex)
    conv = lambda p: p.set_ring(ring)  # noqa: E731
    # assumptions, without duplicates, in the order they arose
    assumed = list(dict.fromkeys(t.assumed))
    for cond in obligation.conditions:
        assumed.append(f"{cond.text}" + ("" if cond.origin == "given" else f" [{cond.origin}]"))
    generators = tuple(Generator(conv(p), kind, meaning, variable) for p, kind, meaning, variable in t.generators)
    l, r = conv(left), conv(right)
    return Translation(
        ring=ring,
        left=l,
        right=r,
        difference=l - r,
        generators=generators,
        variables=tuple(t.variables),
        aux=tuple(t.aux),
        assumed=tuple(dict.fromkeys(assumed)),
        sign_conditions=tuple(sign_conditions),
        signs=tuple((conv(t.lift(p)), strict) for p, strict in signs + t.domain_signs),
    )
