"""Horizon from a photo (README, "Horizon from a photo"): an equirectangular
panorama or a fisheye shot looking up, taken at the mount spot, turned into a
skyline in true azimuths.

- ``spec``: ``[horizon] photo`` of a site file (no image library needed);
- ``read``: decoding with Pillow (EXIF orientation, photo-sphere XMP);
- ``geometry``: the grid of directions on each projection, the image circle;
- ``skyline``: blue-channel sky index, Otsu's threshold, the sky connected to
  the zenith, the lowest open sky per azimuth;
- ``run``: one photo end to end, kept for re-assessments;
- ``command``: ``leosite photo``.

The site's mask is max(measured points, photo skyline), combined in
``survey/mask.py``."""

from .run import photo_skyline, true_bearing, unrolled_photo
from .skyline import PhotoSkyline, otsu
from .spec import LENSES, PROJECTIONS, PhotoSpec, photo_from_horizon_table

__all__ = ["LENSES", "PROJECTIONS", "PhotoSkyline", "PhotoSpec", "otsu", "photo_from_horizon_table",
           "photo_skyline", "true_bearing", "unrolled_photo"]
