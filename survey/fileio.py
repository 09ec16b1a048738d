"""File helpers shared by every reader and writer."""

from __future__ import annotations

import os
import re
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
        _sweep_stale_temps(folder, path.name)
    except BaseException as exc:
        try:
            os.unlink(tmp)
        except FileNotFoundError:
            pass
        if isinstance(exc, OSError):
            raise InputError(f"{path}: cannot write: {exc.strerror or exc}") from None
        raise


STALE_TEMP_S = 600.0  # a temp file this old is left from a killed writer, not one at work


def _sweep_stale_temps(folder: Path, name: str) -> None:
    """Remove the temp files a killed writer of ``name`` left behind (SIGKILL
    runs no cleanup); the file itself is whole either way."""
    import glob
    import time

    now = time.time()
    for stale in folder.glob(f".{glob.escape(name)}.*.tmp"):
        try:
            if now - stale.stat().st_mtime > STALE_TEMP_S:
                stale.unlink()
        except OSError:
            pass


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


MAX_FILE_BYTES = 64 * 2**20  # any one input file (README, "Limits"): a full catalogue's OMM is a third of it


def read_text(path: str | os.PathLike, what: str = "file") -> str:
    """Read a UTF-8 text file, turning OS and decoding failures into InputError.
    A file over MAX_FILE_BYTES is refused before it is read."""
    path = Path(path)
    try:
        size = path.stat().st_size
        if size > MAX_FILE_BYTES:
            raise InputError(f"{path}: {size / 2**20:,.0f} MB, more than the limit of {MAX_FILE_BYTES // 2**20} MB "
                             f"for a {what}")
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


# a high surrogate escape not followed by a low one, or a low one not after a high one
_LONE_SURROGATE = re.compile(r"\\u[dD][89abAB][0-9a-fA-F]{2}(?!\\u[dD][c-fC-F][0-9a-fA-F]{2})"
                             r"|(?<!\\u[dD][89abAB][0-9a-fA-F]{2})\\u[dD][c-fC-F][0-9a-fA-F]{2}")


def parse_json(text: str, where: str, what: str = "JSON") -> object:
    """JSON text as Python values; a syntax error, nesting too deep or a number too
    long to read is one InputError line naming ``where`` (and the line)."""
    import json

    try:
        doc = json.loads(text)
        if _LONE_SURROGATE.search(text):  # only then re-encode (a whole catalogue is 20 MB): a lone one is no text
            json.dumps(doc, ensure_ascii=False).encode("utf-8")
        return doc
    except UnicodeEncodeError:
        m = _LONE_SURROGATE.search(text)
        line = text.count("\n", 0, m.start()) + 1 if m else 1
        raise InputError(f"{where}: line {line}: not valid {what}: an escape \\uD800-\\uDFFF that is not "
                         "half of a pair (not a Unicode character)") from None
    except json.JSONDecodeError as exc:
        raise InputError(f"{where}: line {exc.lineno}: not valid {what}: {exc.msg}") from None
    except RecursionError:
        raise InputError(f"{where}: not valid here: {what} nested too deeply") from None
    except ValueError as exc:
        raise InputError(f"{where}: not valid {what}: {exc}") from None
