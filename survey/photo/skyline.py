"""The skyline of a horizon photo (README, "Horizon from a photo", the method):

1. the sky index of every grid cell is the photo's blue channel (clear sky and
   clouds are bright in blue, leaves and bark are dark in it);
2. Otsu's threshold (Otsu, 1979) on the histogram of that index above the
   horizontal splits sky from obstruction; classes too close to tell apart
   are refused, not guessed;
3. the sky cells are opened with a 3 x 3 cell square (0.75°), so sky seen
   through a narrower gap does not join the open sky, and only the sky
   connected to the zenith (4-connected, wrapping through north) is kept;
4. per azimuth, the skyline is the lowest elevation of that region.

Connected regions and the opening are scipy.ndimage's (the optional extra
``leosite[photo]``)."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import InputError
from .geometry import AZ_DEG, EL_DEG, RES_DEG, Sampling

POINT_STEP_DEG = 0.5  # the skyline's points: two grid cells each, the higher kept
UNIFORM_SIGMA = 6.0  # blue levels: a photo this flat holds one class only
MIN_SKY_LEVEL = 90.0  # the brighter class darker than this: night, or a covered lens
MIN_CLASS_GAP = 40.0  # blue levels between the two class means
MIN_SEPARABILITY = 0.5  # Otsu's eta = between-class / total variance
OPEN_SKY_LEVEL = 150.0  # the darker class this bright too: all sky (a gradient split in two)
PALE_BELOW_DEG = -1.0  # sky reaching this far below the horizontal is a pale surface
OVERHANG_DEG = 2.0


@dataclass(frozen=True)
class Otsu:
    """Otsu's (1979) threshold of a 256-level histogram: class 0 is levels
    <= ``threshold``; means, weights (fractions), total variance, and the
    separability eta = between-class variance / total variance."""

    threshold: int
    mean_dark: float
    mean_bright: float
    weight_dark: float
    sigma_total: float
    eta: float


def otsu(hist: np.ndarray) -> Otsu:
    """Otsu's method on ``hist`` (counts of levels 0..255): the threshold that
    maximises the between-class variance w0·w1·(m0 - m1)²; the first of equal
    maxima.  ``hist`` must hold at least two distinct levels."""
    p = np.asarray(hist, dtype=np.float64)
    p = p / p.sum()
    levels = np.arange(p.size, dtype=np.float64)
    w0 = np.cumsum(p)
    s0 = np.cumsum(p * levels)
    mu = s0[-1]
    w1 = 1.0 - w0
    with np.errstate(divide="ignore", invalid="ignore"):
        m0 = s0 / w0
        m1 = (mu - s0) / w1
        between = w0 * w1 * (m0 - m1) ** 2
    between[~np.isfinite(between)] = -1.0
    between[(w0 <= 0) | (w1 <= 1e-12)] = -1.0
    t = int(np.argmax(between))
    var = float(np.sum(p * (levels - mu) ** 2))
    eta = float(between[t] / var) if var > 0 else 0.0
    return Otsu(t, float(m0[t]), float(m1[t]), float(w0[t]), var ** 0.5, eta)


@dataclass(frozen=True)
class PhotoSkyline:
    """The detected skyline.  ``az_deg``/``el_deg``: points every 0.5° of true
    azimuth where the photo shows the horizon (``covered``); elevations 0..90.
    ``cell_el_deg``: the skyline per grid cell (NaN where not covered, may be
    below 0).  ``threshold``: Otsu's threshold on the blue channel (0..255);
    ``sky_fraction``: the share of the upper hemisphere (solid angle) seen as
    open sky; ``warnings``: plain sentences."""

    az_deg: np.ndarray
    el_deg: np.ndarray
    covered: np.ndarray
    cell_el_deg: np.ndarray
    threshold: int
    sky_fraction: float
    warnings: tuple[str, ...]

    def points(self) -> list[list[float]]:
        """[[true_az, el], ...] where covered (the JSON of ``leosite photo``)."""
        return [[round(float(a), 2), round(float(e), 2)]
                for a, e, c in zip(self.az_deg, self.el_deg, self.covered) if c]


def _ndimage():
    try:
        from scipy import ndimage
    except ImportError:
        raise InputError("horizon photo: needs scipy; install it with: pip install 'leosite[photo]'") from None
    return ndimage


def _spans(az: np.ndarray, on: np.ndarray, step: float) -> str:
    """'a°–b°, ...' of the runs where ``on`` (cells of width ``step`` centred on az)."""
    if not on.any():
        return ""
    if on.all():
        return "all round"
    n = on.size
    j = int(np.flatnonzero(~on)[0])
    order = np.r_[j:n, 0:j]
    runs, start, prev = [], None, order[0]
    for k in order:
        if on[k] and start is None:
            start = k
        if not on[k] and start is not None:
            runs.append((start, prev))
            start = None
        prev = k
    if start is not None:
        runs.append((start, prev))
    text = ", ".join(f"{(az[a] - step / 2) % 360:.0f}°–{(az[b] + step / 2) % 360:.0f}°" for a, b in runs[:4])
    return text + (", ..." if len(runs) > 4 else "")


def classify(index: np.ndarray, roi: np.ndarray, where: str) -> tuple[Otsu, list[str], bool]:
    """Otsu's threshold of ``index`` over ``roi``; (otsu, warnings, all_sky).
    InputError when sky and obstruction cannot be told apart."""
    values = index[roi]
    if values.size < 100:
        raise InputError(f"{where}: too little of the sky above the horizontal is in the photo")
    hist = np.bincount(values.astype(np.int64), minlength=256)[:256]
    if np.count_nonzero(hist) < 2:
        level = int(np.flatnonzero(hist)[0])
        o = Otsu(level, float(level), float(level), 1.0, 0.0, 0.0)
    else:
        o = otsu(hist)
    mean = float(values.mean())
    if o.sigma_total < UNIFORM_SIGMA or o.mean_dark >= OPEN_SKY_LEVEL:
        if mean >= OPEN_SKY_LEVEL:
            return o, ["the photo shows no obstruction above the horizontal (it is bright all over): taken as "
                       "open sky to the horizon; check it against the view"], True
        raise InputError(f"{where}: the photo is dark and nearly uniform (blue level {mean:.0f} of 255): a night "
                         "photo or a covered lens? Take it in daylight")
    if o.mean_bright < MIN_SKY_LEVEL:
        raise InputError(f"{where}: the photo is too dark to find the sky (its brighter part averages blue level "
                         f"{o.mean_bright:.0f} of 255): take it in daylight")
    if o.mean_bright - o.mean_dark < MIN_CLASS_GAP or o.eta < MIN_SEPARABILITY:
        raise InputError(f"{where}: sky and obstruction cannot be told apart: Otsu's threshold {o.threshold} splits "
                         f"the blue levels into classes averaging {o.mean_dark:.0f} and {o.mean_bright:.0f} "
                         f"(separability {o.eta:.2f}), too close to trust; retake it in clearer light or "
                         "measure the horizon by hand")
    return o, [], False


def sky_region(sky: np.ndarray, valid: np.ndarray, el_deg: np.ndarray, where: str) -> tuple[np.ndarray, list[str]]:
    """The open sky connected to the zenith (or, when the photo stops short of
    it, to its highest part), wrapping through north; the grid's rows run from
    the top of the sky down."""
    nd = _ndimage()
    notes = []
    pad = 2
    wrapped = np.concatenate([sky[:, -pad:], sky, sky[:, :pad]], axis=1)
    opened = nd.binary_opening(wrapped, structure=np.ones((3, 3), dtype=bool))[:, pad:-pad]
    opened[:3] |= sky[:3]  # the rows at the zenith converge on one point: keep them as seen
    labels, n = nd.label(opened)
    if n == 0:
        raise InputError(f"{where}: no open sky found in the photo")
    # Join the labels that meet across north (first and last column, same row).
    left, right = labels[:, 0], labels[:, -1]
    pairs = {(int(a), int(b)) for a, b in zip(left, right) if a and b and a != b}
    parent = np.arange(n + 1)

    def root(i):
        while parent[i] != i:
            parent[i] = parent[parent[i]]
            i = parent[i]
        return i

    for a, b in pairs:
        ra, rb = root(a), root(b)
        if ra != rb:
            parent[max(ra, rb)] = min(ra, rb)
    roots = np.array([root(i) for i in range(n + 1)])
    labels = roots[labels]
    rows_valid = np.flatnonzero(valid.any(axis=1))
    top_el = float(el_deg[rows_valid[0]]) if rows_valid.size else -90.0
    if top_el < 88.0:
        notes.append(f"the photo reaches only {top_el:.0f}° up: the sky connected to its top is taken as the open sky")
    seed_rows = el_deg >= top_el - 2.0
    seeds = np.unique(labels[seed_rows][labels[seed_rows] > 0])
    if seeds.size == 0:
        raise InputError(f"{where}: no open sky at the top of the sky in the photo (straight up is obstructed, or "
                         "the camera was not level): take it from a clearer spot or measure by hand")
    return np.isin(labels, seeds), notes


def skyline_from_region(region: np.ndarray, valid: np.ndarray, el_deg: np.ndarray = EL_DEG,
                        az_deg: np.ndarray = AZ_DEG) -> tuple[np.ndarray, np.ndarray, list[str]]:
    """Per grid column the lowest elevation of ``region`` (its lower cell edge),
    NaN where the photo does not show it; and the columns where something
    hangs over the open sky.  (cell_el, overhang_deg, warnings)"""
    rows = np.arange(region.shape[0])[:, None]
    has = region.any(axis=0)
    lowest = np.where(region, rows, -1).max(axis=0)
    cell_el = np.where(has, el_deg[np.clip(lowest, 0, None)] - RES_DEG / 2.0, 90.0)
    lowest_valid = np.where(valid, rows, -1).max(axis=0)
    edge_el = el_deg[np.clip(lowest_valid, 0, None)]
    # Open sky down to where the photo stops, above the horizontal: the skyline is not in it.
    unknown = (lowest_valid < 0) | (has & (lowest >= lowest_valid) & (edge_el > RES_DEG))
    cell_el = np.where(unknown, np.nan, cell_el)
    above = (rows < lowest[None, :]) & valid & ~region
    overhang = above.sum(axis=0) * RES_DEG
    notes = []
    hang = (overhang >= OVERHANG_DEG) & ~unknown
    if hang.mean() > 0.02:
        notes.append(f"at {hang.sum() * RES_DEG:.0f}° of azimuth something hangs over open sky "
                     f"({_spans(az_deg, hang, RES_DEG)}: a branch or an eave?): the skyline takes the lowest "
                     "open sky; add a measured point there if satellites pass under it")
    return cell_el, overhang, notes


def detect_skyline(rgb_cells: np.ndarray, sampling: Sampling, where: str) -> PhotoSkyline:
    """The skyline of a photo sampled on the grid (``rgb_cells`` (rows, cols, 3),
    from ``sampling.gather``)."""
    valid = sampling.valid
    index = rgb_cells[..., 2]  # the blue channel
    roi = valid & (EL_DEG >= 0.0)[:, None]
    o, notes, all_sky = classify(index, roi, where)
    notes = list(sampling.notes) + notes
    sky = valid & (index > o.threshold) if not all_sky else valid.copy()
    region, more = sky_region(sky, valid, EL_DEG, where)
    notes += more
    cell_el, _overhang, more = skyline_from_region(region, valid)
    notes += more
    pale = np.isfinite(cell_el) & (cell_el < PALE_BELOW_DEG)
    if pale.mean() > 0.02 and not all_sky:
        notes.append(f"at {_spans(AZ_DEG, pale, RES_DEG)} the sky region reaches below the horizontal: a pale "
                     "wall, snow, water or a white surface is read as sky there; check the skyline there")
    covered_cells = np.isfinite(cell_el)
    if not covered_cells.any():
        raise InputError(f"{where}: the photo shows the skyline at no azimuth")
    if not covered_cells.all():
        notes.append(f"the photo shows the skyline at {_spans(AZ_DEG, covered_cells, RES_DEG)} only (true "
                     "azimuths): elsewhere the horizon is the measured points'")
    # Points every 0.5°: the higher of the two cells either side of each.
    k = int(round(POINT_STEP_DEG / RES_DEG))
    n = AZ_DEG.size // k
    clamped = np.clip(np.nan_to_num(cell_el, nan=-np.inf), 0.0, 90.0)
    pair = np.stack([np.roll(clamped, 1)[::k], clamped[::k]])
    cov = np.stack([np.roll(covered_cells, 1)[::k], covered_cells[::k]])
    el = np.where(cov, pair, -np.inf).max(axis=0)
    covered = cov.any(axis=0)
    el = np.where(covered, el, 0.0)
    az = np.arange(n) * POINT_STEP_DEG
    weight = np.cos(np.radians(EL_DEG))[:, None] * roi
    sky_fraction = float((weight * region).sum() / weight.sum()) if weight.sum() > 0 else 0.0
    return PhotoSkyline(az, el, covered, cell_el, o.threshold, sky_fraction, tuple(notes))
