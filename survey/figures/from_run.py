"""The figures of an assessed site: each figure drawn from a
``pipeline.SiteRun`` (and a spot ranking, ``spots.rank_spots``, for the site
plan), with the titles, notes and captions the report and the command line
show.  The text UI's plan chart takes the same plan inputs."""

from __future__ import annotations

import numpy as np
from PIL import Image

from ..words import pct, window
from .canvas import encode_png
from .panorama import PANO_SIZE, horizon_panorama
from .plan import plan_figure
from .sky import sky_plot
from .timeline import outage_timeline

BODY_FRAME_NOTE = ("Body frame of the vehicle or vessel: N marks the bow or front (azimuth clockwise from it), "
                   "elevation above the deck")


def _window_text(w) -> str:
    return window(w.start, w.hours, w.step_s)


def _declination_text(run) -> str:
    """The declination applied to compass bearings, as the report writes it."""
    return f"{run.declination.declination_deg:+.2f}\u00b0"


def sky_plot_for_run(run, size_px: int = 1000) -> Image.Image:
    """The sky plot of an assessed site (a ``pipeline.SiteRun``)."""
    s, w, t = run.site, run.window, run.tracks
    mask_az = np.arange(0.0, 360.0, 0.5)
    fov = None
    if s.terminal.scan_half_angle_deg is not None:
        fov = (s.terminal.tilt_azimuth_deg, 90.0 - s.terminal.tilt_deg, s.terminal.scan_half_angle_deg)
    a = run.assessment
    fleet_note = f"{len(run.fleet)} satellites: " + ", ".join(f"{k} {v}" for k, v in run.fleet.groups.items())
    notes = [("Illustrative shells (not a real constellation) - " if run.fleet.illustrative else "") + fleet_note,
             f"Verdict {a.verdict}: blocked {pct(a.blocked_fraction)}, interruption {pct(a.interruption)}"]
    if s.horizon.reference == "magnetic":
        notes.append(f"Compass bearings rotated to true north: declination {_declination_text(run)} (WMM2025)")
    if run.platform is not None:
        notes.append(BODY_FRAME_NOTE)
    return sky_plot(
        az_deg=t.az_deg, el_deg=t.el_deg, blocked=a.blocked, weight_s=w.step_s,
        mask_az_deg=mask_az, mask_el_deg=run.mask.elevation_at(mask_az),
        min_elevation_deg=s.terminal.min_elevation_deg, title=s.name, subtitle=_window_text(w),
        notes=notes, fov=fov, size_px=size_px,
    )


def sky_plot_png(run, size_px: int = 1000) -> bytes:
    """:func:`sky_plot_for_run` as PNG bytes."""
    return encode_png(sky_plot_for_run(run, size_px))


def _dense_mask(mask) -> tuple[np.ndarray, np.ndarray]:
    """A HorizonMask sampled every 0.25 deg plus at its knots (peaks stay sharp)."""
    a = np.union1d(np.arange(0.0, 360.0, 0.25), np.mod(mask.az_deg, 360.0))
    return a, mask.elevation_at(a)


def horizon_panorama_for_run(run, size=PANO_SIZE) -> Image.Image:
    """:func:`horizon_panorama` of an assessed site (a ``pipeline.SiteRun``)."""
    s, w, t = run.site, run.window, run.tracks
    m_az, m_el = _dense_mask(run.mask)
    true = s.horizon.to_true(run.declination.declination_deg)
    points = [(p.azimuth_deg, p.elevation_deg, p.label) for p in true.points]
    sub = _window_text(w)
    if s.horizon.reference == "magnetic":
        sub += f"; compass bearings rotated {_declination_text(run)} to true north (WMM2025)"
    if run.platform is not None:
        sub += "; " + BODY_FRAME_NOTE[:1].lower() + BODY_FRAME_NOTE[1:]
    t_az, t_el = _terrain_line(run.mask)
    if t_az.size:
        sub += "; terrain from the elevation model"
    return horizon_panorama(
        mask_az_deg=m_az, mask_el_deg=m_el, points=points, az_deg=t.az_deg, el_deg=t.el_deg,
        blocked=run.assessment.blocked, weight_s=w.step_s,
        min_elevation_deg=s.terminal.min_elevation_deg,
        title=f"{s.name}: horizon profile", subtitle=sub, size=size, terrain_az_deg=t_az, terrain_el_deg=t_el)


def _terrain_line(mask) -> tuple[np.ndarray, np.ndarray]:
    """The terrain horizon a run's mask was raised to, at whole degrees (empty without one)."""
    from ..terrain import terrain_of

    th = terrain_of(mask)
    if th is None:
        return np.zeros(0), np.zeros(0)
    return np.arange(360.0), th.elevation_deg


def terrain_panorama_png(site, th, measured=None, size=PANO_SIZE) -> bytes:
    """The terrain horizon (``terrain.TerrainHorizon``) as a panorama PNG with
    the measured horizon (a HorizonMask in true azimuths) over it; no tracks."""
    m_az, m_el = _dense_mask(measured) if measured is not None and not measured.is_clear else (np.zeros(0), np.zeros(0))
    points = [] if measured is None else [(a, e, lbl) for a, e, lbl in zip(measured.az_deg, measured.el_deg,
                                                                            measured.labels)]
    return encode_png(horizon_panorama(
        mask_az_deg=m_az, mask_el_deg=m_el, points=points, min_elevation_deg=site.terminal.min_elevation_deg,
        title=f"{site.name}: terrain horizon", show_tracks=False, size=size,
        subtitle=f"{th.source}, {th.resolution}, to {th.max_distance_m / 1000:g} km; ground {th.ground_m:.0f} m, "
                 f"antenna {th.eye_m - th.ground_m:g} m above it; true azimuths",
        terrain_az_deg=np.arange(360.0), terrain_el_deg=th.elevation_deg))


def derived_horizon_png(site, derived: dict, size=PANO_SIZE) -> bytes:
    """The horizon derived at a point (``spots.horizon_at``) as a panorama PNG,
    with no satellite tracks (nothing is propagated for it)."""
    az = np.asarray(derived["azimuth_deg"], dtype=np.float64)
    el = np.asarray(derived["elevation_deg"], dtype=np.float64)
    grown = f", trees grown {derived['years']:g} years" if derived.get("years") else ""
    return encode_png(horizon_panorama(
        mask_az_deg=az, mask_el_deg=el, min_elevation_deg=site.terminal.min_elevation_deg,
        title=f"{site.name}: horizon derived at {derived['east_m']:g} m E, {derived['north_m']:g} m N, "
              f"{derived['height_m']:g} m up",
        subtitle=f"from the site plan and the measured distances{grown}; true azimuths", size=size,
        show_tracks=False))


def outage_timeline_for_run(run, size=None) -> Image.Image:
    """:func:`outage_timeline` of an assessed site (a ``pipeline.SiteRun``)."""
    s, w = run.site, run.window
    sub = (_window_text(w) + "; down = the assigned satellite blocked, or none usable "
           f"(scheduling period {s.schedule.reassign_s:g} s)")
    return outage_timeline(start=w.start, hours=w.hours, step_s=w.step_s,
                           down=run.assessment.down, title=f"{s.name}: drop-outs",
                           subtitle=sub, size=size)


def plan_obstacles(plan) -> list[dict]:
    """A ``plan.Plan``'s drawn obstacles as :func:`plan_figure`'s plain dicts."""
    obs = [dict(kind="building", name=b.name, height_m=b.height_m, polygon=b.footprint, ridge=b.ridge,
                ridge_height_m=b.ridge_height_m) for b in plan.buildings]
    obs += [dict(kind="prism", name=p.name, height_m=p.height_m, polygon=p.polygon) for p in plan.prisms]
    obs += [dict(kind="tree", name=t.name, height_m=t.height_m, at=t.at, radius_m=t.crown_radius_m)
            for t in plan.trees]
    obs += [dict(kind="wall", name=w.name, height_m=w.height_m, line=w.line) for w in plan.walls]
    return obs


def spots_plan_inputs(run, ranking) -> tuple[list, list, list, dict]:
    """(obstacles, cells, markers, best) of a spot ranking (``spots.rank_spots``)
    as :func:`plan_figure` takes them: area grid points as cells, each pole and
    fixed point at its best height, the best spot.  The text UI's plan chart
    takes the same."""
    plan = run.site.plan
    cells = [(r.candidate.east_m, r.candidate.north_m, ranking.spacing_m,
              float("nan") if r.blocked_fraction is None else r.blocked_fraction)
             for r in ranking.results if r.candidate.kind == "area"]
    markers = []
    for r in ranking.best_of_each():  # a pole at its best height
        c = r.candidate
        if c.kind != "area":
            markers.append(dict(name=c.name, east_m=c.east_m, north_m=c.north_m, kind=c.kind,
                                blocked_fraction=r.blocked_fraction, height_m=c.height_m))
    b = ranking.best
    best = dict(name=b.candidate.name, east_m=b.candidate.east_m, north_m=b.candidate.north_m,
                height_m=b.candidate.height_m, blocked_fraction=b.blocked_fraction)
    return (plan_obstacles(plan) if plan is not None else []), cells, markers, best


def spots_plan_figure(run, ranking, size=(1600, 1600)) -> Image.Image:
    """:func:`plan_figure` of a spot ranking (``spots.rank_spots``)."""
    obstacles, cells, markers, best = spots_plan_inputs(run, ranking)
    grown = f"; trees grown {ranking.years:g} years" if ranking.years else ""
    return plan_figure(obstacles=obstacles, cells=cells, markers=markers,
                       best=best, title=f"{run.site.name}: mounting spots",
                       subtitle=f"{len(ranking.results):,} candidates, {_window_text(run.window)}{grown}",
                       size=size)


def heading_chart_for_run(run, size_px: int = 1000) -> Image.Image:
    """The by-heading chart of a vehicle or vessel (not for a route)."""
    from .heading import heading_chart

    p = run.platform
    rows = p.by_heading
    fixed = p.platform.heading_mode == "fixed"
    worst = max(rows, key=lambda r: -1 if r.blocked_fraction is None else r.blocked_fraction)
    notes = [f"Worst sector {worst.heading_deg:g}°: blocked {pct(worst.blocked_fraction)}, "
             f"availability {pct(worst.availability)}; {p.platform.attitude.text()}."]
    return heading_chart(headings_deg=[r.heading_deg for r in rows],
                         blocked_fraction=[r.blocked_fraction for r in rows],
                         title=f"{run.site.name}: blocked by heading", subtitle=_window_text(run.window),
                         heading_used_deg=p.platform.heading_deg if fixed else None, notes=notes, size_px=size_px)


def route_map_for_run(run, size=(1400, 1100)) -> Image.Image:
    """The route map of a vehicle or vessel on a route."""
    from .route_map import route_map

    p = run.platform
    a = run.assessment
    notes = [f"Down {pct(a.interruption)} of the time; {p.platform.attitude.text()}."]
    return route_map(latitude_deg=p.latitude_deg, longitude_deg=p.longitude_deg, down=a.down,
                     title=f"{run.site.name}: link along the route", subtitle=_window_text(run.window),
                     notes=notes, size=size)
