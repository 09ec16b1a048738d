"""A moving install in words: the command line's summary lines and the
``--heading`` override (README, "Moving installs")."""

from __future__ import annotations

from dataclasses import replace

from ..errors import InputError
from ..words import duration, pct
from .body import PlatformRun, route_down


def with_heading(site, heading_deg: float | None):
    """``site`` with its platform held at ``heading_deg`` (``--heading``), or as
    it is without one."""
    if heading_deg is None:
        return site
    if site.platform is None:
        raise InputError("command line: --heading: only for a site with a [platform] table "
                         "(mount kind vehicle or marine)")
    return replace(site, platform=replace(site.platform, heading_mode="fixed", heading_deg=heading_deg % 360.0,
                                          histogram=(), route=None))


def head_lines(run: PlatformRun) -> list[str]:
    p = run.platform
    lines = [f"  platform    {run.site.mount.kind}, {p.heading_text()}; horizon in the "
             + ("body frame (from the bow or front)" if p.frame == "body" else "true frame"),
             f"  attitude    {p.attitude.text()}"]
    if p.canyon is not None:
        lines.append(f"  canyon      {p.canyon.name}: {p.canyon.height_m:g} m either side of a "
                     f"{p.canyon.width_m:g} m road")
    return lines


def table_lines(run: PlatformRun, result, window) -> list[str]:
    """By heading (36 sectors, three columns), or the down time along a route;
    then the sea-state table for a vessel."""
    lines = []
    if run.platform.route is not None:
        d = route_down(run, result, window)
        lines += ["", f"  along the route  {d['distance_km']:.1f} km, down {d['down_minutes']:.1f} min "
                      f"({pct(d['down_share'], 2)} of the time) in {len(d['events'])} outages"]
        for e in sorted(d["events"], key=lambda e: -e["duration_s"])[:6]:
            lines.append(f"    {e['start'][11:16]} UTC  {duration(e['duration_s']):>8}  at km {e['along_km']:.1f} "
                         f"({e['latitude']:.4f}, {e['longitude']:.4f})")
        if len(d["events"]) > 6:
            lines.append(f"    ... and {len(d['events']) - 6} shorter ones (--json lists every outage)")
    elif run.by_heading:
        lines += ["", "  by heading (the platform held in each 10° sector)",
                  "    " + "   ".join(["heading  blocked  avail."] * 3)]
        rows = run.by_heading
        third = len(rows) // 3
        for i in range(third):
            cells = []
            for r in (rows[i], rows[i + third], rows[i + 2 * third]):
                cells.append(f"{r.heading_deg:5.0f}°  {pct(r.blocked_fraction):>7}  {pct(r.availability):>6}")
            lines.append("    " + "   ".join(cells))
    if run.sea_states:
        lines += ["", "  sea state      blocked  availability  interruption"]
        for r in run.sea_states:
            lines.append(f"    {r.name:<10} {pct(r.blocked_fraction, 2):>9} {pct(r.availability, 2):>13} "
                         f"{pct(r.interruption, 2):>13}")
        lines.append("    (leosite's own sea-state presets, README \"Sea states\")")
    return lines
