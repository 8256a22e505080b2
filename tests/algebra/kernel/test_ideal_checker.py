"""The ideal-membership checker of the kernel: the strict polynomial reader and the re-check by plain
expansion."""
from __future__ import annotations

import builtins
import dataclasses
import random

import pytest
from sympy.polys.domains import QQ
from sympy.polys.orderings import grevlex
from sympy.polys.rings import ring

from verifier.algebra.groebner import groebner_basis, membership_cofactors
from verifier.algebra.kernel.checkers import is_valid as check_certificate
from verifier.algebra.kernel.polynomial import data_to_poly, poly_to_data
from verifier.model.certificate import IdealCertificate

R, x, y, z = ring("x,y,z", QQ, grevlex)
SYMBOLS = ("x", "y", "z")


def make_certificate(symbols, target, power, generators, cofactors) -> IdealCertificate:
    return IdealCertificate(tuple(symbols), poly_to_data(target), power, tuple(poly_to_data(g) for g in generators),
                            tuple(poly_to_data(c) for c in cofactors))


def circle_certificate() -> IdealCertificate:
    """(x + y)^2 - 2xy - 1 = 1 * (x^2 + y^2 - 1): on the unit circle x^2 + y^2 = 1 (common practice)."""
    target = (x + y) ** 2 - 2 * x * y - 1
    return make_certificate(SYMBOLS, target, 1, [x**2 + y**2 - 1], [R.one])


def radical_certificate() -> IdealCertificate:
    """x^2 = 0 implies x = 0: x^2 = 1 * x^2, a certificate of power 2 (common practice)."""
    return make_certificate(SYMBOLS, x, 2, [x**2, y - z], [R.one, R.zero])


def replace(cert: IdealCertificate, **changes) -> IdealCertificate:
    return dataclasses.replace(cert, **changes)


def test_valid_certificates_pass() -> None:
    assert check_certificate(circle_certificate())
    assert check_certificate(radical_certificate())


def test_certificate_from_the_engine_passes() -> None:
    """A cofactor identity found by the Groebner engine re-checks without any Groebner basis."""
    generators = [x**2 + y**2 - 1, x - y * z]
    result = groebner_basis(generators)
    member = (x + 3) * generators[0] - QQ(2, 7) * z * generators[1]
    cofactors = membership_cofactors(member, result)
    assert cofactors is not None
    assert check_certificate(make_certificate(SYMBOLS, member, 1, generators, cofactors))


def test_round_trip_of_poly_data() -> None:
    rng = random.Random(5)
    for _ in range(50):
        p = R.zero
        for _ in range(rng.randint(0, 6)):
            p += R({tuple(rng.randint(0, 4) for _ in range(3)): QQ(rng.randint(-9, 9), rng.randint(1, 9))})
        data = poly_to_data(p)
        assert data_to_poly(data, R) == p
        for coefficient, exponents in data:
            assert isinstance(coefficient, str) and all(type(e) is int for e in exponents)
    assert poly_to_data(QQ(-3, 4) * x**2 * z) == (("-3/4", (2, 0, 1)),)


def test_changed_coefficient_is_rejected() -> None:
    cert = circle_certificate()
    (coefficient, exponents), *rest = cert.cofactors[0]
    tampered = replace(cert, cofactors=((("2", exponents),),))
    assert not check_certificate(tampered)
    target = list(cert.target)
    target[0] = ("5/3", target[0][1])
    assert not check_certificate(replace(cert, target=tuple(target)))


def test_changed_exponent_is_rejected() -> None:
    cert = circle_certificate()
    generator = list(cert.generators[0])
    coefficient, exponents = generator[0]
    generator[0] = (coefficient, (exponents[0] + 1,) + exponents[1:])
    assert not check_certificate(replace(cert, generators=(tuple(generator),)))


def test_wrong_power_is_rejected() -> None:
    assert not check_certificate(replace(radical_certificate(), power=1))
    assert not check_certificate(replace(radical_certificate(), power=3))
    assert not check_certificate(replace(radical_certificate(), power=0))
    assert not check_certificate(replace(radical_certificate(), power=-2))
    assert not check_certificate(replace(radical_certificate(), power=True))
    assert not check_certificate(replace(radical_certificate(), power="2"))
    assert not check_certificate(replace(radical_certificate(), power=2.0))


def test_mismatched_lengths_are_rejected() -> None:
    cert = radical_certificate()
    assert not check_certificate(replace(cert, cofactors=cert.cofactors[:1]))
    assert not check_certificate(replace(cert, generators=cert.generators + ((("1", (0, 0, 0)),),)))


MALFORMED_COEFFICIENTS = [
    "__import__('os').system('true')",
    "1+1",
    "2**3",
    "1/0",
    "0",
    "0/5",
    "1.5",
    "1e3",
    " 1",
    "1_000",
    "--1",
    "+1",
    "1/-2",
    "",
    "x",
    "\u0661",  # ARABIC-INDIC DIGIT ONE: a digit to str.isdigit, not to the strict pattern
    1,
    None,
    QQ(1, 2),
]


@pytest.mark.parametrize("coefficient", MALFORMED_COEFFICIENTS, ids=repr)
def test_malformed_coefficients_are_rejected_without_evaluation(coefficient, monkeypatch) -> None:
    def forbidden(*args, **kwargs):
        raise AssertionError("the certificate reader evaluated text")

    monkeypatch.setattr(builtins, "eval", forbidden)
    monkeypatch.setattr(builtins, "exec", forbidden)
    cert = replace(circle_certificate(), cofactors=(((coefficient, (0, 0, 0)),),))
    assert check_certificate(cert) is False
    monkeypatch.undo()
    with pytest.raises(ValueError):
        data_to_poly(((coefficient, (0, 0, 0)),), R)


MALFORMED_EXPONENTS = [
    (-1, 0, 0),
    (0, 0),
    (0, 0, 0, 0),
    (0.0, 0, 0),
    ("1", 0, 0),
    (True, 0, 0),
    [0, 0, 0],
    None,
    (10**9, 0, 0),
]


@pytest.mark.parametrize("exponents", MALFORMED_EXPONENTS, ids=repr)
def test_malformed_exponents_are_rejected(exponents) -> None:
    cert = replace(circle_certificate(), cofactors=((("1", exponents),),))
    assert check_certificate(cert) is False
    with pytest.raises(ValueError):
        data_to_poly((("1", exponents),), R)


MALFORMED_POLYNOMIALS = [
    "1",
    [("1", (0, 0, 0))],
    (("1", (0, 0, 0), "extra"),),
    (("1",),),
    ("1", (0, 0, 0)),
    (("1", (0, 0, 0)), ("2", (0, 0, 0))),  # the same monomial twice
    None,
]


@pytest.mark.parametrize("data", MALFORMED_POLYNOMIALS, ids=repr)
def test_malformed_polynomials_are_rejected(data) -> None:
    assert check_certificate(replace(circle_certificate(), target=data)) is False
    with pytest.raises(ValueError):
        data_to_poly(data, R)


@pytest.mark.parametrize(
    "symbols",
    [("x", "y"), ("x", "y", "z", "w"), ("x", "x", "z"), ("x", "", "z"), "xyz", ("x", 1, "z"), None],
    ids=repr,
)
def test_bad_symbols_are_rejected(symbols) -> None:
    assert check_certificate(replace(circle_certificate(), symbols=symbols)) is False


def test_bad_containers_are_rejected() -> None:
    cert = circle_certificate()
    assert check_certificate(replace(cert, generators=None)) is False
    assert check_certificate(replace(cert, cofactors=[cert.cofactors[0]])) is False
    assert check_certificate(object()) is False  # type: ignore[arg-type]


def test_constant_certificate_without_symbols() -> None:
    """2^2 == 4 * 1 over no variables: a ring with no generators still checks (common practice)."""
    assert check_certificate(IdealCertificate((), (("2", ()),), 2, ((("1", ()),),), ((("4", ()),),)))
    assert not check_certificate(IdealCertificate((), (("2", ()),), 2, ((("1", ()),),), ((("5", ()),),)))
