"""Classes as numeric code writes them, end to end through the command line (fixtures/py_classes).

The claims are textbook formulas: the squared norm of a quaternion, the real part of its square
(w^2 - |v|^2), the norm of a Hamilton product as the product of the norms (Euler's four-square identity,
e.g. J. H. Conway and D. A. Smith, "On Quaternions and Octonions", 2003, section 3.1; from memory), kinetic energy m v^2 / 2 and momentum m v, the area factor of an annulus b^2 - a^2 =
(b - a)(b + a), linear interpolation (1 - t) u + t v, Simpson's rule exact for cubics and the midpoint
rule for lines, with the integrand a module function or a lambda passed to the rule (common practice).  Every ``*_slip`` is its helper
with one wrong line and must be refuted with a witness.
"""
from __future__ import annotations

import json
import shutil
from pathlib import Path

from tests.conftest import Cli

CORPUS = Path(__file__).resolve().parents[2] / "fixtures" / "py_classes"


def _claims(cli: Cli, folder: Path, *paths: str) -> list[dict[str, object]]:
    result = cli("check", "--no-cache", "--format", "json", *(paths or (".",)), cwd=folder)
    claims: list[dict[str, object]] = json.loads(result.out)["claims"]
    return claims


def _by_function(claims: list[dict[str, object]], folder: Path) -> dict[str, dict[str, object]]:
    """Each claim under the name of the function or method below it."""
    by_function: dict[str, dict[str, object]] = {}
    for claim in claims:
        text = (folder / str(claim["path"])).read_text().splitlines()
        following = next(t.strip() for t in text[int(str(claim["line"])):] if t.strip().startswith("def "))
        by_function[following[4:following.index("(")]] = claim
    return by_function


def test_every_helper_proved_and_every_slip_refuted(cli: Cli, tmp_path: Path) -> None:
    shutil.copytree(CORPUS, tmp_path / "corpus")
    verdicts = _by_function(_claims(cli, tmp_path / "corpus"), tmp_path / "corpus")
    assert len(verdicts) == 38
    for name, claim in verdicts.items():
        expected = "refuted" if name.endswith("_slip") else "proved"
        assert claim["verdict"] == expected, (name, claim["reason"])
        if expected == "refuted":
            assert claim["witness"] is not None, name


def test_the_report_says_how_self_was_read(cli: Cli, tmp_path: Path) -> None:
    shutil.copytree(CORPUS, tmp_path / "corpus")
    result = cli("check", "--no-cache", "-v", "orrery.py", cwd=tmp_path / "corpus")
    assert "self is a Moon object as Moon.__init__ (line 81) builds it from self.mass, self.radius, self.speed" \
        in result.out
    assert "inlined Spin.vector_weight from orrery.py" in result.out  # the property


FLEET = '''\
class Probe:
    def __init__(self, mass, fuel):
        self.mass = mass
        self.total = mass + fuel

    def burn(self, spent):
        self.total = self.total - spent

    # idealcheck: returns self.total - self.mass
    def fuel(self):
        return self.total - self.mass


class Heavy(Probe):
    # idealcheck: returns self.mass
    def dry(self):
        return self.mass


# idealcheck: returns f - s
def after_burn(m, f, s):
    p = Probe(m, f)
    p.burn(s)
    return p.fuel()


# idealcheck: returns f - s
def after_burn_slip(m, f, s):
    p = Probe(m, f)
    q = Probe(m, f)
    q.burn(s)
    return p.fuel()


class Tanker(Probe):
    # idealcheck: returns self.mass
    def dry_mass(self):
        return self.mass + self.fuel() - self.fuel()
'''


def test_methods_that_change_the_object(cli: Cli, tmp_path: Path) -> None:
    """A method changing ``self`` changes the caller's object; the claim's ``self`` is then any object."""
    (tmp_path / "fleet.py").write_text(FLEET)
    result = cli("check", "--no-cache", "-v", "fleet.py", cwd=tmp_path)
    claims = {c["line"]: c for c in _claims(cli, tmp_path, "fleet.py")}
    # self.total and self.mass are free: `burn` changes total after __init__
    assert claims[9]["verdict"] == "proved"
    assert "self is any Probe object: each attribute is its own variable (methods of Probe change self.total)" \
        in result.out
    assert claims[15]["verdict"] == "proved"  # a subclass: read as any object, base classes not followed
    assert "has base classes" in result.out
    assert claims[20]["verdict"] == "proved"
    assert claims[27]["verdict"] == "refuted"
    # an inherited method (base classes are not followed) is an opaque function of its arguments
    assert claims[36]["verdict"] == "proved"
    assert "opaque call self.fuel(...) at line 38" in result.out


def test_a_claim_naming_the_init_parameters_is_told_the_attribute(cli: Cli, tmp_path: Path) -> None:
    (tmp_path / "cell.py").write_text(
        "class Cell:\n    def __init__(self, width, height):\n        self.w = width\n        self.h = height\n\n"
        "    # idealcheck: returns width * height\n    def area(self):\n        return self.w * self.h\n")
    claim = _claims(cli, tmp_path, "cell.py")[0]
    assert claim["verdict"] == "error"
    assert "`__init__` stores `width` as `self.w`: write `self.w`" in str(claim["reason"])


UNSUPPORTED = [  # (the body after `p = Cell(x)` at line 8, the reason, the line it names)
    ("items = [p]\n    p.x = 2\n    return items[0].x", "changing an object that another value holds", 10),
    ("helper(p)\n    return p.x", "given an object or dict", 9),
    ("return p", "returns a Cell object, not a number", 0),
    ("p.x.y = 2\n    return p.x", "assignment to a nested attribute at line 9", 9),
    ("d = {'k': x}\n    return d[x]", "key is not a constant", 10),
    ("return p.missing", "not set on the object", 9),
    ("return p(1)", "calling the object p at line 9", 9),
    ("d = {**{}, 'k': 1}\n    return d['k']", "a dict with `**` unpacking at line 9", 9),
    ("a, b = p\n    return a", "line 9", 9),
    ("return p + p", "line 9", 9),
    ("f = lambda: p.x\n    p.x = 2\n    return f()", "reads p, which changed after the lambda was made", 11),
    ("return helper(lambda: p.x)", "is given the function", 9),
]


def test_unsupported_object_constructs_are_inconclusive_with_their_line(cli: Cli, tmp_path: Path) -> None:
    for number, (body, _, _) in enumerate(UNSUPPORTED):
        (tmp_path / f"odd{number}.py").write_text(
            "class Cell:\n    def __init__(self, x):\n        self.x = x\n\n\n"
            f"# idealcheck: returns x\ndef use(x, helper):\n    p = Cell(x)\n    {body}\n")
    claims = {c["path"]: c for c in _claims(cli, tmp_path)}  # one run for all (workers start once)
    for number, (body, expected, line) in enumerate(UNSUPPORTED):
        claim = claims[f"odd{number}.py"]
        assert claim["verdict"] == "inconclusive", (body, claim)
        assert expected in str(claim["reason"]), (body, claim["reason"])
        if line:
            assert f"line {line}" in str(claim["reason"]), (body, claim["reason"])


def test_a_class_whose_body_the_tool_does_not_follow_is_not_built(cli: Cli, tmp_path: Path) -> None:
    """A method defined under `if` could replace another: the class is opaque, never guessed."""
    (tmp_path / "gate.py").write_text(
        "FAST = True\n\n\nclass Gate:\n    def __init__(self, x):\n        self.x = x\n\n"
        "    def level(self):\n        return self.x\n\n    if FAST:\n        def level(self):\n"
        "            return 2 * self.x\n\n\n# idealcheck: returns x\ndef read(x):\n    return Gate(x).level()\n")
    claim = _claims(cli, tmp_path, "gate.py")[0]
    assert claim["verdict"] == "inconclusive"
    assert "opaque call gate.Gate(...) at line 18" in str(claim["reason"])
