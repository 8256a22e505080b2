"""Rust methods: `&self`, `&mut self` and `self` receivers, fields `self.x`, method calls on `self`, on
parameters and on locals of a struct type, struct literals.  The dot product and scaling identities are
common practice; each true claim has a one-line bug beside it."""
from __future__ import annotations

import json

SOURCE = """\
struct Vec3 { x: f64, y: f64, z: f64 }

impl Vec3 {
    // idealcheck: returns self.x*o.x + self.y*o.y + self.z*o.z
    fn dot(&self, o: &Vec3) -> f64 {
        self.x * o.x + self.y * o.y + self.z * o.z
    }

    // idealcheck: returns self.x**2 + self.y**2 + self.z**2
    fn norm2(&self) -> f64 {
        self.dot(self)
    }

    // idealcheck: returns self.x**2 + self.y**2
    fn norm2_bug(&self) -> f64 {
        self.dot(self)
    }

    // idealcheck: returns k*self.x, k*self.y, k*self.z
    fn scale(&mut self, k: f64) {
        self.x *= k;
        self.y *= k;
        self.z = self.z * k;
    }
}

// idealcheck: returns 4*(v.x**2 + v.y**2 + v.z**2)
fn doubled_norm2(v: &Vec3) -> f64 {
    let mut w = Vec3 { x: v.x, y: v.y, z: v.z };
    w.scale(2.0);
    w.norm2()
}

// idealcheck: returns 2*(v.x**2 + v.y**2 + v.z**2)
fn doubled_norm2_bug(v: &Vec3) -> f64 {
    let mut w = Vec3 { x: v.x, y: v.y, z: v.z };
    w.scale(2.0);
    w.norm2()
}

// idealcheck: returns v.x*v.x + v.y*v.y + v.z*v.z
fn through_parameter(v: &Vec3) -> f64 {
    v.dot(v)
}

// idealcheck: returns 0
fn unknown_method(v: &Vec3) -> f64 {
    v.length()
}
"""


def test_methods_with_self(cli, tmp_path):
    (tmp_path / "vec.rs").write_text(SOURCE)
    result = cli("check", "--no-cache", "--format", "json", "vec.rs", cwd=tmp_path)
    claims = json.loads(result.out)["claims"]
    names = {}
    lines = SOURCE.splitlines()
    for claim in claims:
        below = lines[claim["line"]].split("(")[0].split()[-1]
        names[below] = claim["verdict"]
    assert names == {
        "dot": "proved", "norm2": "proved", "norm2_bug": "refuted", "scale": "proved",
        "doubled_norm2": "proved", "doubled_norm2_bug": "refuted", "through_parameter": "proved",
        "unknown_method": "inconclusive",
    }
    unknown = next(c for c in claims if c["verdict"] == "inconclusive")
    assert "method call `.length()`" in unknown["reason"]
