"""Fortran fixed form (.f, .for, .f77): comment lines by column 1, continuation by column 6, columns 73 and
beyond ignored (the FORTRAN 77 column rules, from memory).  The kernels are invented; Horner's rule and
the complex product are common practice."""
from __future__ import annotations

import json

import pytest

from verifier.claims.kernels.fixed_form import to_free_form

KERNELS = """\
C     Horner evaluation of a calibration polynomial
C     idealcheck: returns c(1) + c(2)*x + c(3)*x**2
      DOUBLE PRECISION FUNCTION HORNER(C, X)
      DOUBLE PRECISION C(3), X
      INTEGER I
      HORNER = 0.0D0
      DO 10 I = 3, 1, -1
         HORNER = HORNER*X + C(I)                                       SEQ00010
   10 CONTINUE
      RETURN
      END
*     idealcheck: returns a*c - b*d, a*d + b*c
      SUBROUTINE CMUL(A, B, C, D, RE, IM)
      DOUBLE PRECISION A, B, C, D, RE, IM
      RE = A*C -
     1     B*D
      IM = A*D + B*C
      RETURN
      END
c     idealcheck: returns a*c - b*d, a*d - b*c
      SUBROUTINE CMULB(A, B, C, D, RE, IM)
      DOUBLE PRECISION A, B, C, D, RE, IM
      RE = A*C - B*D
      IM = A*D + B*C ! idealcheck: == a*d + b*c
      RETURN
      END
"""


@pytest.mark.parametrize("name", ["kernels.f", "kernels.for", "KERNELS.F77"])
def test_fixed_form_kernels_are_checked(cli, tmp_path, name):
    (tmp_path / name).write_text(KERNELS)
    result = cli("check", "--no-cache", "--format", "json", name, cwd=tmp_path)
    verdicts = {c["line"]: c["verdict"] for c in json.loads(result.out)["claims"]}
    assert verdicts == {2: "proved", 12: "proved", 20: "refuted", 24: "proved"}, result.out


def test_a_syntax_error_points_into_the_original_file(cli, tmp_path):
    (tmp_path / "bad.f").write_text("C     idealcheck: returns x\n      DOUBLE PRECISION FUNCTION F(X)\n"
                                    "      F = X +* 2\n      END\n")
    result = cli("check", "--no-cache", "--format", "json", "bad.f", cwd=tmp_path)
    claim = json.loads(result.out)["claims"][0]
    assert claim["verdict"] == "error" and "line 3" in claim["reason"], claim


def test_the_rewrite_keeps_lines_and_columns():
    free = to_free_form(KERNELS)
    original, rewritten = KERNELS.split("\n"), free.split("\n")
    assert len(rewritten) == len(original)
    assert rewritten[0].startswith("!") and rewritten[11].startswith("!")  # `C` and `*` comment lines
    assert rewritten[14] == "      RE = A*C - &" and rewritten[15] == "     &     B*D"
    assert "SEQ00010" not in rewritten[7] and rewritten[7].startswith("         HORNER = HORNER*X + C(I)")
    for before, after in zip(original, rewritten):  # statement text stays in its columns
        if before[:1] not in "Cc*" and before.strip():
            assert after[6:72].rstrip(" &") == before[6:72].rstrip() or after[6:].startswith(before[6:72].rstrip())
