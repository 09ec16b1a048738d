"""One horizon photo, from its file to its skyline: read it (``read.py``),
place the grid of directions on it (``geometry.py``), find the skyline
(``skyline.py``).  The result is kept for the photo's file (its path, size and
modification time), spec and declination, so the text UI's re-assessments do
not read the image again."""

from __future__ import annotations

import math
from functools import lru_cache

import numpy as np

from .geometry import AZ_DEG, EL_DEG, RES_DEG, Sampling, check_circle, equirect_sampling, find_circle, fisheye_sampling
from .read import PhotoImage, read_photo
from .skyline import PhotoSkyline, detect_skyline
from .spec import PhotoSpec


def _cell_px(spec: PhotoSpec, width: int, height: int) -> float:
    """How many shown pixels a grid cell spans, roughly: the decoding reduces by it."""
    if spec.projection == "fisheye":
        r = spec.circle[2] if spec.circle is not None else min(width, height) / 2.0
        return r / 90.0 * RES_DEG
    return width / (360.0 / RES_DEG)


def _open(spec: PhotoSpec) -> PhotoImage:
    from PIL import Image

    try:
        with Image.open(spec.file) as probe:
            w, h = probe.size
    except Exception:  # noqa: BLE001 - read_photo says what is wrong, in one line
        return read_photo(spec.file)
    return read_photo(spec.file, _cell_px(spec, w, h))


def true_bearing(spec: PhotoSpec, declination_deg: float) -> float | None:
    """The photo's bearing turned to true (``declination_deg`` 0 for true bearings)."""
    return None if spec.bearing_deg is None else (spec.bearing_deg + declination_deg) % 360.0


def sampling_for(photo: PhotoImage, spec: PhotoSpec, declination_deg: float,
                 el_deg: np.ndarray = EL_DEG, az_deg: np.ndarray = AZ_DEG) -> Sampling:
    """Where each grid direction lies in ``photo``."""
    bearing = true_bearing(spec, declination_deg)
    if spec.projection == "equirect":
        return equirect_sampling(photo, bearing, declination_deg, el_deg, az_deg)
    notes: list[str] = []
    if spec.circle is not None:
        check_circle(photo, spec.circle, f"{photo.path}: --circle")
        circle = spec.circle
    else:
        circle, notes = find_circle(photo)
    s = fisheye_sampling(photo, bearing, spec.lens, circle, el_deg, az_deg)
    return Sampling(s.iy, s.ix, s.valid, tuple(notes))


@lru_cache(maxsize=4)
def _cached(spec: PhotoSpec, declination_deg: float, stamp: tuple) -> PhotoSkyline:
    photo = _open(spec)
    sampling = sampling_for(photo, spec, declination_deg)
    return detect_skyline(sampling.gather(photo.rgb), sampling, str(spec.file))


def photo_skyline(spec: PhotoSpec, declination_deg: float = 0.0) -> PhotoSkyline:
    """The skyline of ``spec``'s photo in true azimuths; ``declination_deg`` turns
    a compass bearing to true (0 for true bearings).  Raises InputError."""
    from ..errors import InputError

    try:
        st = spec.file.stat()
    except OSError as exc:
        raise InputError(f"{spec.file}: cannot read the photo: {exc.strerror or exc}") from None
    dec = round(float(declination_deg), 9) if math.isfinite(declination_deg) else 0.0
    return _cached(spec, dec, (str(spec.file.resolve()), st.st_size, st.st_mtime_ns))


def unrolled_photo(spec: PhotoSpec, declination_deg: float, res_deg: float = 0.25) -> np.ndarray:
    """The photo resampled to azimuth 0..360 (true) along x and elevation 90..0
    down y, ``res_deg`` a pixel, (rows, cols, 3) uint8; white off the photo.
    What ``leosite photo --plot`` and the report draw under the skyline."""
    photo = _open(spec)
    az = (np.arange(int(round(360.0 / res_deg))) + 0.5) * res_deg
    el = 90.0 - (np.arange(int(round(90.0 / res_deg))) + 0.5) * res_deg
    sampling = sampling_for(photo, spec, declination_deg, el, az)
    return sampling.gather(photo.rgb, fill=255)
