"""Reading a horizon photo: Pillow opens it, applies its EXIF orientation and
decodes it at a reduced scale (the skyline grid needs about one pixel per
0.25°); the open photo-sphere XMP metadata (GPano: pose heading, cropped area)
is read when the file carries it.  Every failure is one line naming the file.

Pillow decodes many formats in C and can fail on a damaged file with almost
any exception (OSError, ValueError, SyntaxError, struct.error, IndexError ...);
the reader is the input edge, so each becomes our InputError."""

from __future__ import annotations

import math
import re
import warnings
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ..errors import InputError
from ..fileio import MAX_FILE_BYTES

MAX_PIXELS = 120_000_000  # README, "Limits": a 15,000 x 7,500 panorama; Pillow itself refuses past 179 MP
EQUIRECT_ASPECT_TOLERANCE = 0.01  # a 2:1 panorama within 1 % (phones round the height)

_GPANO_KEYS = ("PoseHeadingDegrees", "CroppedAreaImageWidthPixels", "CroppedAreaImageHeightPixels",
               "FullPanoWidthPixels", "FullPanoHeightPixels", "CroppedAreaLeftPixels", "CroppedAreaTopPixels")


@dataclass(frozen=True)
class Pano:
    """The photo-sphere (GPano) metadata: the heading of the full panorama's
    centre column (degrees), and where the image sits in the full panorama, in
    the full panorama's pixels (left, top, width, height of the cropped area;
    full width and height)."""

    heading_deg: float | None
    full_w: float
    full_h: float
    left: float
    top: float
    crop_w: float
    crop_h: float


@dataclass(frozen=True)
class PhotoImage:
    """A decoded photo: ``rgb`` (h, w, 3) uint8 at ``scale`` of the shown image's
    pixels (``width`` x ``height``, EXIF orientation applied), and its GPano
    metadata if any."""

    path: Path
    rgb: np.ndarray
    width: int
    height: int
    scale: float
    pano: Pano | None


def _gpano(text: str) -> dict[str, float]:
    """GPano values written either as attributes (GPano:Key="v") or elements
    (<GPano:Key>v</GPano:Key>); only finite numbers are kept."""
    out = {}
    for key in _GPANO_KEYS:
        m = (re.search(rf'GPano:{key}\s*=\s*["\']\s*([-+0-9.eE]{{1,32}})\s*["\']', text)
             or re.search(rf"<GPano:{key}>\s*([-+0-9.eE]{{1,32}})\s*</GPano:{key}>", text))
        if m:
            try:
                v = float(m.group(1))
            except ValueError:
                continue
            if math.isfinite(v):
                out[key] = v
    return out


def _xmp_text(img) -> str:
    raw = img.info.get("xmp") or img.info.get("XML:com.adobe.xmp") or b""
    if isinstance(raw, str):
        return raw[:1_000_000]
    return bytes(raw[:1_000_000]).decode("utf-8", errors="replace")


def pano_from_xmp(text: str, width: int, height: int, where: str) -> Pano | None:
    """The GPano metadata of an image shown ``width`` x ``height``; None without
    any.  Inconsistent numbers (a cropped area outside the full panorama) are
    one InputError naming the file."""
    g = _gpano(text)
    if not g:
        return None
    full_w = g.get("FullPanoWidthPixels", float(width))
    full_h = g.get("FullPanoHeightPixels", full_w / 2.0)
    crop_w = g.get("CroppedAreaImageWidthPixels", full_w)
    crop_h = g.get("CroppedAreaImageHeightPixels", full_h)
    left, top = g.get("CroppedAreaLeftPixels", 0.0), g.get("CroppedAreaTopPixels", 0.0)
    heading = g.get("PoseHeadingDegrees")
    if not (full_w > 0 and full_h > 0 and 0 < crop_w <= full_w * 1.0001 and 0 < crop_h <= full_h * 1.0001
            and 0 <= top and top + crop_h <= full_h * 1.0001 and -full_w < left < full_w):
        raise InputError(f"{where}: photo-sphere metadata (GPano): the cropped area {crop_w:g} x {crop_h:g} at "
                         f"{left:g}, {top:g} does not fit the full panorama {full_w:g} x {full_h:g}")
    if heading is not None and not -360.0 <= heading <= 720.0:
        raise InputError(f"{where}: photo-sphere metadata (GPano): PoseHeadingDegrees {heading:g} is outside "
                         "-360 to 720")
    return Pano(None if heading is None else heading % 360.0, full_w, full_h, left, top, crop_w, crop_h)


def read_photo(path: str | Path, cell_px: float | None = None) -> PhotoImage:
    """Decode ``path`` for skyline work.  ``cell_px``: how many of the shown
    image's pixels one grid cell spans (None: work it out for a 2:1 panorama);
    the image is decoded reduced by about that factor (at least one pixel a cell).
    Raises InputError: not an image, damaged or truncated, too large."""
    from PIL import Image, ImageOps, UnidentifiedImageError

    path = Path(path)
    where = str(path)
    try:
        size = path.stat().st_size
    except OSError as exc:
        raise InputError(f"{where}: cannot read the photo: {exc.strerror or exc}") from None
    if not path.is_file():
        raise InputError(f"{where}: not a file")
    if size > MAX_FILE_BYTES:
        raise InputError(f"{where}: {size / 2**20:,.0f} MB, more than the limit of {MAX_FILE_BYTES // 2**20} MB "
                         "for a photo")
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("error", Image.DecompressionBombWarning)
            img = Image.open(path)
            w, h = img.size
            if w * h > MAX_PIXELS:
                raise InputError(f"{where}: {w:,} x {h:,} pixels, more than the limit of {MAX_PIXELS:,} pixels "
                                 "for a photo: save it smaller (8192 x 4096 is plenty)")
            if w < 16 or h < 8:
                raise InputError(f"{where}: {w} x {h} pixels is too small to find a skyline in")
            orientation = img.getexif().get(0x0112, 1)
            shown_w, shown_h = (h, w) if orientation in (5, 6, 7, 8) else (w, h)
            xmp = _xmp_text(img)
            if cell_px is None:
                cell_px = shown_w / 1440.0
            factor = max(1, int(math.floor(cell_px)))
            if factor > 1 and img.format == "JPEG":
                img.draft("RGB", (max(1, w // factor), max(1, h // factor)))
            img.load()
            img = ImageOps.exif_transpose(img)
            rgb_img = img.convert("RGB")
            reduce_by = max(1, int(round(rgb_img.size[0] * factor / shown_w)))
            if reduce_by > 1:
                rgb_img = rgb_img.reduce(reduce_by)
            rgb = np.asarray(rgb_img, dtype=np.uint8)
    except InputError:
        raise
    except UnidentifiedImageError:
        raise InputError(f"{where}: not an image Pillow can read (JPEG, PNG, TIFF, WebP ...)") from None
    except (Image.DecompressionBombError, Image.DecompressionBombWarning):
        raise InputError(f"{where}: more pixels than an image may safely have (Pillow's limit)") from None
    except MemoryError:
        raise InputError(f"{where}: too large to decode in memory") from None
    except Exception as exc:  # noqa: BLE001 - a damaged file may fail anywhere inside the decoder
        detail = str(exc).splitlines()[0][:120] if str(exc) else type(exc).__name__
        raise InputError(f"{where}: the image is damaged or truncated ({detail})") from None
    if rgb.ndim != 3 or rgb.shape[2] != 3 or rgb.shape[0] < 2 or rgb.shape[1] < 2:
        raise InputError(f"{where}: could not be decoded to colour pixels")
    pano = pano_from_xmp(xmp, shown_w, shown_h, where) if xmp else None
    return PhotoImage(path, rgb, shown_w, shown_h, rgb.shape[1] / shown_w, pano)
