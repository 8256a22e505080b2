"""The result cache is per claim, end to end through the command line: a result stays valid while the
claim's text, its conditions and the code it depends on are unchanged, whatever else changes in the file.

The identities are textbook algebra (common practice): the binomial square, the difference of squares,
and Horner's form of a cubic; the wrong helper drops the cross term of the square.
"""
from __future__ import annotations

from pathlib import Path
from typing import TYPE_CHECKING

if TYPE_CHECKING:
    from conftest import Cli

KERNELS = """\
# {comment}


def square(u):
    return u * u


# idealcheck: returns a**2 + 2*a*b + b**2
def binomial(a, b):
    return square(a + b)


# idealcheck: returns x**2 - y**2
def difference(x, y):
    return {difference_body}


def cubic(t):
    return ((2 * t + 3) * t - 1) * t + 5  # idealcheck: == 2*t**3 + 3*t**2 - t + 5
"""


def kernels(root: Path, *, comment: str = "wave-tank kernels", difference_body: str = "(x - y) * (x + y)",
            square_body: str = "u * u") -> None:
    text = KERNELS.format(comment=comment, difference_body=difference_body).replace("u * u", square_body)
    (root / "kernels.py").write_text(text, encoding="utf-8")


def cached_claims(cli: Cli, root: Path) -> dict[str, tuple[str, bool]]:
    """claim text -> (verdict, served from the cache), from the verbose text report."""
    result = cli("check", "-v", cwd=root)
    found: dict[str, tuple[str, bool]] = {}
    current = ""
    for line in result.out.splitlines():
        if line.startswith("kernels.py:"):
            _place, verdict, current = line.split(": ", 2)
            found[current] = (verdict, False)
        elif "from cache" in line and current:
            found[current] = (found[current][0], True)
    return found


def test_an_edit_elsewhere_in_the_file_keeps_every_other_claims_result(cli: Cli, tmp_path: Path) -> None:
    kernels(tmp_path)
    first = cached_claims(cli, tmp_path)
    assert set(first.values()) == {("proved", False)} and len(first) == 3
    # a comment, and another function's body, change; the code moves down by two lines
    kernels(tmp_path, comment="wave-tank kernels\n# revised for the 2026 tank\n#",
            difference_body="x * x - y * y")
    second = cached_claims(cli, tmp_path)
    assert second == {
        "returns a**2 + 2*a*b + b**2": ("proved", True),
        "returns x**2 - y**2": ("proved", False),  # its own code changed: decided again
        "== 2*t**3 + 3*t**2 - t + 5": ("proved", True),
    }


def test_a_change_in_an_inlined_helper_invalidates_the_claims_that_use_it(cli: Cli, tmp_path: Path) -> None:
    kernels(tmp_path)
    cached_claims(cli, tmp_path)
    kernels(tmp_path, square_body="u * u - 2 * u + 2 * u + 0 * u")  # the same function, written otherwise
    rewritten = cached_claims(cli, tmp_path)
    assert rewritten["returns a**2 + 2*a*b + b**2"] == ("proved", False)
    assert rewritten["returns x**2 - y**2"] == ("proved", True)
    kernels(tmp_path, square_body="u * u - 2 * u")  # now wrong: never a cached proof
    wrong = cached_claims(cli, tmp_path)
    assert wrong["returns a**2 + 2*a*b + b**2"] == ("refuted", False)
    assert wrong["returns x**2 - y**2"] == ("proved", True)


def test_a_cached_result_says_what_was_re_checked(cli: Cli, tmp_path: Path) -> None:
    # Motzkin's polynomial plus 1 has no real zero but is no sum of squares (T. S. Motzkin 1967, from memory),
    # which the tool leaves open;
    # the square is wrong at x = -1: its witness is re-checked when it comes from the cache
    (tmp_path / "quartic.py").write_text("# idealcheck: x == 0 given x**4*y**2 + x**2*y**4 - 3*x**2*y**2 + 2 == 0\n"
                                        "# idealcheck: sqrt(x**2) == x\n", encoding="utf-8")
    cli("check", "-v", cwd=tmp_path)
    again = cli("check", "-v", cwd=tmp_path).out.split("\n")
    open_claim = again.index("quartic.py:1:3: inconclusive: x == 0 given x**4*y**2 + x**2*y**4 - 3*x**2*y**2 + 2 == 0")
    refuted = again.index("quartic.py:2:3: refuted: sqrt(x**2) == x")
    assert again[open_claim + 1].strip() == "from cache"
    assert again[refuted + 1].strip() == "from cache (witness re-checked)"
