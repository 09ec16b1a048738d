"""Whether a typed file name can be used: a report to write, a site to open,
a new site to start."""

from __future__ import annotations

import os
from pathlib import Path

from survey.api import InputError, format_for

from ...session import slug


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


def names_a_file(text: str) -> bool:
    """Whether a new site's answer is a path (to a .toml file) rather than a name."""
    return text.lower().endswith(".toml") or "/" in text


def new_site_path(text: str, work_root: Path) -> Path:
    """A new site's file: a typed path to a .toml file, or a site name, kept
    in its own folder under ``work_root``."""
    if names_a_file(text):
        return Path(text).expanduser()
    return work_root / slug(text) / "site.toml"


def check_new_site_path(text: str, work_root: Path) -> str | None:
    """Why ``text`` cannot start a new site (a name or a path), or None."""
    if not text:
        return "type the site's name (or a path ending in site.toml)"
    p = new_site_path(text, work_root)
    if p.suffix.lower() != ".toml":
        return "a site file name ends in .toml"
    if p.exists():
        return f"{p} already exists: open it instead, or choose another name"
    return None
