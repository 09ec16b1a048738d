"""The open site as the text UI holds it, apart from any widget.

A ``Session`` is the last *valid* site (nothing invalid ever reaches the
engine), where it lives on disk and whether it is saved.  An ``Assessor`` runs a
site through the engine (``survey.pipeline``) and keeps the sky tracks of the
last site, window and fleet, so a horizon edit re-assesses in milliseconds.
Nothing here imports Textual: the app drives it, the tests drive it directly.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field, replace
from pathlib import Path

from survey.api import (
    FleetChoice,
    InputError,
    Site,
    SiteRun,
    TrackCache,
    load_site,
    run_site,
    save_site,
)


class Cancelled(Exception):
    """Raised inside an assessment when the user cancels it."""


class Assessor:
    """Runs sites through ``pipeline.run_site`` with one fleet and window choice,
    keeping the last sky tracks (``TrackCache``) between runs."""

    def __init__(self, fleet_choice: FleetChoice = FleetChoice(), start=None, hours=None, step_s=None,
                 min_elevation_deg=None):
        self.fleet_choice = fleet_choice
        self.start, self.hours, self.step_s = start, hours, step_s
        self.min_elevation_deg = min_elevation_deg
        self.cache = TrackCache()

    def run(self, site: Site, progress=None, cancelled=lambda: False) -> SiteRun:
        """Assess ``site``.  ``progress(fraction)`` is called while tracks are
        computed; when ``cancelled()`` turns true the run stops with Cancelled."""

        def report(fraction: float) -> None:
            if cancelled():
                raise Cancelled()
            if progress is not None:
                progress(fraction)

        return run_site(site, self.fleet_choice, self.start, self.hours, self.step_s, self.min_elevation_deg,
                        progress=report, cache=self.cache)

    def with_fleet(self, choice: FleetChoice) -> Assessor:
        """The same window with another fleet (a new, empty track cache)."""
        return Assessor(choice, self.start, self.hours, self.step_s, self.min_elevation_deg)


def fleet_choice_for(path: Path) -> FleetChoice:
    """A satellites file as a fleet choice: a .toml file is a Walker shell file,
    anything else element sets (TLE or OMM).  Reads the text now, so a bad file is
    reported before it replaces the current fleet."""
    path = Path(path)
    if path.suffix.lower() == ".toml":
        choice = FleetChoice(shells=path)
    else:
        choice = FleetChoice(elements=path)
    kind, name, text = choice.as_embedded()
    return FleetChoice(embedded=(kind, name, text))


@dataclass
class Session:
    """One open site.  ``site`` is None until the fields make a valid site (a
    new site has no coordinates yet); ``saved`` is the site as last written."""

    path: Path
    site: Site | None = None
    saved: Site | None = None
    safety_seen: bool = False  # the safety note is shown once before a site's first export
    reports: list[Path] = field(default_factory=list)

    @classmethod
    def open(cls, path: str | Path) -> Session:
        path = Path(path).resolve()
        site = load_site(path)
        return cls(path, site, site)

    @classmethod
    def new(cls, path: str | Path) -> Session:
        """A site not yet on disk; refuses to take over an existing file."""
        path = Path(path).resolve()
        if path.exists():
            raise InputError(f"{path}: already exists: open it instead of starting a new site there")
        if path.suffix.lower() != ".toml":
            raise InputError(f"{path}: a site file name ends in .toml")
        return cls(path)

    @property
    def dirty(self) -> bool:
        return self.site is not None and self.site != self.saved

    def update(self, site: Site) -> None:
        self.site = replace(site, path=self.path)

    def save(self) -> list[Path]:
        """Write the site (and its horizon CSV, if it has one) atomically."""
        if self.site is None:
            return []
        self.path.parent.mkdir(parents=True, exist_ok=True)
        written = save_site(self.site, self.path)
        self.saved = self.site
        return written



def slug(name: str) -> str:
    s = re.sub(r"[^a-z0-9]+", "-", name.lower()).strip("-")
    return s or "site"
