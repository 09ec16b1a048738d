"""What a site file says about its horizon photo: ``[horizon] photo = {file,
projection, bearing}`` (with ``lens`` and ``circle`` when they are needed), read
at the input edge like every other table, and written back the same way
(README, "Horizon from a photo").  Reading the image is left to ``read.py``;
nothing here imports Pillow or scipy, so a site file loads without them."""

from __future__ import annotations

import math
import os
from dataclasses import dataclass
from pathlib import Path

from ..errors import InputError, Problems
from ..tables import Table, is_number

PROJECTIONS = ("equirect", "fisheye")
LENSES = ("equidistant", "equisolid")


@dataclass(frozen=True)
class PhotoSpec:
    """One horizon photo: its file, how it is projected, and its orientation.

    ``bearing_deg`` is in the site's ``[horizon] reference`` (true or compass):
    the bearing of the centre column (equirect) or of the top of the image
    (fisheye); None for an equirect panorama whose photo-sphere metadata gives
    the heading.  ``circle`` = (cx, cy, r) in pixels of the image as shown
    (EXIF orientation applied), origin at its top-left corner, x right, y down;
    None: found automatically.  ``lens`` applies to a fisheye only."""

    file: Path
    projection: str = "equirect"
    bearing_deg: float | None = None
    lens: str = "equidistant"
    circle: tuple[float, float, float] | None = None

    def as_table(self, folder: Path) -> dict:
        """The inline table written to the site file, the path relative to the
        site file's ``folder`` (as every path in a site file)."""
        try:
            name = os.path.relpath(self.file, folder)
        except ValueError:  # another drive: keep it absolute
            name = str(self.file)
        out: dict = {"file": Path(name).as_posix(), "projection": self.projection}
        if self.bearing_deg is not None:
            out["bearing"] = _number(self.bearing_deg)
        if self.projection == "fisheye" and self.lens != "equidistant":
            out["lens"] = self.lens
        if self.circle is not None:
            out["circle"] = [_number(v) for v in self.circle]
        return out

    def describe(self, reference: str) -> str:
        """The photo in words: '<file>, equirect panorama, centre bearing 12° (compass)'."""
        what = ("equirectangular panorama" if self.projection == "equirect"
                else f"fisheye ({self.lens}), looking up")
        where = "centre column" if self.projection == "equirect" else "top of the image"
        ref = "compass" if reference == "magnetic" else "true"
        bearing = (f"{where} at {self.bearing_deg:g}° ({ref})" if self.bearing_deg is not None
                   else f"{where} from the photo's own heading ({ref})")
        return f"{self.file.name}, {what}, {bearing}"


def _number(x: float):
    x = float(x)
    return int(x) if x.is_integer() and abs(x) < 2.0 ** 53 else x


def parse_bearing(raw, where: str, problems: Problems) -> float | None:
    """A bearing in degrees, -360 to 720 taken modulo 360 (as horizon azimuths)."""
    if not is_number(raw):
        problems.add(where, f"expected a number of degrees, got {raw!r}")
        return None
    if not -360.0 <= raw < 720.0:
        problems.add(where, f"bearing {raw:g} is outside -360 to 720 degrees")
        return None
    return float(raw) % 360.0


def parse_circle(raw, where: str, problems: Problems) -> tuple[float, float, float] | None:
    """(cx, cy, r) in pixels: three finite numbers, r positive; whether the circle
    lies on the image is checked when the image is read."""
    if isinstance(raw, str):
        parts = raw.split(",")
        try:
            raw = [float(p) for p in parts]
        except ValueError:
            problems.add(where, f"expected CX,CY,R in pixels, e.g. 1500,1000,980; got {raw!r}")
            return None
    if not isinstance(raw, (list, tuple)) or len(raw) != 3 or not all(is_number(v) for v in raw):
        problems.add(where, f"expected [cx, cy, r] in pixels, e.g. [1500, 1000, 980]; got {raw!r}")
        return None
    cx, cy, r = (float(v) for v in raw)
    if not all(math.isfinite(v) for v in (cx, cy, r)):
        problems.add(where, "expected finite numbers of pixels")
        return None
    if r <= 0:
        problems.add(where, f"the radius must be more than 0 pixels, got {r:g}")
        return None
    return cx, cy, r


def photo_from_horizon_table(raw, site_path: Path, problems: Problems) -> PhotoSpec | None:
    """``[horizon] photo`` of a site file (None when absent): file (relative to the
    site file's folder, must exist), projection, bearing, optional lens and circle."""
    if raw is None:
        return None
    t = Table(raw, "horizon.photo", problems, ("file", "projection", "bearing", "lens", "circle"))
    before = len(problems.items)
    name = t.text("file", required=True)
    projection = t.text("projection", "equirect", required=True, choices=PROJECTIONS)
    lens = t.text("lens", "equidistant", choices=LENSES)
    bearing = parse_bearing(t.data["bearing"], "horizon.photo.bearing", problems) if "bearing" in t.data else None
    circle = parse_circle(t.data["circle"], "horizon.photo.circle", problems) if "circle" in t.data else None
    if projection == "fisheye" and "bearing" not in t.data:
        problems.add("horizon.photo.bearing", "missing: a fisheye photo needs the bearing at the top of the image")
    if projection != "fisheye" and ("lens" in t.data or "circle" in t.data):
        problems.add("horizon.photo", "lens and circle apply to a fisheye photo only")
    path = site_path.parent / name if name else None
    if name and "\x00" in name:
        problems.add("horizon.photo.file", "holds a NUL character")
    elif path is not None:
        missing = _not_a_file(path)
        if missing:
            problems.add("horizon.photo.file", f"{name[:200]}: {missing} (relative to the site file's folder)")
    if len(problems.items) > before or path is None:
        return None
    return PhotoSpec(path, projection, bearing, lens, circle)


def _not_a_file(path: Path) -> str:
    """Why ``path`` is not a readable file ("" when it is one): the OS's own
    reason for a name it refuses (too long, a bad character)."""
    try:
        return "" if path.is_file() else "file not found"
    except (OSError, ValueError) as exc:
        return f"cannot be opened: {getattr(exc, 'strerror', None) or exc}"


def check_spec(spec: PhotoSpec) -> None:
    """The checks ``photo_from_horizon_table`` makes, for a spec built from the
    command line: one InputError naming the option."""
    problems = Problems("command line")
    if spec.projection not in PROJECTIONS:
        problems.add("--projection", f"{spec.projection!r} is not one of: {', '.join(PROJECTIONS)}")
    if spec.projection == "fisheye" and spec.bearing_deg is None:
        problems.add("--bearing", "missing: a fisheye photo needs the bearing at the top of the image")
    if spec.projection != "fisheye" and spec.circle is not None:
        problems.add("--circle", "applies to a fisheye photo only")
    missing = _not_a_file(spec.file)
    if missing:
        problems.add("IMAGE", f"{str(spec.file)[:200]}: {missing}")
    problems.raise_if_any()


__all__ = ["LENSES", "PROJECTIONS", "InputError", "PhotoSpec", "check_spec", "parse_bearing", "parse_circle",
           "photo_from_horizon_table"]
