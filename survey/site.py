"""Site model: the ``site.toml`` file (TOML 1.0), validated at load.

Every wrong value becomes one problem line naming the file and the field; all
problems are reported together.  Relative paths in a site file resolve against
the site file's folder.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from datetime import datetime, timezone
from pathlib import Path
from typing import TYPE_CHECKING

from .demos import resolve_site_path
from .errors import InputError, Problems
from .fileio import parse_toml, read_text
from .horizon import MAX_HORIZON_POINTS, HorizonProfile, parse_point, read_horizon_csv, too_many_points
from .photo.spec import PhotoSpec, photo_from_horizon_table
from .plan import PLAN_RADIUS_M, Plan, plan_from_site_table
from .tables import Table
from .terrain.spec import TerrainSpec, terrain_from_site_table
from .window import MAX_HOURS, MAX_STEP_S, MIN_STEP_S

if TYPE_CHECKING:
    from .platform import Platform

MOUNT_KINDS = ("fixed", "vehicle", "marine")
MIN_REASSIGN_S, MAX_REASSIGN_S = 1.0, 86_400.0  # a scheduling period of 1 s to a day (README, "Limits")
REFERENCES = ("true", "magnetic")


@dataclass(frozen=True)
class Mount:
    """Where the antenna is.  ``at`` = (east_m, north_m) on the site plan's local
    frame places it away from the survey point (typically a spot chosen from the
    spot ranking); None: at the survey point, where the horizon was measured."""

    kind: str = "fixed"  # fixed | vehicle | marine
    height_m: float = 0.0  # antenna height above ground (or deck)
    at: tuple[float, float] | None = None  # metres east, north of the site point


@dataclass(frozen=True)
class Terminal:
    """The terminal's usable sky: above ``min_elevation_deg`` and, if
    ``scan_half_angle_deg`` is set, within that cone around the boresight, which is
    tilted ``tilt_deg`` from the zenith toward ``tilt_azimuth_deg`` (true)."""

    min_elevation_deg: float = 25.0
    tilt_deg: float = 0.0
    tilt_azimuth_deg: float = 0.0
    scan_half_angle_deg: float | None = None


@dataclass(frozen=True)
class Criteria:
    """Verdict thresholds (fractions 0..1).  leosite's own defaults, chosen for a
    residential broadband service; set your own to match the service agreement.

    Each of blocked_fraction and interruption is graded against its pair of
    limits (at or below ``qualified_*`` -> qualified, at or below ``marginal_*``
    -> marginal, else not-qualified); the verdict is the worse of the two grades,
    and not-qualified whenever availability is below ``min_availability``.
    """

    qualified_max_blocked: float = 0.03
    marginal_max_blocked: float = 0.10
    qualified_max_interruption: float = 0.01
    marginal_max_interruption: float = 0.05
    min_availability: float = 0.95


@dataclass(frozen=True)
class Schedule:
    """Scheduling model (README, "What the figures mean"): at each reassignment
    instant, every ``reassign_s`` seconds, the highest usable satellite is
    assigned, not knowing the local obstructions; one that leaves usable sky is
    handed over at once.  ``reassign_s`` is the scheduling period: 15 s is
    leosite's default, not a fact about any network; set it to what your
    network uses."""

    reassign_s: float = 15.0


@dataclass(frozen=True)
class Site:
    name: str
    latitude_deg: float
    longitude_deg: float
    elevation_m: float = 0.0
    mount: Mount = Mount()
    terminal: Terminal = Terminal()
    horizon: HorizonProfile = HorizonProfile()
    criteria: Criteria = Criteria()
    schedule: Schedule = Schedule()
    window: dict = field(default_factory=dict)  # the [window] table as typed (start/hours/step_s)
    survey: dict = field(default_factory=dict)  # [survey]: surveyor, organisation, customer, notes, date
    path: Path | None = None
    plan: Plan | None = None  # [plan]: obstacles and candidate spots (survey/plan/)
    # [horizon] measured_height_m: the height above ground at the site point the
    # points were measured from.  While the antenna is there (no mount.at) it is
    # the mount height, kept in step by __post_init__; moving the mount with
    # dataclasses.replace then keeps the height the horizon was measured from.
    measured_height_m: float | None = None
    photo: PhotoSpec | None = None  # [horizon] photo: a panorama or fisheye shot (survey/photo/)
    platform: Platform | None = None  # [platform]: a moving install's heading, attitude, route (survey/platform/)
    terrain: TerrainSpec | None = None  # [terrain]: the elevation model (survey/terrain/)

    def __post_init__(self):
        if self.mount.at is None:
            object.__setattr__(self, "measured_height_m", self.mount.height_m)

    @property
    def antenna_height_m(self) -> float:
        """Antenna height: ground elevation plus mount height, metres.  Used as the
        height above the WGS84 ellipsoid; the geoid separation (within about
        +-100 m) moves a LEO satellite's elevation by well under 0.01 degrees."""
        return self.elevation_m + self.mount.height_m

    @property
    def horizon_height_m(self) -> float:
        """Height above ground (m) at the site point that the horizon points were
        measured from: ``measured_height_m``, or the mount height when that is
        not known (a placed mount's file without ``[horizon] measured_height_m``)."""
        return self.mount.height_m if self.measured_height_m is None else self.measured_height_m


def parse_time(text, where: str, problems: Problems) -> datetime | None:
    """ISO 8601 UTC time, e.g. 2026-06-01T00:00:00Z (a date alone means 00:00 UTC)."""
    if isinstance(text, datetime):
        dt = text
    elif isinstance(text, str):
        try:
            dt = datetime.fromisoformat(text.strip().replace("Z", "+00:00"))
        except ValueError:
            problems.add(where, f"expected an ISO 8601 UTC time like 2026-06-01T00:00:00Z, got {text!r}")
            return None
    else:
        try:  # TOML local dates parse to datetime.date
            dt = datetime(text.year, text.month, text.day)
        except AttributeError:
            problems.add(where, f"expected an ISO 8601 UTC time, got {text!r}")
            return None
    if dt.tzinfo is None:
        dt = dt.replace(tzinfo=timezone.utc)
    return dt.astimezone(timezone.utc)


def load_site(path: str | Path) -> Site:
    """Read and validate a site file (or ``demo:NAME``, a bundled demo site: see
    demos.py); raises InputError listing every problem."""
    path = resolve_site_path(path)
    return site_from_dict(parse_toml(read_text(path, "site file"), str(path)), path)


def site_from_dict(doc: dict, path: Path) -> Site:
    problems = Problems(str(path))
    for key in doc:
        if key not in ("site", "mount", "terminal", "horizon", "window", "criteria", "schedule", "survey",
                       "plan", "platform", "terrain"):
            problems.add(key, "unknown table (expected site, mount, terminal, horizon, window, "
                              "criteria, schedule, survey, plan, platform, terrain)")
    if "site" not in doc:
        problems.add("site", "missing table [site] with name, latitude, longitude")
    s = Table(doc.get("site", {}), "site", problems, ("name", "latitude", "longitude", "elevation_m"))
    name = s.text("name", required=True) or path.stem
    lat = s.number("latitude", 0.0, -90.0, 90.0, required=True)
    lon = s.number("longitude", 0.0, -180.0, 180.0, required=True)
    origin_ok = not any(f": site.{k}: " in p for p in problems.items for k in ("latitude", "longitude"))
    elev = s.number("elevation_m", 0.0, -500.0, 9000.0)

    m = Table(doc.get("mount", {}), "mount", problems, ("kind", "height_m", "east_m", "north_m"))
    mount = Mount(m.text("kind", "fixed", choices=MOUNT_KINDS), m.number("height_m", 0.0, 0.0, 500.0),
                  _mount_at(m, problems))

    t = Table(doc.get("terminal", {}), "terminal", problems,
               ("min_elevation_deg", "tilt_deg", "tilt_azimuth_deg", "scan_half_angle_deg"))
    terminal = Terminal(
        t.number("min_elevation_deg", 25.0, 0.0, 90.0),
        t.number("tilt_deg", 0.0, 0.0, 90.0),
        t.number("tilt_azimuth_deg", 0.0, 0.0, 360.0),
        t.number("scan_half_angle_deg", None, 0.0, 180.0, positive=True),
    )

    h = Table(doc.get("horizon", {}), "horizon", problems, ("reference", "points", "file", "measured_height_m",
                                                                 "photo", "frame"))
    reference = h.text("reference", "true", choices=REFERENCES)
    measured_height = h.number("measured_height_m", None, 0.0, 500.0)
    if measured_height is not None and "east_m" not in m.data and "north_m" not in m.data:
        problems.add("horizon.measured_height_m", "only with mount.east_m and mount.north_m: without them "
                                                  "the antenna is where the horizon was measured")
    points = []
    if "points" in h.data and "file" in h.data:
        problems.add("horizon", "give either points or file, not both")
    raw_points = h.data.get("points", [])
    if not isinstance(raw_points, list):
        problems.add("horizon.points", "expected a list of [azimuth_deg, elevation_deg, ...]")
        raw_points = []
    if len(raw_points) > MAX_HORIZON_POINTS:
        problems.add("horizon.points", f"{len(raw_points):,} points, {too_many_points()}")
        raw_points = []
    for i, raw in enumerate(raw_points):
        p = parse_point(raw, f"horizon.points[{i}]", problems)
        if p is not None:
            points.append(p)
    photo = photo_from_horizon_table(h.data.get("photo"), path, problems)
    hfile = h.text("file", "")
    if hfile:
        try:
            points.extend(read_horizon_csv(path.parent / hfile))
        except InputError as exc:
            problems.items.extend(exc.problems)

    w = Table(doc.get("window", {}), "window", problems, ("start", "hours", "step_s"))
    window = {}
    if "start" in w.data:
        start = parse_time(w.data["start"], "window.start", problems)
        if start is not None:
            window["start"] = start
    hours = w.number("hours", None, positive=True, hi=MAX_HOURS)
    if hours is not None:
        window["hours"] = hours
    step = w.number("step_s", None, lo=MIN_STEP_S, hi=MAX_STEP_S)
    if step is not None:
        window["step_s"] = step

    names = ("qualified_max_blocked", "marginal_max_blocked", "qualified_max_interruption",
             "marginal_max_interruption", "min_availability")
    c = Table(doc.get("criteria", {}), "criteria", problems, names)
    criteria = Criteria(**{k: c.number(k, getattr(Criteria(), k), 0.0, 1.0) for k in names})
    for what in ("blocked", "interruption"):
        if getattr(criteria, f"marginal_max_{what}") < getattr(criteria, f"qualified_max_{what}"):
            problems.add(f"criteria.marginal_max_{what}", f"must be at least criteria.qualified_max_{what}")

    sc = Table(doc.get("schedule", {}), "schedule", problems, ("reassign_s",))
    schedule = Schedule(sc.number("reassign_s", Schedule().reassign_s, MIN_REASSIGN_S, MAX_REASSIGN_S))

    sv = Table(doc.get("survey", {}), "survey", problems, ("surveyor", "organisation", "customer", "notes", "date"))
    survey = {k: sv.text(k) for k in ("surveyor", "organisation", "customer", "notes") if k in sv.data}
    if "date" in sv.data:  # when the survey was done; kept as ISO 8601 UTC text
        when = parse_time(sv.data["date"], "survey.date", problems)
        if when is not None:
            survey["date"] = when.strftime("%Y-%m-%dT%H:%M:%SZ")

    plan = None
    if "plan" in doc:  # a GeoJSON plan is placed by the site point: only with a valid one
        plan = plan_from_site_table(doc["plan"], path, problems, (lat, lon) if origin_ok else None)

    from .platform import platform_from_site  # the platform package imports the engine, which imports this

    platform = platform_from_site(doc, path, problems)
    terrain = terrain_from_site_table(doc["terrain"], path, problems) if "terrain" in doc else None
    problems.raise_if_any()
    return Site(name, lat, lon, elev, mount, terminal, HorizonProfile(tuple(points), reference),
                criteria, schedule, window, survey, path, plan, measured_height, photo, platform, terrain)


def _mount_at(m: Table, problems: Problems) -> tuple[float, float] | None:
    """[mount] east_m and north_m: both or neither, within PLAN_RADIUS_M of the
    site point like plan coordinates."""
    given = [k for k in ("east_m", "north_m") if k in m.data]
    if len(given) == 1:
        other = "north_m" if given[0] == "east_m" else "east_m"
        problems.add(f"mount.{other}", "missing: give mount.east_m and mount.north_m together "
                                       "(metres east and north of the site point)")
        return None
    if not given:
        return None
    r = PLAN_RADIUS_M
    before = len(problems.items)
    east, north = m.number("east_m", None, -r, r), m.number("north_m", None, -r, r)
    if len(problems.items) > before:
        return None
    if math.hypot(east, north) > r:
        problems.add("mount.east_m", f"with mount.north_m {math.hypot(east, north):,.0f} m from the site point "
                                     f"(at most {r:,.0f} m, as on a site plan)")
        return None
    return east, north
