"""The ``[platform]`` table: how a vehicle or vessel turns, tilts and travels.

Read at the input edge like every other table (README, "Moving installs"): one
problem line per wrong value, naming the file and the field.  The presets (sea
states and roadside canyons) are leosite's own, documented in the README; they
are round numbers chosen to span what an installer meets, not measurements.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

from ..errors import InputError, Problems
from ..tables import Table, is_number

HEADING_MODES = ("fixed", "uniform", "histogram", "route")
SEAS = ("regular", "random")
FRAMES = ("true", "body")
MAX_HISTOGRAM_BINS = 360


@dataclass(frozen=True)
class Attitude:
    """A static heel (degrees, positive: starboard side down) and roll and pitch
    motion: sinusoids of the given amplitude and period (``sea = "regular"``), or
    a random sea (``"random"``) whose significant amplitude (twice the standard
    deviation, as a significant wave height is four: narrow-band Rayleigh
    statistics) is the given one.  Pitch positive: bow up."""

    heel_deg: float = 0.0
    roll_deg: float = 0.0
    roll_period_s: float = 8.0
    pitch_deg: float = 0.0
    pitch_period_s: float = 6.0
    sea: str = "regular"
    name: str = ""  # the sea-state preset it came from, or ""

    @property
    def still(self) -> bool:
        return self.heel_deg == 0.0 and self.roll_deg == 0.0 and self.pitch_deg == 0.0

    def text(self) -> str:
        if self.still:
            return "level, no motion"
        parts = []
        if self.heel_deg:
            parts.append(f"heel {self.heel_deg:g}° to {'starboard' if self.heel_deg > 0 else 'port'}")
        kind = "significant" if self.sea == "random" else "amplitude"
        if self.roll_deg:
            parts.append(f"roll {self.roll_deg:g}° {kind}, {self.roll_period_s:g} s")
        if self.pitch_deg:
            parts.append(f"pitch {self.pitch_deg:g}° {kind}, {self.pitch_period_s:g} s")
        sea = f" ({self.name} sea)" if self.name else (" (random sea)" if self.sea == "random" and
                                                       (self.roll_deg or self.pitch_deg) else "")
        return ", ".join(parts) + sea


# Sea states: leosite's own presets (README, "Sea states"), random seas.
SEA_STATES = {
    "calm": Attitude(roll_deg=1.0, roll_period_s=8.0, pitch_deg=0.5, pitch_period_s=6.0, sea="random", name="calm"),
    "moderate": Attitude(roll_deg=5.0, roll_period_s=8.0, pitch_deg=2.0, pitch_period_s=6.0, sea="random",
                         name="moderate"),
    "rough": Attitude(roll_deg=12.0, roll_period_s=9.0, pitch_deg=5.0, pitch_period_s=7.0, sea="random",
                      name="rough"),
}


@dataclass(frozen=True)
class Canyon:
    """Buildings or trees ``height_m`` tall lining a road ``width_m`` wide, the
    vehicle in the middle: el(a) = atan((H - h) |sin a| / (W / 2)), a the angle
    to the direction of travel, h the antenna height (the street-canyon geometry)."""

    name: str
    height_m: float
    width_m: float


# Roadside canyons: leosite's own presets (README, "Roadside canyons").
CANYONS = {
    "open-highway": Canyon("open-highway", 4.0, 40.0),
    "tree-lined-lane": Canyon("tree-lined-lane", 14.0, 7.0),
    "town-street": Canyon("town-street", 12.0, 16.0),
}


@dataclass(frozen=True)
class Route:
    """A GPX track read by ``route.read_route``: times (UTC, seconds since 1970),
    latitude and longitude (degrees), elevation (m, None where the file has none)."""

    source: str
    times_s: tuple[float, ...]
    latitude_deg: tuple[float, ...]
    longitude_deg: tuple[float, ...]
    elevation_m: tuple[float | None, ...]
    warnings: tuple[str, ...] = ()


@dataclass(frozen=True)
class Platform:
    """A moving install: how its heading is known, its attitude, a roadside
    canyon, and the frame its horizon points are given in (``frame``: "body",
    clockwise from the bow or the vehicle's front, elevations above the deck)."""

    heading_mode: str = "uniform"
    heading_deg: float = 0.0
    histogram: tuple[float, ...] = ()  # weights of equal bins, the first centred on the bow pointing north
    route: Route | None = None
    attitude: Attitude = Attitude()
    canyon: Canyon | None = None
    frame: str = "true"

    def heading_text(self) -> str:
        if self.heading_mode == "fixed":
            return f"fixed heading {self.heading_deg:g}°"
        if self.heading_mode == "uniform":
            return "all headings equally likely"
        if self.heading_mode == "histogram":
            return f"heading histogram of {len(self.histogram)} bins"
        return f"route {Path(self.route.source).name} ({len(self.route.times_s)} points)"


PLATFORM_KEYS = ("heading_deg", "headings", "route", "heel_deg", "roll_deg", "roll_period_s", "pitch_deg",
                 "pitch_period_s", "sea", "sea_state", "canyon", "canyon_height_m", "canyon_width_m")


def platform_from_site(doc: dict, path: Path, problems: Problems) -> Platform | None:
    """The site file's ``[platform]`` table (and ``[horizon] frame``), or None
    without one.  A platform needs ``[mount] kind = "vehicle"`` or ``"marine"``;
    with horizon points it needs ``frame = "body"``."""
    horizon = doc.get("horizon") if isinstance(doc.get("horizon"), dict) else {}
    frame = horizon.get("frame", "true")
    if frame not in FRAMES:
        problems.add("horizon.frame", f"{frame!r} is not one of: {', '.join(FRAMES)}")
        frame = "true"
    if "platform" not in doc:
        if frame == "body":
            problems.add("horizon.frame", "\"body\" needs a [platform] table (mount kind vehicle or marine)")
        return None
    mount = doc.get("mount") if isinstance(doc.get("mount"), dict) else {}
    kind = mount.get("kind", "fixed")
    if kind not in ("vehicle", "marine"):
        problems.add("platform", f"a [platform] table is for mount.kind \"vehicle\" or \"marine\", not {kind!r}")
    if horizon.get("points") or horizon.get("file"):
        if frame != "body":
            problems.add("horizon.frame", "with a [platform] table the horizon turns with the platform: set "
                                          "frame = \"body\" (bearings clockwise from the bow or the front)")
        elif horizon.get("reference", "true") != "true":
            problems.add("horizon.reference", "does not apply to body-frame bearings (they are taken from the "
                                              "bow or the front, not from north): remove it")
    plan = doc.get("plan") if isinstance(doc.get("plan"), dict) else {}
    if str(plan.get("file", "")).lower().endswith((".geojson", ".json")):
        problems.add("plan.file", "a GeoJSON plan is in longitude and latitude; a vehicle's or vessel's plan is "
                                  "in metres to starboard (east_m) and forward (north_m): use a TOML plan")
    p = Table(doc["platform"], "platform", problems, PLATFORM_KEYS)
    given = [k for k in ("heading_deg", "headings", "route") if k in p.data]
    if len(given) > 1:
        problems.add("platform", f"give one of heading_deg, headings, route, not {' and '.join(given)}")
    mode, heading, hist, route = "uniform", 0.0, (), None
    if "heading_deg" in p.data:
        mode, heading = "fixed", p.number("heading_deg", 0.0, 0.0, 360.0) % 360.0
    elif "headings" in p.data:
        mode, hist = _headings(p.data["headings"], problems)
    elif "route" in p.data:
        name = p.text("route", "")
        if name:
            from .route import read_route

            try:
                route = read_route(path.parent / name)
                mode = "route"
            except InputError as exc:
                problems.items.extend(exc.problems)
        elif isinstance(p.data["route"], str):
            problems.add("platform.route", "expected a GPX file name")
    attitude = _attitude(p, problems)
    if kind == "vehicle" and (attitude.roll_deg or attitude.pitch_deg):
        problems.add("platform", "roll and pitch are for a vessel (mount.kind = \"marine\"); a vehicle takes "
                                 "heel_deg only (parked across a slope)")
    canyon = _canyon(p, problems)
    if canyon is not None and kind == "marine":
        problems.add("platform.canyon", "a roadside canyon is for a vehicle (mount.kind = \"vehicle\")")
    return Platform(mode, heading, hist, route, attitude, canyon, frame)


def _headings(raw, problems: Problems) -> tuple[str, tuple[float, ...]]:
    if raw == "uniform":
        return "uniform", ()
    if not isinstance(raw, list) or not raw or len(raw) > MAX_HISTOGRAM_BINS:
        problems.add("platform.headings", f"expected \"uniform\" or a list of 1 to {MAX_HISTOGRAM_BINS} weights "
                                          "(equal bins clockwise from north)")
        return "uniform", ()
    if not all(is_number(w) and w >= 0 for w in raw):
        problems.add("platform.headings", "each weight must be a number of 0 or more")
        return "uniform", ()
    total = float(sum(raw))
    if not 0 < total < float("inf"):
        problems.add("platform.headings", "the weights must add up to more than 0")
        return "uniform", ()
    return "histogram", tuple(float(w) / total for w in raw)


def _attitude(p: Table, problems: Problems) -> Attitude:
    heel = p.number("heel_deg", 0.0, -45.0, 45.0)
    if "sea_state" in p.data:
        name = p.text("sea_state", "", choices=tuple(SEA_STATES))
        clash = [k for k in ("roll_deg", "pitch_deg", "roll_period_s", "pitch_period_s", "sea") if k in p.data]
        if clash:
            problems.add("platform.sea_state", f"give either sea_state or {', '.join(clash)}, not both")
        base = SEA_STATES.get(name, Attitude())
        return Attitude(heel, base.roll_deg, base.roll_period_s, base.pitch_deg, base.pitch_period_s, base.sea,
                        base.name)
    return Attitude(heel, p.number("roll_deg", 0.0, 0.0, 45.0), p.number("roll_period_s", 8.0, 1.0, 60.0),
                    p.number("pitch_deg", 0.0, 0.0, 30.0), p.number("pitch_period_s", 6.0, 1.0, 60.0),
                    p.text("sea", "regular", choices=SEAS))


def _canyon(p: Table, problems: Problems) -> Canyon | None:
    own = [k for k in ("canyon_height_m", "canyon_width_m") if k in p.data]
    if "canyon" in p.data:
        if own:
            problems.add("platform.canyon", "give either a canyon preset or canyon_height_m and canyon_width_m")
        name = p.text("canyon", "", choices=tuple(CANYONS))
        return CANYONS.get(name)
    if not own:
        return None
    if len(own) == 1:
        problems.add("platform", "give canyon_height_m and canyon_width_m together")
        return None
    h, w = p.number("canyon_height_m", None, 0.0, 300.0), p.number("canyon_width_m", None, 1.0, 500.0)
    return None if h is None or w is None else Canyon("own", h, w)


def platform_table(p: Platform, folder: Path | None = None) -> dict:
    """The ``[platform]`` table that reads back as ``p`` (the site writer uses it
    when the file's own table no longer does)."""
    out: dict = {}
    if p.heading_mode == "fixed":
        out["heading_deg"] = p.heading_deg
    elif p.heading_mode == "histogram":
        out["headings"] = list(p.histogram)
    elif p.heading_mode == "uniform":
        out["headings"] = "uniform"
    elif p.route is not None:
        src = Path(p.route.source)
        out["route"] = src.name if folder is not None and src.parent == folder else str(src)
    a = p.attitude
    if a.heel_deg:
        out["heel_deg"] = a.heel_deg
    if a.name:
        out["sea_state"] = a.name
    elif a.roll_deg or a.pitch_deg:
        out.update(roll_deg=a.roll_deg, roll_period_s=a.roll_period_s, pitch_deg=a.pitch_deg,
                   pitch_period_s=a.pitch_period_s, sea=a.sea)
    if p.canyon is not None:
        if p.canyon.name in CANYONS:
            out["canyon"] = p.canyon.name
        else:
            out.update(canyon_height_m=p.canyon.height_m, canyon_width_m=p.canyon.width_m)
    return out
