"""A scratch numeric project as a new user's checkout holds it (for the first-run tests of files and the
baseline): images and arrays, an object file, a virtual environment, build output, an old Fortran file
with a Latin-1 name in a comment, a Python file declaring ``# -*- coding: iso-8859-5 -*-`` (PEP 263) and
a ``.gitignore``.  The magic numbers written are those of the published formats (PNG, NumPy ``.npy``,
gzip, ELF); every claim is a textbook identity (binomial square, difference of squares, distributivity)
or its classic wrong form.
"""
from __future__ import annotations

import json
from pathlib import Path
from typing import Any

from conftest import write_file as write  # re-exported for the CLI tests

TRUE_PY = "# idealcheck: (a + b)**2 == a**2 + 2*a*b + b**2\n"
FALSE_PY = "# idealcheck: (a + b)**2 == a**2 + b**2\n"  # a false claim: must never be decided when skipped
CYRILLIC_COMMENT = "# Программа для волн\n"  # "a program for waves"


def scratch_project(root: Path) -> None:
    """The project's files; the real claims are in src/ (three) and in notes.md (one, untracked)."""
    write(root, ".gitignore", "build/\ndist/\nvenv/\n*.o\ndocs/_build/\n")
    write(root, "src/wave.py", "def f(a, b):\n    return a + b\n" + TRUE_PY)
    write(root, "src/legacy.f90", "! Auteur: Fran\u00e7ois Dupr\u00e9, 1994\n"
          "! idealcheck: (x - 1)*(x + 1) == x**2 - 1\n"
          "program legacy\nend program legacy\n".encode("latin-1"))
    write(root, "src/cyr.py", ("# -*- coding: iso-8859-5 -*-\n" + CYRILLIC_COMMENT
                               + "# idealcheck: x*(y + z) == x*y + x*z\n").encode("iso-8859-5"))
    write(root, "notes.md", "<!-- idealcheck: (p - q)*(p + q) == p**2 - q**2 -->\n")
    write(root, "figures/tank.png", b"\x89PNG\r\n\x1a\n" + b"\x00\x00\x00\rIHDR" + bytes(range(256)))
    write(root, "data/heights.npy", b"\x93NUMPY\x01\x00v\x00{'descr': '<f8'}" + bytes(64))
    write(root, "data/run.gz", b"\x1f\x8b\x08" + bytes(range(1, 200)))
    write(root, "kernel.o", b"\x7fELF\x02\x01\x01" + bytes(32))
    write(root, "build/lib/wave.py", FALSE_PY)
    write(root, "dist/wave-0.1/wave.py", FALSE_PY)
    write(root, "docs/_build/html/page.md", "<!-- idealcheck: p == q -->\n")
    write(root, "venv/pyvenv.cfg", "home = /usr/bin\n")
    write(root, "venv/lib/python3.11/site-packages/pkg/mod.py", FALSE_PY)


def json_report(cli: Any, root: Path, *args: str) -> tuple[int, dict]:
    """Exit status and JSON report of `idealcheck check --no-cache ARGS` in ``root`` (``cli``: the fixture)."""
    result = cli("check", "--no-cache", "--format", "json", *args, cwd=root)
    assert result.code in (0, 1), result.err
    return result.code, json.loads(result.out)
