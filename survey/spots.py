"""Best mounting spot: candidate points ranked by the sky their derived horizon leaves.

Every candidate (mounting-area grid points, pole heights, fixed points) gets a
mask: the derived horizon of the plan's obstacles and of the measured points that
carry a distance (survey/plan/), raised to the far-away measured points' mask
(points without a distance apply unchanged everywhere).  The mask is the
piecewise-linear HorizonMask through its values at true azimuths 0, 1, ..., 359:
mask_deg(az) = max(derived(az), far(az)) at each whole degree.  The figures are
assess.py's, with the same definitions: blocked_fraction, availability and
interruption under the site's scheduling model.

The sky tracks are computed once, at the site point, and reused for every
candidate.  A candidate offset by d metres sees a satellite at range r from a
direction that differs by at most d / r radians, and r is never less than the
orbit altitude (300 km or more for LEO broadband shells; 505 km for the embedded
shells): 30 m of offset moves a satellite by at most 0.0057 degrees, far below
the 0.01 degrees the tracks are held to.  A candidate more than FAR_WARNING_M
from the site point (up to 0.04 degrees at 300 km) is warned about: assess it as
a site of its own.  Mount motion is not modelled: every candidate is a fixed mount.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
import shapely

from .errors import InputError, Problems
from .evaluate import Evaluator
from .horizon import HorizonMask
from .mask import terrain_floor, with_terrain
from .plan import (
    AZIMUTHS_DEG,
    Plan,
    Scene,
    compile_plan,
    derived_horizons,
    measured_obstacles,
)

AREA_SPACING_M = 0.5  # default grid spacing over mounting areas
POLE_STEP_M = 0.25  # pole heights are tried in these steps, and at the maximum
FAR_WARNING_M = 200.0
MAX_CANDIDATES = 200_000  # bounds memory and time; a coarser spacing is the answer


@dataclass(frozen=True)
class Candidate:
    """One candidate antenna position: metres east/north of the site point, antenna
    height above ground; ``kind`` is area, pole or point."""

    name: str
    kind: str
    east_m: float
    north_m: float
    height_m: float


@dataclass(frozen=True)
class SpotResult:
    """A candidate's figures (assess.py definitions; fractions 0..1)."""

    candidate: Candidate
    blocked_fraction: float | None  # None when no satellite rises above the minimum elevation
    availability: float
    interruption: float

    def as_dict(self) -> dict:
        c = self.candidate
        return {"name": c.name, "kind": c.kind, "east_m": round(c.east_m, 3), "north_m": round(c.north_m, 3),
                "height_m": round(c.height_m, 3), "blocked_fraction": self.blocked_fraction,
                "availability": self.availability, "interruption": self.interruption}


@dataclass(frozen=True)
class PoleHeight:
    """The lowest height of a pole (in POLE_STEP_M steps, and its maximum) whose
    blocked fraction is at or below ``target_blocked``; None when none is."""

    pole: str
    east_m: float
    north_m: float
    min_height_m: float
    max_height_m: float
    target_blocked: float
    lowest: SpotResult | None

    def as_dict(self) -> dict:
        return {"name": self.pole, "east_m": round(self.east_m, 3), "north_m": round(self.north_m, 3),
                "min_height_m": self.min_height_m, "max_height_m": self.max_height_m,
                "target_blocked": self.target_blocked,
                "lowest_height_m": None if self.lowest is None else round(self.lowest.candidate.height_m, 3),
                "at_lowest": None if self.lowest is None else self.lowest.as_dict()}


@dataclass
class SpotRanking:
    """Candidates best first: by blocked fraction, then interruption, then lower
    height.  ``over_time`` holds the best spot's figures as the trees grow
    (years 0 .. ``years``) when ``years`` > 0."""

    results: list[SpotResult]
    poles: list[PoleHeight]
    over_time: list[tuple[float, SpotResult]]
    years: float
    spacing_m: float
    target_blocked: float
    survey_point: dict
    warnings: list[str] = field(default_factory=list)
    evaluator: SpotEvaluator | None = field(default=None, repr=False)  # to re-check spots, e.g. as trees grow

    @property
    def best(self) -> SpotResult:
        return self.results[0]

    def best_of_each(self) -> list[SpotResult]:
        """The best-ranked result of each named candidate (one area, pole or
        point), best first: what a summary table lists."""
        out, seen = [], set()
        for r in self.results:
            key = (r.candidate.kind, r.candidate.name, r.candidate.east_m, r.candidate.north_m) \
                if r.candidate.kind != "area" else ("area", r.candidate.name)
            if key not in seen:
                seen.add(key)
                out.append(r)
        return out

    def as_dict(self) -> dict:
        """The JSON object of ``leosite spots --json``: ``candidates`` (best first)
        and ``best``, each with name, east_m, north_m, height_m, blocked_fraction,
        availability, interruption (and kind); ``poles`` (lowest height meeting
        ``target_blocked``), ``over_time`` (the best spot as trees grow),
        ``survey_point`` (the measured horizon's own figures), ``years``,
        ``spacing_m``, ``target_blocked``, ``warnings``."""
        return {
            "candidates": [r.as_dict() for r in self.results],
            "best": self.best.as_dict(),
            "poles": [p.as_dict() for p in self.poles],
            "over_time": [{"years": y, **{k: v for k, v in r.as_dict().items()
                                          if k in ("blocked_fraction", "availability", "interruption")}}
                          for y, r in self.over_time],
            "survey_point": self.survey_point,
            "years": self.years,
            "spacing_m": self.spacing_m,
            "pole_step_m": POLE_STEP_M,
            "target_blocked": self.target_blocked,
            "warnings": list(self.warnings),
        }


# ------------------------------------------------------------------ candidates

def pole_heights(min_height_m: float, max_height_m: float, step_m: float = POLE_STEP_M) -> list[float]:
    """min, min + step, ... up to the maximum, which is always included."""
    out, k = [], 0
    while min_height_m + k * step_m < max_height_m - 1e-9:
        out.append(round(min_height_m + k * step_m, 9))
        k += 1
    out.append(max_height_m)
    return out


def area_points(polygon, spacing_m: float) -> np.ndarray:
    """Grid points (east, north) inside a polygon: the centres of square cells of
    side ``spacing_m`` laid from the polygon's south-west bounding corner; a
    polygon too small to hold one gets its representative point."""
    poly = shapely.Polygon(polygon)
    minx, miny, maxx, maxy = poly.bounds
    nx = max(1, math.ceil((maxx - minx) / spacing_m - 1e-9))
    ny = max(1, math.ceil((maxy - miny) / spacing_m - 1e-9))
    if nx * ny > MAX_CANDIDATES:
        raise InputError(f"--spacing: {spacing_m:g} m gives over {MAX_CANDIDATES:,} grid points; "
                         "use a coarser spacing")
    xs = minx + spacing_m * (np.arange(nx) + 0.5)
    ys = miny + spacing_m * (np.arange(ny) + 0.5)
    gx, gy = (a.ravel() for a in np.meshgrid(xs, ys))
    inside = shapely.contains_xy(poly, gx, gy)
    if not inside.any():
        p = poly.representative_point()
        return np.array([[p.x, p.y]])
    return np.column_stack([gx[inside], gy[inside]])


def candidate_points(plan: Plan, spacing_m: float = AREA_SPACING_M,
                     pole_step_m: float = POLE_STEP_M) -> list[Candidate]:
    """Every candidate of a plan: mounting areas on a grid, poles over their height
    range, fixed points (in that order)."""
    out: list[Candidate] = []
    for a in plan.areas:
        for e, n in area_points(a.polygon, spacing_m):
            out.append(Candidate(a.name, "area", float(e), float(n), a.height_m))
    for p in plan.poles:
        for h in pole_heights(p.min_height_m, p.max_height_m, pole_step_m):
            out.append(Candidate(p.name, "pole", p.at[0], p.at[1], h))
    for p in plan.points:
        out.append(Candidate(p.name, "point", p.at[0], p.at[1], p.height_m))
    if len(out) > MAX_CANDIDATES:
        raise InputError(f"--spacing: {len(out):,} candidates is too many (at most {MAX_CANDIDATES:,}); "
                         "use a coarser spacing")
    return out


# ------------------------------------------------------------------ evaluation

def site_scene(site, declination_deg: float, plan: Plan | None = None) -> tuple[Scene, np.ndarray]:
    """The site's obstacles compiled (the plan plus skylines from the measured
    points that carry a distance) and the far-away points' mask at azimuths
    0..359 (degrees).  ``declination_deg`` rotates compass bearings to true."""
    plan = plan if plan is not None else (site.plan or Plan())
    points = site.horizon.to_true(declination_deg).points
    skylines, far = measured_obstacles(points, site.horizon_height_m)  # seen from where they were measured
    far_deg = HorizonMask.from_points(far).elevation_at(AZIMUTHS_DEG) if far else np.zeros(360)
    if site.photo is not None:  # a photo's skyline has no distances: far away, the same at every spot
        far_deg = np.maximum(far_deg, photo_by_degree(site, declination_deg))
    far_deg = np.maximum(far_deg, terrain_floor(site))  # terrain applies unchanged everywhere on the plan
    return compile_plan(plan.with_skylines(skylines)), far_deg


def photo_by_degree(site, declination_deg: float) -> np.ndarray:
    """The site photo's skyline at azimuths 0..359, each the highest of its
    points within half a degree (so a 1.5° mast is not lost between degrees)."""
    from .photo import photo_skyline

    sky = photo_skyline(site.photo, declination_deg if site.horizon.reference == "magnetic" else 0.0)
    el = np.where(sky.covered, sky.el_deg, 0.0)  # points every 0.5°, from 0°
    return np.maximum.reduce([el[0::2], el[1::2], np.roll(el[1::2], 1)])


class SpotEvaluator:
    """Re-masks one site run's cached tracks for any number of candidate points.

    Built once per run: the tracks' azimuth bins and the scheduling model's
    assignment (which satellite is assigned at each time, independent of the
    mask) are computed here, so each candidate costs one interpolation, one
    comparison and a few bincounts over the stored samples."""

    def __init__(self, run, plan: Plan | None = None):
        self.run = run
        site, tracks = run.site, run.tracks
        self.scene, self.far_deg = site_scene(site, run.declination.declination_deg, plan)
        self.tracks = tracks
        self.evaluator = run.evaluator or Evaluator(tracks, site.criteria, site.schedule)
        # np.interp's own arithmetic on whole-degree knots, with the bin found once:
        # mask(a) = (m[k+1] - m[k]) * (a - k) + m[k], k = floor(a), as in HorizonMask.
        a = np.asarray(tracks.az_deg, dtype=np.float64) % 360.0
        self._k0 = np.floor(a).astype(np.intp)
        self._k1 = (self._k0 + 1) % 360
        self._dx = a - self._k0
        self._cache: dict[bytes, tuple] = {}

    def masks(self, east_m, north_m, height_m, years: float = 0.0) -> np.ndarray:
        """(N, 360) mask elevations (degrees) at azimuths 0..359 for the points."""
        derived = derived_horizons(self.scene, east_m, north_m, height_m, years)
        return np.maximum(derived, self.far_deg[None, :])

    def mask_for(self, east_m: float, north_m: float, height_m: float, years: float = 0.0) -> HorizonMask:
        """One candidate's mask as a HorizonMask (what assess.assess would take)."""
        return HorizonMask(AZIMUTHS_DEG, self.masks([east_m], [north_m], [height_m], years)[0])

    def blocked(self, mask_deg: np.ndarray) -> np.ndarray:
        """assess.blocked_samples for a mask on whole degrees, bit for bit, without
        searching for every sample's bin again."""
        m0 = mask_deg[self._k0]
        return self.tracks.el_deg < (mask_deg[self._k1] - m0) * self._dx + m0

    def figures_for_mask(self, mask_deg: np.ndarray) -> tuple[float | None, float, float]:
        """(blocked_fraction, availability, interruption) for one whole-degree mask."""
        key = mask_deg.tobytes()
        hit = self._cache.get(key)
        if hit is None:
            hit = self.evaluator.figures(self.blocked(mask_deg))
            if len(self._cache) < 4096:
                self._cache[key] = hit
        return hit

    def evaluate(self, candidates: list[Candidate], years: float = 0.0) -> list[SpotResult]:
        """Figures for each candidate, in the given order."""
        if not candidates:
            return []
        e = np.array([c.east_m for c in candidates])
        n = np.array([c.north_m for c in candidates])
        z = np.array([c.height_m for c in candidates])
        masks = self.masks(e, n, z, years)
        return [SpotResult(c, *self.figures_for_mask(m)) for c, m in zip(candidates, masks)]


def _rank_key(r: SpotResult):
    return (r.blocked_fraction if r.blocked_fraction is not None else 0.0, r.interruption, r.candidate.height_m)


def check_options(years: float, spacing_m: float, target_blocked: float | None) -> None:
    problems = Problems("command line")
    if not (isinstance(years, (int, float)) and math.isfinite(years) and 0 <= years <= 200):
        problems.add("--years", f"expected 0 to 200 years, got {years!r}")
    if not (isinstance(spacing_m, (int, float)) and math.isfinite(spacing_m) and spacing_m > 0):
        problems.add("--spacing", f"must be greater than 0 metres, got {spacing_m!r}")
    if target_blocked is not None and not (math.isfinite(target_blocked) and 0 <= target_blocked <= 1):
        problems.add("--target-blocked", f"expected a fraction 0 to 1, got {target_blocked!r}")
    problems.raise_if_any()


def growth_years(years: float) -> list[float]:
    """Years at which the best spot is re-evaluated: 0, 1, 2, ..., ``years``
    (eleven even steps when that would be more than 21)."""
    if years <= 0:
        return []
    ys = sorted({0.0, *(float(y) for y in range(1, math.floor(years) + 1)), float(years)})
    if len(ys) > 21:
        ys = [float(v) for v in np.linspace(0.0, years, 11)]
    return ys


def rank_spots(run, plan: Plan | None = None, years: float = 0.0, spacing_m: float = AREA_SPACING_M,
               target_blocked: float | None = None) -> SpotRanking:
    """Rank every candidate of the site's plan (or ``plan``) for one site run
    (pipeline.run_site: its tracks are reused, see the module docstring).

    Trees are grown by ``years``.  ``target_blocked`` (default: the site's
    ``criteria.qualified_max_blocked``) sets the blocked fraction a pole must
    reach for its lowest adequate height."""
    check_options(years, spacing_m, target_blocked)
    site = run.site
    plan = plan if plan is not None else site.plan
    where = str(site.path) if site.path else "site"
    if plan is None:
        raise InputError(f"{where}: plan: missing: add a [plan] table with candidate spots "
                         "([[plan.area]], [[plan.pole]], [[plan.point]]) or a plan file")
    if not plan.has_candidates:
        raise InputError(f"{plan.source or where}: plan: no candidate spots: add an area, a pole or a point")
    target = site.criteria.qualified_max_blocked if target_blocked is None else float(target_blocked)
    cands = candidate_points(plan, spacing_m)
    ev = SpotEvaluator(run, plan)
    results = ev.evaluate(cands, years)
    warnings = _warnings(site, plan, ev.scene, cands, years)

    poles = []
    for p in plan.poles:
        mine = sorted((r for r in results if r.candidate.kind == "pole" and r.candidate.name == p.name
                       and (r.candidate.east_m, r.candidate.north_m) == p.at), key=lambda r: r.candidate.height_m)
        ok = [r for r in mine if r.blocked_fraction is not None and r.blocked_fraction <= target]
        poles.append(PoleHeight(p.name, p.at[0], p.at[1], p.min_height_m, p.max_height_m, target,
                                ok[0] if ok else None))
    ranked = sorted(results, key=_rank_key)  # stable: equal spots keep the plan's order
    best = ranked[0].candidate
    over_time = [(y, ev.evaluate([best], y)[0]) for y in growth_years(years)]
    a = run.assessment
    if site.mount.at is not None:  # the run is at the placed mount: the survey point needs its own figures
        a = ev.evaluator.assess(with_terrain(site, site.horizon.to_true(run.declination.declination_deg).mask()))
    survey_point = {"east_m": 0.0, "north_m": 0.0, "height_m": site.horizon_height_m,
                    "blocked_fraction": a.blocked_fraction, "availability": a.availability,
                    "interruption": a.interruption, "horizon": "measured"}
    return SpotRanking(ranked, poles, over_time, float(years), float(spacing_m), target, survey_point, warnings,
                       ev)


def _warnings(site, plan: Plan, scene: Scene, cands: list[Candidate], years: float) -> list[str]:
    out = []
    if not scene.plan.has_obstacles:
        out.append("no obstacle has a position (no plan obstacles and no horizon point carries a distance): "
                   "every candidate sees the measured horizon unchanged")
    far = [c for c in cands if math.hypot(c.east_m, c.north_m) > FAR_WARNING_M]
    for name in dict.fromkeys(c.name for c in far):
        d = max(math.hypot(c.east_m, c.north_m) for c in far if c.name == name)
        out.append(f"candidate '{name}' is up to {d:.0f} m from the site point, where the sky tracks were "
                   f"computed (more than {FAR_WARNING_M:.0f} m): assess it as a site of its own")
    inside = scene.inside([c.east_m for c in cands], [c.north_m for c in cands],
                          [c.height_m for c in cands], years)
    groups: dict[tuple[str, str], list] = {}
    for c, hits in zip(cands, inside):
        groups.setdefault((c.kind, c.name), [0, 0, set()])
        g = groups[(c.kind, c.name)]
        g[1] += 1
        if hits:
            g[0] += 1
            g[2].update(hits)
    for (kind, name), (n_in, n_all, what) in groups.items():
        if n_in:
            out.append(f"{kind} '{name}': {n_in} of {n_all} candidate points stand inside "
                       f"{', '.join(sorted(what))} (below its top), so they see no sky: check the heights")
    if site.platform is not None:  # survey/platform/: the plan is a deck or roof plan
        out.append("a vehicle or vessel: the plan is read in the body frame (east_m = metres to starboard, "
                   "north_m = metres forward), ranked over the platform's headings and attitude"
                   + ("; the roadside canyon is left out of the spot figures" if site.platform.canyon else ""))
    elif site.mount.kind != "fixed":
        out.append(f"mount kind '{site.mount.kind}': spots are ranked as fixed mounts")
    return out


def check_at(east_m: float, north_m: float, height_m: float, years: float = 0.0) -> None:
    """Refuse a point ``horizon_at`` cannot stand on: not finite, over 2 km from
    the site point, or 0 to 500 m up not kept; and years as check_options."""
    check_options(years, 1.0, None)
    problems = Problems("command line")
    vals = (east_m, north_m, height_m)
    if not all(isinstance(v, (int, float)) and math.isfinite(v) for v in vals):
        problems.add("--at", f"expected three numbers EAST,NORTH,HEIGHT in metres, got {vals!r}")
    elif math.hypot(east_m, north_m) > 2000.0:
        problems.add("--at", f"{math.hypot(east_m, north_m):.6g} m from the site point (at most 2,000 m)")
    elif not 0 <= height_m <= 500:
        problems.add("--at", f"height {height_m:g} m is outside 0 to 500 m")
    problems.raise_if_any()


def horizon_at(run_or_site, east_m: float, north_m: float, height_m: float, years: float = 0.0,
               plan: Plan | None = None) -> dict:
    """The horizon at a point (``leosite horizon --at EAST,NORTH,HEIGHT``):
    ``{"azimuth_deg": [0, ..., 359], "elevation_deg": [...]}`` (true azimuths,
    degrees), the highest obstacle top seen along each azimuth from the point
    (metres east/north of the site point, antenna ``height_m`` above ground, trees
    grown by ``years``), raised to the far-away measured points' mask; also
    ``east_m``, ``north_m``, ``height_m``, ``years``, ``declination_deg``.

    ``run_or_site`` is a pipeline.SiteRun (its declination is used) or a Site
    (the WMM2025 declination at the window start, or today, when its bearings are
    magnetic)."""
    check_at(east_m, north_m, height_m, years)
    if hasattr(run_or_site, "declination"):
        site, dec = run_or_site.site, run_or_site.declination.declination_deg
    else:
        site, dec = run_or_site, 0.0
        if site.horizon.reference == "magnetic":
            from .mask import site_declination

            dec = site_declination(site).declination_deg  # the window's start, as every run takes it
    scene, far_deg = site_scene(site, dec, plan)
    el = np.maximum(derived_horizons(scene, [east_m], [north_m], [height_m], years)[0], far_deg)
    return {"azimuth_deg": [int(a) for a in AZIMUTHS_DEG], "elevation_deg": [round(float(x), 3) for x in el],
            "east_m": float(east_m), "north_m": float(north_m), "height_m": float(height_m),
            "years": float(years), "declination_deg": round(float(dec), 3)}
