"""The report's platform section for a vehicle or vessel: how the heading,
attitude and route were taken, the by-heading or along-the-route figures, the
sea-state table, and the figures' captions (README, "Moving installs")."""

from __future__ import annotations

from ..pipeline import SiteRun
from ..words import duration, pct

MAX_ROUTE_ROWS = 10

CAPTIONS = {
    "heading": "Blocked fraction by heading: each wedge is one 10-degree sector of the direction the bow or "
               "front points (clockwise from true north), the platform held at its centre; a black line marks "
               "a fixed heading.",
    "route": "The route, longitude across and latitude up: blue where the link is up, thick dark orange where "
             "it is down; each outage is ringed where it began.",
}


def platform_section(run: SiteRun) -> dict | None:
    """Plain values and sentences for the report, or None for a fixed site."""
    pr = run.platform
    if pr is None:
        return None
    from ..platform import route_down

    p, s = pr.platform, run.site
    setup = [("Platform", f"{s.mount.kind}: {p.heading_text()}"),
             ("Horizon frame", "body frame: bearings clockwise from the bow or front, elevations above the deck"
              if p.frame == "body" else "true bearings"),
             ("Attitude", p.attitude.text()),
             ("Sky tracks", pr.tracks_method)]
    if p.canyon is not None:
        setup.append(("Roadside canyon", f"{p.canyon.name}: {p.canyon.height_m:g} m high either side of a "
                                         f"{p.canyon.width_m:g} m road, el = atan((H - h) |sin a| / (W/2))"))
    out = {"setup": setup, "by_heading": None, "route": None, "sea_states": None, "figure": None,
           "caption": None}
    if p.route is None:
        rows = pr.by_heading
        worst = max(rows, key=lambda r: -1 if r.blocked_fraction is None else r.blocked_fraction)
        best = min(rows, key=lambda r: 2 if r.blocked_fraction is None else r.blocked_fraction)
        out["by_heading"] = {
            "summary": (f"Held in the best heading sector ({best.heading_deg:g}°) the blocked fraction is "
                        f"{pct(best.blocked_fraction)}; in the worst ({worst.heading_deg:g}°) "
                        f"{pct(worst.blocked_fraction)}."),
            "rows": [(f"{r.heading_deg - 5:g}°–{r.heading_deg + 5:g}°", pct(r.blocked_fraction), pct(r.availability))
                     for r in rows]}
        out["figure"], out["caption"] = "heading", CAPTIONS["heading"]
    else:
        d = route_down(pr, run.assessment, run.window)
        longest = sorted(d["events"], key=lambda e: -e["duration_s"])[:MAX_ROUTE_ROWS]
        out["route"] = {
            "summary": (f"{d['distance_km']:.1f} km along the route; the link is down {d['down_minutes']:.1f} min "
                        f"({pct(d['down_share'], 2)} of the time) in {len(d['events'])} outages."),
            "rows": [(e["start"].replace("T", " ").replace("Z", " UTC"), duration(e["duration_s"]),
                      f"{e['along_km']:.1f} km", f"{e['latitude']:.4f}, {e['longitude']:.4f}") for e in longest]}
        out["figure"], out["caption"] = "route", CAPTIONS["route"]
    if pr.sea_states:
        out["sea_states"] = [(r.name, pct(r.blocked_fraction, 2), pct(r.availability, 2), pct(r.interruption, 2))
                             for r in pr.sea_states]
    return out
