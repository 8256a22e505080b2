"""``[tool.idealcheck]`` in the nearest pyproject.toml, validated strictly.

Every key and type is checked; a mistake is a ``ConfigError`` naming the key and the file (the command
line turns it into exit status 2).  The ``given`` texts of named condition sets are parsed here too, so a
bad one is reported once, as a configuration error, rather than at every claim that uses it.
"""
from __future__ import annotations

import math
import sys
from dataclasses import dataclass, replace
from pathlib import Path
from typing import Literal

from verifier.claims.language import ClaimSyntaxError, parse_expression, parse_relation
from verifier.model.claim import NamedConditionSet
from verifier.model.expr import Var
from verifier.model.limits import DEFAULT_MEMORY_MB, DEFAULT_TIMEOUT_SECONDS
from verifier.pipeline.job import MAX_MEMORY_MB

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover - exercised on Python 3.10 only
    import tomli as tomllib

TABLE = "tool.idealcheck"
KNOWN_KEYS = ("paths", "include", "exclude", "conditions", "on_inconclusive", "timeout", "memory_mb", "jobs", "cache_dir",
              "accuracy", "max_file_kb", "baseline")
# Upper bound of the sampled points per claim: they are kept in memory.
MAX_ACCURACY_SAMPLES = 1_000_000
CONDITION_KEYS = ("vars", "given")
ACCURACY_KEYS = ("samples", "seed", "range", "ranges")
DEFAULT_CACHE_DIR = ".idealcheck_cache"  # relative to the folder of the pyproject.toml

OnInconclusive = Literal["fail", "warn"]
TomlTable = dict[str, object]


class ConfigError(Exception):
    """A bad configuration; the message names the key and the file."""


@dataclass(frozen=True)
class AccuracyConfig:
    """``[tool.idealcheck.accuracy]``: sampling for ``--accuracy`` (command-line options override it)."""

    samples: int | None = None
    seed: int | None = None
    range: tuple[float, float] | None = None  # for every variable
    ranges: tuple[tuple[str, float, float], ...] = ()  # per variable: ranges = { b = [1e3, 1e6] }


@dataclass(frozen=True)
class Config:
    path: Path | None  # the pyproject.toml used, None when there is none
    root: Path  # the folder of that file (globs and the cache folder are relative to it)
    paths: tuple[str, ...] = ()  # what the pytest plugin and the Python API check by default (relative to root)
    include: tuple[str, ...] = ()
    exclude: tuple[str, ...] = ()
    conditions: tuple[NamedConditionSet, ...] = ()
    on_inconclusive: OnInconclusive = "fail"
    timeout: float = DEFAULT_TIMEOUT_SECONDS  # seconds per claim
    memory_mb: int = DEFAULT_MEMORY_MB  # per worker process
    jobs: int | None = None  # worker processes; None: one per core
    cache_dir: str = DEFAULT_CACHE_DIR
    accuracy: AccuracyConfig = AccuracyConfig()
    max_file_kb: int | None = None  # size cap of a scanned file; None: the default (discover)
    baseline: str | None = None  # accepted results file, relative to root; None: the default one if present

    def named(self, name: str) -> NamedConditionSet | None:
        return next((item for item in self.conditions if item.name == name), None)


# ---------------------------------------------------------------- finding and reading the file


def _read_toml(path: Path) -> TomlTable:
    try:
        data = path.read_bytes()
    except OSError as exc:
        raise ConfigError(f"{path}: cannot read the file: {exc.strerror or exc}") from None
    try:
        text = data.decode("utf-8")
    except UnicodeDecodeError:
        raise ConfigError(f"{path}: not UTF-8 text") from None
    try:
        return tomllib.loads(text)
    except RecursionError:
        raise ConfigError(f"{path}: invalid TOML: nested too deeply to read") from None
    except tomllib.TOMLDecodeError as exc:
        message = str(exc)
        if "line" not in message:  # "at end of document": say which line that is
            message += f" (line {text.count(chr(10)) + 1}, the end of the file)"
        raise ConfigError(f"{path}: invalid TOML: {message}") from None


def _our_table(document: TomlTable, path: Path) -> TomlTable | None:
    tool = document.get("tool")
    if tool is None:
        return None
    if not isinstance(tool, dict):
        raise ConfigError(f"{path}: `tool` must be a table")
    table = tool.get("idealcheck")
    if table is None:
        return None
    if not isinstance(table, dict):
        raise ConfigError(f"{path}: `{TABLE}` must be a table, found {_type_name(table)}")
    return table


def find_config_file(start: Path) -> tuple[Path, TomlTable] | None:
    """The nearest pyproject.toml at or above ``start`` with a ``[tool.idealcheck]`` table.

    The search stops at the top of a git working tree so that a project never picks up an outer one.
    """
    folder = start.resolve()
    if not folder.is_dir():
        folder = folder.parent
    for candidate in (folder, *folder.parents):
        pyproject = candidate / "pyproject.toml"
        if pyproject.is_file():
            table = _our_table(_read_toml(pyproject), pyproject)
            if table is not None:
                return pyproject, table
        if (candidate / ".git").exists():
            break
    return None


def load_config(start: Path, explicit: Path | None = None) -> Config:
    """The configuration for a run started in ``start`` (or read from ``explicit``)."""
    if explicit is not None:
        explicit = Path(explicit)
        if not explicit.is_file():
            raise ConfigError(f"{explicit}: no such file")
        table = _our_table(_read_toml(explicit), explicit)
        root = explicit.resolve().parent
        return _build(table or {}, explicit, root)
    found = find_config_file(Path(start))
    if found is None:
        folder = Path(start).resolve()
        return Config(path=None, root=folder if folder.is_dir() else folder.parent)
    path, table = found
    return _build(table, path, path.parent)


# ---------------------------------------------------------------- validation


def _type_name(value: object) -> str:
    names = {bool: "a boolean", int: "an integer", float: "a number", str: "a string", list: "an array", dict: "a table"}
    return names.get(type(value), type(value).__name__)


def _string_list(value: object, key: str, path: Path) -> tuple[str, ...]:
    if not isinstance(value, list) or not all(isinstance(item, str) for item in value):
        raise ConfigError(f"{path}: `{key}` must be an array of strings, found {_type_name(value)}")
    return tuple(value)


def _positive_number(value: object, key: str, path: Path) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value) or value <= 0:
        raise ConfigError(f"{path}: `{key}` must be a positive number, found {value!r}")
    return float(value)


def _positive_int(value: object, key: str, path: Path) -> int:
    if isinstance(value, bool) or not isinstance(value, int) or value <= 0:
        raise ConfigError(f"{path}: `{key}` must be a positive integer, found {value!r}")
    return value


def _bounded_int(value: object, key: str, path: Path, most: int) -> int:
    number = _positive_int(value, key, path)
    if number > most:
        raise ConfigError(f"{path}: `{key}` must be at most {most}, found {value!r}")
    return number


def _build(table: TomlTable, path: Path, root: Path) -> Config:
    for key in table:
        if key not in KNOWN_KEYS:
            raise ConfigError(f"{path}: unknown key `{TABLE}.{key}` (known: {', '.join(KNOWN_KEYS)})")
    config = Config(path=path, root=root)  # the defaults, replaced key by key below
    if "paths" in table:
        config = replace(config, paths=_string_list(table["paths"], f"{TABLE}.paths", path))
    if "include" in table:
        config = replace(config, include=_string_list(table["include"], f"{TABLE}.include", path))
    if "exclude" in table:
        config = replace(config, exclude=_string_list(table["exclude"], f"{TABLE}.exclude", path))
    if "on_inconclusive" in table:
        config = replace(config, on_inconclusive=_on_inconclusive(table["on_inconclusive"], path))
    if "timeout" in table:
        config = replace(config, timeout=_positive_number(table["timeout"], f"{TABLE}.timeout", path))
    if "memory_mb" in table:
        config = replace(config, memory_mb=_bounded_int(table["memory_mb"], f"{TABLE}.memory_mb", path, MAX_MEMORY_MB))
    if "max_file_kb" in table:
        config = replace(config, max_file_kb=_bounded_int(table["max_file_kb"], f"{TABLE}.max_file_kb", path, MAX_MEMORY_MB))
    if "jobs" in table:
        config = replace(config, jobs=_positive_int(table["jobs"], f"{TABLE}.jobs", path))
    if "cache_dir" in table:
        value = table["cache_dir"]
        if not isinstance(value, str) or not value.strip():
            raise ConfigError(f"{path}: `{TABLE}.cache_dir` must be a non-empty string, found {value!r}")
        config = replace(config, cache_dir=value)
    if "baseline" in table:
        value = table["baseline"]
        if not isinstance(value, str) or not value.strip():
            raise ConfigError(f"{path}: `{TABLE}.baseline` must be a non-empty string (a file), found {value!r}")
        config = replace(config, baseline=value)
    if "conditions" in table:
        config = replace(config, conditions=_condition_sets(table["conditions"], path))
    if "accuracy" in table:
        config = replace(config, accuracy=_accuracy(table["accuracy"], path))
    return config


def _on_inconclusive(value: object, path: Path) -> OnInconclusive:
    if value == "fail":
        return "fail"
    if value == "warn":
        return "warn"
    raise ConfigError(f"{path}: `{TABLE}.on_inconclusive` must be \"fail\" or \"warn\", found {value!r}")


def _interval(value: object, key: str, path: Path) -> tuple[float, float]:
    if (
        not isinstance(value, list) or len(value) != 2
        or any(isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(v) for v in value)
        or not value[0] < value[1]
    ):
        raise ConfigError(f"{path}: `{key}` must be an array [low, high] of two finite numbers with low < high, "
                          f"found {value!r}")
    return float(value[0]), float(value[1])


def _accuracy(value: object, path: Path) -> AccuracyConfig:
    key = f"{TABLE}.accuracy"
    if not isinstance(value, dict):
        raise ConfigError(f"{path}: `{key}` must be a table, found {_type_name(value)}")
    for item in value:
        if item not in ACCURACY_KEYS:
            raise ConfigError(f"{path}: unknown key `{key}.{item}` (known: {', '.join(ACCURACY_KEYS)})")
    samples = _bounded_int(value["samples"], f"{key}.samples", path, MAX_ACCURACY_SAMPLES) if "samples" in value else None
    seed = value.get("seed")
    if seed is not None and (isinstance(seed, bool) or not isinstance(seed, int)):
        raise ConfigError(f"{path}: `{key}.seed` must be an integer, found {seed!r}")
    default = _interval(value["range"], f"{key}.range", path) if "range" in value else None
    ranges: list[tuple[str, float, float]] = []
    per_variable = value.get("ranges", {})
    if not isinstance(per_variable, dict):
        raise ConfigError(f"{path}: `{key}.ranges` must be a table of variable = [low, high], "
                          f"found {_type_name(per_variable)}")
    for name, interval in per_variable.items():
        low, high = _interval(interval, f"{key}.ranges.{name}", path)
        ranges.append((name, low, high))
    return AccuracyConfig(samples, seed, default, tuple(ranges))


def _condition_sets(value: object, path: Path) -> tuple[NamedConditionSet, ...]:
    key = f"{TABLE}.conditions"
    if not isinstance(value, dict):
        raise ConfigError(f"{path}: `{key}` must be a table of condition sets, found {_type_name(value)}")
    sets: list[NamedConditionSet] = []
    for name, entry in value.items():
        where = f"{key}.{name}"
        if not name.isidentifier():
            raise ConfigError(f"{path}: `{where}`: a condition set name must be an identifier")
        if not isinstance(entry, dict):
            raise ConfigError(f"{path}: `{where}` must be a table with `vars` and `given`, found {_type_name(entry)}")
        for item in entry:
            if item not in CONDITION_KEYS:
                raise ConfigError(f"{path}: unknown key `{where}.{item}` (known: vars, given)")
        for item in CONDITION_KEYS:
            if item not in entry:
                raise ConfigError(f"{path}: `{where}` needs `{item}`")
        variables = _string_list(entry["vars"], f"{where}.vars", path)
        given = _string_list(entry["given"], f"{where}.given", path)
        for variable in variables:
            try:
                parsed = parse_expression(variable)
            except ClaimSyntaxError:
                parsed = None
            if not isinstance(parsed, Var) or parsed.name != variable.strip():
                raise ConfigError(f"{path}: `{where}.vars`: {variable!r} is not a variable name")
        if len(set(variables)) != len(variables):
            raise ConfigError(f"{path}: `{where}.vars` names a variable twice")
        if not given:
            raise ConfigError(f"{path}: `{where}.given` is empty")
        for index, text in enumerate(given):
            try:
                parse_relation(text)
            except ClaimSyntaxError as exc:
                raise ConfigError(
                    f"{path}: `{where}.given[{index}]` = {text!r}: {exc.message} (character {exc.offset + 1})"
                ) from None
        sets.append(NamedConditionSet(name, tuple(v.strip() for v in variables), given))
    return tuple(sets)
