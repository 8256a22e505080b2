"""[tool.idealcheck] in pyproject.toml: lookup, defaults, strict validation with the key named.

The `[tool.NAME]` table convention is PEP 518; TOML syntax is TOML v1.0.0 (read with tomllib/tomli).
"""
from __future__ import annotations

from pathlib import Path

import pytest

from verifier.claims.language import parse_claim_text
from verifier.pipeline.config import Config, ConfigError, load_config


def write(folder: Path, text: str) -> Path:
    folder.mkdir(parents=True, exist_ok=True)
    path = folder / "pyproject.toml"
    path.write_text(text, encoding="utf-8")
    return path


FULL = """
[project]
name = "x"

[tool.idealcheck]
include = ["src/**"]
exclude = ["*.md", "src/gen"]
on_inconclusive = "warn"
timeout = 2.5
memory_mb = 512
jobs = 3
cache_dir = ".cache/ic"

[tool.idealcheck.conditions]
unit_quaternion = { vars = ["w", "x", "y", "z"], given = ["w**2 + x**2 + y**2 + z**2 == 1"] }
box = { vars = ["t"], given = ["0 < t", "t < 1"] }
"""


def test_full_config_is_read(tmp_path: Path) -> None:
    path = write(tmp_path, FULL)
    config = load_config(tmp_path)
    assert config.path == path and config.root == path.parent
    assert config.include == ("src/**",) and config.exclude == ("*.md", "src/gen")
    assert (config.on_inconclusive, config.timeout, config.memory_mb, config.jobs, config.cache_dir) == (
        "warn", 2.5, 512, 3, ".cache/ic")
    assert [c.name for c in config.conditions] == ["unit_quaternion", "box"]
    assert config.named("box").variables == ("t",) and config.named("box").given == ("0 < t", "t < 1")


def test_named_sets_from_config_work_in_claims(tmp_path: Path) -> None:
    write(tmp_path, FULL)
    config = load_config(tmp_path)
    parsed = parse_claim_text("a == a given box(s)", {c.name: c for c in config.conditions})
    assert [c.relation for c in parsed.conditions] == ["<", "<"]


def test_nearest_pyproject_with_our_table_wins(tmp_path: Path) -> None:
    write(tmp_path, "[tool.idealcheck]\ntimeout = 1\n")
    write(tmp_path / "pkg", "[project]\nname = 'inner'\n")  # no [tool.idealcheck]: keep looking upwards
    deep = tmp_path / "pkg" / "src" / "deep"
    deep.mkdir(parents=True)
    config = load_config(deep)
    assert config.path == tmp_path / "pyproject.toml" and config.timeout == 1.0
    write(tmp_path / "pkg" / "src", "[tool.idealcheck]\ntimeout = 4\n")
    assert load_config(deep).timeout == 4.0


def test_defaults_without_any_config(tmp_path: Path) -> None:
    (tmp_path / ".git").mkdir()  # the search stops at the top of a working tree
    config = load_config(tmp_path)
    assert config == Config(path=None, root=tmp_path.resolve())
    assert (config.on_inconclusive, config.timeout, config.memory_mb, config.jobs) == ("fail", 10.0, 2048, None)


def test_explicit_file(tmp_path: Path) -> None:
    path = write(tmp_path / "conf", "[tool.idealcheck]\njobs = 2\n")
    assert load_config(tmp_path, path).jobs == 2
    with pytest.raises(ConfigError, match="no such file"):
        load_config(tmp_path, tmp_path / "missing.toml")


@pytest.mark.parametrize(
    "body, words",
    [
        ("colour = 'red'", "unknown key `tool.idealcheck.colour`"),
        ("include = 'src'", "`tool.idealcheck.include` must be an array of strings"),
        ("exclude = [1]", "`tool.idealcheck.exclude` must be an array of strings"),
        ("on_inconclusive = 'ignore'", "`tool.idealcheck.on_inconclusive` must be \"fail\" or \"warn\""),
        ("timeout = -1", "`tool.idealcheck.timeout` must be a positive number"),
        ("timeout = 'ten'", "`tool.idealcheck.timeout` must be a positive number"),
        ("timeout = nan", "`tool.idealcheck.timeout` must be a positive number"),
        ("memory_mb = 1.5", "`tool.idealcheck.memory_mb` must be a positive integer"),
        ("jobs = true", "`tool.idealcheck.jobs` must be a positive integer"),
        ("jobs = 0", "`tool.idealcheck.jobs` must be a positive integer"),
        ("cache_dir = ''", "`tool.idealcheck.cache_dir` must be a non-empty string"),
        ("conditions = 3", "`tool.idealcheck.conditions` must be a table"),
        ("conditions = { s = 1 }", "`tool.idealcheck.conditions.s` must be a table"),
        ("conditions = { s = { given = ['x == 1'] } }", "`tool.idealcheck.conditions.s` needs `vars`"),
        ("conditions = { s = { vars = ['x'] } }", "`tool.idealcheck.conditions.s` needs `given`"),
        ("conditions = { s = { vars = 'x', given = ['x == 1'] } }", "`tool.idealcheck.conditions.s.vars` must be an array"),
        ("conditions = { s = { vars = ['x'], given = ['x == 1'], note = 'n' } }", "unknown key `tool.idealcheck.conditions.s.note`"),
        ("conditions = { s = { vars = ['x + 1'], given = ['x == 1'] } }", "`tool.idealcheck.conditions.s.vars`"),
        ("conditions = { s = { vars = ['x', 'x'], given = ['x == 1'] } }", "names a variable twice"),
        ("conditions = { s = { vars = ['x'], given = [] } }", "`tool.idealcheck.conditions.s.given` is empty"),
        ("conditions = { s = { vars = ['x'], given = ['x +'] } }", "`tool.idealcheck.conditions.s.given[0]`"),
        ("conditions = { s = { vars = ['x'], given = ['x == 1', 'foo(x) > 0'] } }", "given[1]` = 'foo(x) > 0': unknown function `foo`"),
        ("conditions = { s = { vars = ['x'], given = ['x'] } }", "must be a comparison"),
        ("conditions = { 'a-b' = { vars = ['x'], given = ['x == 1'] } }", "must be an identifier"),
    ],
)
def test_bad_values_name_the_key_and_the_file(tmp_path: Path, body: str, words: str) -> None:
    path = write(tmp_path, f"[tool.idealcheck]\n{body}\n")
    with pytest.raises(ConfigError) as info:
        load_config(tmp_path)
    assert words in str(info.value)
    assert str(path) in str(info.value)


@pytest.mark.parametrize(
    "text, line",
    [("[tool.idealcheck]\ntimeout = 1\nexclude = [\n", 4), ("[tool.idealcheck]\ntimeout = = 1\n", 2)],
)
def test_toml_syntax_error_names_file_and_line(tmp_path: Path, text: str, line: int) -> None:
    path = write(tmp_path, text)
    with pytest.raises(ConfigError) as info:
        load_config(tmp_path)
    assert str(path) in str(info.value) and "invalid TOML" in str(info.value)
    assert f"line {line}" in str(info.value)


def test_table_of_wrong_type(tmp_path: Path) -> None:
    write(tmp_path, "[tool]\nidealcheck = 3\n")
    with pytest.raises(ConfigError, match="`tool.idealcheck` must be a table"):
        load_config(tmp_path)
