"""The bundled demo sites: invented scenarios shipped inside the package.

The source is the top-level ``demo_sites/`` folder of the repository; the build
reaches it through ``survey/demo_sites``, a link to that folder, and packs it
as package data (pyproject.toml), so an installed wheel carries it too.  ``demo:NAME`` names one as a site argument
(``leosite assess demo:alder-brook-farm``): :func:`resolve_site_path` turns it
into the demo's ``site.toml``.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from pathlib import Path

from .errors import InputError

PREFIX = "demo:"


@dataclass(frozen=True)
class DemoSite:
    folder: Path
    name: str  # the site's own [site] name
    blurb: str  # the first sentence of its opening comment

    @property
    def key(self) -> str:
        """What follows ``demo:`` (the folder's name)."""
        return self.folder.name


def demo_root() -> Path | None:
    """The folder holding the demo sites, or None if this install has none."""
    path = Path(__file__).resolve().parent / "demo_sites"  # a link to demo_sites/ in a checkout
    return path if path.is_dir() else None


def demo_sites() -> list[DemoSite]:
    """Each demo site with its name and the first sentence of its opening comment."""
    root = demo_root()
    if root is None:
        return []
    out = []
    for site_file in sorted(root.glob("*/site.toml")):
        text = site_file.read_text("utf-8")
        m = re.search(r'^name\s*=\s*"([^"]*)"', text, re.M)
        comment = " ".join(line.lstrip("# ").strip() for line in text.splitlines() if line.startswith("#"))
        blurb = comment.removeprefix("Invented demo site:").strip().split(".")[0]
        out.append(DemoSite(site_file.parent, m.group(1) if m else site_file.parent.name, blurb))
    return out


def bundled_demo(path: str | Path) -> DemoSite | None:
    """The demo site ``path`` points into, if it is one of the bundled ones."""
    root = demo_root()
    if root is None:
        return None
    try:
        rel = Path(path).resolve().relative_to(root.resolve())
    except ValueError:
        return None
    return next((d for d in demo_sites() if d.key == rel.parts[0]), None) if rel.parts else None


def resolve_site_path(path: str | Path) -> Path:
    """``path`` as a file path: ``demo:NAME`` becomes that demo's site.toml."""
    text = str(path)
    if not text.startswith(PREFIX):
        return Path(path)
    name = text[len(PREFIX):]
    demos = {d.key: d for d in demo_sites()}
    if name not in demos:
        known = ", ".join(sorted(demos)) or "none in this install"
        raise InputError(f"{text}: no such demo site (bundled: {known})")
    return demos[name].folder / "site.toml"
