"""Hostile trees: nothing is skipped unseen, only regular files are read, and no read can block or grow.

Conventions used (common practice): ``pyvenv.cfg`` marks a virtual environment (PEP 405), ``CACHEDIR.TAG``
a cache folder (Cache Directory Tagging Specification); reading a FIFO with nobody writing blocks, reading
``/dev/zero`` never ends; a name that is not valid UTF-8 is kept by Python as surrogate escapes.
"""
from __future__ import annotations

import os
from pathlib import Path

import pytest

from verifier.pipeline.discover import collect
from verifier.pipeline.reading import read_regular_file

CLAIM = "// idealcheck: x == y\n"


def _write(root: Path, relative: str, text: str = CLAIM) -> Path:
    path = root / relative
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_text(text, encoding="utf-8")
    return path


def _skipped(discovery) -> dict[str, str]:
    return {item.path: item.kind for item in discovery.skipped}


@pytest.mark.parametrize("marker", ["CACHEDIR.TAG", "pyvenv.cfg"])
def test_a_folder_left_out_for_its_marker_file_is_listed(tmp_path: Path, marker: str) -> None:
    _write(tmp_path, "src/w.c")
    (tmp_path / "src" / marker).touch()
    discovery = collect(["."], cwd=tmp_path)
    assert discovery.files == ()
    assert _skipped(discovery) == {"src/": "folder"}
    assert marker in discovery.skipped[0].reason


def test_folders_left_out_by_name_are_listed_but_the_config_excludes_silently(tmp_path: Path) -> None:
    _write(tmp_path, "node_modules/x.js")
    _write(tmp_path, ".git/hooks/y.c")  # version-control metadata is never tracked content
    _write(tmp_path, "third_party/.venv/z.c")
    discovery = collect(["."], cwd=tmp_path, exclude=["third_party/**"])
    assert _skipped(discovery) == {"node_modules/": "folder"}


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="no FIFOs here")
def test_a_fifo_is_listed_not_opened(tmp_path: Path) -> None:
    os.mkfifo(tmp_path / "p.c")
    (tmp_path / "sub").mkdir()
    os.mkfifo(tmp_path / "sub" / "q.c")
    named = collect(["p.c"], cwd=tmp_path)  # named on the command line
    walked = collect(["."], cwd=tmp_path)
    assert _skipped(named) == {"p.c": "not-regular"} and "FIFO" in named.skipped[0].reason
    assert _skipped(walked) == {"p.c": "not-regular", "sub/q.c": "not-regular"}


@pytest.mark.skipif(not os.path.exists("/dev/zero"), reason="no /dev/zero here")
def test_devices_are_never_read(tmp_path: Path) -> None:
    # a character device streams forever (/dev/zero) or blocks (/proc/kmsg): it is refused by its type
    for device in ("/dev/zero", "/dev/null"):
        text, problem, skipped = read_regular_file(device, "d.c", 1024)
        assert text is None and problem is None and skipped is not None and skipped.kind == "not-regular"
    assert _skipped(collect(["zero"], cwd="/dev")) == {"zero": "not-regular"}
    (tmp_path / "z.c").symlink_to("/dev/zero")
    assert _skipped(collect(["."], cwd=tmp_path)) == {"z.c": "link"}  # out of the scanned folder


def test_a_link_inside_the_roots_to_a_device_is_not_read(tmp_path: Path) -> None:
    # the scanned root is /dev itself here, so the link does not lead out of it
    if not os.path.exists("/dev/null"):
        pytest.skip("no /dev/null here")
    discovery = collect(["null"], cwd="/dev")
    assert _skipped(discovery) == {"null": "not-regular"}


def test_a_symbolic_link_loop_is_listed_not_a_crash(tmp_path: Path) -> None:
    (tmp_path / "a.c").symlink_to("b.c")
    (tmp_path / "b.c").symlink_to("a.c")
    _write(tmp_path, "ok.c")
    discovery = collect(["."], cwd=tmp_path)
    assert [f.path for f in discovery.files] == ["ok.c"]
    assert _skipped(discovery) == {"a.c": "link", "b.c": "link"}
    assert "loop" in discovery.skipped[0].reason
    assert _skipped(collect(["a.c"], cwd=tmp_path)) == {"a.c": "link"}


def test_links_out_of_the_roots_broken_or_to_folders_are_listed(tmp_path: Path) -> None:
    outside = _write(tmp_path, "outside/secret.c")
    _write(tmp_path, "proj/src/a.c")
    (tmp_path / "proj" / "out.c").symlink_to(outside)
    (tmp_path / "proj" / "in.c").symlink_to(tmp_path / "proj" / "src" / "a.c")
    (tmp_path / "proj" / "gone.c").symlink_to(tmp_path / "nowhere.c")
    (tmp_path / "proj" / "folder").symlink_to(tmp_path / "proj" / "src", target_is_directory=True)
    discovery = collect(["."], cwd=tmp_path / "proj")
    assert [f.path for f in discovery.files] == ["in.c", "src/a.c"]
    assert _skipped(discovery) == {"out.c": "link", "gone.c": "link", "folder/": "link"}


def test_the_size_cap_is_reported(tmp_path: Path) -> None:
    _write(tmp_path, "big.c", CLAIM + "// " + "x" * 4000 + "\n")
    _write(tmp_path, "small.c")
    discovery = collect(["."], cwd=tmp_path, max_file_bytes=1024)
    assert [f.path for f in discovery.files] == ["small.c"]
    assert _skipped(discovery) == {"big.c": "too-large"} and "1 KB" in discovery.skipped[0].reason


def test_a_name_that_is_not_utf8_is_read_and_kept(tmp_path: Path) -> None:
    name = os.fsdecode(b"bad\xff.c")
    with open(os.path.join(os.fsencode(tmp_path), b"bad\xff.c"), "wb") as handle:
        handle.write(CLAIM.encode())
    discovery = collect(["."], cwd=tmp_path)
    assert [f.path for f in discovery.files] == [name]
