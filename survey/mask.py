"""The site's mask: the declination for its compass bearings, and the horizon
the antenna sees, measured or derived from the site plan, raised to the
skyline of a horizon photo when the site has one (max(measured, photo)).  One
function (:func:`site_mask`) gives both, for the pipeline, the horizon at
another point and the text UI's horizon preview, so they never differ.
"""

from __future__ import annotations

from dataclasses import replace
from datetime import datetime

import numpy as np

from .horizon import HorizonMask, HorizonProfile
from .magnetic import Declination, declination
from .site import Site
from .window import window_start


def site_declination(site: Site, when: datetime | None = None, now: datetime | None = None) -> Declination:
    """The WMM declination at the site at ``when`` (default: the window's start by
    window.py's rule: the site's [window] start, else today 00:00 UTC)."""
    when = window_start(site, when, now)
    return declination(site.latitude_deg, site.longitude_deg, site.elevation_m, when)


def site_mask(site: Site, when: datetime | None = None, now: datetime | None = None) -> tuple[Declination, HorizonMask]:
    """(declination, mask) for ``site`` at ``when`` (as site_declination): the
    mask in true azimuths, the measured horizon as-is at the survey point, or,
    with ``mount.at``, the horizon derived there (``derived_mask``)."""
    dec = site_declination(site, when, now)
    return dec, true_mask(site, dec)


def measured_mask(profile: HorizonProfile, declination_deg: float | None) -> HorizonMask:
    """The mask of measured points as typed: compass bearings turned to true with
    the declination (None: not known yet, taken as 0), straight lines between
    them.  The text UI's horizon preview draws this same mask."""
    return profile.to_true(declination_deg or 0.0).mask()


def true_mask(site: Site, dec: Declination) -> HorizonMask:
    """The mask the antenna sees, in true azimuths (compass bearings rotated): the
    measured horizon as-is at the survey point, or, with ``mount.at``, the horizon
    derived there (``derived_mask``); with ``[terrain]``, raised to the terrain
    horizon: max(measured, terrain) (survey/terrain/combine.py)."""
    if site.mount.at is not None:
        mask = derived_mask(site, dec.declination_deg)
    else:
        mask = measured_mask(site.horizon, dec.declination_deg)
    return with_terrain(site, with_photo(mask, site, dec))


PHOTO_LABEL = "photo"


def photo_declination(site: Site, dec: Declination) -> float:
    """What turns the photo's bearing to true: the declination for compass
    bearings, 0 for true ones (the site's ``[horizon] reference``)."""
    return dec.declination_deg if site.horizon.reference == "magnetic" else 0.0


def site_photo_skyline(site: Site, dec: Declination):
    """The skyline of the site's horizon photo (``photo.PhotoSkyline``), None without one."""
    if site.photo is None:
        return None
    from .photo import photo_skyline

    return photo_skyline(site.photo, photo_declination(site, dec))


def combined_mask(mask: HorizonMask, az_deg: np.ndarray, el_deg: np.ndarray) -> HorizonMask:
    """max(``mask``, the skyline ``el_deg`` at ``az_deg``, linear between its
    points and periodic), on the union of both knots; a knot keeps the mask's
    label where the mask is at least as high, else says ``photo``.  Between two
    knots where the two cross, the maximum is read as the straight line (the
    skyline's knots are 0.5° apart, so that is under 0.5° of azimuth)."""
    az = np.union1d(np.mod(mask.az_deg, 360.0), np.mod(az_deg, 360.0))
    m = mask.elevation_at(az)
    p = np.interp(az, az_deg, el_deg, period=360.0)
    own = dict(zip(np.mod(mask.az_deg, 360.0).tolist(), mask.labels))
    labels = tuple(own.get(a, "") if mi >= pi else PHOTO_LABEL for a, mi, pi in zip(az.tolist(), m, p))
    return HorizonMask(az, np.maximum(m, p), labels)


def with_photo(mask: HorizonMask, site: Site, dec: Declination) -> HorizonMask:
    """``mask`` raised to the site's photo skyline (unchanged without a photo)."""
    sky = site_photo_skyline(site, dec)
    if sky is None:
        return mask
    return combined_mask(mask, sky.az_deg, sky.el_deg)


def photo_notes(site: Site, dec: Declination) -> list[str]:
    """What a run says about its horizon photo: where the horizon came from and
    the photo's own warnings."""
    sky = site_photo_skyline(site, dec)
    if sky is None:
        return []
    how = site.photo.describe(site.horizon.reference)
    return [f"horizon from a photo ({how}): the mask is the higher of the measured points and its skyline "
            f"(Otsu threshold {sky.threshold} on the blue channel)"] + [f"photo: {w}" for w in sky.warnings]


def with_terrain(site: Site, mask: HorizonMask) -> HorizonMask:
    """``mask`` raised to the site's terrain horizon (unchanged without ``[terrain]``)."""
    if site.terrain is None:
        return mask
    from .terrain import TerrainMask, site_terrain

    return TerrainMask(mask, site_terrain(site))


def terrain_floor(site: Site) -> np.ndarray:
    """The site's terrain horizon as a mask at azimuths 0..359 (zeros without
    ``[terrain]``): what spot search raises every candidate's mask to."""
    if site.terrain is None:
        return np.zeros(360)
    from .terrain import site_terrain, terrain_floor_deg

    return terrain_floor_deg(site_terrain(site))


def derived_mask(site: Site, declination_deg: float) -> HorizonMask:
    """The horizon at ``site.mount.at``, ``mount.height_m`` above ground: the plan's
    obstacles and the measured points with a distance (seen from
    ``site.horizon_height_m`` at the survey point), raised to the far points'
    mask; whole degrees, the same mask as spots.SpotEvaluator.mask_for."""
    from .plan import AZIMUTHS_DEG, derived_horizon_labels, derived_horizons
    from .spots import site_scene  # spots imports assess, which imports site: keep it lazy

    east, north = site.mount.at
    surveyed = replace(site, mount=replace(site.mount, height_m=site.horizon_height_m))
    scene, far_deg = site_scene(surveyed, declination_deg)
    derived = derived_horizons(scene, [east], [north], [site.mount.height_m])[0]
    el = np.maximum(derived, far_deg)
    # Each degree named after what sets it: the obstacle, or the nearest far point.
    near = derived_horizon_labels(scene, east, north, site.mount.height_m)
    far_points = [p for p in site.horizon.to_true(declination_deg).points if p.distance_m is None]
    labels = tuple(near[k] if derived[k] >= far_deg[k] else _nearest_label(far_points, k) for k in range(360))
    return HorizonMask(AZIMUTHS_DEG, el, labels)


def _nearest_label(points, azimuth_deg: float) -> str:
    if not points:
        return ""
    gap = [abs((p.azimuth_deg - azimuth_deg + 180.0) % 360.0 - 180.0) for p in points]
    return points[gap.index(min(gap))].label
