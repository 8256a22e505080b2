"""Each kernel language through the CLI on small files: a true claim proved, a one-line bug refuted, an
unsupported construct inconclusive with its line, a syntax error an error with file and line."""
from __future__ import annotations

import json
from fractions import Fraction
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[3]

# language: (file name, true claim source, bug source, unsupported source with its line, broken source)
SOURCES = {
    "c": ("k.c",
          "// idealcheck: returns (a + b)*(a - b)\ndouble f(double a, double b) { return a*a - b*b; }\n",
          "// idealcheck: returns (a + b)*(a - b)\ndouble f(double a, double b) { return a*a + b*b; }\n",
          "// idealcheck: returns a\ndouble f(double a) {\n  while (a > 1) a -= 1;\n  return a;\n}\n", 3,
          "// idealcheck: returns a\ndouble f(double a) { return (a; }\n"),
    "cpp": ("k.cpp",
            "// idealcheck: returns x*x\ntemplate <class T> T sq(const T &x) { return std::pow(x, 2); }\n",
            "// idealcheck: returns x*x\ntemplate <class T> T sq(const T &x) { return std::pow(x, 3); }\n",
            "// idealcheck: returns x\ndouble f(double x) {\n  switch (1) { default: break; }\n  return x;\n}\n", 3,
            "// idealcheck: returns x\ndouble f(double x) { return x +; }\n"),
    "cuda": ("k.cu",
             "// idealcheck: returns a*b + c\n__device__ float f(float a, float b, float c) { return fmaf(a, b, c); }\n",
             "// idealcheck: returns a*b + c\n__device__ float f(float a, float b, float c) { return fmaf(a, c, b); }\n",
             "// idealcheck: returns a\n__device__ float f(float a) {\n  do { a += 1; } while (a < 0);\n"
             "  return a;\n}\n", 3,
             "// idealcheck: returns a\n__device__ float f(float a) { return a }}\n"),
    "fortran": ("k.f90",
                "! idealcheck: returns x**2 - 1\npure function f(x) result(y)\n  real(8), intent(in) :: x\n"
                "  real(8) :: y\n  y = (x - 1d0)*(x + 1d0)\nend function f\n",
                "! idealcheck: returns x**2 - 1\npure function f(x) result(y)\n  real(8), intent(in) :: x\n"
                "  real(8) :: y\n  y = (x - 1d0)*(x - 1d0)\nend function f\n",
                "! idealcheck: returns x\nfunction f(x) result(y)\n  real(8), intent(in) :: x\n  real(8) :: y\n"
                "  y = x\n  do while (y > 1d0)\n    y = y - 1d0\n  end do\nend function f\n", 6,
                "! idealcheck: returns x\nfunction f(x) result(y)\n  real(8) :: x, y\n  y = (x\nend function f\n"),
    "julia": ("k.jl",
              "# idealcheck: returns (x + 1)^2\nf(x) = x^2 + 2x + 1\n",
              "# idealcheck: returns (x + 1)^2\nf(x) = x^2 + x + 1\n",
              "# idealcheck: returns x\nfunction f(x)\n    while x > 1\n        x -= 1\n    end\n    x\nend\n", 3,
              "# idealcheck: returns x\nfunction f(x)\n    x + )\nend\n"),
    "rust": ("k.rs",
             "/// idealcheck: returns x*y + z\npub fn f(x: f64, y: f64, z: f64) -> f64 { x.mul_add(y, z) }\n",
             "/// idealcheck: returns x*y + z\npub fn f(x: f64, y: f64, z: f64) -> f64 { y.mul_add(z, x) }\n",
             "/// idealcheck: returns x\npub fn f(mut x: f64) -> f64 {\n    while x > 1.0 { x -= 1.0; }\n    x\n}\n", 3,
             "/// idealcheck: returns x\npub fn f(x: f64) -> f64 { x * }\n"),
}


def _check(directory: Path) -> dict:
    done = subprocess.run([sys.executable, "-m", "verifier", "check", ".", "--format", "json", "--no-cache"],
                          cwd=directory, capture_output=True, text=True, timeout=300,
                          env={"PYTHONPATH": str(ROOT), "PATH": "/usr/bin:/bin"})
    assert done.returncode in (0, 1), done.stderr
    return json.loads(done.stdout)


def _verdict(tmp_path: Path, name: str, source: str) -> dict:
    (tmp_path / name).write_text(source)
    claims = _check(tmp_path)["claims"]
    assert len(claims) == 1, claims
    return claims[0]


@pytest.mark.parametrize("language", sorted(SOURCES))
def test_true_claim_is_proved(tmp_path, language):
    name, good, *_ = SOURCES[language]
    assert _verdict(tmp_path, name, good)["verdict"] == "proved"


@pytest.mark.parametrize("language", sorted(SOURCES))
def test_one_line_bug_is_refuted(tmp_path, language):
    name, _, bug, *_ = SOURCES[language]
    claim = _verdict(tmp_path, name, bug)
    assert claim["verdict"] == "refuted" and claim["witness"] is not None


@pytest.mark.parametrize("language", sorted(SOURCES))
def test_unsupported_construct_is_inconclusive_with_its_line(tmp_path, language):
    name, _, _, unsupported, line, _ = SOURCES[language]
    claim = _verdict(tmp_path, name, unsupported)
    assert claim["verdict"] == "inconclusive"
    assert f"line {line}" in claim["reason"]
    assert "loop" in claim["reason"] or "switch" in claim["reason"]


@pytest.mark.parametrize("language", sorted(SOURCES))
def test_syntax_error_is_an_error_with_file_and_line(tmp_path, language):
    name, *_, broken = SOURCES[language]
    claim = _verdict(tmp_path, name, broken)
    assert claim["verdict"] == "error"
    assert name in claim["reason"] and "line " in claim["reason"]


def test_c_kernel_same_as_a_python_reference(tmp_path):
    (tmp_path / "ref.py").write_text("def mid(a, b):\n    return (a + b) / 2\n")
    (tmp_path / "k.c").write_text("// idealcheck: same as ref.py::mid\n"
                                  "void mid(double a, double b, double *m) { *m = 0.5 * (a + b); }\n"
                                  "// idealcheck: same as ref.py::mid\n"
                                  "void bad(double a, double b, double *m) { *m = 0.5 * (a - b); }\n")
    claims = sorted(_check(tmp_path)["claims"], key=lambda c: c["line"])
    assert [c["verdict"] for c in claims] == ["proved", "refuted"]
    assert "ref.py" in " ".join(claims[0]["dependencies"]) if "dependencies" in claims[0] else True


def test_formula_claims_in_kernel_files_stay_formulas(tmp_path):
    claim = _verdict(tmp_path, "k.c", "double f(double x) {\n  // idealcheck: (x + 1)**2 == x**2 + 2*x + 1\n"
                                      "  return x;\n}\n")
    assert claim["verdict"] == "proved" and claim["kind"] == "expression"


def test_help_does_not_load_tree_sitter():
    code = "import sys, verifier.cli.main as m\ntry:\n    m.main(['--help'])\nexcept SystemExit:\n    pass\n" \
           "print('tree_sitter' in sys.modules)"
    done = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True, timeout=120)
    assert done.stdout.strip().splitlines()[-1] == "False"


@pytest.mark.parametrize("k2, verdict", [("a*(d - c)", "proved"), ("a*(d + c)", "refuted")])
def test_audit_of_a_c_file_against_a_python_module(tmp_path, k2, verdict):
    (tmp_path / "ref.py").write_text("def cmul(a, b, c, d):\n    return a*c - b*d, a*d + b*c\n")
    (tmp_path / "fast.c").write_text(
        "void cmul(double a, double b, double c, double d, double *re, double *im) {\n"
        f"  double k1 = c*(a + b), k2 = {k2}, k3 = b*(c + d);\n  *re = k1 - k3; *im = k1 + k2;\n}}\n")
    done = subprocess.run([sys.executable, "-m", "verifier", "audit", "fast.c", "--against", "ref.py"],
                          cwd=tmp_path, capture_output=True, text=True, timeout=300,
                          env={"PYTHONPATH": str(ROOT), "PATH": "/usr/bin:/bin"})
    row = next(line for line in done.stdout.splitlines() if line.startswith("cmul "))
    assert row.split()[1] == verdict, done.stdout


@pytest.mark.parametrize("python_body, verdict", [
    ("return 1 + 2*x + 3*x**2", "proved"),
    ("return 1 + 2*x + 3*x**3", "refuted"),  # one-line bug in the Python version
])
def test_audit_of_a_python_module_against_a_c_file(cli, tmp_path, python_body, verdict):
    # Horner's rule (common practice): 1 + x*(2 + x*3) == 1 + 2x + 3x**2
    (tmp_path / "fast.c").write_text("double poly(double x) { return 1.0 + x * (2.0 + x * 3.0); }\n")
    (tmp_path / "port.py").write_text(f"def poly(x):\n    {python_body}\n")
    result = cli("audit", "port.py", "--against", "fast.c", "--format", "json", cwd=tmp_path)
    claims = json.loads(result.out)["claims"]
    assert [(c["path"], c["verdict"]) for c in claims] == [("port.py", verdict)], result.out
    if verdict == "refuted":
        witness = claims[0]["witness"]
        x = Fraction(witness["values"]["x"])
        # the left side is the Python function, the right side the C kernel
        assert Fraction(witness["left"]) == 1 + 2 * x + 3 * x**3
        assert Fraction(witness["right"]) == 1 + 2 * x + 3 * x**2
