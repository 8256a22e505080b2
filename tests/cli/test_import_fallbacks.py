"""Module-level math back ends as numeric packages write them, end to end through `idealcheck check`.

An invented package `surveyor` picks its math functions at import time: a `try`/`except ImportError`
fallback from numpy to math in a helper module that the other modules import from (by name, by `import *`
and through a re-exported `np`), an `if`/`else` choice, aliases (`import numpy as np`, `import math as m`),
and fallbacks whose alternatives disagree.  Each construct has a true claim, which must be proved, and the
same function with a one-line bug, which must be refuted.

References (common practice): rotations keep lengths (x' = x cos t - y sin t, y' = x sin t + y cos t gives
x'^2 + y'^2 = x^2 + y^2); sin 2t = 2 sin t cos t; cos(a + b) = cos a cos b - sin a sin b; exp(a + b) =
exp(a) exp(b); hypot(u, v) = sqrt(u^2 + v^2).  mpmath confirms at one point that each bug changes the value.
"""
from __future__ import annotations

import json
from pathlib import Path

import mpmath
import pytest

BACKEND = '''\
"""Which library computes: numpy when it is installed, else the standard library."""
import warnings

try:
    import numpy as np
    np.seterr(over="ignore")
    from numpy import cos, sin, sqrt, hypot
except ImportError:
    warnings.warn("numpy is missing: falling back to math")
    np = None
    from math import cos, sin, sqrt, hypot

try:
    from numpy import exp
except ModuleNotFoundError:
    raise SystemExit("surveyor needs numpy for exp")

try:
    from numpy import cbrt as root
except ImportError:
    from math import sqrt as root

FAST = False
if FAST:
    from numpy import tan
else:
    from math import tan
'''

BEARINGS = '''\
from .backend import cos, sin, sqrt, hypot
from .backend import np
import numpy as npy
import math as m


# idealcheck: returns x**2 + y**2
def turned_length(x, y, t):
    u = x * cos(t) - y * sin(t)
    v = x * sin(t) + y * cos(t)
    return u * u + v * v


# idealcheck: returns x**2 + y**2
def turned_length_bug(x, y, t):
    u = x * cos(t) - y * sin(t)
    v = x * sin(t) + y * sin(t)
    return u * u + v * v


# idealcheck: returns sin(2*t)
def double_bearing(t):
    return 2 * npy.sin(t) * m.cos(t)


# idealcheck: returns sin(2*t)
def double_bearing_bug(t):
    return 2 * npy.sin(t) * m.sin(t)


# idealcheck: returns sqrt(dx**2 + dy**2)
def ground_distance(dx, dy):
    return np.hypot(dx, dy)


# idealcheck: returns sqrt(dx**2 + dy**2)
def ground_distance_bug(dx, dy):
    return np.hypot(dx, dx)


# idealcheck: returns sqrt(dx**2 + dy**2)
def ground_distance_plain(dx, dy):
    return hypot(dx, dy)


# idealcheck: returns sqrt(dx**2 + dy**2)
def ground_distance_plain_bug(dx, dy):
    return hypot(dx, dy + 1)
'''

LEVELS = '''\
from .backend import *


# idealcheck: returns cos(a + b)
def combined_tilt(a, b):
    return cos(a) * cos(b) - sin(a) * sin(b)


# idealcheck: returns cos(a + b)
def combined_tilt_bug(a, b):
    return cos(a) * cos(b) + sin(a) * sin(b)


# idealcheck: returns exp(a + b)
def growth(a, b):
    return exp(a) * exp(b)


# idealcheck: returns exp(a + b)
def growth_bug(a, b):
    return exp(a) * exp(a)


# idealcheck: returns sin(t) / cos(t)
def slope(t):
    return tan(t)


# idealcheck: returns cos(t) / sin(t)
def slope_bug(t):
    return tan(t)


# idealcheck: returns x
def undone(x):
    return root(x) ** 2


# idealcheck: returns x
def backend_switch(x):
    if np is None:
        return x
    return x
'''

EXPECTED = {
    "bearings.py": {
        "turned_length": "proved", "turned_length_bug": "refuted",
        "double_bearing": "proved", "double_bearing_bug": "refuted",
        "ground_distance": "proved", "ground_distance_bug": "refuted",
        "ground_distance_plain": "proved", "ground_distance_plain_bug": "refuted",
    },
    "levels.py": {
        "combined_tilt": "proved", "combined_tilt_bug": "refuted",
        "growth": "proved", "growth_bug": "refuted",
        "slope": "proved", "slope_bug": "refuted",
        "undone": "inconclusive", "backend_switch": "inconclusive",
    },
}


def _line(text: str, fragment: str) -> int:
    return next(number for number, line in enumerate(text.splitlines(), start=1) if fragment in line)


@pytest.fixture(scope="module")
def found(cli, tmp_path_factory: pytest.TempPathFactory) -> dict[str, dict]:
    """Each claim of one run over the package, by file and the function below it."""
    root = tmp_path_factory.mktemp("fallbacks")
    package = root / "surveyor"
    package.mkdir()
    (package / "__init__.py").write_text("")
    (package / "backend.py").write_text(BACKEND)
    (package / "bearings.py").write_text(BEARINGS)
    (package / "levels.py").write_text(LEVELS)
    done = cli("check", "--no-cache", "--format", "json", "surveyor", cwd=root)
    by_function: dict[str, dict] = {}
    for claim in json.loads(done.out)["claims"]:
        lines = (root / claim["path"]).read_text().splitlines()
        below = next(line for line in lines[claim["line"]:] if line.startswith("def "))
        by_function[f"{Path(claim['path']).name}:{below[4:below.index('(')]}"] = claim
    return by_function


def test_fallback_imports_aliases_and_reexports_end_to_end(found: dict[str, dict]) -> None:
    # each bug changes the value somewhere (mpmath at x = 0.3, y = 1.7, t = 0.9, a = 0.4, b = 1.1)
    x, y, t, a, b = (mpmath.mpf(v) for v in ("0.3", "1.7", "0.9", "0.4", "1.1"))
    u, v = x * mpmath.cos(t) - y * mpmath.sin(t), x * mpmath.sin(t) + y * mpmath.sin(t)
    assert abs(u * u + v * v - (x * x + y * y)) > 0.1
    assert abs(2 * mpmath.sin(t) ** 2 - mpmath.sin(2 * t)) > 0.1
    assert abs(mpmath.hypot(x, x) - mpmath.hypot(x, y)) > 0.1
    assert abs(mpmath.hypot(x, y + 1) - mpmath.hypot(x, y)) > 0.1
    assert abs(mpmath.cos(a - b) - mpmath.cos(a + b)) > 0.1
    assert abs(mpmath.exp(2 * a) - mpmath.exp(a + b)) > 0.1
    assert abs(mpmath.tan(t) - 1 / mpmath.tan(t)) > 0.1
    verdicts = {key: claim["verdict"] for key, claim in found.items()}
    expected = {f"{file}:{name}": verdict for file, names in EXPECTED.items() for name, verdict in names.items()}
    assert verdicts == expected


def test_disagreeing_alternatives_are_named_with_file_and_lines(found: dict[str, dict]) -> None:
    undone = found["levels.py:undone"]["reason"]
    # cbrt and sqrt are different functions: the tool names both bindings, the block and the file
    assert "the module-level name root" in undone and "surveyor/backend.py" in undone
    assert f"`try` at line {_line(BACKEND, 'from numpy import cbrt') - 1}" in undone
    assert f"`from numpy import cbrt as root` (line {_line(BACKEND, 'from numpy import cbrt')})" in undone
    assert f"`from math import sqrt as root` (line {_line(BACKEND, 'from math import sqrt as root')})" in undone
    switch = found["levels.py:backend_switch"]["reason"]
    assert "the module-level name np" in switch and f"`np = None` (line {_line(BACKEND, 'np = None')})" in switch
