"""Whether a typed file name can be used: a report to write, a site to open."""

from __future__ import annotations

import os
from pathlib import Path

from survey.api import InputError, format_for


def check_report_path(text: str) -> str | None:
    """Why a report file name cannot be used, or None."""
    if not text:
        return "type a file name ending in .pdf, .html or .json"
    path = Path(text).expanduser()
    try:
        format_for(path)
    except InputError as exc:
        return exc.problems[0].split(": ", 1)[-1]
    folder = path.parent if str(path.parent) else Path(".")
    if not folder.is_dir():
        return f"folder {folder} does not exist"
    if path.is_dir():
        return f"{path} is a folder"
    if not os.access(folder, os.W_OK) or (path.exists() and not os.access(path, os.W_OK)):
        return f"cannot write in {folder}: choose another folder"
    return None


def check_site_path(text: str) -> str | None:
    """Why ``text`` cannot be opened as a site, or None (a folder holding a
    site.toml will do)."""
    if not text:
        return "type the path of a site.toml file (or of its folder)"
    path = site_file_in(Path(text).expanduser())
    if not path.is_file():
        return f"{path}: no such file" if not path.exists() else f"{path}: not a file"
    return None


def site_file_in(path: Path) -> Path:
    return path / "site.toml" if path.is_dir() else path
