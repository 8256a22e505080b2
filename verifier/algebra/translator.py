"""The translation rules: expression trees -> polynomials over QQ, with auxiliary variables and generators.

Every construct that is not a polynomial gets a fresh variable and the equations that tie it down:
- a division by u: an inverse variable d per irreducible factor of u, with ``d*u - 1`` (u assumed non-zero);
- ``sqrt(u)``: a radical variable r with ``r**2 - u`` (u assumed >= 0; equal radicands share one r);
  ``hypot(a, b)`` is ``sqrt(a**2 + b**2)`` and ``fma(a, b, c)`` is ``a*b + c``;
- ``sin``/``cos`` of integer-linear combinations of angles: one (s, c) pair per base angle with
  ``s**2 + c**2 - 1``; the multiple-angle and addition formulas are expanded exactly; ``tan`` is sin/cos;
- ``exp`` of linear combinations: one e and its inverse per base quantity with ``e*ei - 1``; ``expm1``,
  ``sinh``, ``cosh`` and ``tanh`` are written with them;
- ``log`` and opaque calls: one variable per distinct argument (nothing else is known about it), except
  where the logarithm laws hold on their domain (``logarithms.py``): log(4) = 2*log(2), log(exp(a)) = a,
  log(x/y) = log(x) - log(y) given x > 0, y > 0, exp(log(x)) = x given x > 0; ``log1p(u)`` is
  ``log(1 + u)``; the functions of the table's ``opaque`` family (atan, floor, min, ...) likewise get one
  variable per distinct argument (their exact value when the arguments are constants);
- ``radians(u)`` is ``u*pi/180``, ``degrees(u)`` is ``u*180/pi`` and ``abs(u)`` is ``sqrt(u**2)``;
- ``pi``: an opaque constant whose sine and cosine at pi/n (n = 1, 2, 3, 4, 6, 12) are known exactly, as
  rational combinations of the radical variables sqrt(2), sqrt(3) (so their signs are known too);
- a square root of a rational constant: one radical per prime of its square-free part.
Radicands (>= 0) and log arguments (> 0) join the sign hypotheses.  Each auxiliary variable is shown in
the original variables when a polynomial is printed.  The driver is verifier/algebra/translate.py.
"""
from __future__ import annotations

import math
from fractions import Fraction
from typing import Literal, Sequence

from sympy import QQ, Symbol
from sympy.polys.orderings import grevlex
from sympy.polys.rings import PolyElement, PolyRing

from verifier.algebra import logarithms
from verifier.algebra.angles import (MAX_ANGLE_MULTIPLE, MIN_ANGLE_STEP, RootSum, pi_values, has_scaled_call,
                                     multiple_angle, scaled, scaled_calls)
from verifier.algebra.polytext import format_poly, parenthesized, poly_key
from verifier.algebra.radicands import split_constant_radicand
from verifier.model.explanation import AuxKind, AuxVariable
from verifier.model.expr import REAL_POWER, BinOp, Call, Expr, Neg, Num, Opaque, Pow, Var, fold
from verifier.model.functions import FUNCTIONS, DomainError, NotRational, rational_power, rational_sqrt

GeneratorKind = Literal["equation", "nonzero", "inverse", "radical", "trig", "exp"]

# Auxiliary names start with "$": no claim-language name (identifier, dotted name, subscript) can.
AUX_PREFIX = "$"
MAX_POWER = 4096  # exponents beyond this are refused rather than expanded


class TranslationError(Exception):
    """The obligation uses something the polynomial translation cannot represent (reason is specific)."""


class Translator:
    """The state of one translation: the ring (grown by each auxiliary variable), the generators, the
    assumptions, and the canonical keys that let equal constructs share one auxiliary variable."""

    def __init__(self, variables: Sequence[str]):
        self.variables = list(variables)
        self.ring = PolyRing([Symbol(n) for n in self.variables] or [Symbol("$one")], QQ, grevlex)
        self.aux: list[AuxVariable] = []
        self.generators: list[tuple[PolyElement, GeneratorKind, str, str]] = []
        self.assumed: list[str] = []
        self._atoms: dict[tuple, str] = {}  # canonical key -> aux variable name
        self.inverse_of: dict[str, PolyElement] = {}  # inverse variable -> the factor it inverts
        self._memo: dict[Expr, PolyElement] = {}
        self._gen_ring: PolyRing | None = None; self._gen_index: dict[str, int] = {}  # noqa: E702
        self._counter = 0
        self._angle_scale: dict[tuple, int] = {}  # direction key -> lcm of coefficient denominators
        self._angle_step: dict[tuple, int] = {}  # direction key -> gcd of the scaled coefficients
        self.domain_signs: list[tuple[PolyElement, bool]] = []  # radicands >= 0, log arguments > 0
        self.positive_variables: set[str] = set()  # variables with a hypothesis v > 0 (or v >= c > 0)
        self._exp_scale: dict[tuple, int] = {}
        self.exp_exponent: dict[str, PolyElement] = {}  # exp variable -> its exponent (log(e) for e > 0)
        self.radicand_of: dict[str, PolyElement] = {}  # radical variable -> its radicand
        self.log_argument: dict[str, PolyElement] = {}  # log variable -> its argument

    # -- ring management

    def lift(self, p: PolyElement) -> PolyElement:
        return p if p.ring is self.ring else p.set_ring(self.ring)

    def const(self, value: Fraction | int) -> PolyElement:
        value = Fraction(value)
        return self.ring.ground_new(QQ(value.numerator, value.denominator))

    def _new_symbol(self, stem: str, meaning: str, kind: AuxKind) -> str:
        self._counter += 1
        name = f"{AUX_PREFIX}{stem}{self._counter}"
        self.aux.append(AuxVariable(name, meaning, kind))
        self.ring = PolyRing(list(self.ring.symbols) + [Symbol(name)], QQ, grevlex)
        return name

    def gen(self, name: str) -> PolyElement:
        if self._gen_ring is not self.ring:  # a table per ring: a scan per variable is quadratic
            self._gen_index, self._gen_ring = {str(s): i for i, s in enumerate(self.ring.symbols)}, self.ring
        return self.ring.gens[self._gen_index[name]]

    def printed(self, p: PolyElement) -> str:
        return format_poly(p, {a.name: a.meaning for a in self.aux})

    def add_generator(self, poly: PolyElement, kind: GeneratorKind, meaning: str, variable: str = "") -> None:
        self.generators.append((poly, kind, meaning, variable))

    # -- expressions

    def value(self, expr: Expr) -> PolyElement:
        """``expr`` as a polynomial in the current ring; equal sub-expressions are translated once."""
        return self.lift(fold(expr, _Polynomials(self), self._memo))

    def atom_name(self, key: tuple) -> str | None:
        return self._atoms.get(key)

    def atom(self, key: tuple, stem: str, meaning: str, kind: AuxKind) -> PolyElement:
        name = self._atoms.get(key)
        if name is None:
            name = self._new_symbol(stem, meaning, kind)
            self._atoms[key] = name
        return self.gen(name)

    def power(self, base: PolyElement, exponent: Fraction) -> PolyElement:
        if exponent.denominator not in (1, 2):
            raise TranslationError(f"power {exponent} is neither an integer nor a half-integer")
        if abs(exponent.numerator) > MAX_POWER:
            raise TranslationError(f"exponent {exponent} is larger than {MAX_POWER}")
        if exponent.denominator == 2:
            base = self.sqrt(base)
        k = exponent.numerator
        if k == 0:  # x**0 is 1 for every x, 0**0 included (Python's and the polynomial ring's convention)
            return self.ring.one
        if k > 0:
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
                if name in self.inverse_of:
                    return self.lift(self.inverse_of[name])
                partner = self._exp_partner(name)
                if partner is not None:
                    return self.gen(partner)
        key = ("inverse", poly_key(factor))
        if key in self._atoms:
            return self.gen(self._atoms[key])
        if shown is None or factor.LC != 1:
            shown = self.printed(factor)
        name = self._new_symbol("d", f"1/{parenthesized(shown)}", "inverse")
        self._atoms[key] = name
        self.inverse_of[name] = factor
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
            root = rational_sqrt(value)
            if root is not None:
                return self.const(root)
            split = split_constant_radicand(value)
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
            if content_value < 0:  # the content takes the sign of the leading term: keep it positive
                content_value, primitive = -content_value, -primitive
            root = rational_sqrt(content_value) if content_value > 0 else None
            if content_value != 1:
                # sqrt(c*p) = sqrt(c)*sqrt(p), c > 0 (p >= 0 on the domain): 10 - 2*sqrt(5) shares sqrt(5 - sqrt(5))
                factor = self.const(root) if root is not None else self.sqrt(self.const(content_value))
                radical = self.sqrt(self.lift(primitive))  # may extend the ring: lift both after it
                return self.lift(factor) * self.lift(radical)
        key = ("sqrt", poly_key(u))
        if key in self._atoms:
            return self.gen(self._atoms[key])
        return self._new_radical(u, key)

    def _new_radical(self, u: PolyElement, key: tuple) -> PolyElement:
        shown = self.printed(u)
        name = self._new_symbol("r", f"sqrt({shown})", "radical")
        self._atoms[key] = name
        self.radicand_of[name] = u
        r = self.gen(name)
        self.add_generator(r**2 - self.lift(u), "radical", f"sqrt({shown})**2 == {shown}", name)
        if not u.is_ground:
            self.assumed.append(f"{shown} >= 0 (square root)")
            self.domain_signs.append((u, False))
        return r

    def call(self, function: str, args: Sequence[PolyElement]) -> PolyElement:
        """A function of the table applied to translated arguments (translation rules: module docstring)."""
        args = [self.lift(a) for a in args]
        if function == "sqrt":
            return self.sqrt(args[0])
        if function == "hypot":
            return self.sqrt(args[0] ** 2 + args[1] ** 2)
        if function == "fma":
            return args[0] * args[1] + args[2]
        if function == "abs":  # |u| is the principal square root of u**2
            return self.sqrt(args[0] ** 2)
        if function in ("sin", "cos", "tan"):
            argument = args[0]
            cos_value, sin_value = self.angle(argument)
            if function == "sin":
                return sin_value
            if function == "cos":
                return cos_value
            inverse_cos = self.inverse(cos_value, f"cos({self.printed(self.lift(argument))})")
            return self.lift(sin_value) * inverse_cos
        if function in ("exp", "expm1", "sinh", "cosh", "tanh"):
            return self.hyperbolic(function, args[0])
        if function == "log":
            return self.logarithm(args[0])
        if function == "log1p":
            return self.logarithm(self.ring.one + args[0])
        if function in ("radians", "degrees"):
            pi = self.opaque("pi", ())  # the same variable as the constant pi
            if function == "radians":
                return self.lift(args[0]) * pi * self.const(Fraction(1, 180))
            inverse_pi = self.inverse(pi, "pi")
            return self.lift(args[0]) * self.const(180) * inverse_pi
        entry = FUNCTIONS.get(function)
        if entry is not None and entry.family == "opaque":
            return self.opaque_call(function, args)
        raise TranslationError(f"unsupported function {function}")

    def hyperbolic(self, function: str, u: PolyElement) -> PolyElement:
        """exp, expm1 = e - 1, sinh = (e - 1/e)/2, cosh = (e + 1/e)/2, tanh = sinh/cosh (e = exp(u))."""
        e = self.exponential(u)
        if function in ("exp", "expm1"):
            return e if function == "exp" else self.lift(e) - 1
        inverse_e = self.lift(self.exponential(-self.lift(u)))  # exp(-u): the exponential's own inverse
        e = self.lift(e)
        if function in ("sinh", "cosh"):
            return (e - inverse_e if function == "sinh" else e + inverse_e) * self.const(Fraction(1, 2))
        inverse_cosh = self.inverse(e + inverse_e, f"2*cosh({self.printed(self.lift(u))})")
        return self.lift(e - inverse_e) * inverse_cosh

    def logarithm(self, u: PolyElement) -> PolyElement:
        return logarithms.logarithm(self, u)

    def opaque(self, name: str, args: Sequence[PolyElement]) -> PolyElement:
        """One variable per opaque name and distinct translated arguments (pi is ``pi``)."""
        args = [self.lift(a) for a in args]
        if name == REAL_POWER and all(a.is_ground for a in args):  # 8**(1/3) is 2, 4**(-1/2) is 1/2
            value = rational_power(*(Fraction(str(a.LC)) if a else Fraction(0) for a in args))
            if value is not None:
                return self.const(value)
        key = ("opaque", name, tuple(poly_key(a) for a in args))
        spelled = "pow" if name == REAL_POWER else name
        shown = f"{spelled}({', '.join(self.printed(a) for a in args)})" if args else name
        return self.atom(key, "f", shown, "opaque")

    def opaque_call(self, function: str, args: Sequence[PolyElement]) -> PolyElement:
        """A table function opaque to the algebra (atan, floor, ...): one variable per distinct arguments,
        or its exact value when they are constants and it is rational (floor(0) = 0, atan(0) = 0)."""
        args = [self.lift(a) for a in args]
        if all(a.is_ground for a in args):
            values = [Fraction(int(a.LC.numerator), int(a.LC.denominator)) if a else Fraction(0) for a in args]
            try:
                return self.const(FUNCTIONS[function].exact(values))
            except (NotRational, DomainError):
                pass
        key = ("function", function, tuple(poly_key(a) for a in args))
        shown = f"{function}({', '.join(self.printed(a) for a in args)})"
        return self.atom(key, "f", shown, "opaque")

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
            elif degree == 1 and not symbols[monom.index(1)].startswith(AUX_PREFIX):
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
            step = self._angle_step.get(key, 1)
            if step < MIN_ANGLE_STEP or multiple % step or self._is_pi(key):
                step = 1  # multiples of pi keep pi/scale as their base: its exact values are known
            multiple //= step
            if abs(multiple) > MAX_ANGLE_MULTIPLE and not self._is_pi(key):
                step, multiple = step * abs(multiple), (1 if multiple > 0 else -1)
            c, s = self._angle_pair(key, direction, scale, step)
            ck, sk = multiple_angle(self.lift(c), self.lift(s), abs(multiple), self.const(1))
            if multiple < 0:
                sk = -sk
            cos_value, sin_value = (
                self.lift(cos_value) * ck - self.lift(sin_value) * sk,
                self.lift(sin_value) * ck + self.lift(cos_value) * sk,
            )
        return self.lift(cos_value), self.lift(sin_value)

    def _is_pi(self, key: tuple) -> bool:
        pi_name = self._atoms.get(("opaque", "pi", ()))
        return pi_name is not None and key == ("poly", poly_key(self.gen(pi_name)))

    def _angle_pair(self, key: tuple, direction: PolyElement, scale: int,
                    step: int = 1) -> tuple[PolyElement, PolyElement]:
        base_text = scaled(self.printed(direction), scale, step)
        c = self.atom(("cos", key, scale, step), "c", f"cos({base_text})", "cos")
        s = self.atom(("sin", key, scale, step), "s", f"sin({base_text})", "sin")
        pair_key = ("pair", key, scale, step)
        if pair_key not in self._atoms:
            self._atoms[pair_key] = ""
            c, s = self.lift(c), self.lift(s)
            self.add_generator(s**2 + c**2 - 1, "trig", f"sin({base_text})**2 + cos({base_text})**2 == 1")
            if step == 1 and self._is_pi(key):
                # exact values at pi/scale: sin(pi) = 0, cos(pi/3) = 1/2, sin(pi/4) = sqrt(2)/2 (with the
                # principal root, so that the sign is known), sin(pi/8) = sqrt((2 - sqrt(2))/4) ...
                for function, shape, value, text in pi_values(scale):
                    exact = self._root_sum(value)
                    exact = self.sqrt(exact) if shape == "root" else exact  # may extend the ring: then lift
                    atom = {"cos": self.lift(c), "sin": self.lift(s)}.get(function, 2 * self.lift(c) * self.lift(s))
                    self.add_generator(atom - self.lift(exact), "trig", f"{function}({base_text}) == {text}")
        return self.lift(c), self.lift(s)

    def _root_sum(self, value: RootSum) -> PolyElement:
        """value as a polynomial; its sqrt(p) are the radical variables that the claim's own sqrt(p) shares."""
        total = self.const(0)
        for coefficient, primes in value:
            term = self.const(coefficient)
            for prime in primes:
                radical = self.sqrt(self.const(prime))  # may extend the ring: compute before lifting
                term = self.lift(term) * self.lift(radical)
            total = self.lift(total) + self.lift(term)
        return self.lift(total)

    def exponential(self, arg: PolyElement) -> PolyElement:
        arg, logs = logarithms.without_logs(self, arg)
        result = self.const(1)
        for argument, exponent in logs:
            # exp(k*log(w)) = w**k for w > 0 (k an integer or a half-integer)
            factor = self.power(self.lift(argument), exponent)  # may extend the ring: before lifting
            result = self.lift(result) * self.lift(factor)
        for key, direction, coeff in self._directions(arg):
            scale = self._exp_scale.get(key, coeff.denominator)
            if scale % coeff.denominator:
                raise TranslationError(f"exponent {self.printed(direction)} appears with incompatible fractions")
            multiple = coeff.numerator * (scale // coeff.denominator)
            base_text = scaled(self.printed(direction), scale)
            e = self.atom(("exp", key, scale), "e", f"exp({base_text})", "exp")
            ei = self.atom(("exp_inv", key, scale), "ei", f"exp(-{parenthesized(base_text)})", "exp_inverse")
            pair_key = ("exp_pair", key, scale)
            if pair_key not in self._atoms:
                self._atoms[pair_key] = ""
                e, ei = self.lift(e), self.lift(ei)
                self.add_generator(e * ei - 1, "exp", f"exp({base_text})*exp(-{parenthesized(base_text)}) == 1")
                exponent = self.lift(direction) * self.const(Fraction(1, scale))
                self.exp_exponent[self._atoms[("exp", key, scale)]] = exponent
                self.exp_exponent[self._atoms[("exp_inv", key, scale)]] = -exponent
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
        found: dict[tuple, list[Fraction]] = {}  # direction key -> every coefficient of an angle
        for expr in exprs:
            for call in scaled_calls(expr):
                exponential = FUNCTIONS[call.function].family == "exponential"
                table = self._exp_scale if exponential else self._angle_scale
                argument = self.value(call.args[0])
                if exponential:
                    argument = logarithms.without_logs(self, argument)[0]
                for key, _direction, coeff in self._directions(argument):
                    table[key] = math.lcm(table.get(key, 1), coeff.denominator)
                    if not exponential:
                        found.setdefault(key, []).append(coeff)
        for key, coeffs in found.items():
            scale = self._angle_scale[key]
            self._angle_step[key] = math.gcd(*(int(c * scale) for c in coeffs))
        # the pre-scan created no auxiliary variables for angles (only for the arguments' own
        # divisions and radicals); translation proper starts from a clean memo so that calls are redone
        self._memo = {k: v for k, v in self._memo.items() if not has_scaled_call(k)}


class _Polynomials:
    """The fold that translates a tree: each node from its children's polynomials (lifted to the current
    ring, which grows as auxiliary variables appear)."""

    def __init__(self, translator: Translator) -> None:
        self.t = translator

    def num(self, node: Num) -> PolyElement:
        return self.t.const(node.value)

    def var(self, node: Var) -> PolyElement:
        return self.t.gen(node.name)

    def neg(self, node: Neg, operand: PolyElement) -> PolyElement:
        return -self.t.lift(operand)

    def binop(self, node: BinOp, left: PolyElement, right: PolyElement) -> PolyElement:
        left, right = self.t.lift(left), self.t.lift(right)
        if node.op == "+":
            return left + right
        if node.op == "-":
            return left - right
        if node.op == "*":
            return left * right
        if node.op == "/":
            inverse = self.t.inverse(right)
            return self.t.lift(left) * inverse
        raise TranslationError(f"unsupported operator {node.op!r}")

    def pow(self, node: Pow, base: PolyElement) -> PolyElement:
        return self.t.power(self.t.lift(base), node.exponent)

    def call(self, node: Call, args: Sequence[PolyElement]) -> PolyElement:
        return self.t.call(node.function, args)

    def opaque(self, node: Opaque, args: Sequence[PolyElement]) -> PolyElement:
        return self.t.opaque(node.name, args)
