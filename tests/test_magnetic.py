"""Magnetic declination against the World Magnetic Model 2025 references.

1. The WMM2025 test values published by NOAA NCEI and BGS with the model
   (WMM2025 Technical Report, test values table), copied from
   shared/reference into tests/data/wmm2025_test_values.csv with its source
   comment lines; declination within 0.01 deg (the table is rounded to 0.01).
2. pygeomag, an independent implementation of the same model (its own
   WMM_2025.COF and its own spherical-harmonic code), at 30 places and dates in
   2025-2029, within 0.05 deg.
3. The model's validity window (WMM2025: 2025.0-2030.0) and the pole zones of
   the WMM military specification MIL-PRF-89500B (blackout: H < 2000 nT,
   caution: H < 6000 nT) must produce warnings.
"""

from __future__ import annotations

import csv
from datetime import datetime, timezone
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from pygeomag import GeoMag

from survey.magnetic import decimal_year, declination

DATA = Path(__file__).parent / "data" / "wmm2025_test_values.csv"
GEOMAG = GeoMag(coefficients_file="wmm/WMM_2025.COF")


def datetime_of(year_decimal: float) -> datetime:
    """UTC instant of a decimal year: fraction of that calendar year's length
    (the usual convention, e.g. 2027.5 = 2027-07-02 12:00 UTC in a 365-day year)."""
    year = int(year_decimal)
    start = datetime(year, 1, 1, tzinfo=timezone.utc)
    end = datetime(year + 1, 1, 1, tzinfo=timezone.utc)
    return start + (end - start) * (year_decimal - year)


def published_rows():
    with open(DATA, encoding="utf-8") as f:
        rows = list(csv.DictReader(line for line in f if not line.startswith("#")))
    return [{k: float(v) for k, v in r.items()} for r in rows]


def test_data_copy_keeps_its_source():
    head = DATA.read_text(encoding="utf-8").splitlines()
    assert head[0].startswith("#") and "World Magnetic Model 2025" in head[0]
    assert len(published_rows()) == 12


def test_decimal_year_conversion():
    assert decimal_year(datetime(2025, 1, 1, tzinfo=timezone.utc)) == 2025.0
    # 2027 has 365 days: July 2 12:00 is day 182.5 of 365 -> .5 exactly.
    assert decimal_year(datetime(2027, 7, 2, 12, tzinfo=timezone.utc)) == pytest.approx(2027.5, abs=1e-12)
    # 2028 is a leap year: July 2 00:00 is day 183 of 366 -> .5 exactly.
    assert decimal_year(datetime(2028, 7, 2, tzinfo=timezone.utc)) == pytest.approx(2028.5, abs=1e-12)


@pytest.mark.parametrize("row", published_rows(), ids=lambda r: f"{r['decimal_year']}-{r['height_km']:.0f}km-"
                         f"{r['latitude_deg']:.0f}-{r['longitude_deg']:.0f}")
def test_published_wmm2025_test_values(row):
    when = datetime_of(row["decimal_year"])
    d = declination(row["latitude_deg"], row["longitude_deg"], row["height_km"] * 1000.0, when)
    assert d.decimal_year == pytest.approx(row["decimal_year"], abs=1e-9)
    assert d.declination_deg == pytest.approx(row["declination_deg"], abs=0.01)
    # Horizontal intensity H = sqrt(X^2 + Y^2) from the same table (X, Y to 0.1 nT).
    h = (row["x_nt"] ** 2 + row["y_nt"] ** 2) ** 0.5
    assert d.horizontal_nt == pytest.approx(h, abs=0.5)
    # None of the table's points is in a pole zone (H > 6000 nT) or out of date.
    assert d.warnings == ()


@settings(max_examples=30, deadline=None, derandomize=True, database=None)
@given(
    lat=st.floats(-88.0, 88.0),
    lon=st.floats(-180.0, 180.0),
    height_m=st.floats(-100.0, 5000.0),
    year=st.floats(2025.0, 2029.99),
)
def test_against_pygeomag(lat, lon, height_m, year):
    when = datetime_of(year)
    ours = declination(lat, lon, height_m, when)
    ref = GEOMAG.calculate(lat, lon, height_m / 1000.0, ours.decimal_year)
    assert abs(ours.decimal_year - year) < 1e-8
    assert ours.declination_deg == pytest.approx(ref.d, abs=0.05)
    assert ours.horizontal_nt == pytest.approx(ref.h, abs=1.0)


# A fixed spread as well (hypothesis' derandomized draws cluster at edges):
# every continent-ish longitude band, both hemispheres, each year 2025-2029.
GRID = [
    (lat, lon, h, year)
    for i, (lat, lon) in enumerate(
        [(60.2, 24.9), (51.5, -0.1), (40.4, -3.7), (35.7, 139.7), (-33.9, 18.4), (-37.8, 145.0),
         (19.4, -99.1), (-23.5, -46.6), (64.1, -21.9), (1.3, 103.8), (-54.8, -68.3), (71.3, -156.8),
         (-77.8, 166.7), (28.6, 77.2), (-4.3, 15.3)]
    )
    for h, year in [((i * 337) % 3000, 2025.0 + (i * 0.37) % 5.0), (0.0, 2029.9 - (i * 0.29) % 4.9)]
]


@pytest.mark.parametrize("lat, lon, height_m, year", GRID)
def test_against_pygeomag_grid(lat, lon, height_m, year):
    ours = declination(lat, lon, height_m, datetime_of(year))
    ref = GEOMAG.calculate(lat, lon, height_m / 1000.0, ours.decimal_year)
    assert ours.declination_deg == pytest.approx(ref.d, abs=0.05)


def test_date_outside_model_validity_warns_and_still_answers():
    for when, clamped in ((datetime(2031, 3, 1, tzinfo=timezone.utc), 2030.0),
                          (datetime(2024, 6, 1, tzinfo=timezone.utc), 2025.0)):
        d = declination(47.0, 8.0, 400.0, when)
        assert any("validity" in w for w in d.warnings), d.warnings
        assert -180.0 <= d.declination_deg <= 180.0
        # The value is the model's at the nearest valid date.
        assert d.decimal_year == pytest.approx(clamped, abs=1e-5)
        ref = GEOMAG.calculate(47.0, 8.0, 0.4, min(max(d.decimal_year, 2025.0), 2029.99999))
        assert d.declination_deg == pytest.approx(ref.d, abs=0.05)
    # Inside the window: no validity warning.
    assert declination(47.0, 8.0, 400.0, datetime(2027, 1, 1, tzinfo=timezone.utc)).warnings == ()


def test_blackout_zone_near_north_magnetic_pole():
    lat, lon, when = 85.5, 140.0, datetime(2026, 3, 1, tzinfo=timezone.utc)
    ref = GEOMAG.calculate(lat, lon, 0.0, decimal_year(when))
    assert ref.h < 2000.0, "chosen point must be in the blackout zone per pygeomag"
    d = declination(lat, lon, 0.0, when)
    assert d.horizontal_nt == pytest.approx(ref.h, abs=5.0)
    assert any("blackout" in w for w in d.warnings), d.warnings


def test_caution_zone():
    # 75 N 90 W in 2026: H about 3400 nT per pygeomag (checked below), between
    # the 2000 nT blackout and 6000 nT caution limits of MIL-PRF-89500B.
    lat, lon, when = 75.0, -90.0, datetime(2026, 7, 1, tzinfo=timezone.utc)
    ref = GEOMAG.calculate(lat, lon, 0.0, decimal_year(when))
    assert 2000.0 < ref.h < 6000.0
    d = declination(lat, lon, 0.0, when)
    assert len(d.warnings) == 1
    assert "blackout" not in d.warnings[0] and "6000" in d.warnings[0]
