"""File helpers shared by every reader and writer."""

from __future__ import annotations

import os
from pathlib import Path

from .errors import InputError


def atomic_write_bytes(path: str | os.PathLike, data: bytes) -> None:
    """Write ``data`` to ``path`` via a temp file in the same folder and a rename,
    so a crash or a full disk never leaves a truncated file behind.  A symbolic
    link is written through: its target is replaced (atomically, in the target's
    folder) and the link stays a link.  The folder is synced after the rename, so
    the new name survives a power cut too."""
    import tempfile  # only writers need it; keeps start-up short for reads

    given = Path(path)
    path = Path(os.path.realpath(given)) if given.is_symlink() else given
    folder = path.parent if str(path.parent) else Path(".")
    if not folder.is_dir():
        raise InputError(f"{path}: folder {folder} does not exist")
    try:
        fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=folder)
    except OSError as exc:
        raise InputError(f"{path}: cannot write here: {exc.strerror}") from None
    try:
        # mkstemp makes the file private (0600); give it the mode a plain open()
        # would, or keep the mode of the file it replaces.
        try:
            mode = path.stat().st_mode & 0o7777
        except FileNotFoundError:
            mask = os.umask(0)
            os.umask(mask)
            mode = 0o666 & ~mask
        os.chmod(tmp, mode)
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, path)
        _sync_folder(folder)
    except BaseException as exc:
        try:
            os.unlink(tmp)
        except FileNotFoundError:
            pass
        if isinstance(exc, OSError):
            raise InputError(f"{path}: cannot write: {exc.strerror or exc}") from None
        raise


def _sync_folder(folder: Path) -> None:
    """fsync a folder so a rename in it is on disk (POSIX; a no-op where folders
    cannot be opened, as on Windows)."""
    try:
        fd = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(fd)
    except OSError:
        pass
    finally:
        os.close(fd)


def atomic_write_text(path: str | os.PathLike, text: str) -> None:
    atomic_write_bytes(path, text.encode("utf-8"))


def read_text(path: str | os.PathLike, what: str = "file") -> str:
    """Read a UTF-8 text file, turning OS and decoding failures into InputError."""
    path = Path(path)
    try:
        raw = path.read_bytes()
    except FileNotFoundError:
        raise InputError(f"{path}: {what} not found") from None
    except IsADirectoryError:
        raise InputError(f"{path}: is a folder, expected a {what}") from None
    except OSError as exc:
        raise InputError(f"{path}: cannot read {what}: {exc.strerror}") from None
    try:
        return raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = raw[: exc.start].count(b"\n") + 1
        raise InputError(f"{path}: line {line}: not UTF-8 text (byte {exc.start})") from None


def parse_toml(text: str, where: str) -> dict:
    """TOML text as a dict; a syntax error is one InputError line naming ``where``."""
    import tomllib

    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"{where}: not valid TOML: {exc}") from None
    except RecursionError:
        raise InputError(f"{where}: not valid here: arrays or tables nested too deeply") from None
    except ValueError as exc:  # e.g. an integer of more digits than Python converts
        raise InputError(f"{where}: not valid TOML: {exc}") from None


def parse_json(text: str, where: str, what: str = "JSON") -> object:
    """JSON text as Python values; a syntax error, nesting too deep or a number too
    long to read is one InputError line naming ``where`` (and the line)."""
    import json

    try:
        return json.loads(text)
    except json.JSONDecodeError as exc:
        raise InputError(f"{where}: line {exc.lineno}: not valid {what}: {exc.msg}") from None
    except RecursionError:
        raise InputError(f"{where}: not valid here: {what} nested too deeply") from None
    except ValueError as exc:
        raise InputError(f"{where}: not valid {what}: {exc}") from None
