"""The bundled demo sites in the text UI: the engine finds them
(``survey.api.demo_sites``, package data, so an installed wheel has them too);
the text UI opens a working copy, so edits never touch the bundled files."""

from __future__ import annotations

import shutil
from pathlib import Path

from survey.api import DemoSite, bundled_demo, demo_sites

__all__ = ["DemoSite", "bundled_demo", "copy_demo", "demo_sites"]


def copy_demo(demo: DemoSite, work_root: Path) -> Path:
    """A working copy of a demo site under ``work_root``; an existing copy is
    opened as it is, keeping earlier edits."""
    dest = Path(work_root) / demo.key
    if not (dest / "site.toml").exists():
        dest.parent.mkdir(parents=True, exist_ok=True)
        shutil.copytree(demo.folder, dest, dirs_exist_ok=True)
    return dest / "site.toml"
