"""Magnetic declination from the World Magnetic Model (WMM2025, NOAA NCEI / BGS).

Installers read bearings off a compass; the mask is in true azimuths.  The
declination (east positive) turns a compass bearing into a true one:
true = magnetic + declination.  Computed with NOAA's ``wmm-calculator`` package.
"""

from __future__ import annotations

import importlib.machinery
import importlib.util
import sys
import types
import warnings
from dataclasses import dataclass
from datetime import datetime, timezone

# WMM military specification (MIL-PRF-89500B): where the horizontal field H is
# below 2000 nT the compass is unreliable ("blackout zone"); below 6000 nT it
# degrades ("caution zone").
BLACKOUT_H_NT = 2000.0
CAUTION_H_NT = 6000.0


@dataclass(frozen=True)
class Declination:
    declination_deg: float
    horizontal_nt: float
    decimal_year: float  # the date the model was evaluated at
    warnings: tuple[str, ...] = ()


def decimal_year(when: datetime) -> float:
    """Decimal year of a UTC instant (day of year / days in year)."""
    when = when.astimezone(timezone.utc)
    start = datetime(when.year, 1, 1, tzinfo=timezone.utc)
    end = datetime(when.year + 1, 1, 1, tzinfo=timezone.utc)
    return when.year + (when - start).total_seconds() / (end - start).total_seconds()


class _DeferredModule(types.ModuleType):
    """A module whose body runs on first use of one of its names."""

    def __getattr__(self, attr):
        if attr.startswith("__"):
            raise AttributeError(attr)
        spec = self.__spec__
        spec.loader.exec_module(self)
        try:
            return self.__dict__[attr]
        except KeyError:
            raise AttributeError(attr) from None


def _defer_geoid_grid() -> None:
    """Let ``geomaglib.geoid`` load on first use.  wmm-calculator imports it (an
    8 MB table, ~0.1 s) at import time but needs it only to convert mean-sea-level
    heights, which we never pass (our heights are ellipsoidal); if anything does
    touch it, the table loads then, transparently."""
    name = "geomaglib.geoid"
    if name in sys.modules:
        return
    try:
        pkg = importlib.util.find_spec("geomaglib")
        spec = importlib.machinery.PathFinder.find_spec(name, list(pkg.submodule_search_locations))
    except (ImportError, AttributeError, TypeError, ValueError):
        return
    if spec is None or spec.loader is None:
        return
    module = _DeferredModule(name)
    module.__spec__, module.__loader__, module.__file__ = spec, spec.loader, spec.origin
    sys.modules[name] = module


def _wmm_field(lat_deg: float, lon_deg: float, height_km: float, year: float) -> tuple[float, float]:
    _defer_geoid_grid()
    from wmm import wmm_calc  # imported here: only needed once per site

    with warnings.catch_warnings():
        # The model warns on stderr about pole zones and pole singularities; we
        # report what matters to an installer ourselves, as warnings of the run.
        warnings.simplefilter("ignore")
        model = wmm_calc()
        model.setup_time(dyear=year)
        model.setup_env(lat_deg, lon_deg, height_km, unit="km", msl=False)
        out = model.get_all()
    return float(out["dec"][0]), float(out["h"][0])


# The coefficient file shipped with wmm-calculator is WMM2025: valid 2025.0 to 2030.0.
MODEL_START, MODEL_END = 2025.0, 2030.0


def declination(lat_deg: float, lon_deg: float, height_m: float, when: datetime) -> Declination:
    """WMM2025 declination at a WGS84 point (height above the ellipsoid, metres) and time.

    Outside the model's validity the date is clamped to the nearest valid date and
    a warning says so; in the pole zones a warning says the compass is unreliable.
    """
    year = decimal_year(when)
    notes = []
    used = year
    if year < MODEL_START or year >= MODEL_END:
        used = min(max(year, MODEL_START), MODEL_END - 1e-6)
        notes.append(
            f"window date {year:.2f} is outside the WMM2025 validity ({MODEL_START:.0f}-{MODEL_END:.0f}); "
            f"declination evaluated at {used:.2f} and may be off by a degree or more"
        )
    dec, h = _wmm_field(lat_deg, lon_deg, height_m / 1000.0, used)
    if h < BLACKOUT_H_NT:
        notes.append(
            f"site is in the WMM blackout zone near the magnetic pole (H = {h:.0f} nT < 2000 nT): "
            "compass bearings are unreliable here, take bearings from true north"
        )
    elif h < CAUTION_H_NT:
        notes.append(
            f"site is near the magnetic pole (H = {h:.0f} nT < 6000 nT): compass accuracy is degraded"
        )
    return Declination(dec, h, used, tuple(notes))
