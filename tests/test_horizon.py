"""Horizon mask: interpolation, wrap-around, clamping, sectors, compass rotation."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from survey.horizon import HorizonMask, HorizonPoint, HorizonProfile, in_sector


def mask(*pts):
    return HorizonMask.from_points([HorizonPoint(a, e) for a, e in pts])


def test_no_points_is_clear_sky():
    m = HorizonMask.from_points([])
    assert m.is_clear
    assert np.all(m.elevation_at(np.arange(0, 360, 7.5)) == 0)


def test_linear_between_points_and_through_north():
    m = mask((350, 10), (10, 30), (180, 0))
    # Hand-worked: 350 -> 10 spans 20 deg through north, 10 -> 30 deg of elevation.
    assert m.elevation_at(0) == pytest.approx(20.0)
    assert m.elevation_at(355) == pytest.approx(15.0)
    assert m.elevation_at(5) == pytest.approx(25.0)
    assert m.elevation_at(95) == pytest.approx(15.0)  # halfway 10 -> 180
    assert m.elevation_at(360 + 5) == pytest.approx(25.0)  # azimuths modulo 360
    assert m.elevation_at(-5) == pytest.approx(15.0)


def test_single_point_is_constant():
    m = mask((45, 12))
    assert np.allclose(m.elevation_at([0, 90, 300]), 12)


def test_azimuths_taken_modulo_360():
    m1 = mask((370, 10), (100, 40))
    m2 = mask((10, 10), (100, 40))
    a = np.linspace(0, 359, 50)
    assert np.allclose(m1.elevation_at(a), m2.elevation_at(a))


@settings(max_examples=60, deadline=None)
@given(st.lists(st.tuples(st.floats(0, 359.99), st.floats(0, 90)), min_size=2, max_size=12, unique_by=lambda t: round(t[0], 3)))
def test_mask_stays_within_measured_range(pts):
    m = mask(*pts)
    vals = m.elevation_at(np.linspace(0, 360, 721))
    els = [e for _, e in pts]
    assert vals.min() >= min(els) - 1e-9 and vals.max() <= max(els) + 1e-9
    # The mask passes through every measured point.
    for a, e in pts:
        assert m.elevation_at(a) == pytest.approx(e, abs=1e-6) or any(
            abs(((a - b) + 180) % 360 - 180) < 1e-3 for b, _ in pts if (b, _) != (a, e))


def test_sectors_above_threshold_exact_crossings():
    m = mask((0, 0), (90, 40), (180, 0))
    # Rises 0 -> 40 over 0..90: crosses 25 at 90*25/40 = 56.25; falls back at 180 - 56.25 = 123.75.
    (a, b), = m.sectors_above(25)
    assert a == pytest.approx(56.25) and b == pytest.approx(123.75)


def test_sector_wrapping_through_north():
    m = mask((330, 40), (30, 40), (60, 0), (300, 0))
    (a, b), = m.sectors_above(20)
    # 300->330 rises 0->40: crossing at 315; 30->60 falls 40->0: crossing at 45.
    assert a == pytest.approx(315) and b == pytest.approx(45)
    assert in_sector(np.array([320, 0, 44, 46, 200]), a, b).tolist() == [True, True, True, False, False]


def test_full_wall_is_one_all_round_sector():
    m = mask((0, 90), (180, 90))
    assert m.sectors_above(25) == [(0.0, 360.0)]
    assert np.all(in_sector(np.arange(0, 360, 10.0), 0.0, 360.0))
    # A zero-width interval holds no azimuth: it is never the whole circle.
    assert not np.any(in_sector(np.arange(0, 360, 10.0), 2.5, 2.5))


def test_sector_rising_after_the_last_point_and_crossing_north():
    # The rise sits on the segment from the last point (350) through north to the
    # first (10), and the first point is already above the threshold.
    m = mask((350, 0), (10, 40), (180, 0))
    # Worked by hand: 350 -> 10 spans 20 deg rising 0 -> 40, so 25 deg is reached
    # 20 * 25/40 = 12.5 deg after 350, at 2.5; 10 -> 180 falls 40 -> 0 over 170 deg,
    # so 25 deg is left 170 * 15/40 = 63.75 deg after 10, at 73.75.
    (a, b), = m.sectors_above(25)
    assert a == pytest.approx(2.5) and b == pytest.approx(73.75)


def test_sector_list_for_a_plan_horizon_above_at_degree_zero():
    # A horizon derived at whole degrees: degree 0 above the threshold, 359 below.
    el = np.zeros(360)
    el[[0, 1, 2]] = 40.0
    m = HorizonMask(np.arange(360.0), el)
    # 359 -> 0: from 0 to 40, 25 is crossed at 359.625;
    # 2 -> 3: from 40 to 0, crossed at 2.375.
    (a, b), = m.sectors_above(25)
    assert a == pytest.approx(359.625) and b == pytest.approx(2.375)


masks = st.lists(
    st.tuples(st.floats(0, 359.99, allow_nan=False), st.floats(0, 90, allow_nan=False)),
    min_size=1, max_size=12,
    unique_by=lambda p: round(p[0], 3),  # two readings at one bearing make a vertical step
)


def _width(a, b):
    return 360.0 if b - a >= 360.0 else (b - a) % 360.0


@settings(max_examples=300, deadline=None)
@given(masks, st.floats(0, 89, allow_nan=False))
def test_sector_list_covers_exactly_where_the_mask_is_above(pts, threshold):
    """For any mask: the sectors are disjoint, each has positive width, and an
    azimuth is in one of them exactly when the mask, interpolated by hand between
    the readings (with the wrap through north), is above the threshold."""
    m = mask(*pts)
    sectors = m.sectors_above(threshold)
    for a, b in sectors:
        assert 0 < _width(a, b) <= 360.0
    # The hand interpolation: each azimuth between its two neighbouring readings,
    # going clockwise, with no help from the code under test.
    knots = sorted((a % 360.0, e) for a, e in pts)
    grid = np.arange(0.0, 360.0, 0.37) + 0.011
    def by_hand(x):
        if len(knots) == 1:
            return knots[0][1]
        for (a0, e0), (a1, e1) in zip(knots, knots[1:] + [(knots[0][0] + 360.0, knots[0][1])]):
            for shift in (0.0, 360.0):
                if a0 <= x + shift <= a1:
                    return e0 + (e1 - e0) * (x + shift - a0) / (a1 - a0)
        raise AssertionError(x)
    hand = np.array([by_hand(x) for x in grid])
    count = sum(in_sector(grid, a, b).astype(int) for a, b in sectors) if sectors else np.zeros(grid.size, int)
    assert np.all(count <= 1)  # disjoint
    clear_of_edges = np.abs(hand - threshold) > 1e-6
    np.testing.assert_array_equal((count == 1)[clear_of_edges], (hand > threshold)[clear_of_edges])
    # The widths add up to the measure of the set above the threshold (fine grid).
    fine = np.arange(0.0, 360.0, 0.01)
    above = np.count_nonzero(m.elevation_at(fine) > threshold) * 0.01
    assert sum(_width(a, b) for a, b in sectors) == pytest.approx(above, abs=0.01 * (2 * len(pts) + 1))


def test_magnetic_profile_rotates_by_declination():
    prof = HorizonProfile((HorizonPoint(100, 30, 12.0, "oak"), HorizonPoint(355, 10)), "magnetic")
    true = prof.to_true(-14.5)  # west declination: true = magnetic - 14.5
    assert [p.azimuth_deg for p in true.points] == pytest.approx([85.5, 340.5])
    assert true.points[0].label == "oak" and true.points[0].distance_m == 12.0
    assert true.reference == "true"
    east = prof.to_true(10.0)
    assert [p.azimuth_deg for p in east.points] == pytest.approx([110.0, 5.0])  # wraps past 360
