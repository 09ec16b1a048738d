"""The site form's fields, each checked by the engine's own site reader.

A typed value is parsed (numbers; latitude and longitude also in degrees,
minutes and seconds) and then put through ``survey.site.site_from_dict`` in a
one-field document, so the form can never accept what a site file would reject,
and the reason shown at the field is the engine's own wording.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from datetime import datetime, timezone
from pathlib import Path

from survey.api import (
    MOUNT_KINDS,
    SEA_STATES,
    InputError,
    Mount,
    Site,
    Terminal,
    format_dms,
    parse_angle,
    platform_from_site,
    platform_table,
    site_from_dict,
)


@dataclass(frozen=True)
class FieldSpec:
    key: str  # "table.key", as in site.toml
    label: str
    kind: str  # text | number | optional | latitude | longitude | choice | time
    placeholder: str = ""
    required: bool = False
    why: str = ""  # said when a required field is blank


FIELDS = (
    FieldSpec("site.name", "Site name", "text", "e.g. Hillside farm, north barn", True),
    FieldSpec("site.latitude", "Latitude", "latitude", "45.3182  or  45°19'05.5\"N", True),
    FieldSpec("site.longitude", "Longitude", "longitude", "-72.6415  or  72 38 29.4 W", True),
    FieldSpec("site.elevation_m", "Ground elevation, m", "number", "above sea level, e.g. 212"),
    FieldSpec("mount.kind", "Mount kind", "choice"),
    FieldSpec("mount.height_m", "Antenna height, m", "number", "above the ground (or deck), e.g. 6.5", True,
              "measure the antenna's height above the ground (or deck)"),
    FieldSpec("terminal.min_elevation_deg", "Minimum elevation, °", "number", "terminal's lowest usable, e.g. 25"),
    FieldSpec("terminal.scan_half_angle_deg", "Field-of-view half-angle, °", "optional", "blank: no cone"),
    FieldSpec("terminal.tilt_deg", "Boresight tilt, °", "number", "0 = pointing at the zenith"),
    FieldSpec("terminal.tilt_azimuth_deg", "Tilted toward, ° true", "number", "azimuth of the tilt"),
    FieldSpec("platform.heading_deg", "Heading, ° true", "optional",
              "vehicle or vessel: blank = all headings, or the route"),
    FieldSpec("platform.route", "Route, GPX file", "route", "vehicle or vessel: e.g. passage.gpx, beside the site file"),
    FieldSpec("platform.heel_deg", "Heel, ° (+ starboard down)", "number", "0 = level"),
    FieldSpec("platform.sea_state", "Sea state", "choice"),
    FieldSpec("survey.surveyor", "Surveyor", "text"),
    FieldSpec("survey.organisation", "Organisation", "text"),
    FieldSpec("survey.customer", "Customer", "text"),
    FieldSpec("survey.date", "Survey date (UTC)", "time", "2026-05-28 or 2026-05-28T14:20:00Z"),
    FieldSpec("survey.notes", "Notes", "text"),
)
BY_KEY = {f.key: f for f in FIELDS}
OWN_SEA = "own (site file)"  # roll and pitch typed in the site file, kept as they are
CHOICES = {"mount.kind": MOUNT_KINDS, "platform.sea_state": ("none", *SEA_STATES, OWN_SEA)}

_PROBE_PATH = Path("site.toml")


def engine_problem(key: str, value, folder: Path | None = None) -> str | None:
    """The site reader's complaint about ``value`` at ``key``, or None (a route
    file is looked for in ``folder``, the site file's)."""
    table, name = key.split(".", 1)
    doc = {"site": {"name": "probe", "latitude": 0.0, "longitude": 0.0}}
    doc.setdefault(table, {})[name] = value
    if table == "platform":  # a platform belongs to a moving mount
        doc["mount"] = {"kind": "marine"}
    try:
        site_from_dict(doc, (folder or Path(".")) / _PROBE_PATH.name)
    except InputError as exc:
        for line in exc.problems:
            marker = f": {key}: "
            if marker in line:
                return line.split(marker, 1)[1]
        return exc.problems[0].split(": ", 2)[-1]
    return None


def parse_field(key: str, text: str, folder: Path | None = None):
    """(value, problem, note) for ``text`` typed at ``key``.  ``value`` is what
    goes into the site (None for blank optional fields), ``problem`` the reason it
    is refused, ``note`` a confirmation worth showing (e.g. the DMS reading).
    ``folder``: the site file's, where a route file is looked for."""
    spec = BY_KEY[key]
    text = text.strip()
    if key == "platform.sea_state" and text in ("none", OWN_SEA, ""):
        return text or "none", None, ""
    if not text:
        if spec.required:
            return None, "required" + (f": {spec.why}" if spec.why else ""), ""
        return None, None, ""
    note = ""
    if spec.kind in ("latitude", "longitude"):
        try:
            value = parse_angle(text, spec.kind)
        except ValueError as exc:
            return None, str(exc), ""
        note = f"= {value:.6f}°  ({format_dms(value, spec.kind)})"
    elif spec.kind in ("number", "optional"):
        if "," in text:  # 6,5 or 1,200? Too easy to misread either way: ask for a point.
            return None, f"use a point for decimals and no thousands separator, e.g. {text.replace(',', '.')}", ""
        try:
            value = float(text)
        except ValueError:
            return None, f"expected a number, got {text!r}", ""
    elif spec.kind == "choice":
        value = text
    else:
        value = text
    problem = engine_problem(key, value, folder)
    if not problem and key == "platform.route" and value:
        note = "the heading and the window come from the route"
    return (None if problem else value), problem, ("" if problem else note)


def field_values(site: Site) -> dict[str, str]:
    """The form's text for each field of ``site``."""
    t = site.terminal

    def num(x) -> str:  # exact: the text reads back as the same float, so opening changes nothing
        if x is None:
            return ""
        return str(int(x)) if float(x).is_integer() and abs(x) < 1e15 else repr(float(x))

    return {
        "site.name": site.name,
        "site.latitude": num(site.latitude_deg),
        "site.longitude": num(site.longitude_deg),
        "site.elevation_m": num(site.elevation_m),
        "mount.kind": site.mount.kind,
        "mount.height_m": num(site.mount.height_m),
        "terminal.min_elevation_deg": num(t.min_elevation_deg),
        "terminal.scan_half_angle_deg": num(t.scan_half_angle_deg),
        "terminal.tilt_deg": num(t.tilt_deg),
        "terminal.tilt_azimuth_deg": num(t.tilt_azimuth_deg),
        **{f"survey.{k}": site.survey.get(k, "") for k in ("surveyor", "organisation", "customer", "date", "notes")},
        **platform_values(site),
    }


def platform_values(site: Site) -> dict[str, str]:
    """The platform fields' text (README, "Moving installs")."""
    p = site.platform
    if p is None:
        return {"platform.heading_deg": "", "platform.route": "", "platform.heel_deg": "0",
                "platform.sea_state": "none"}
    a = p.attitude
    sea = a.name or (OWN_SEA if (a.roll_deg or a.pitch_deg) else "none")
    route = ""
    if p.route is not None:
        src = Path(p.route.source)
        route = src.name if site.path is not None and src.parent == site.path.parent else str(src)
    heel = a.heel_deg
    return {"platform.heading_deg": f"{p.heading_deg:g}" if p.heading_mode == "fixed" else "",
            "platform.route": route, "platform.heel_deg": str(int(heel)) if float(heel).is_integer() else repr(heel),
            "platform.sea_state": sea}


def platform_from_fields(values: dict, base: Site, kind: str, path: Path):
    """The platform the fields describe over ``base``'s (its histogram, canyon
    and own roll and pitch are kept), read by the engine's own reader; None for
    a fixed mount, or a moving one with no platform field set (assessed as a
    fixed mount, with the run's warning).  ValueError on fields that do not go
    together (a heading and a route)."""
    old = base.platform
    heading, route = values.get("platform.heading_deg"), values.get("platform.route")
    heel, sea = float(values.get("platform.heel_deg") or 0.0), values.get("platform.sea_state") or "none"
    if kind == "fixed" or (old is None and heading is None and not route and heel == 0.0 and sea == "none"):
        return None
    table = platform_table(old, path.parent) if old is not None else {}
    for key in ("heading_deg", "route", "heel_deg", "sea_state"):
        table.pop(key, None)
    if heading is not None and route:
        raise ValueError("give a heading or a route, not both")
    if heading is not None:
        table.pop("headings", None)
        table["heading_deg"] = heading
    elif route:
        table.pop("headings", None)
        table["route"] = route
    elif "headings" not in table:
        table["headings"] = "uniform"
    if heel:
        table["heel_deg"] = heel
    if sea != OWN_SEA:
        for key in ("roll_deg", "roll_period_s", "pitch_deg", "pitch_period_s", "sea"):
            table.pop(key, None)
        if sea != "none":
            table["sea_state"] = sea
    if kind == "marine":
        for key in ("canyon", "canyon_height_m", "canyon_width_m"):
            table.pop(key, None)
    frame = old.frame if old is not None else "body"
    doc = {"mount": {"kind": kind}, "horizon": {"frame": frame, "points": [[0, 0]] if base.horizon.points else []},
           "platform": table}
    from survey.api import Problems

    problems = Problems(str(path))
    platform = platform_from_site(doc, path, problems)
    if problems.items:
        raise ValueError(problems.items[0].split(": ", 1)[-1])
    return platform


def new_site_defaults(name: str = "", today: datetime | None = None) -> dict[str, str]:
    """A new site's fields: the engine's own defaults (so the installer sees
    what is assumed) and today's UTC date as the survey date; no coordinates,
    and no antenna height (nobody mounts a dish at ground level: it is measured)."""
    texts = field_values(Site(name, 0.0, 0.0))
    texts["site.latitude"] = texts["site.longitude"] = texts["mount.height_m"] = ""
    texts["survey.date"] = (today or datetime.now(timezone.utc)).strftime("%Y-%m-%d")
    return texts


def apply_fields(values: dict, base: Site | None, path: Path) -> Site:
    """A Site from parsed field values over ``base`` (its horizon, plan, window,
    criteria and schedule are kept); ``base`` None starts from the defaults."""
    if base is None:  # a new site: its window is pinned to today, so the file reproduces its figures
        today = datetime.now(timezone.utc).replace(hour=0, minute=0, second=0, microsecond=0)
        base = Site(values.get("site.name") or path.parent.name, 0.0, 0.0, path=path,
                    window={"start": today, "hours": 24.0, "step_s": 15.0})

    def get(key, default):
        v = values.get(key)
        return default if v is None else v

    mount = replace(base.mount, kind=get("mount.kind", base.mount.kind),
                    height_m=float(get("mount.height_m", Mount().height_m)))
    terminal = Terminal(
        float(get("terminal.min_elevation_deg", Terminal().min_elevation_deg)),
        float(get("terminal.tilt_deg", 0.0)),
        float(get("terminal.tilt_azimuth_deg", 0.0)),
        values.get("terminal.scan_half_angle_deg"),
    )
    survey = {}
    for k in ("surveyor", "organisation", "customer", "notes", "date"):
        v = values.get(f"survey.{k}")
        if v:
            survey[k] = v
    if "date" in survey:  # stored as the site reader normalises it
        from survey.api import Problems, parse_time

        when = parse_time(survey["date"], "survey.date", Problems(str(path)))
        if when is not None:
            survey["date"] = when.strftime("%Y-%m-%dT%H:%M:%SZ")
    platform = platform_from_fields(values, base, mount.kind, path)
    return replace(base, name=values["site.name"], latitude_deg=float(values["site.latitude"]),
                   longitude_deg=float(values["site.longitude"]),
                   elevation_m=float(get("site.elevation_m", 0.0)), mount=mount, terminal=terminal,
                   survey=survey, path=path, platform=platform)
