"""Assessment metrics on constructed cases whose answers are known by reasoning,
counted independently from skyfield's own topocentric positions."""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from skyfield.api import EarthSatellite, load, wgs84

from survey.assess import assess, runs, schedule_down, verdict_for
from survey.constellation import Shell, walker_fleet
from survey.horizon import HorizonMask, HorizonPoint, HorizonProfile
from survey.pipeline import run_site
from survey.site import Criteria, Schedule, Terminal, load_site
from survey.tracks import Observer, compute_tracks
from survey.window import WindowSpec

from .helpers import MINIMAL_SITE, START, plain_loop_down

LAT, LON, H = 45.0, -73.0, 105.0
WINDOW = WindowSpec(START, hours=12, step_s=30)
TERMINAL = Terminal(min_elevation_deg=25.0)


@pytest.fixture(scope="module")
def fleet():
    # A sparse shell on purpose: there are times with no satellite in view.
    return walker_fleet([Shell("S", 550, 53, 8, 8, 1)], START, "test shell")


@pytest.fixture(scope="module")
def tracks(fleet):
    return compute_tracks(fleet, Observer(LAT, LON, H), WINDOW, TERMINAL)


@pytest.fixture(scope="module")
def reference(fleet):
    """Usable samples straight from skyfield: arrays sat, k, az, el."""
    ts = load.timescale(builtin=True)
    t = ts.utc(2026, 6, 1, 0, 0, np.arange(WINDOW.count) * WINDOW.step_s)
    site = wgs84.latlon(LAT, LON, elevation_m=H)
    rows = []
    for i, sat in enumerate(fleet.satrecs):
        alt, az, _ = (EarthSatellite.from_satrec(sat, ts) - site).at(t).altaz()
        k = np.flatnonzero(alt.degrees >= 25.0)
        rows.append((np.full(k.size, i), k, az.degrees[k], alt.degrees[k]))
    return tuple(np.concatenate(c) for c in zip(*rows))


def test_tracks_match_reference_samples(tracks, reference):
    assert len(tracks) == reference[0].size > 0


def test_clear_sky(tracks, reference):
    a = assess(tracks, HorizonMask.clear())
    assert a.blocked_fraction == 0.0 and a.blocked_samples == 0
    # Availability: share of times with at least one usable sample, counted from skyfield.
    covered = np.zeros(WINDOW.count, bool)
    covered[reference[1]] = True
    assert a.availability == pytest.approx(covered.mean())
    assert a.availability < 1.0  # the sparse shell leaves gaps
    # Nothing is ever blocked, so the link is down exactly when nothing is in view.
    assert a.interruption == pytest.approx(1.0 - covered.mean())
    assert a.sectors == []


def test_wall_all_round(tracks):
    a = assess(tracks, HorizonMask.from_points([HorizonPoint(0, 90), HorizonPoint(180, 90)]))
    assert a.blocked_fraction == 1.0 and a.availability == 0.0 and a.interruption == 1.0
    assert a.verdict == "not-qualified"
    (o,) = a.outages
    assert o.start_index == 0 and o.samples == WINDOW.count
    summary = a.outage_summary(tracks)
    assert summary["longest_s"] == 12 * 3600 and summary["count_per_day"] == pytest.approx(2.0)
    (sector,) = a.sectors
    assert sector.blocked_share == 1.0 and sector.blocked_fraction_if_cleared == 0.0


def half_plane_wall():
    # A 90-degree wall over azimuths 90..270 (east, through south, to west).
    return HorizonMask.from_points([HorizonPoint(0, 0), HorizonPoint(89.999, 0), HorizonPoint(90, 90),
                                    HorizonPoint(270, 90), HorizonPoint(270.001, 0)])


def test_half_plane_wall_blocks_what_lies_behind_it(tracks, reference):
    a = assess(tracks, half_plane_wall())
    _, _, az, _ = reference
    behind = np.count_nonzero((az >= 90.0) & (az <= 270.0))  # counted by hand from skyfield
    assert abs(a.blocked_samples - behind) <= 1  # only the 0.001-degree ramps may differ
    assert a.blocked_fraction == pytest.approx(behind / az.size, abs=2 / az.size)


def wall_60(az, el):
    """A 60-degree wall over 120..240 deg, with 0.001-degree ramps either side (the
    mask below), by hand."""
    if 120.0 <= az <= 240.0:
        return el < 60.0
    if 119.999 < az < 120.0:
        return el < 60.0 * (az - 119.999) / 0.001
    if 240.0 < az < 240.001:
        return el < 60.0 * (240.001 - az) / 0.001
    return False


def wall_60_mask():
    return HorizonMask.from_points([HorizonPoint(0, 0), HorizonPoint(119.999, 0), HorizonPoint(120, 60),
                                    HorizonPoint(240, 60), HorizonPoint(240.001, 0)])


@pytest.mark.parametrize("reassign_s", [15.0, 60.0, 300.0])
def test_clear_sky_interruption_is_the_time_with_nothing_in_view(tracks, reference, reassign_s):
    """With nothing blocked, a satellite that sets is handed over at once, so the
    link is down only when no satellite at all is usable, whatever reassign_s is."""
    a = assess(tracks, HorizonMask.clear(), schedule=Schedule(reassign_s))
    covered = np.zeros(WINDOW.count, bool)
    covered[reference[1]] = True  # times with a usable satellite, from skyfield
    assert a.interruption == pytest.approx(1.0 - covered.mean(), abs=1e-12)
    assert 0.0 < a.interruption < 0.5  # the sparse shell leaves gaps, but not many
    np.testing.assert_array_equal(a.down, ~covered)


@pytest.mark.parametrize("reassign_s", [15.0, 45.0, 60.0, 300.0])
def test_wall_interruption_and_outages_against_a_plain_loop(tracks, reference, reassign_s):
    a = assess(tracks, wall_60_mask(), schedule=Schedule(reassign_s))
    down = plain_loop_down(reference, WINDOW.count, WINDOW.step_s, reassign_s, wall_60)
    assert 0.0 < down.mean() < 1.0 and a.blocked_samples > 0
    assert a.interruption == pytest.approx(down.mean(), abs=1e-12)
    # Outages per day: runs of down samples, counted by hand.
    n_runs = int(down[0]) + int(np.count_nonzero(down[1:] & ~down[:-1]))
    days = WINDOW.count * WINDOW.step_s / 86400.0
    assert a.outage_summary(tracks)["count_per_day"] == pytest.approx(n_runs / days)
    np.testing.assert_array_equal(a.down, down)


@pytest.mark.parametrize("reassign_s", [30.0, 90.0])
def test_schedule_model_against_plain_loop_on_a_rough_horizon(tracks, reference, reassign_s):
    knots = np.array([[0, 10], [90, 60], [200, 20], [300, 45], [360, 10]], float)
    m = HorizonMask.from_points([HorizonPoint(a, e) for a, e in knots[:-1]])
    down = plain_loop_down(reference, WINDOW.count, WINDOW.step_s, reassign_s,
                           lambda az, el: el < np.interp(az, knots[:, 0], knots[:, 1]))
    got = schedule_down(tracks, m.elevation_at(tracks.az_deg) > tracks.el_deg, reassign_s)
    np.testing.assert_array_equal(got, down)


random_masks = st.lists(st.tuples(st.floats(0, 359.9), st.floats(0, 90)), min_size=1, max_size=8,
                        unique_by=lambda p: round(p[0], 2))


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(random_masks, st.floats(0, 30), st.sampled_from([15.0, 30.0, 45.0, 120.0, 300.0]))
def test_what_the_schedule_model_guarantees(tracks, pts, raise_by, reassign_s):
    """Properties the model guarantees for any mask and period: the link is down
    whenever no usable satellite is unblocked (so interruption >= 1 - availability);
    raising the mask never brings a down sample back up (the assignment is blind
    to the mask); with a reassignment at every sample the link is down exactly when
    the highest usable satellite is blocked or there is none.  Each blocked sample
    counts for one sector, so the sector shares sum to 1."""
    low = HorizonMask.from_points([HorizonPoint(a, e) for a, e in pts])
    high = HorizonMask.from_points([HorizonPoint(a, min(e + raise_by, 90)) for a, e in pts])
    a_low = assess(tracks, low, schedule=Schedule(reassign_s))
    a_high = assess(tracks, high, schedule=Schedule(reassign_s))
    assert a_low.interruption >= 1.0 - a_low.availability - 1e-12
    assert not np.any(a_low.down & ~a_high.down)
    assert a_high.interruption >= a_low.interruption
    for a in (a_low, a_high):
        shares = sum(s.blocked_share for s in a.sectors)
        assert shares == pytest.approx(1.0 if a.blocked_samples else 0.0)
        for s in a.sectors:
            assert s.blocked_fraction_if_cleared <= a.blocked_fraction + 1e-12
    # Every sample a reassignment instant (reassign_s no longer than the step).
    each = assess(tracks, low, schedule=Schedule(WINDOW.step_s))
    highest = {}
    for j in range(len(tracks)):
        k = int(tracks.time_index[j])
        if k not in highest or tracks.el_deg[j] > tracks.el_deg[highest[k]]:
            highest[k] = j
    expect = np.ones(WINDOW.count, bool)
    for k, j in highest.items():
        expect[k] = bool(each.blocked[j])
    np.testing.assert_array_equal(each.down, expect)


def test_outage_runs_by_hand():
    flags = np.array([0, 1, 1, 0, 0, 1, 0, 1, 1, 1], bool)
    assert [(o.start_index, o.samples) for o in runs(flags)] == [(1, 2), (5, 1), (7, 3)]
    assert runs(np.zeros(4, bool)) == []


MILL_BARN = [(0, 0), (40, 50), (80, 0), (180, 0), (220, 35), (260, 0)]


def test_sectors_and_what_if_cleared(tracks, reference):
    m = HorizonMask.from_points([HorizonPoint(0, 0), HorizonPoint(40, 50, None, "mill"), HorizonPoint(80, 0),
                                 HorizonPoint(180, 0), HorizonPoint(220, 35, None, "barn"), HorizonPoint(260, 0)])
    a = assess(tracks, m)
    assert {s.labels for s in a.sectors} == {("mill",), ("barn",)}
    assert sum(s.blocked_share for s in a.sectors) == pytest.approx(1.0)
    # Hand-worked crossings of 25 deg: 0->50 over 0..40 gives 20; 50->0 over 40..80
    # gives 60; 0->35 over 180..220 gives 180 + 40*25/35; 35->0 over 220..260 gives
    # 220 + 40*10/35.
    mill = next(s for s in a.sectors if s.labels == ("mill",))
    barn = next(s for s in a.sectors if s.labels == ("barn",))
    assert (mill.from_deg, mill.to_deg) == pytest.approx((20.0, 60.0))
    assert (barn.from_deg, barn.to_deg) == pytest.approx((180 + 40 * 25 / 35, 220 + 40 * 10 / 35))
    # Independent re-assessment from skyfield's positions: the hand-written knots
    # with that obstruction's reading set to 0, interpolated with numpy.
    _, _, az, el = reference
    for sec, drop in ((mill, 1), (barn, 4)):
        knots = np.array(MILL_BARN + [(360, 0)], float)
        knots[drop, 1] = 0.0
        blocked = el < np.interp(az, knots[:, 0], knots[:, 1])
        assert sec.blocked_fraction_if_cleared == pytest.approx(blocked.sum() / az.size, abs=1e-12)
    everything = el < np.interp(az, *np.array(MILL_BARN + [(360, 0)], float).T)
    assert mill.blocked_samples + barn.blocked_samples == everything.sum() == a.blocked_samples


def test_magnetic_and_true_bearings_differ_by_the_declination(write_site):
    pts = [[20, 35, 10.0, "oak"], [80, 5], [200, 40], [300, 10]]
    mag = load_site(write_site(MINIMAL_SITE + f'\n[horizon]\nreference = "magnetic"\npoints = {pts}\n', "m.toml"))
    kw = dict(start=START, hours=3, step_s=30)
    run_m = run_site(mag, **kw)
    d = run_m.declination.declination_deg
    rotated = [[(a + d) % 360, e, *rest] for a, e, *rest in pts]
    true = load_site(write_site(MINIMAL_SITE + f'\n[horizon]\nreference = "true"\npoints = {rotated}\n', "t.toml"))
    run_t = run_site(true, **kw)
    assert abs(d) > 5  # a site where the rotation matters
    assert run_m.assessment.blocked_samples == run_t.assessment.blocked_samples
    assert run_m.assessment.interruption == run_t.assessment.interruption
    a = np.arange(0, 360, 0.5)
    typed = HorizonProfile(tuple(HorizonPoint(p[0], p[1]) for p in pts), "true").mask()
    assert np.allclose(run_m.mask.elevation_at(a), typed.elevation_at(a - d))


def test_verdict_thresholds():
    c = Criteria()
    assert verdict_for(0.01, 0.0, 1.0, c)[0] == "qualified"
    assert verdict_for(0.05, 0.0, 1.0, c)[0] == "marginal"
    assert verdict_for(0.01, 0.03, 1.0, c)[0] == "marginal"  # interruption alone can demote
    assert verdict_for(0.2, 0.0, 1.0, c)[0] == "not-qualified"
    assert verdict_for(0.0, 0.0, 0.5, c)[0] == "not-qualified"  # too little clear sky
    strict = replace(c, qualified_max_blocked=0.005)
    assert verdict_for(0.01, 0.0, 1.0, strict)[0] == "marginal"
    assert "blocked 5.0\u00a0% is above 3.0\u00a0% but within 10.0\u00a0%" in verdict_for(0.05, 0.0, 1.0, c)[1]  # words.pct


def test_no_satellite_in_view_is_reported(fleet):
    # 53-degree shell seen from near the pole never rises above 25 deg.
    t = compute_tracks(fleet, Observer(89.0, 0.0, 0.0), WindowSpec(START, 2, 60), TERMINAL)
    a = assess(t, HorizonMask.clear())
    assert len(t) == 0 and a.blocked_fraction is None and a.availability == 0.0
    assert a.verdict == "not-qualified" and any("no satellite" in w for w in a.warnings)


def test_demo_site_figures_against_a_plain_skyfield_recount():
    """The whole pipeline on a demo site, recounted from scratch: skyfield's own
    alt/az for every satellite and sample, the compass points rotated by the
    declination by hand, the mask interpolated by numpy directly, the metrics
    counted with plain Python."""
    from .helpers import DEMO

    site = load_site(DEMO / "alder-brook-farm/site.toml")
    run = run_site(site, hours=1.5, step_s=30)
    a = run.assessment
    ts = load.timescale(builtin=True)
    n = run.window.count
    t = ts.utc(2026, 6, 1, 0, 0, np.arange(n) * 30.0)
    topos = wgs84.latlon(site.latitude_deg, site.longitude_deg, elevation_m=site.elevation_m + site.mount.height_m)
    dec = run.declination.declination_deg
    pts = sorted(((p.azimuth_deg + dec) % 360.0, p.elevation_deg) for p in site.horizon.points)
    xp = [x - 360 for x, _ in pts] + [x for x, _ in pts] + [x + 360 for x, _ in pts]
    fp = [y for _, y in pts] * 3
    usable = blocked = 0
    clear_at = [False] * n
    for sat in run.fleet.satrecs:
        alt, az, _ = (EarthSatellite.from_satrec(sat, ts) - topos).at(t).altaz()
        for k in np.flatnonzero(alt.degrees >= 25.0):
            usable += 1
            if alt.degrees[k] < np.interp(az.degrees[k], xp, fp):
                blocked += 1
            else:
                clear_at[k] = True
    assert a.usable_samples == usable
    assert a.blocked_samples == blocked
    assert a.blocked_fraction == pytest.approx(blocked / usable)
    assert a.availability == pytest.approx(sum(clear_at) / n)
