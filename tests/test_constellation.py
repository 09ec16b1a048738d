"""Walker shells and pass geometry against textbook formulas.

Sources:
  * Walker, J. G. (1984), "Satellite constellations", J. British Interplanetary
    Society 37: delta pattern i:T/P/F, RAAN_p = 360 p / P, mean anomaly of slot s
    in plane p = 360 s / S + 360 F p / T.
  * Vallado, Fundamentals of Astrodynamics and Applications: Kepler's third law
    T = 2 pi sqrt(a^3 / mu); J2 secular nodal regression
    dOmega/dt = -(3/2) n J2 (R/p)^2 cos i; node from the angular momentum
    h = r x v, Omega = atan2(h_x, -h_y).
  * Maral & Bousquet, Satellite Communications Systems (ch. 2): slant range
    d = sqrt((R+h)^2 - R^2 cos^2 eps) - R sin eps and Earth central angle
    lambda = arccos(R cos eps / (R+h)) - eps.

Constants are written here, not taken from the engine (so a wrong constant in
the engine would show):  mu = 398600.4418 km^3/s^2 and a = 6378.137 km, f =
1/298.257223563 (WGS84, NIMA TR8350.2; from memory); J2 = 1.08263e-3 (EGM96 /
WGS72-era value; from memory).
"""

from __future__ import annotations

import math
from datetime import datetime, timedelta, timezone

import numpy as np
import pytest
from skyfield.api import EarthSatellite, load, wgs84

from survey.constellation import Shell, kepler_mean_motion_rad_s, walker_fleet
from survey.site import Terminal
from survey.tracks import Observer, compute_tracks, coverage_angle_rad
from survey.window import WindowSpec

MU = 398600.4418  # km^3/s^2, WGS84 (from memory)
R_EQ = 6378.137  # km, WGS84 equatorial radius (from memory)
FLATTENING = 1 / 298.257223563  # WGS84 (from memory)
J2 = 1.08263e-3  # from memory
SIDEREAL_YEAR_RATE = 360.0 / 365.2422  # deg/day: the Sun's mean motion, sun-synchronous node rate (~0.9856)

EPOCH = datetime(2026, 6, 1, tzinfo=timezone.utc)
TWO_PI = 2 * math.pi


def single(altitude_km, inclination_deg):
    """One satellite (plane 0, slot 0) of a Walker shell."""
    return walker_fleet([Shell("one", altitude_km, inclination_deg, 1, 1, 0)], EPOCH, "test").satrecs[0]


def propagate(sat, minutes):
    """TEME r, v (km, km/s) at minutes since the element epoch."""
    minutes = np.asarray(minutes, dtype=float)
    err, r, v = sat.sgp4_array(np.full(minutes.size, sat.jdsatepoch), sat.jdsatepochF + minutes / 1440.0)
    assert not err.any()
    return r, v


def kepler_period_s(altitude_km):
    return TWO_PI * math.sqrt((R_EQ + altitude_km) ** 3 / MU)


def angle_diff(a, b):
    """a - b wrapped into (-pi, pi]."""
    return (a - b + math.pi) % TWO_PI - math.pi


# ------------------------------------------------------------------ Walker layout


@pytest.mark.parametrize("planes, per_plane, phasing", [(3, 8, 1), (6, 4, 2), (36, 20, 1), (7, 3, 6)])
def test_walker_slots_read_back_from_satrec(planes, per_plane, phasing):
    shell = Shell("w", 550.0, 53.0, planes, per_plane, phasing)
    fleet = walker_fleet([shell], EPOCH, "test")
    T = planes * per_plane
    assert len(fleet) == T
    seen = set()
    for i, sat in enumerate(fleet.satrecs):
        p, s = divmod(i, per_plane)  # satellites are listed plane by plane
        assert fleet.names[i] == f"w-{p + 1:02d}-{s + 1:02d}"
        raan = TWO_PI * p / planes  # Walker 1984
        ma = TWO_PI * s / per_plane + TWO_PI * phasing * p / T  # Walker 1984
        assert abs(angle_diff(sat.nodeo, raan)) < 1e-12
        assert abs(angle_diff(sat.mo, ma)) < 1e-12
        assert sat.inclo == pytest.approx(math.radians(53.0), abs=1e-15)
        assert sat.ecco == 0.0
        seen.add(sat.satnum)
    assert len(seen) == T  # distinct catalogue numbers


def test_walker_24_3_1_worked_by_hand():
    # 53:24/3/1 -> planes 120 deg apart, 8 slots 45 deg apart, and each plane's
    # slot 0 is 360*1/24 = 15 deg ahead of the previous plane's (worked by hand).
    fleet = walker_fleet([Shell("w", 550.0, 53.0, 3, 8, 1)], EPOCH, "test")
    deg = [(round(math.degrees(s.nodeo), 9) % 360, round(math.degrees(s.mo), 9) % 360) for s in fleet.satrecs]
    assert deg[0] == (0.0, 0.0)
    assert deg[1] == (0.0, 45.0)
    assert deg[8] == (120.0, 15.0)
    assert deg[16] == (240.0, 30.0)
    assert deg[23] == (240.0, 345.0)  # 7 * 45 + 30


def test_two_shells_continue_numbering():
    fleet = walker_fleet([Shell("a", 550.0, 53.0, 2, 3, 1), Shell("b", 1200.0, 87.9, 3, 2, 0)], EPOCH, "t")
    assert [s.satnum for s in fleet.satrecs] == list(range(1, 13))
    assert fleet.group == ["a"] * 6 + ["b"] * 6
    assert fleet.groups == {"a": 6, "b": 6}
    assert math.degrees(fleet.satrecs[6].inclo) == pytest.approx(87.9)


# ---------------------------------------------------------- Kepler's third law


@pytest.mark.parametrize("altitude_km", [340.0, 550.0, 1200.0])
def test_kepler_mean_motion(altitude_km):
    n = math.sqrt(MU / (R_EQ + altitude_km) ** 3)  # Vallado: n = sqrt(mu / a^3)
    assert kepler_mean_motion_rad_s(altitude_km) == pytest.approx(n, rel=1e-12)
    # 550 km: T = 2 pi / n = 5739 s = 95.65 min (hand computation).
    if altitude_km == 550.0:
        assert TWO_PI / n / 60.0 == pytest.approx(95.65, abs=0.01)


@pytest.mark.parametrize("altitude_km, inclination_deg", [(505.0, 49.5), (745.0, 98.4), (1150.0, 72.0)])
def test_nodal_period_matches_kepler(altitude_km, inclination_deg):
    """Mean time between ascending-node crossings over ~10 orbits vs Kepler's
    third law.  SGP4 includes J2: the nodal (draconic) period differs from the
    two-body period by order (3/2) J2 (R/a)^2 ~ 0.14 % (the mean anomaly and
    argument of perigee rates change; Vallado ch. 9), so 0.5 % is the bound;
    0.5 % of the period is ~29 s, i.e. a 20-25 km altitude error would show."""
    sat = single(altitude_km, inclination_deg)
    tk = kepler_period_s(altitude_km)
    minutes = np.arange(0.0, 10.5 * tk, 5.0) / 60.0
    r, _ = propagate(sat, minutes)
    z = r[:, 2]
    k = np.flatnonzero((z[:-1] < 0.0) & (z[1:] >= 0.0))  # z changes sign upward
    assert k.size >= 10
    # z is nearly linear in time across the node (z ~ r sin i sin u): interpolate.
    crossings = minutes[k] + (minutes[k + 1] - minutes[k]) * (-z[k]) / (z[k + 1] - z[k])
    period = np.diff(crossings).mean() * 60.0
    assert period == pytest.approx(tk, rel=0.005)
    assert np.diff(crossings).std() * 60.0 < 1.0  # regular: circular orbit


# --------------------------------------------------------------- J2 nodal drift


def j2_node_rate_deg_day(altitude_km, inclination_deg):
    a = R_EQ + altitude_km
    n = math.sqrt(MU / a**3)
    p = a  # circular: p = a (1 - e^2)
    rate = -1.5 * n * J2 * (R_EQ / p) ** 2 * math.cos(math.radians(inclination_deg))  # Vallado
    return math.degrees(rate) * 86400.0


def measured_node_rate_deg_day(sat, days=5.0):
    minutes = np.arange(0.0, days * 1440.0 + 1.0, 10.0)
    r, v = propagate(sat, minutes)
    h = np.cross(r, v)
    node = np.unwrap(np.arctan2(h[:, 0], -h[:, 1]))  # Omega = atan2(h_x, -h_y)
    # Linear fit: SGP4's short-period J2 terms wobble the osculating node by
    # ~0.01 deg at twice the orbit rate; the fit over 5 days averages them out.
    return np.degrees(np.polyfit(minutes / 1440.0, node, 1)[0])


@pytest.mark.parametrize("altitude_km, inclination_deg", [(505.0, 49.5), (745.0, 98.4), (1200.0, 70.0)])
def test_node_drift_matches_j2_formula(altitude_km, inclination_deg):
    measured = measured_node_rate_deg_day(single(altitude_km, inclination_deg))
    expected = j2_node_rate_deg_day(altitude_km, inclination_deg)
    # Within 2 %: SGP4's secular node rate adds J2^2 and J4 terms (~0.1 %).
    assert measured == pytest.approx(expected, rel=0.02)
    assert math.copysign(1, measured) == -math.copysign(1, math.cos(math.radians(inclination_deg)))


def sun_synchronous_inclination_by_hand(altitude_km):
    """Vallado's J2 nodal precession condition solved for i: the node must move
    east 360 deg a tropical year, so cos i = -rate / ((3/2) n J2 (R/a)^2)."""
    a = R_EQ + altitude_km
    n = math.sqrt(MU / a**3)
    rate = math.radians(360.0 / 365.2422) / 86400.0
    return math.degrees(math.acos(-rate / (1.5 * n * J2 * (R_EQ / a) ** 2)))


@pytest.mark.parametrize("altitude_km", [400.0, 745.0, 800.0, 1500.0, 3000.0])
def test_sun_synchronous_inclination_formula(altitude_km):
    from survey.constellation import sun_synchronous_inclination_deg

    assert sun_synchronous_inclination_deg(altitude_km) == pytest.approx(
        sun_synchronous_inclination_by_hand(altitude_km), abs=1e-4)


def test_sun_synchronous_worked_values():
    # Worked with the formula (J2 = 1.08263e-3, WGS-84 R and mu): 98.60 deg at
    # 800 km; about 97.4 deg at 500 km and 98.6 deg at 800 km are the usual
    # textbook figures (from memory).
    assert sun_synchronous_inclination_by_hand(800.0) == pytest.approx(98.60, abs=0.01)
    assert sun_synchronous_inclination_by_hand(500.0) == pytest.approx(97.40, abs=0.01)


def test_embedded_sun_synchronous_shell_precesses_with_the_sun():
    """The embedded shell that says "sun-synchronous" gets the formula's
    inclination, and SGP4 (not the formula) moves its node east at the Sun's
    mean rate, 360/365.2422 = 0.9856 deg/day (from memory)."""
    from importlib import resources

    from survey.constellation import default_fleet, parse_shells

    text = resources.files("survey.data").joinpath("illustrative_shells.toml").read_text("utf-8")
    assert 'inclination_deg = "sun-synchronous"' in text
    (sso,) = [s for s in parse_shells(text, "embedded") if s.inclination_deg > 90]
    assert sso.inclination_deg == pytest.approx(sun_synchronous_inclination_by_hand(sso.altitude_km), abs=1e-4)
    fleet = default_fleet(EPOCH)
    i = fleet.group.index(sso.name)
    assert math.degrees(fleet.satrecs[i].inclo) == pytest.approx(sso.inclination_deg, abs=1e-9)
    measured = measured_node_rate_deg_day(fleet.satrecs[i])
    assert measured == pytest.approx(SIDEREAL_YEAR_RATE, rel=0.02)
    # A regressing shell for contrast: 49.5 deg at 505 km moves west, about
    # -5.0 deg/day by the formula.
    assert j2_node_rate_deg_day(505.0, 49.5) < -4.5


def test_no_sun_synchronous_orbit_too_high():
    from survey.constellation import sun_synchronous_inclination_deg

    with pytest.raises(ValueError):
        sun_synchronous_inclination_deg(8000.0)  # cos i would be below -1


# -------------------------------------------------------- highest latitude = i


@pytest.mark.parametrize("inclination_deg", [30.0, 49.5, 64.5, 98.4, 120.0])
def test_highest_subsatellite_latitude_is_inclination(inclination_deg):
    sat = single(550.0, inclination_deg)
    minutes = np.arange(0.0, kepler_period_s(550.0) + 5.0, 2.0) / 60.0
    r, _ = propagate(sat, minutes)
    # Geocentric latitude of the sub-satellite point: asin(z / |r|); the TEME ->
    # Earth-fixed rotation is about z, so it leaves the latitude alone.
    lat = np.degrees(np.arcsin(r[:, 2] / np.linalg.norm(r, axis=1)))
    expected = inclination_deg if inclination_deg <= 90.0 else 180.0 - inclination_deg
    assert lat.max() == pytest.approx(expected, abs=0.1)
    assert lat.min() == pytest.approx(-expected, abs=0.1)


# --------------------------------------------------------- slant range geometry


def slant_range_km(R, r, elevation_deg):
    """Maral & Bousquet: d = sqrt(r^2 - R^2 cos^2 eps) - R sin eps, r = R + h."""
    e = np.radians(elevation_deg)
    return np.sqrt(r * r - (R * np.cos(e)) ** 2) - R * np.sin(e)


def central_angle_rad(R, r, elevation_deg):
    """Maral & Bousquet: lambda = arccos(R cos eps / r) - eps."""
    e = np.radians(elevation_deg)
    return np.arccos(R * np.cos(e) / r) - e


def test_slant_range_formula_value():
    # 550 km at 25 deg: about 1,123 km (from memory); recomputed by hand:
    # sqrt(6928.137^2 - (6378.137 cos 25)^2) - 6378.137 sin 25 = 3818.94 - 2695.51.
    assert slant_range_km(R_EQ, R_EQ + 550.0, 25.0) == pytest.approx(1123.4, abs=0.5)
    # Limits: at the zenith the range is the altitude; at 0 deg the tangent length.
    assert slant_range_km(R_EQ, R_EQ + 550.0, 90.0) == pytest.approx(550.0, abs=1e-9)
    assert slant_range_km(R_EQ, R_EQ + 550.0, 0.0) == pytest.approx(
        math.sqrt((R_EQ + 550.0) ** 2 - R_EQ**2), abs=1e-9)


@pytest.mark.parametrize("elevation_deg", [0.0, 10.0, 25.0, 40.0, 60.0, 89.0])
@pytest.mark.parametrize("altitude_km", [340.0, 550.0, 1200.0])
def test_coverage_angle_and_law_of_cosines(elevation_deg, altitude_km):
    R, r = R_EQ, R_EQ + altitude_km
    lam = coverage_angle_rad(elevation_deg, R, np.array([r, r + 100.0]))
    assert lam[0] == pytest.approx(central_angle_rad(R, r, elevation_deg), abs=1e-12)
    assert lam[1] == pytest.approx(central_angle_rad(R, r + 100.0, elevation_deg), abs=1e-12)
    # The triangle Earth centre - site - satellite: law of cosines with the central
    # angle gives the same range as the slant-range formula.
    d_cos = math.sqrt(R * R + r * r - 2 * R * r * math.cos(lam[0]))
    assert d_cos == pytest.approx(slant_range_km(R, r, elevation_deg), rel=1e-9)
    # And the angles of that triangle add up: (90 + eps) + lambda + nadir angle = 180,
    # with the nadir angle from the law of sines: sin(eta) = R cos(eps) / r.
    eta = math.asin(R * math.cos(math.radians(elevation_deg)) / r)
    assert math.degrees(lam[0]) + elevation_deg + math.degrees(eta) == pytest.approx(90.0, abs=1e-9)


def geocentric_radius_km(lat_deg):
    """Distance from the Earth's centre to the WGS84 ellipsoid at geodetic latitude
    phi: R^2 = ((a^2 cos phi)^2 + (b^2 sin phi)^2) / ((a cos phi)^2 + (b sin phi)^2)."""
    a, b = R_EQ, R_EQ * (1 - FLATTENING)
    c, s = math.cos(math.radians(lat_deg)), math.sin(math.radians(lat_deg))
    return math.sqrt(((a * a * c) ** 2 + (b * b * s) ** 2) / ((a * c) ** 2 + (b * s) ** 2))


def vertical_deflection_deg(lat_deg):
    """Geodetic minus geocentric latitude: tan(psi) = (1 - f)^2 tan(phi)."""
    phi = math.radians(lat_deg)
    return math.degrees(phi - math.atan((1 - FLATTENING) ** 2 * math.tan(phi)))


@pytest.mark.parametrize("minutes_after_epoch", [0.0, 10.0, 20.0])
def test_tracks_range_matches_slant_range_on_a_zenith_pass(minutes_after_epoch):
    """Put the observer under the satellite (sub-point from skyfield) and compare
    compute_tracks' range with the spherical formula, using the site's
    geocentric radius for R and the satellite's SGP4 distance from the Earth's
    centre for R + h (SGP4's circular orbit varies by +-6 km in radius, which
    would move the range by ~10 km; so the nominal altitude is not used).

    What is left is the ellipsoid: elevation is measured from the geodetic
    horizon, whose vertical is tilted from the geocentric radius by
    delta = geodetic - geocentric latitude (0 at the equator, 0.19 deg at 45
    deg).  At 25 deg elevation the range changes by ~29 km per degree, so the
    difference can reach ~5.5 km; we bracket the range between the formula at
    eps - delta and eps + delta (plus 0.1 km), and require < 6 km overall.
    At 0 minutes the sub-point is on the equator: there the formula is exact
    (0.05 km, float32 storage and a 0.08 deg latitude)."""
    sat_fleet = walker_fleet([Shell("one", 550.0, 53.0, 1, 1, 0)], EPOCH, "test")
    sat = sat_fleet.satrecs[0]
    ts = load.timescale(builtin=True)
    when = EPOCH + timedelta(minutes=minutes_after_epoch)
    sub = wgs84.subpoint_of(EarthSatellite.from_satrec(sat, ts).at(ts.from_datetime(when)))
    lat, lon = sub.latitude.degrees, sub.longitude.degrees
    window = WindowSpec(when - timedelta(minutes=12), 24.0 / 60.0, 1.0)
    tracks = compute_tracks(sat_fleet, Observer(lat, lon, 0.0), window, Terminal(min_elevation_deg=0.0))
    assert tracks.el_deg.max() > 89.0  # zenith pass

    t_min = minutes_after_epoch - 12.0 + tracks.time_index * window.step_s / 60.0
    r, _ = propagate(sat, t_min)
    r_sat = np.linalg.norm(r, axis=1)
    R = geocentric_radius_km(lat)
    el = tracks.el_deg.astype(float)
    rng = tracks.range_km.astype(float)
    near = np.abs(el - 25.0) < 1.0
    assert near.sum() >= 10  # both legs of the pass
    d = slant_range_km(R, r_sat, el)
    delta = abs(vertical_deflection_deg(lat))
    if delta < 0.1:
        assert np.abs(rng - d).max() < 0.05
    lo = slant_range_km(R, r_sat[near], el[near] + delta) - 0.1
    hi = slant_range_km(R, r_sat[near], el[near] - delta) + 0.1
    assert np.all((lo <= rng[near]) & (rng[near] <= hi))
    assert np.abs(rng[near] - d[near]).max() < 6.0
