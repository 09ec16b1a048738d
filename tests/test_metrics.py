"""Assessment metrics on constructed cases whose answers are known by reasoning,
counted independently from skyfield's own topocentric positions."""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest
from skyfield.api import EarthSatellite, load, wgs84

from survey.assess import assess, runs, schedule_down, verdict_for
from survey.constellation import Shell, walker_fleet
from survey.horizon import HorizonMask, HorizonPoint, HorizonProfile, in_sector
from survey.pipeline import run_site
from survey.site import Criteria, Schedule, Terminal, WindowSpec, load_site
from survey.tracks import Observer, compute_tracks

from .conftest import MINIMAL_SITE, START

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


def brute_force_down(tracks, blocked, reassign_s):
    """The scheduling model written out plainly, one sample time at a time."""
    n, step = tracks.count, tracks.window.step_s
    by_time = {}
    for j in range(len(tracks)):
        by_time.setdefault(int(tracks.time_index[j]), []).append(j)
    down = np.zeros(n, bool)
    assigned, slot_down, slot = None, False, None
    for k in range(n):
        s = int(np.floor(k * step / reassign_s + 1e-9))
        if s != slot:  # a reassignment instant: take the highest usable satellite
            slot, slot_down = s, False
            cands = by_time.get(k, [])
            assigned = int(tracks.sat[max(cands, key=lambda j: tracks.el_deg[j])]) if cands else None
        here = [j for j in by_time.get(k, []) if int(tracks.sat[j]) == assigned]
        up = bool(here) and not blocked[here[0]]
        slot_down = slot_down or not up
        down[k] = slot_down
    return down


@pytest.mark.parametrize("reassign_s", [30.0, 60.0, 90.0, 300.0])
def test_schedule_model_against_plain_loop(tracks, reassign_s):
    m = HorizonMask.from_points([HorizonPoint(0, 10), HorizonPoint(90, 60), HorizonPoint(200, 20),
                                 HorizonPoint(300, 45)])
    blocked = tracks.el_deg < m.elevation_at(tracks.az_deg)
    assert blocked.any() and not blocked.all()
    np.testing.assert_array_equal(schedule_down(tracks, blocked, reassign_s),
                                  brute_force_down(tracks, blocked, reassign_s))


def test_longer_reassignment_never_helps(tracks):
    m = half_plane_wall()
    values = [assess(tracks, m, schedule=Schedule(r)).interruption for r in (30, 60, 120, 600)]
    assert values == sorted(values)


def test_outage_runs_by_hand():
    flags = np.array([0, 1, 1, 0, 0, 1, 0, 1, 1, 1], bool)
    assert [(o.start_index, o.samples) for o in runs(flags)] == [(1, 2), (5, 1), (7, 3)]
    assert runs(np.zeros(4, bool)) == []


def test_sectors_and_what_if_cleared(tracks, reference):
    m = HorizonMask.from_points([HorizonPoint(0, 0), HorizonPoint(40, 50, None, "mill"), HorizonPoint(80, 0),
                                 HorizonPoint(180, 0), HorizonPoint(220, 35, None, "barn"), HorizonPoint(260, 0)])
    a = assess(tracks, m)
    assert {s.labels for s in a.sectors} == {("mill",), ("barn",)}
    assert sum(s.blocked_share for s in a.sectors) == pytest.approx(1.0)
    _, _, az, el = reference
    blocked = el < m.elevation_at(az)
    for s in a.sectors:
        # Independent re-assessment with that sector's mask set to zero.
        cleared = blocked & ~in_sector(az, s.from_deg, s.to_deg)
        assert s.blocked_fraction_if_cleared == pytest.approx(cleared.sum() / az.size, abs=1 / az.size)
    # Hand-worked crossings of 25 deg: 0->50 over 0..40 gives 20; 50->0 over 40..80 gives 60.
    mill = next(s for s in a.sectors if s.labels == ("mill",))
    assert (mill.from_deg, mill.to_deg) == pytest.approx((20.0, 60.0))


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
    assert "blocked 5.0% is above 3.0% but within 10.0%" in verdict_for(0.05, 0.0, 1.0, c)[1]


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
    from .conftest import DEMO

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
