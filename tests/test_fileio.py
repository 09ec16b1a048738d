"""Atomic writes: whole files or none, with ordinary permissions."""

from __future__ import annotations

import os
import stat

import pytest

from survey.errors import InputError
from survey.fileio import atomic_write_bytes


def test_new_file_gets_umask_mode(tmp_path):
    old = os.umask(0o022)
    try:
        atomic_write_bytes(tmp_path / "a.png", b"x")
    finally:
        os.umask(old)
    assert stat.S_IMODE((tmp_path / "a.png").stat().st_mode) == 0o644
    assert (tmp_path / "a.png").read_bytes() == b"x"


def test_replacing_keeps_mode_and_leaves_no_temp(tmp_path):
    p = tmp_path / "r.json"
    p.write_bytes(b"old")
    p.chmod(0o640)
    atomic_write_bytes(p, b"new")
    assert p.read_bytes() == b"new" and stat.S_IMODE(p.stat().st_mode) == 0o640
    assert sorted(x.name for x in tmp_path.iterdir()) == ["r.json"]


def test_failure_mid_write_keeps_the_old_file(tmp_path, monkeypatch):
    p = tmp_path / "keep.txt"
    p.write_bytes(b"precious")

    def boom(*a, **k):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(os, "fsync", boom)
    with pytest.raises(InputError) as exc:
        atomic_write_bytes(p, b"half")
    assert exc.value.problems == [f"{p}: cannot write: No space left on device"]
    assert p.read_bytes() == b"precious"
    assert sorted(x.name for x in tmp_path.iterdir()) == ["keep.txt"]


def test_missing_folder_is_input_error(tmp_path):
    with pytest.raises(InputError):
        atomic_write_bytes(tmp_path / "no" / "x.png", b"x")


def test_a_symbolic_link_is_written_through(tmp_path):
    """--out through a link: the target gets the new bytes, the link stays a link."""
    from survey.fileio import atomic_write_bytes

    real = tmp_path / "reports" / "site.pdf"
    real.parent.mkdir()
    real.write_bytes(b"old")
    link = tmp_path / "latest.pdf"
    link.symlink_to(real)
    atomic_write_bytes(link, b"new")
    assert link.is_symlink() and real.read_bytes() == b"new" and link.read_bytes() == b"new"
    assert sorted(p.name for p in real.parent.iterdir()) == ["site.pdf"]  # no temp file left behind
