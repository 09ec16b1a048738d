"""Where each direction of the sky lies in a horizon photo.

The skyline is found on one grid of directions, whatever the projection:
columns are true azimuths (cell centres every ``RES_DEG``), rows elevations
from +90° down to -10°.  For each cell these functions give the photo pixel
it falls in (nearest pixel of the decoded, reduced image), or mark it outside
the photo:

- equirectangular (README, "Horizon from a photo"): columns are azimuth, rows
  elevation from +90° at the top to -90° at the bottom; the bearing is that of
  the centre column; a photo-sphere crop (GPano) places the image inside the
  full 360° x 180° panorama;
- fisheye looking straight up: the zenith at the circle's centre, the
  horizontal at its edge (a 180° lens), the bearing at the top of the image and
  bearings increasing anticlockwise seen from below (east to the left when
  north is up); radius r = f·θ (equidistant) or r = 2f·sin(θ/2) (equisolid),
  θ = 90° - elevation the angle from the zenith.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..errors import InputError
from .read import EQUIRECT_ASPECT_TOLERANCE, PhotoImage

RES_DEG = 0.25  # grid cell, degrees: a 1.5° mast spans six cells
EL_TOP_DEG, EL_BOTTOM_DEG = 90.0, -10.0  # the grid keeps 10° below the horizontal (pale ground shows there)
AZ_DEG = (np.arange(int(round(360.0 / RES_DEG))) + 0.5) * RES_DEG
EL_DEG = EL_TOP_DEG - (np.arange(int(round((EL_TOP_DEG - EL_BOTTOM_DEG) / RES_DEG))) + 0.5) * RES_DEG


@dataclass(frozen=True)
class Sampling:
    """Grid cell -> pixel of ``PhotoImage.rgb``: ``iy``, ``ix`` (rows, cols of the
    grid), ``valid`` where the cell is on the photo; ``notes`` what was used."""

    iy: np.ndarray
    ix: np.ndarray
    valid: np.ndarray
    notes: tuple[str, ...] = ()

    def gather(self, channel: np.ndarray, fill=0) -> np.ndarray:
        """``channel`` (h, w[, k]) read at every grid cell; ``fill`` off the photo."""
        out = channel[self.iy, self.ix]
        out[~self.valid] = fill
        return out


def _pixels(photo: PhotoImage, x_shown: np.ndarray, y_shown: np.ndarray) -> Sampling:
    """Nearest pixels of the reduced image for shown-image coordinates."""
    h, w = photo.rgb.shape[:2]
    xs = np.floor(x_shown * photo.scale).astype(np.int64)
    ys = np.floor(y_shown * photo.scale).astype(np.int64)
    valid = (xs >= 0) & (xs < w) & (ys >= 0) & (ys < h) & np.isfinite(x_shown) & np.isfinite(y_shown)
    return Sampling(np.clip(ys, 0, h - 1), np.clip(xs, 0, w - 1), valid)


def equirect_sampling(photo: PhotoImage, bearing_true_deg: float | None, declination_deg: float,
                      el_deg: np.ndarray = EL_DEG, az_deg: np.ndarray = AZ_DEG) -> Sampling:
    """The grid on an equirectangular panorama.  ``bearing_true_deg``: the true
    bearing of the image's centre column (None: from the photo-sphere heading,
    which is taken in the same reference as the command line's bearing and
    turned to true with ``declination_deg``, 0 for true bearings)."""
    W, H, pano, where = photo.width, photo.height, photo.pano, str(photo.path)
    notes = []
    if pano is None:
        aspect = W / H
        if abs(aspect - 2.0) > 2.0 * EQUIRECT_ASPECT_TOLERANCE:
            raise InputError(f"{where}: {W} x {H} pixels ({aspect:.2f}:1) is not a 2:1 equirectangular panorama "
                             "(360° x 180°) and carries no photo-sphere metadata saying where it sits: use a "
                             "full panorama, or --projection fisheye for a photo looking up")
        full_w, full_h, left, top, crop_w, crop_h = float(W), float(H), 0.0, 0.0, float(W), float(H)
    else:
        full_w, full_h, left, top, crop_w, crop_h = (pano.full_w, pano.full_h, pano.left, pano.top,
                                                     pano.crop_w, pano.crop_h)
        if (crop_w, crop_h) != (full_w, full_h):
            notes.append(f"photo-sphere metadata used: the image is {crop_w:g} x {crop_h:g} of a {full_w:g} x "
                         f"{full_h:g} panorama, at {left:g}, {top:g}")
    # Heading of the full panorama's centre column, true.
    centre_offset_deg = (left + crop_w / 2.0 - full_w / 2.0) / full_w * 360.0
    if bearing_true_deg is not None:
        heading = bearing_true_deg - centre_offset_deg
        if pano is not None and pano.heading_deg is not None:
            notes.append(f"the command line's bearing overrides the photo-sphere heading "
                         f"({pano.heading_deg:g}° in the photo's metadata)")
    elif pano is not None and pano.heading_deg is not None:
        heading = pano.heading_deg + declination_deg
        notes.append(f"photo-sphere metadata used: heading {pano.heading_deg:g}° at the panorama's centre")
    else:
        raise InputError(f"{where}: no bearing: give --bearing (the bearing of the centre column); the photo "
                         "carries no photo-sphere heading")
    az = az_deg[None, :]
    el = el_deg[:, None]
    x_full = np.mod((az - heading) / 360.0 + 0.5, 1.0) * full_w
    y_full = (90.0 - el) / 180.0 * full_h + 0.0 * az
    x = (x_full - left) % full_w * (W / crop_w)
    y = (y_full - top) * (H / crop_h)
    s = _pixels(photo, x, y)
    return Sampling(s.iy, s.ix, s.valid, tuple(notes))


def fisheye_radius(theta_deg: np.ndarray, r_px: float, lens: str) -> np.ndarray:
    """Distance from the circle's centre (pixels) of a direction ``theta_deg``
    from the zenith, for an image circle of radius ``r_px`` at θ = 90°:
    equidistant r = f·θ, equisolid r = 2f·sin(θ/2)."""
    t = np.radians(theta_deg)
    if lens == "equisolid":
        f = r_px / (2.0 * math.sin(math.radians(45.0)))
        return 2.0 * f * np.sin(t / 2.0)
    return r_px * t / (math.pi / 2.0)


def fisheye_sampling(photo: PhotoImage, bearing_true_deg: float, lens: str, circle: tuple[float, float, float],
                     el_deg: np.ndarray = EL_DEG, az_deg: np.ndarray = AZ_DEG) -> Sampling:
    """The grid on a fisheye photo looking up, ``circle`` = (cx, cy, r) in shown
    pixels.  A direction at azimuth a lies at angle a - bearing anticlockwise
    from the top of the image: x = cx - r·sin(a - b), y = cy - r·cos(a - b)."""
    cx, cy, r = circle
    el = el_deg[:, None]
    phi = np.radians(az_deg[None, :] - bearing_true_deg)
    rad = fisheye_radius(90.0 - el, r, lens)
    x = cx - rad * np.sin(phi)
    y = cy - rad * np.cos(phi)
    s = _pixels(photo, x, y)
    return Sampling(s.iy, s.ix, s.valid & (el >= 0.0))


def check_circle(photo: PhotoImage, circle: tuple[float, float, float], where: str) -> None:
    """A circle given by hand must have its centre on the image and reach no
    further than the image's diagonal."""
    cx, cy, r = circle
    W, H = photo.width, photo.height
    if not (0 <= cx <= W and 0 <= cy <= H):
        raise InputError(f"{where}: the circle's centre {cx:g},{cy:g} is outside the image ({W} x {H} pixels)")
    if r > math.hypot(W, H):
        raise InputError(f"{where}: the circle's radius {r:g} is larger than the image ({W} x {H} pixels)")
    if r < 0.05 * min(W, H):
        raise InputError(f"{where}: the circle's radius {r:g} is under 5 % of the image's size: not a fisheye circle")


def find_circle(photo: PhotoImage) -> tuple[tuple[float, float, float], list[str]]:
    """The fisheye image circle (cx, cy, r) in shown pixels, found from the
    lit disc's edge: the outermost lit pixel of every row and column (lit:
    brighter than the dark surround), a least-squares circle through them
    (the algebraic fit of Kåsa, 1976), refitted twice without the points that
    stray (a dark trunk at the edge).  InputError when there is no dark
    surround or the edge is not round."""
    where = str(photo.path)
    lum = photo.rgb.max(axis=2)
    h, w = lum.shape
    hint = f"{where}: no fisheye image circle found"
    bright = float(np.percentile(lum, 99))
    lit = lum > max(12.0, 0.06 * bright)
    k = max(2, int(0.03 * min(h, w)))
    corners = [lit[:k, :k], lit[:k, -k:], lit[-k:, :k], lit[-k:, -k:]]
    if sum(float(c.mean()) > 0.5 for c in corners) >= 3:
        raise InputError(f"{hint}: the corners are not dark (a full-frame fisheye, or not a fisheye photo); "
                         "give --circle CX,CY,R in pixels")
    xs, ys = [], []
    rows = np.flatnonzero(lit.any(axis=1))
    for y in rows:
        line = np.flatnonzero(lit[y])
        for x in (line[0], line[-1] + 1):
            if 0 < x < w:  # an edge at the image's border is the frame, not the circle
                xs.append(float(x))
                ys.append(y + 0.5)
    cols = np.flatnonzero(lit.any(axis=0))
    for x in cols:
        line = np.flatnonzero(lit[:, x])
        for y in (line[0], line[-1] + 1):
            if 0 < y < h:
                xs.append(x + 0.5)
                ys.append(float(y))
    if len(xs) < 12:
        raise InputError(f"{hint}: give --circle CX,CY,R in pixels")
    px, py = np.array(xs), np.array(ys)
    keep = np.ones(px.size, dtype=bool)
    cx = cy = r = 0.0
    for _ in range(3):
        a = np.column_stack([px[keep], py[keep], np.ones(keep.sum())])
        b = -(px[keep] ** 2 + py[keep] ** 2)
        (d, e, f), *_ = np.linalg.lstsq(a, b, rcond=None)
        cx, cy = -d / 2.0, -e / 2.0
        r2 = cx * cx + cy * cy - f
        if not r2 > 0:
            raise InputError(f"{hint}: give --circle CX,CY,R in pixels")
        r = math.sqrt(r2)
        dist = np.abs(np.hypot(px - cx, py - cy) - r)
        keep = dist <= max(2.0, 0.015 * r)
        if keep.sum() < 12:
            raise InputError(f"{hint}: the lit area's edge is not round; give --circle CX,CY,R in pixels")
    inliers = keep.mean()
    if inliers < 0.6 or not (0 <= cx <= w and 0 <= cy <= h) or r < 0.1 * min(h, w):
        raise InputError(f"{hint}: the lit area's edge is not round ({inliers:.0%} of its edge on one circle); "
                         "give --circle CX,CY,R in pixels")
    s = photo.scale
    circle = (cx / s, cy / s, r / s)
    notes = [f"image circle found at {circle[0]:.0f},{circle[1]:.0f}, radius {circle[2]:.0f} pixels "
             "(--circle overrides)"]
    if cx - r < -1 or cy - r < -1 or cx + r > w + 1 or cy + r > h + 1:
        notes.append("the image circle runs past the image's edge: the horizon there is not in the photo")
    return circle, notes
