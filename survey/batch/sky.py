"""The shared sky of a batch: every satellite propagated once per window, in
Earth-fixed coordinates, and each site's sky tracks cut from it.

SGP4 (``sgp4``'s ``SatrecArray``, Vallado et al. 2006) at every sample time,
TEME turned into the Earth-fixed frame (ITRS, polar motion neglected) by the
GMST1982 rotation, the same path as ``tracks.compute_tracks`` (tracks.py,
module notes).  That part does not depend on the site, so it is done once and
shared by every site of the window (README, "Batch runs").  Positions are kept
in float32: half an ulp at LEO radii (under 8,192 km) is 0.24 m, which moves a
satellite's direction by under 1e-4 degree at the shortest slant range.

Per site only its own geometry: satellites are grouped in blocks of a few
minutes each; a block's directions from the Earth's centre lie inside a cap
(centre direction and angular radius, computed once), so a block whose cap is
farther from the site's direction than the coverage angle at the terminal's
minimum elevation holds no usable sample and is skipped without looking at its
samples.  The kept blocks get the exact topocentric azimuth, elevation and
range in float64 (tracks.observer_frame), so the tracks are the same samples
``compute_tracks`` finds, to within its Hermite interpolation error.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..constellation import Fleet
from ..errors import InputError
from ..pipeline import TrackCache
from ..site import Terminal
from ..tracks import Observer, SkyTracks, coverage_angle_rad, observer_frame, sample_times
from ..window import WindowSpec

BLOCK_S = 120.0  # seconds of track per culling block: a cap of about 4 degrees in LEO
SAT_CHUNK = 128  # satellites propagated at once: bounds the float64 temporaries
MAX_SHARED_SAMPLES = 50_000_000  # sample times x satellites kept for a batch (README, "Limits"): 600 MB
CAP_MARGIN_RAD = math.radians(0.5)
# 500 m below the polar radius (6,356.75 km, WGS84) with 0.2 % more (as tracks._bounds): no site is lower
LOWEST_SITE_RADIUS_KM = (6356.752 - 0.5) * 0.998  # geodetic vs geocentric vertical (< 0.2 deg) and the ellipsoid


@dataclass
class SharedSky:
    """Earth-fixed positions of a fleet over one window, with the culling caps.

    ``xyz`` (S, T, 3) float32 km, NaN where SGP4 reported an error; per block
    (S, B): ``centre`` (unit vectors), ``radius_rad`` (the cap's half angle) and
    ``rmax_km`` (the highest radius in the block)."""

    fleet: Fleet
    window: WindowSpec
    xyz: np.ndarray
    centre: np.ndarray
    radius_rad: np.ndarray
    rmax_km: np.ndarray
    block: int
    failed_sats: int
    fleet_source: tuple[str, str, str] = ("default", "", "")  # FleetChoice.as_embedded(): how to load it again

    def __getstate__(self) -> dict:
        """Sent to another process without the fleet (sgp4's Satrec objects do not
        pickle): the fleet file's text goes instead, loaded again there, once."""
        state = dict(self.__dict__)
        state["fleet"] = None
        state.pop("_cos_limits", None)
        return state

    def __setstate__(self, state: dict) -> None:
        from ..pipeline import FleetChoice

        self.__dict__.update(state)
        self.fleet = FleetChoice(embedded=self.fleet_source).load(self.window.start)

    def cos_limit(self, min_elevation_deg: float) -> np.ndarray:
        """(S, B) cosine of the largest angle between the site's geocentric
        direction and a block's centre at which the block can hold a sample at or
        above ``min_elevation_deg``: the block's cap radius plus the coverage
        angle (tracks.coverage_angle_rad) from the block's highest radius, taken
        for the lowest site radius (a lower site sees farther), 0.5 degree lower
        and with the margin for the geodetic vertical, as tracks.py widens it.
        Kept for each minimum elevation asked for (a batch has few)."""
        cache = self.__dict__.setdefault("_cos_limits", {})
        if min_elevation_deg not in cache:
            eps = max(min_elevation_deg - 0.5, 0.0)
            rmax = np.where(np.isfinite(self.rmax_km), self.rmax_km, 1e9).astype(np.float64)
            reach = self.radius_rad + coverage_angle_rad(eps, LOWEST_SITE_RADIUS_KM, rmax * 1.001) + CAP_MARGIN_RAD
            limit = np.cos(np.clip(reach, 0.0, math.pi)).astype(np.float32)
            limit[~np.isfinite(self.rmax_km)] = -2.0  # a block with a failed sample: always looked at
            cache[min_elevation_deg] = limit
        return cache[min_elevation_deg]

    @property
    def nbytes(self) -> int:
        return int(self.xyz.nbytes + self.centre.nbytes + self.radius_rad.nbytes + self.rmax_km.nbytes)

    def tracks(self, observer: Observer, terminal: Terminal) -> SkyTracks:
        """The usable-sky samples at ``observer`` (as tracks.compute_tracks gives them)."""
        return site_tracks(self, observer, terminal)


def check_shared_size(window: WindowSpec, satellites: int, where: str = "batch") -> None:
    work = window.count * satellites
    if work > MAX_SHARED_SAMPLES:
        raise InputError(f"{where}: window x fleet: {window.count:,} sample times x {satellites:,} satellites = "
                         f"{work:,}, more than the batch limit of {MAX_SHARED_SAMPLES:,}: use a coarser --step or "
                         "a shorter --hours")


def propagate(fleet: Fleet, window: WindowSpec, fleet_source: tuple[str, str, str], progress=None) -> SharedSky:
    """Every satellite of ``fleet`` (loaded from ``fleet_source``) at every sample
    time of ``window``, Earth-fixed."""
    from sgp4.api import SatrecArray

    check_shared_size(window, len(fleet))
    report = progress or (lambda f: None)
    jd, fr, theta = sample_times(window)
    S, T = len(fleet), window.count
    xyz = np.empty((S, T, 3), dtype=np.float32)
    block = max(1, int(round(BLOCK_S / window.step_s)))
    nb = -(-T // block)
    centre = np.empty((S, nb, 3), dtype=np.float32)
    radius = np.empty((S, nb), dtype=np.float32)
    rmax = np.empty((S, nb), dtype=np.float32)
    c, s = np.cos(theta)[None, :], np.sin(theta)[None, :]
    failed = 0
    for a in range(0, S, SAT_CHUNK):
        b = min(a + SAT_CHUNK, S)
        e, r, _ = SatrecArray(fleet.satrecs[a:b]).sgp4(jd, fr)
        bad = e != 0
        failed += int(np.count_nonzero(bad.any(axis=1)))
        # TEME -> ITRS (PEF): a rotation about z by GMST1982 (tracks.py, module notes).
        xyz[a:b, :, 0] = c * r[:, :, 0] + s * r[:, :, 1]
        xyz[a:b, :, 1] = -s * r[:, :, 0] + c * r[:, :, 1]
        xyz[a:b, :, 2] = r[:, :, 2]
        xyz[a:b][bad] = np.nan
        centre[a:b], radius[a:b], rmax[a:b] = _caps(xyz[a:b], block)
        report(b / S)
    return SharedSky(fleet, window, xyz, centre, radius, rmax, block, failed, fleet_source)


def _caps(xyz: np.ndarray, block: int):
    """Per block of ``block`` samples: the mean direction, the largest angle of a
    sample from it, and the largest radius.  A block with a failed sample gets a
    cap of the whole sphere (its other samples are still looked at)."""
    S, T, _ = xyz.shape
    nb = -(-T // block)
    pad = nb * block - T
    p = xyz.astype(np.float64)
    if pad:
        p = np.concatenate([p, np.repeat(p[:, -1:, :], pad, axis=1)], axis=1)
    p = p.reshape(S, nb, block, 3)
    r = np.linalg.norm(p, axis=3)
    u = p / r[..., None]
    centre = np.nansum(u, axis=2)
    centre /= np.linalg.norm(centre, axis=2)[..., None]
    cosang = np.einsum("sbki,sbi->sbk", u, centre)
    radius = np.arccos(np.clip(np.nanmin(cosang, axis=2), -1.0, 1.0))
    broken = np.isnan(r).any(axis=2) | ~np.isfinite(centre).all(axis=2)
    radius[broken] = math.pi
    centre[broken] = (1.0, 0.0, 0.0)
    rmax = np.nanmax(np.where(np.isnan(r), 0.0, r), axis=2)
    rmax[broken] = np.inf
    return centre.astype(np.float32), radius.astype(np.float32), rmax.astype(np.float32)


def site_tracks(sky: SharedSky, observer: Observer, terminal: Terminal) -> SkyTracks:
    """The site's usable-sky samples from the shared positions: the blocks whose
    cap can reach the coverage angle, then exact topocentric geometry."""
    site, enu = observer_frame(observer)
    up_dir = site / float(np.linalg.norm(site))
    # Products written out, not ``@``: a BLAS call here would start BLAS's own
    # threads in every worker process and oversubscribe the cores.
    c = sky.centre
    ux, uy, uz = (np.float32(v) for v in up_dir)
    near = (c[..., 0] * ux + c[..., 1] * uy + c[..., 2] * uz) >= sky.cos_limit(terminal.min_elevation_deg)
    bs, bb = np.nonzero(near)
    T, k = sky.window.count, sky.block
    offs = np.arange(k)
    sat = np.repeat(bs, k)
    idx = (bb[:, None] * k + offs[None, :]).ravel()
    keep = idx < T
    sat, idx = sat[keep], idx[keep]
    d = sky.xyz[sat, idx].astype(np.float64) - site
    dx, dy, dz = d[:, 0], d[:, 1], d[:, 2]
    e, n, u = (dx * r[0] + dy * r[1] + dz * r[2] for r in enu)
    rng = np.sqrt(e * e + n * n + u * u)
    # At or above the minimum elevation: up >= range * sin(min), before any arcsin
    # (NaN, a failed SGP4 sample, compares False).
    ok = u >= rng * math.sin(math.radians(terminal.min_elevation_deg))
    if terminal.scan_half_angle_deg is not None:
        tl, ta = math.radians(terminal.tilt_deg), math.radians(terminal.tilt_azimuth_deg)
        bore = (math.sin(tl) * math.sin(ta), math.sin(tl) * math.cos(ta), math.cos(tl))
        ok &= (e * bore[0] + n * bore[1] + u * bore[2]) >= rng * math.cos(math.radians(terminal.scan_half_angle_deg))
    sat, idx, e, n, u, rng = sat[ok], idx[ok], e[ok], n[ok], u[ok], rng[ok]
    el = np.degrees(np.arcsin(np.clip(u / np.where(rng > 0, rng, 1.0), -1.0, 1.0)))
    keep = el >= terminal.min_elevation_deg  # the same test in degrees, as compute_tracks makes it
    sat, idx, e, n, el, rng = sat[keep], idx[keep], e[keep], n[keep], el[keep], rng[keep]
    az = np.degrees(np.arctan2(e, n)) % 360.0
    order = np.argsort(idx.astype(np.int64) * max(len(sky.fleet), 1) + sat, kind="stable")  # by time, then satellite
    return SkyTracks(sat[order].astype(np.int32), idx[order].astype(np.int32), az[order].astype(np.float32),
                     el[order].astype(np.float32), rng[order].astype(np.float32), sky.window, sky.fleet,
                     observer, terminal, 0, sky.failed_sats)


class SharedTracks(TrackCache):
    """A track cache for ``pipeline.run_site`` that answers from the shared skies
    (one per window): for a window it holds, any observer and terminal get their
    tracks cut from the shared positions, so each site runs through the one
    pipeline (the same mask, evaluator and warnings as ``leosite assess``) and
    only its geometry is computed.  ``key`` is TrackCache.key: (kind, name, text
    hash, window, observer, terminal); a window it does not hold is left to
    run_site, which then computes the tracks itself."""

    def __init__(self, skies: dict[WindowSpec, SharedSky], fleet_source: tuple[str, str, str]):
        super().__init__()
        self.skies = skies
        kind, name, text = fleet_source
        self.fleet_key = (kind, name, hash(text))

    def get(self, key):
        window, observer, terminal = key[3], key[4], key[5]
        sky = self.skies.get(window)
        if tuple(key[:3]) != self.fleet_key or sky is None:
            return None, None
        return sky.fleet, sky.tracks(observer, terminal)

    def put(self, key, fleet, tracks) -> None:  # one site's own tracks are not kept for the next site
        return None
