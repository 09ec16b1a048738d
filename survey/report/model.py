"""The report's content model: everything a report says, once, as plain values
and ready-made text; the JSON format is this model, the PDF and HTML lay it out."""

from __future__ import annotations

from datetime import datetime, timezone

from .. import __version__
from ..pipeline import SiteRun, mount_text, result_dict
from ..safety import notes_for
from ..terrain.advice import only_terrain
from ..terrain.report import terrain_method, terrain_setup
from ..words import NBSP, azimuth, azimuth_span, coordinates, duration, elevation, length, pct, utc, window
from .advice import recommendations
from .inputs import REPORT_KIND, REPORT_VERSION, report_id, report_inputs
from .platform_section import platform_section
from .spots_section import spots_section

MAX_OUTAGE_ROWS = 10

def _survey_day(text: str) -> str:
    """The survey date as given: a date alone (midnight) prints without a time."""
    when = datetime.fromisoformat(text.replace("Z", "+00:00"))
    return when.strftime("%Y-%m-%d") if when.strftime("%H:%M:%S") == "00:00:00" else utc(when)



def report_model(run: SiteRun,
                 generated: datetime | None = None, ranking=None) -> dict:
    """Everything the report says, as plain values and ready-made text.  The JSON
    format is this model; the PDF and HTML lay it out."""
    generated = (generated or datetime.now(timezone.utc)).astimezone(timezone.utc).replace(microsecond=0)
    s, a, w = run.site, run.assessment, run.window
    result = result_dict(run)
    inputs = report_inputs(run)
    rid = report_id(inputs, generated)
    sv = s.survey

    header = [("Site", s.name), ("Coordinates", coordinates(s.latitude_deg, s.longitude_deg)),
              ("Ground elevation", f"{length(s.elevation_m)} above sea level"),
              ("Mount", mount_text(s)),
              ("Surveyed by", sv.get("surveyor", "") or "-"),
              ("Organisation", sv.get("organisation", "") or "-"),
              ("Customer", sv.get("customer", "") or "-"),
              ("Surveyed on", _survey_day(sv["date"]) if sv.get("date") else "- (no [survey] date in the site file)"),
              ("Report made", utc(generated))]

    o = result["outages"]
    figures = [
        ("Blocked fraction", pct(a.blocked_fraction, 2), "of usable sky samples fall behind obstructions"),
        ("Availability", pct(a.availability, 2), "of the time at least one unblocked satellite is in view"),
        ("Interruption", pct(a.interruption, 2),
         f"of the time the link is down (scheduling period {s.schedule.reassign_s:g}{NBSP}s)"),
        ("Outages a day", f"{o['count_per_day']:.1f}", "drop-outs per day under the scheduling model"),
        ("Down time a day", f"{o['minutes_per_day']:.1f}{NBSP}min", "link down, in minutes per day"),
        ("Longest outage", duration(o["longest_s"]), "single longest drop-out in the window"),
    ]

    epochs = run.fleet.epochs_utc()
    if run.fleet.illustrative:
        epoch_text = f"generated at the window start, {utc(w.start)} (illustrative, not a real constellation)"
    elif epochs:
        lo, hi = min(epochs), max(epochs)
        epoch_text = utc(lo) if (hi - lo).total_seconds() < 60 else f"{utc(lo)} to {utc(hi)}"
    else:
        epoch_text = "-"
    groups = ", ".join(f"{k} ({v})" for k, v in run.fleet.groups.items())
    fov = "none set: all sky above the minimum elevation"
    if s.terminal.scan_half_angle_deg is not None:
        fov = (f"cone of {elevation(s.terminal.scan_half_angle_deg)} half-angle around a boresight tilted "
               f"{elevation(s.terminal.tilt_deg)} toward {azimuth(s.terminal.tilt_azimuth_deg)} "
               + ("(from the bow; fixed to the deck)" if s.platform is not None else "(true)"))
    setup = [
        ("Satellites", f"{len(run.fleet):,} from {run.fleet.source}"),
        ("Shells or groups", groups or "-"),
        ("Element epoch", epoch_text),
        ("Window", f"{window(w.start, w.hours, w.step_s)} ({w.count:,} sample times)"),
        ("Minimum elevation", elevation(s.terminal.min_elevation_deg)),
        ("Field of view", fov),
        ("Usable sky samples", f"{a.usable_samples:,} satellite positions, {a.blocked_samples:,} of them blocked"),
    ] + terrain_setup(run.mask)

    sectors = [{
        "span": azimuth_span(sec.from_deg, sec.to_deg), "peak": elevation(sec.peak_elevation_deg),
        "labels": ", ".join(sec.labels) or "(unlabelled)", "share": pct(sec.blocked_share),
        "if_cleared": "cannot (terrain)" if only_terrain(sec) else pct(sec.blocked_fraction_if_cleared, 2),
    } for sec in a.sectors]

    events = sorted(o["events"], key=lambda e: -e["duration_s"])[:MAX_OUTAGE_ROWS]
    outage_rows = [{"start": e["start"].replace("T", " ").replace("Z", " UTC"),
                    "duration": duration(e["duration_s"])} for e in sorted(events, key=lambda e: e["start"])]

    dec = run.declination.declination_deg
    true_points = s.horizon.to_true(dec).points
    horizon_rows = [{
        "measured": azimuth(p.azimuth_deg), "true": azimuth(q.azimuth_deg), "elevation": elevation(p.elevation_deg),
        "distance": "-" if p.distance_m is None else length(p.distance_m), "label": p.label or "",
    } for p, q in zip(s.horizon.points, true_points)]
    if s.horizon.reference == "magnetic":
        bearing_note = (f"Bearings were taken with a compass (magnetic). Declination {dec:+.2f}° "
                        f"(WMM2025 at the site on {w.start:%Y-%m-%d}) was applied: true = magnetic + declination.")
    else:
        bearing_note = (f"Bearings are true (referred to true north); no declination applied. "
                        f"For reference, the WMM2025 declination here is {dec:+.2f}°.")
    if s.platform is not None and s.platform.frame == "body":
        bearing_note = ("Bearings are in the body frame: clockwise from the bow or the vehicle's front, elevations "
                        "above the deck; the azimuth columns and the obstruction sectors are body-frame bearings, "
                        "not true ones. No declination applies.")
    if not s.horizon.points:
        bearing_note = "No horizon points were measured: the sky is taken as clear to the horizon."
    photo = photo_section(run)
    if photo is not None and not s.horizon.points:
        bearing_note = "No horizon points were measured: the horizon is the photo's skyline."

    return {
        "report": {"kind": REPORT_KIND, "version": REPORT_VERSION, "id": rid,
                   "generated": generated.strftime("%Y-%m-%dT%H:%M:%SZ"), "leosite_version": __version__},
        "title": "Sky survey and obstruction report",
        "header": header,
        "verdict": a.verdict, "verdict_reason": a.verdict_reason[:1].upper() + a.verdict_reason[1:],
        "figures": figures,
        "setup": setup,
        "sectors": sectors,
        "recommendations": recommendations(run),
        "spots": spots_section(run, ranking) if ranking is not None else None,
        "platform": platform_section(run),
        "outages": {"count": len(a.outages), "rows": outage_rows, "longest_first": len(o["events"]) > len(events)},
        "horizon": {"note": bearing_note, "rows": horizon_rows},
        "photo": photo,
        "notes": sv.get("notes", ""),
        "warnings": list(run.warnings),
        "method": method_text(run),
        "not_modelled": NOT_MODELLED if run.platform is None else NOT_MODELLED[:-1] + NOT_MODELLED_MOVING,
        "safety": list(notes_for(s.mount.kind)),
        "result": result,
        "inputs": inputs,
    }


def photo_section(run: SiteRun) -> dict | None:
    """What the report says of a horizon photo (None without one): where the
    horizon came from, the projection and the bearing, the threshold."""
    s = run.site
    if s.photo is None:
        return None
    from ..mask import site_photo_skyline

    sky = site_photo_skyline(s, run.declination)
    ph = s.photo
    ref = "compass" if s.horizon.reference == "magnetic" else "true"
    where = "its centre column" if ph.projection == "equirect" else "the top of the image"
    bearing = (f"{azimuth(ph.bearing_deg)} ({ref}) at {where}" if ph.bearing_deg is not None
               else f"from the photo's own heading ({ref}) at {where}")
    projection = ("equirectangular panorama (360° x 180°)" if ph.projection == "equirect"
                  else f"fisheye looking straight up, {ph.lens} lens")
    covered = pct(float(sky.covered.mean()))
    return {
        "file": ph.file.name, "projection": projection, "bearing": bearing,
        "text": (f"The horizon came from a photo taken at the mount: {ph.file.name}, {projection}, bearing "
                 f"{bearing}. Its skyline (Otsu threshold {sky.threshold} on the blue channel, the sky connected "
                 f"to the zenith) covers {covered} of the azimuths; the mask is the higher of it and the "
                 "measured points. Check the skyline against the view before relying on it."),
    }


NOT_MODELLED = [
    "rain fade, snow or ice on the terminal, and atmospheric losses",
    "foliage growth and seasonal leaf cover, unless given in a site plan",
    "network capacity, congestion and the operator's own scheduling and beam planning",
    "terminal faults, power cuts and cabling problems",
    "motion of vehicles and vessels (heading, roll, pitch): assessed as a fixed mount",
]
NOT_MODELLED_MOVING = [  # with a [platform] table (survey/platform/)
    "yaw motion about the heading, surge and sway; the terminal's own stabilisation or tracking limits",
    "how fast a real heading changes when headings are a distribution (outage counts are indicative)",
]


def method_text(run: SiteRun) -> list[str]:
    s = run.site
    return [
        "Orbits: every satellite is propagated with SGP4 (Vallado et al. 2006, 'Revisiting Spacetrack "
        "Report #3', through the sgp4 package) and turned into azimuth and elevation at the antenna: "
        "TEME to Earth-fixed by GMST 1982, observer on the WGS84 ellipsoid at ground elevation plus mount height.",
        "Walker shells: T = planes x per-plane satellites, circular orbits with the window start as epoch "
        "(Walker 1984). Element sets from files are used as given; their epochs are listed above.",
        "Compass bearings are turned to true bearings with the World Magnetic Model WMM2025 (NOAA NCEI and BGS).",
        "Horizon mask: straight lines between measured points, wrapping through north. A satellite sample "
        f"counts as usable sky at or above {elevation(s.terminal.min_elevation_deg)} elevation (and inside the "
        "field-of-view cone when one is set); it is blocked when it lies below the mask at its azimuth.",
        f"Scheduling model (scheduling period {s.schedule.reassign_s:g}{NBSP}s; leosite's default is 15{NBSP}s, set it to "
        "what your network uses): at each reassignment the highest usable satellite is assigned, not knowing "
        "the local obstructions; one that sets or leaves the field of view is handed over at once to the "
        "highest usable one; if the assigned satellite is blocked the link is down until the next assignment. "
        "Blocked fraction is the share of usable samples behind obstructions; availability is "
        "the share of time with at least one unblocked satellite (the best an obstruction-aware network could do).",
        f"Verdict thresholds: qualified up to {pct(s.criteria.qualified_max_blocked)} blocked and "
        f"{pct(s.criteria.qualified_max_interruption)} interruption, marginal up to "
        f"{pct(s.criteria.marginal_max_blocked)} and {pct(s.criteria.marginal_max_interruption)}; "
        f"not-qualified below {pct(s.criteria.min_availability)} availability.",
        "What-if figures re-assess the same satellite tracks with that sector's mask set to zero.",
    ] + terrain_method(run.mask)


FIGURE_CAPTIONS = {
    "sky": "Sky plot, north up, zenith in the centre. Shading: time satellites spend in each part of the sky; "
           "hatched: the measured obstruction; dashed ring: the terminal's minimum elevation.",
    "panorama": "The horizon unrolled: azimuth along the bottom, elevation up the side, satellite track "
                "density behind the measured skyline. Marked points are the measurements.",
    "timeline": "When the drop-outs happen: one row per day (UTC), dark bars are time the link is down "
                "under the scheduling model.",
    "photo": "The photo taken at the mount, unrolled like the panorama: the skyline found in it in yellow, "
             "satellite tracks over the sky (blue clear, orange blocked), the dashed minimum elevation.",
    "plan": "The site from above, north up: obstacles to scale with their heights, candidate spots coloured "
            "by blocked fraction, the best spot starred.",
}
