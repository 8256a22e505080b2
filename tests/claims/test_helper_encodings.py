"""Files a claim reads besides its own (an imported Python module, a kernel of another file) are decoded
by the same rules as scanned files: a PEP 263 coding declaration is honoured and a file that is not UTF-8
is read as Latin-1 (common practice: editors of older numeric code often save Latin-1).

The identity is textbook algebra (common practice): the binomial square.
"""
from __future__ import annotations

import json
from pathlib import Path
from typing import TYPE_CHECKING

from conftest import write_file

if TYPE_CHECKING:
    from conftest import Cli

LATIN1_MODULE = ("# -*- coding: latin-1 -*-\n# d\xe9bit du canal (m\xb3/s)\n"
                 "def square(u):\n    return u * u\n").encode("latin-1")
LATIN1_KERNEL = ("/* d\xe9bit du canal (m\xb3/s) */\n"
                 "double square(double u) { return u * u; }\n").encode("latin-1")


def _verdicts(cli: Cli, root: Path) -> dict[str, str]:
    result = cli("check", "--no-cache", "--format", "json", ".", cwd=root)
    return {f"{c['path']}: {c['text']}": c["verdict"] for c in json.loads(result.out)["claims"]}


def test_an_imported_latin1_module_is_inlined(cli: Cli, tmp_path: Path) -> None:
    write_file(tmp_path, "channel_units.py", LATIN1_MODULE)
    write_file(tmp_path, "channel.py", "from channel_units import square\n\n\n"
               "# idealcheck: returns a**2 + 2*a*b + b**2\ndef flow(a, b):\n    return square(a + b)\n\n\n"
               "# idealcheck: returns a**2 + b**2\ndef slip(a, b):\n    return square(a + b)\n")
    assert _verdicts(cli, tmp_path) == {"channel.py: returns a**2 + 2*a*b + b**2": "proved",
                                        "channel.py: returns a**2 + b**2": "refuted"}


def test_a_kernel_of_another_latin1_file_is_read(cli: Cli, tmp_path: Path) -> None:
    write_file(tmp_path, "units.c", LATIN1_KERNEL)
    write_file(tmp_path, "flow.c", "double square(double u);\n\n"
               "/* idealcheck: returns a*a + 2*a*b + b*b */\n"
               "double flow(double a, double b) { return square(a + b); }\n\n"
               "/* idealcheck: same as units.c::square */\n"
               "double square_again(double u) { return u * u; }\n")
    assert _verdicts(cli, tmp_path) == {"flow.c: returns a*a + 2*a*b + b*b": "proved",
                                        "flow.c: same as units.c::square": "proved"}
