"""C++ member functions: implicit members (`x` and `this->x`), const and non-const methods, calls of
members on the same object, on reference parameters and on locals, definitions inside and outside the
class.  The dot product and scaling identities are common practice; each has a one-line bug beside it."""
from __future__ import annotations

import json

import pytest

SOURCE = """\
struct Vec3 {
    double x, y, z;
    // idealcheck: returns x*x + y*y + z*z
    double norm2() const { return x * x + y * y + z * z; }
    // idealcheck: returns this->x*o.x + y*o.y + z*o.z
    double dot(const Vec3& o) const { return this->x * o.x + y * o.y + z * o.z; }
    // idealcheck: returns x**2 + y**2 + z**2
    double norm2_again() const { return dot(*this); }
    // idealcheck: returns x**2 + y**2
    double norm2_bug() const { return this->dot(*this); }
    // idealcheck: returns k*x, k*y, k*z
    void scale(double k) { x *= k; y *= k; z = z * k; }
    double sum() const;
};

// idealcheck: returns x + y + z
double Vec3::sum() const { return x + y + z; }

// idealcheck: returns 4*(v.x**2 + v.y**2 + v.z**2)
double doubled(const Vec3& v) {
    Vec3 w = v;
    w.scale(2.0);
    return w.norm2();
}

// idealcheck: returns 2*(v.x**2 + v.y**2 + v.z**2)
double doubled_bug(const Vec3& v) {
    Vec3 w = v;
    w.scale(2.0);
    return w.norm2();
}

// idealcheck: returns p.x + p.y + p.z
double through_pointer(const Vec3* p) { return p->sum(); }
"""

EXPECTED = {3: "proved", 5: "proved", 7: "proved", 9: "refuted", 11: "proved", 16: "proved", 19: "proved",
            26: "refuted", 33: "proved"}


@pytest.mark.parametrize("name", ["vec.cpp", "vec.cu"])
def test_member_functions(cli, tmp_path, name):
    (tmp_path / name).write_text(SOURCE)
    result = cli("check", "--no-cache", "--format", "json", name, cwd=tmp_path)
    verdicts = {c["line"]: c["verdict"] for c in json.loads(result.out)["claims"]}
    assert verdicts == EXPECTED, result.out
