"""compute_tracks against skyfield, an independent reference implementation.

Reference: the skyfield library (Rhodes, Astrophysics Source Code Library
1907.024; citation from memory).  For every satellite we ask skyfield itself
for the topocentric position with

    (EarthSatellite.from_satrec(sat, ts) - wgs84.latlon(lat, lon, elevation_m=h)).at(t).altaz()

and build its times from Python datetimes (``ts.from_datetimes``), so the
engine's own time grid, its TEME -> Earth-fixed rotation, ENU frame, azimuth
convention and coarse-to-fine culling are all checked against skyfield's full
TEME -> ITRS -> GCRS -> topocentric chain.  (Shared on both sides, so not
checked here: skyfield's WGS84 site vector and its GMST1982 function, which the
engine calls; the site radius is checked indirectly by the zenith-pass ranges
in test_reference_orbits.)  No refraction on either side
(skyfield's ``altaz()`` without temperature/pressure applies none).

What must agree:
  (a) the set of (satellite, time) samples at or above the minimum elevation
      (and inside the field-of-view cone, when one is set); only samples within
      SET_EDGE_DEG of a threshold may differ (float rounding at the boundary);
  (b) azimuth and elevation within 0.01 deg, range within 0.05 km.
"""

from __future__ import annotations

import math
from datetime import datetime, timedelta, timezone

import numpy as np
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st
from sgp4.api import WGS72, Satrec
from sgp4.exporter import export_tle
from skyfield.api import EarthSatellite, load, wgs84

import survey.tracks
from survey.constellation import Fleet, Shell, default_fleet, parse_tle, walker_fleet
from survey.site import Terminal
from survey.tracks import Observer, compute_tracks
from survey.window import WindowSpec

TS = load.timescale(builtin=True)  # builtin: no downloads (offline)

ANGLE_TOL_DEG = 0.01
RANGE_TOL_KM = 0.05
SET_EDGE_DEG = 0.001

# Test sites (coordinates are arbitrary test points, not anyone's address):
SITES = {
    "mid-north": Observer(47.25, -122.10, 120.0),
    "south": Observer(-33.95, 151.15, 45.0),  # southern hemisphere, east longitude
    "high-lat": Observer(69.65, 18.95, 10.0),  # high latitude, only inclined shells pass
}

FLEET_EPOCH = datetime(2026, 6, 1, tzinfo=timezone.utc)


# --------------------------------------------------------------------------- helpers


def sky_reference(satrecs, observer: Observer, window: WindowSpec):
    """skyfield alt, az (deg) and distance (km), arrays (len(satrecs), window.count)."""
    start = window.start.astimezone(timezone.utc)
    times = TS.from_datetimes([start + timedelta(seconds=k * window.step_s) for k in range(window.count)])
    topo = wgs84.latlon(observer.latitude_deg, observer.longitude_deg, elevation_m=observer.height_m)
    alt = np.empty((len(satrecs), window.count))
    az = np.empty_like(alt)
    dist = np.empty_like(alt)
    for i, sat in enumerate(satrecs):
        a, z, d = (EarthSatellite.from_satrec(sat, TS) - topo).at(times).altaz()
        alt[i], az[i], dist[i] = a.degrees, z.degrees, d.km
    return alt, az, dist


def cone_separation_deg(alt_deg, az_deg, terminal: Terminal):
    """Angle between a sky direction and the boresight, by the spherical law of
    cosines on the celestial sphere (boresight at altitude 90 - tilt, azimuth
    tilt_azimuth):  cos d = sin a1 sin a2 + cos a1 cos a2 cos(A1 - A2)."""
    a1 = np.radians(alt_deg)
    a2 = math.radians(90.0 - terminal.tilt_deg)
    dA = np.radians(az_deg - terminal.tilt_azimuth_deg)
    c = np.sin(a1) * math.sin(a2) + np.cos(a1) * math.cos(a2) * np.cos(dA)
    return np.degrees(np.arccos(np.clip(c, -1.0, 1.0)))


def compare(fleet, subset, observer, window, terminal, min_common=50):
    """Run the engine on the whole fleet, skyfield on ``subset`` (fleet indices),
    and check (a) the kept set and (b) the geometry.  Returns the number of
    samples compared."""
    tracks = compute_tracks(fleet, observer, window, terminal)
    # SkyTracks promises order by time index, then satellite.
    key = tracks.time_index.astype(np.int64) * len(fleet) + tracks.sat
    assert np.all(np.diff(key) > 0), "samples not sorted by (time_index, sat) or duplicated"
    subset = np.asarray(subset)
    alt, az, dist = sky_reference([fleet.satrecs[i] for i in subset], observer, window)

    # Reference kept set, computed from skyfield's alt/az only.
    kept = alt >= terminal.min_elevation_deg
    edge = np.abs(alt - terminal.min_elevation_deg) < SET_EDGE_DEG
    if terminal.scan_half_angle_deg is not None:
        sep = cone_separation_deg(alt, az, terminal)
        kept &= sep <= terminal.scan_half_angle_deg
        edge |= np.abs(sep - terminal.scan_half_angle_deg) < SET_EDGE_DEG

    row_of = {int(s): r for r, s in enumerate(subset)}
    mask = np.isin(tracks.sat, subset)
    e_sat, e_t = tracks.sat[mask], tracks.time_index[mask]
    rows = np.array([row_of[int(s)] for s in e_sat], dtype=int)
    engine = np.zeros_like(kept)
    engine[rows, e_t] = True
    assert rows.size == np.unique(rows * window.count + e_t).size, "a (sat, time) sample appears twice"

    only_engine = engine & ~kept & ~edge
    only_ref = kept & ~engine & ~edge
    assert not only_engine.any() and not only_ref.any(), (
        f"kept-sample sets differ: {only_engine.sum()} only in compute_tracks "
        f"(first (sat,k,alt): {_first(only_engine, subset, alt)}), {only_ref.sum()} only in skyfield "
        f"(first: {_first(only_ref, subset, alt)})"
    )
    assert rows.size >= min_common, f"only {rows.size} samples compared: test too weak"

    # (b) geometry of every kept sample.
    ref_alt, ref_az, ref_d = alt[rows, e_t], az[rows, e_t], dist[rows, e_t]
    d_el = np.abs(tracks.el_deg[mask] - ref_alt)
    d_az = np.abs((tracks.az_deg[mask] - ref_az + 180.0) % 360.0 - 180.0)
    d_rng = np.abs(tracks.range_km[mask] - ref_d)
    assert d_el.max() < ANGLE_TOL_DEG, f"elevation off by {d_el.max():.5f} deg"
    # Azimuth is singular at the zenith: a tiny position error swings it; compare
    # it where the direction is at least 1 deg from the zenith.
    off_zenith = ref_alt < 89.0
    assert d_az[off_zenith].max() < ANGLE_TOL_DEG, f"azimuth off by {d_az[off_zenith].max():.5f} deg"
    assert d_rng.max() < RANGE_TOL_KM, f"range off by {d_rng.max():.4f} km"
    assert tracks.failed_sats == 0
    return rows.size


def _first(m, subset, alt):
    r, k = np.argwhere(m)[0] if m.any() else (None, None)
    return None if r is None else (int(subset[r]), int(k), float(alt[r, k]))


def checksum(line: str) -> int:
    """TLE checksum written out from the format's definition (Hoots & Roehrich 1980,
    Spacetrack Report #3; from memory): digits add their value, '-' adds 1,
    everything else 0, modulo 10, over columns 1-68."""
    total = 0
    for c in line[:68]:
        if c.isdigit():
            total += int(c)
        elif c == "-":
            total += 1
    return total % 10


# ----------------------------------------------------------------------------- tests


@pytest.mark.parametrize(
    "site, min_el, start, step_s",
    [
        # Window start two days after the fleet epoch and not on a whole second,
        # so an engine that counted time from the window start (not the element
        # epoch) or dropped the microseconds would fail.
        ("mid-north", 25.0, datetime(2026, 6, 3, 7, 13, 20, 500000, tzinfo=timezone.utc), 15.0),
        ("south", 40.0, FLEET_EPOCH, 15.0),
        ("high-lat", 10.0, datetime(2026, 6, 1, 18, 0, tzinfo=timezone.utc), 15.0),
    ],
)
def test_default_fleet_matches_skyfield(site, min_el, start, step_s):
    fleet = default_fleet(FLEET_EPOCH)
    # A fixed subset spread over all three shells (every 29th satellite, ~60).
    subset = np.arange(3, len(fleet), 29)
    assert set(fleet.group[i] for i in subset) == set(fleet.group)
    window = WindowSpec(start, 24.0, step_s)
    n = compare(fleet, subset, SITES[site], window, Terminal(min_elevation_deg=min_el))
    assert n > 500


@pytest.mark.parametrize("site", ["mid-north", "south", "high-lat"])
def test_walker_shells_match_skyfield(site):
    # A low fast shell and a high near-polar one; unusual step sizes exercise the
    # culling levels (step 10 s -> factors 48/12/1, step 45 s -> 12/3/1).
    shells = [
        Shell("low", 340.0, 42.0, 8, 5, 3),
        Shell("high", 1150.0, 87.9, 6, 6, 2),
    ]
    fleet = walker_fleet(shells, FLEET_EPOCH, "test shells")
    for step in (10.0, 45.0):
        window = WindowSpec(datetime(2026, 6, 1, 2, 30, tzinfo=timezone.utc), 12.0, step)
        compare(fleet, np.arange(len(fleet)), SITES[site], window, Terminal(min_elevation_deg=20.0),
                min_common=30)


@pytest.mark.parametrize(
    "terminal",
    [
        # The brief's cone: 20 deg tilt toward south, 40 deg half angle (the cone
        # reaches down to 30 deg elevation, so the min elevation does not bind).
        Terminal(min_elevation_deg=25.0, tilt_deg=20.0, tilt_azimuth_deg=180.0, scan_half_angle_deg=40.0),
        # A steeper tilt whose cone dips to 10 deg: both limits bind.
        Terminal(min_elevation_deg=25.0, tilt_deg=45.0, tilt_azimuth_deg=300.0, scan_half_angle_deg=35.0),
    ],
)
def test_field_of_view_cone_matches_spherical_trig(terminal):
    fleet = default_fleet(FLEET_EPOCH)
    subset = np.arange(0, len(fleet), 23)
    window = WindowSpec(FLEET_EPOCH, 24.0, 15.0)
    for site in ("mid-north", "south"):
        compare(fleet, subset, SITES[site], window, terminal, min_common=200)


def _satrec(satnum, epoch, ecco, argp_deg, inc_deg, ma_deg, n_rev_day, raan_deg, bstar=0.0):
    sat = Satrec()
    days = (epoch - datetime(1949, 12, 31, tzinfo=timezone.utc)).total_seconds() / 86400.0
    sat.sgp4init(WGS72, "i", satnum, days, bstar, 0.0, 0.0, ecco, math.radians(argp_deg),
                 math.radians(inc_deg), math.radians(ma_deg), n_rev_day * 2 * math.pi / 1440.0,
                 math.radians(raan_deg))
    return sat


def test_tle_path_matches_skyfield():
    epoch = datetime(2026, 6, 1, 6, 0, tzinfo=timezone.utc)
    sats = [
        _satrec(90001, epoch, 0.0012, 80.0, 53.2, 10.0, 15.10, 40.0, bstar=2.5e-5),  # LEO
        _satrec(90002, epoch, 0.0800, 250.0, 65.0, 120.0, 12.60, 300.0),  # eccentric LEO/MEO
        _satrec(90003, epoch, 0.7000, 270.0, 63.4, 0.0, 2.006, 200.0),  # 12 h, deep space (SDP4)
    ]
    text_lines = []
    pairs = []
    for i, sat in enumerate(sats):
        l1, l2 = export_tle(sat)
        # The exporter's checksum must agree with the format's definition.
        assert int(l1[68]) == checksum(l1) and int(l2[68]) == checksum(l2)
        pairs.append((l1, l2))
        if i != 1:  # mix 3-line (with name) and 2-line entries in one file
            text_lines.append(f"TEST SAT {i}")
        text_lines += [l1, l2]
    fleet = parse_tle("\n".join(text_lines) + "\n", "made.tle")
    assert len(fleet) == 3
    assert fleet.names == ["TEST SAT 0", "90002", "TEST SAT 2"]

    observer = SITES["mid-north"]
    window = WindowSpec(datetime(2026, 6, 1, 12, 0, tzinfo=timezone.utc), 24.0, 15.0)
    terminal = Terminal(min_elevation_deg=15.0)
    tracks = compute_tracks(fleet, observer, window, terminal)

    # Reference: skyfield reading the TLE text itself (its own parser).
    start = window.start
    times = TS.from_datetimes([start + timedelta(seconds=k * window.step_s) for k in range(window.count)])
    topo = wgs84.latlon(observer.latitude_deg, observer.longitude_deg, elevation_m=observer.height_m)
    total = 0
    for i, (l1, l2) in enumerate(pairs):
        alt, az, dist = (EarthSatellite(l1, l2, ts=TS) - topo).at(times).altaz()
        alt, az, dist = alt.degrees, az.degrees, dist.km
        ref = set(np.flatnonzero(alt >= terminal.min_elevation_deg).tolist())
        edge = set(np.flatnonzero(np.abs(alt - terminal.min_elevation_deg) < SET_EDGE_DEG).tolist())
        m = tracks.sat == i
        k = tracks.time_index[m]
        assert set(k.tolist()) ^ ref <= edge, f"satellite {i}: kept samples differ from skyfield"
        assert k.size > 20, f"satellite {i}: only {k.size} visible samples: test too weak"
        assert np.abs(tracks.el_deg[m] - alt[k]).max() < ANGLE_TOL_DEG
        ok = alt[k] < 89.0
        assert np.abs((tracks.az_deg[m] - az[k] + 180.0) % 360.0 - 180.0)[ok].max() < ANGLE_TOL_DEG
        assert np.abs(tracks.range_km[m] - dist[k]).max() < RANGE_TOL_KM
        total += k.size
    assert total == len(tracks)


@pytest.mark.parametrize("chunk_points", [20_000, 1720 * 100])
def test_chunked_windows_match_skyfield(monkeypatch, chunk_points):
    # Long windows are cut into chunks that share their end samples; force many
    # chunks (32 and 96 samples long) so every chunk boundary is exercised.
    monkeypatch.setattr(survey.tracks, "CHUNK_POINTS", chunk_points)
    fleet = default_fleet(FLEET_EPOCH)
    for step in (15.0, 7.0):
        window = WindowSpec(FLEET_EPOCH + timedelta(hours=1), 6.0, step)
        compare(fleet, np.arange(5, len(fleet), 41), SITES["south"], window, Terminal(min_elevation_deg=25.0),
                min_common=50)


def test_coarse_step_single_level_matches_skyfield():
    # step >= 960 s: no refinement levels, every sample computed directly.
    fleet = default_fleet(FLEET_EPOCH)
    window = WindowSpec(FLEET_EPOCH, 24.0, 1000.0)
    compare(fleet, np.arange(0, len(fleet), 5), SITES["mid-north"], window, Terminal(min_elevation_deg=25.0),
            min_common=50)


def test_one_sample_window_matches_skyfield():
    # A snapshot (window.count == 1) is a valid window (resolve_window accepts
    # count >= 1); the visible satellites at that instant must be returned.
    fleet = default_fleet(FLEET_EPOCH)
    window = WindowSpec(FLEET_EPOCH, 15.0 / 3600.0, 15.0)
    assert window.count == 1
    compare(fleet, np.arange(len(fleet)), SITES["south"], window, Terminal(min_elevation_deg=25.0), min_common=3)


def test_builtin_timescale_matches_skyfield_loader():
    """survey.tracks builds skyfield's builtin timescale without its download
    machinery; it must be the same timescale as load.timescale(builtin=True)."""
    from survey.tracks import builtin_timescale

    ours, theirs = builtin_timescale(), load.timescale(builtin=True)
    secs = np.arange(0.0, 86400.0 * 3650, 86400.0 * 7)  # ten years, weekly
    a, b = ours.utc(2020, 1, 1, 0, 0, secs), theirs.utc(2020, 1, 1, 0, 0, secs)
    assert np.array_equal(a.whole, b.whole)
    assert np.array_equal(a.tai_fraction, b.tai_fraction)
    assert np.array_equal(a.ut1_fraction, b.ut1_fraction)


MIN_COMPARED_SAMPLES = 30


@settings(max_examples=12, deadline=None, derandomize=True)
@given(
    inc=st.floats(0.0, 180.0), ecc=st.floats(0.0, 0.25), rev_day=st.floats(11.0, 16.0),
    lat_share=st.floats(-1.0, 1.0), lon=st.floats(-180.0, 180.0), min_el=st.floats(0.0, 60.0),
)
def test_random_orbits_and_sites_match_skyfield(inc, ecc, rev_day, lat_share, lon, min_el):
    """Random near-Earth orbits (any inclination, prograde or retrograde, up to
    e = 0.25, perigee above 220 km) and random sites: the culling (orbit-plane
    distance, Hermite bounds) must never drop a sample skyfield sees.  The site's
    latitude is drawn within the band the orbits' ground tracks cover (the
    inclination, or its supplement for a retrograde orbit, plus a margin), and an
    example counts only with at least MIN_COMPARED_SAMPLES samples that skyfield
    puts clear of the minimum-elevation edge, so no example compares nothing."""
    band = min(min(inc, 180.0 - inc) + 10.0, 80.0)
    lat = lat_share * band
    a_km = (398600.4418 / (rev_day * 2 * math.pi / 86400.0) ** 2) ** (1 / 3)  # Kepler's third law
    assume(a_km * (1 - ecc) > 6600.0)
    epoch = datetime(2026, 6, 1, tzinfo=timezone.utc)
    sats = [_satrec(70000 + k, epoch, ecc, 90.0 * k, inc, 40.0 * k, rev_day, 60.0 * k) for k in range(6)]
    fleet = Fleet(sats, [str(k) for k in range(6)], ["random"] * 6, "random orbits")
    window = WindowSpec(epoch, 12.0, 30.0)
    tracks = compute_tracks(fleet, Observer(lat, lon, 100.0), window, Terminal(min_elevation_deg=min_el))
    alt, _, _ = sky_reference(sats, Observer(lat, lon, 100.0), window)
    kept = alt >= min_el
    edge = np.abs(alt - min_el) < SET_EDGE_DEG
    engine = np.zeros_like(kept)
    engine[tracks.sat, tracks.time_index] = True
    assume(np.count_nonzero(kept & ~edge) >= MIN_COMPARED_SAMPLES)
    assert not (engine ^ kept)[~edge].any()
    assert tracks.failed_sats == 0
    _COMPARED.append(int(np.count_nonzero(kept & ~edge)))


_COMPARED: list[int] = []


def test_random_orbit_examples_each_compared_enough_samples():
    """Runs after the property test above (file order): every example it kept
    compared at least MIN_COMPARED_SAMPLES visible samples, and there were several."""
    if not _COMPARED:
        test_random_orbits_and_sites_match_skyfield()
    assert len(_COMPARED) >= 8 and min(_COMPARED) >= MIN_COMPARED_SAMPLES
