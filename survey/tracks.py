"""Sky tracks: where every satellite of a fleet stands in the observer's sky.

Propagation is SGP4 (``sgp4`` package, Vallado et al. 2006).  TEME positions are
turned into the Earth-fixed frame with the GMST1982 rotation, the same TEME ->
ITRS path skyfield uses (AIAA 2006-6753 Appendix C), polar motion neglected as
skyfield does with its builtin timescale; the observer is a WGS84 geodetic point
(skyfield ``wgs84``).  Azimuth and elevation are in the local geodetic frame
(east, north, up), without refraction.

Speed comes from culling, not from a faster propagator.  The central angle psi
between the observer's geocentric direction and a satellite changes no faster
than the satellite's angular rate plus the Earth's spin, and a satellite can be
above the minimum elevation only while psi is inside the Earth central angle of
coverage; and psi is never less than the site's angular distance from the
satellite's orbit plane, which the mean elements give at no propagation cost.
So: (A) SGP4 on coarse nodes ~20 min apart, only where the orbit plane can come
within reach of the site;
(B) cubic Hermite interpolation of those states on a ~2 min grid, culled with
the psi bound widened by the Hermite error bound; (C) SGP4 on a ~1 min grid only
where a satellite may be visible, culled again exactly; (D) Hermite
interpolation of the 1-min SGP4 states onto the user's step (error well below a
metre in LEO) and exact topocentric geometry.  The work grows with the samples
near visibility, not with all samples.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from datetime import datetime, timedelta, timezone

import numpy as np

from .constellation import MU_KM3_S2, Fleet, julian_date_utc
from .site import Terminal
from .window import WindowSpec

EARTH_SPIN_RAD_S = 7.2921150e-5  # WGS84 nominal mean angular velocity
CHUNK_POINTS = 12_000_000  # satellites x sub-grid points per chunk: bounds memory
D_BLOCK = 16384  # fine samples interpolated at once, likewise
B_BLOCK = 2048  # coarse intervals interpolated at once: keeps temporaries in cache


@dataclass(frozen=True)
class Observer:
    """A WGS84 geodetic point; ``height_m`` above the ellipsoid (antenna height)."""

    latitude_deg: float
    longitude_deg: float
    height_m: float


@dataclass
class SkyTracks:
    """Visible samples, one entry each, sorted by time index then satellite.

    ``time_index`` k stands for ``window.start + k * window.step_s``.  Only samples
    at or above the terminal's minimum elevation and inside its field-of-view cone
    (if set) are kept: these are the *usable sky* samples."""

    sat: np.ndarray  # int32, index into fleet
    time_index: np.ndarray  # int32
    az_deg: np.ndarray  # float32, true azimuth
    el_deg: np.ndarray  # float32
    range_km: np.ndarray  # float32
    window: WindowSpec
    fleet: Fleet
    observer: Observer
    terminal: Terminal
    propagated: int = 0  # SGP4 evaluations spent, for the benchmark
    failed_sats: int = 0  # satellites for which SGP4 reported an error (decayed, ...)

    @property
    def count(self) -> int:
        return self.window.count

    def __len__(self) -> int:
        return int(self.sat.size)


def builtin_timescale():
    """skyfield's builtin timescale (bundled IERS Delta T and leap seconds; never
    downloads), the same object as ``load.timescale(builtin=True)``.

    Built here from skyfield's bundled arrays exactly as its loader does, because
    importing the loader also imports skyfield's download machinery (HTTP, SSL),
    a fifth of a one-site run's start-up.  Any change in skyfield's internals
    falls back to the public call; a test checks both agree."""
    try:
        from skyfield.functions import load_bundled_npy
        from skyfield.timelib import Timescale

        arrays = load_bundled_npy("iers.npz")
        daily_tt = arrays["tt_jd_minus_arange"] + np.arange(len(arrays["tt_jd_minus_arange"]))
        daily_delta_t = (arrays["delta_t_1e7"] / 1e7).round(7)
        return Timescale((daily_tt, daily_delta_t), arrays["leap_dates"], arrays["leap_offsets"])
    except (ImportError, KeyError, AttributeError, TypeError, ValueError, OSError):
        from skyfield.api import load

        return load.timescale(builtin=True)


def sample_times(window: WindowSpec):
    """UTC Julian dates (whole, fraction) of every sample, and the GMST1982 angle
    (radians) at each, from skyfield's builtin timescale (no downloads)."""
    from skyfield.sgp4lib import theta_GMST1982

    ts = builtin_timescale()
    n = window.count
    offs = np.arange(n, dtype=np.float64) * window.step_s
    start = window.start.astimezone(timezone.utc)
    t = ts.utc(start.year, start.month, start.day, start.hour, start.minute,
               start.second + start.microsecond * 1e-6 + offs)
    theta, _ = theta_GMST1982(t.whole, t.ut1_fraction)
    # SGP4 takes UTC Julian dates (element-set epochs are UTC), as skyfield
    # passes them: split into a whole day and a fraction for precision.
    jd0 = julian_date_utc(start)
    whole0 = math.floor(jd0 - 0.5) + 0.5
    frac = (jd0 - whole0) + offs / 86400.0
    return np.full(n, whole0), frac, np.broadcast_to(np.asarray(theta, dtype=np.float64), (n,)).copy()


def observer_frame(obs: Observer):
    """Observer's ITRS position (km) and the rows of the ITRS -> (east, north, up)
    rotation, from the WGS84 geodetic latitude and longitude."""
    from skyfield.toposlib import wgs84

    pos = wgs84.latlon(obs.latitude_deg, obs.longitude_deg, elevation_m=obs.height_m).itrs_xyz.km
    lat, lon = math.radians(obs.latitude_deg), math.radians(obs.longitude_deg)
    sl, cl, so, co = math.sin(lat), math.cos(lat), math.sin(lon), math.cos(lon)
    enu = np.array([[-so, co, 0.0], [-sl * co, -sl * so, cl], [cl * co, cl * so, sl]])
    return np.asarray(pos, dtype=np.float64), enu


def _teme_to_itrs(r: np.ndarray, theta: np.ndarray) -> np.ndarray:
    """Rotate TEME vectors (M,3) about z by GMST1982 theta (M,) into ITRS (PEF)."""
    c, s = np.cos(theta), np.sin(theta)
    out = np.empty_like(r)
    out[:, 0] = c * r[:, 0] + s * r[:, 1]
    out[:, 1] = -s * r[:, 0] + c * r[:, 1]
    out[:, 2] = r[:, 2]
    return out


def coverage_angle_rad(elevation_deg: float, site_radius_km: float, orbit_radius_km: np.ndarray) -> np.ndarray:
    """Earth central angle between an observer and a satellite seen at the given
    elevation, spherical Earth: lambda = arccos(R cos(eps) / r) - eps
    (Maral & Bousquet, Satellite Communications Systems, ch. 2)."""
    eps = math.radians(elevation_deg)
    return np.arccos(np.clip(site_radius_km * math.cos(eps) / orbit_radius_km, -1.0, 1.0)) - eps


def _hermite(p0, v0, p1, v1, u, tau):
    """Cubic Hermite interpolation between two states (positions km, velocities
    km/s) at fraction u of an interval of tau seconds; arrays (M,3) and (M,)."""
    u = u[:, None]
    u2 = u * u
    u3 = u2 * u
    t = tau[:, None]
    return ((2 * u3 - 3 * u2 + 1) * p0 + (u3 - 2 * u2 + u) * t * v0
            + (3 * u2 - 2 * u3) * p1 + (u3 - u2) * t * v1)


def hermite_error_rad(omega_rad_s: np.ndarray, tau_s: float) -> np.ndarray:
    """Bound on the central-angle error of cubic Hermite interpolation of an orbit
    sampled every tau_s seconds.  The fourth derivative of each position component
    of a circular orbit is at most omega^4 r, so the remainder is at most
    r (omega tau)^4 / 384 (the Hermite error term; e.g. Burden & Faires,
    Numerical Analysis, cited from memory); x sqrt(3) for three components, x 2 for SGP4's short-period terms
    and eccentric orbits near perigee."""
    return 2.0 * math.sqrt(3.0) * (omega_rad_s * tau_s) ** 4 / 384.0


def _runs_from_intervals(sat, first, last):
    """Merge [first, last] sample-index intervals per satellite into disjoint runs."""
    order = np.lexsort((first, sat))
    sat, first, last = sat[order], first[order], last[order]
    if sat.size == 0:
        return sat, first, last
    # Offset by satellite so one running maximum serves every satellite.
    big = np.int64(1) << 40
    key_first = first + sat.astype(np.int64) * big
    key_last = last + sat.astype(np.int64) * big
    prev_end = np.maximum.accumulate(key_last)
    new = np.ones(sat.size, dtype=bool)
    new[1:] = key_first[1:] > prev_end[:-1]
    starts = np.flatnonzero(new)
    return sat[starts], first[starts], np.maximum.reduceat(last, starts)


def _expand_runs(sat, first, last, step):
    """Indices first, first+step, ... <= last, and last itself, for each run;
    returned as (sat, idx, run) sorted by run then index."""
    n = (last - first) // step + 1
    total = int(n.sum())
    run = np.repeat(np.arange(first.size), n)
    offs = np.arange(total) - np.repeat(np.cumsum(n) - n, n)
    idx = first[run] + offs * step
    tail = (last - first) % step != 0
    if np.any(tail):
        run = np.concatenate([run, np.flatnonzero(tail)])
        idx = np.concatenate([idx, last[tail]])
        order = np.lexsort((idx, run))
        run, idx = run[order], idx[order]
    return sat[run], idx, run


def _propagate_pairs(satrecs, sat, idx, jd, fr):
    """SGP4 TEME states of satellite sat[i] at sample idx[i] (pairs grouped by
    satellite); one vectorised sgp4 call per satellite, written in place."""
    n = sat.size
    r = np.empty((n, 3))
    v = np.empty((n, 3))
    e = np.zeros(n, dtype=np.uint8)
    if n == 0:
        return r, v, set()
    jd_p, fr_p = np.ascontiguousarray(jd[idx]), np.ascontiguousarray(fr[idx])
    cuts = np.flatnonzero(np.diff(sat)) + 1
    bounds = np.concatenate([[0], cuts, [n]]).tolist()
    for a, b in zip(bounds[:-1], bounds[1:]):
        sr = satrecs[int(sat[a])]
        try:
            # The compiled propagator fills our slices directly: sgp4_array would
            # allocate three arrays per satellite, which dominates at ~20 points each.
            sr._sgp4(jd_p[a:b], fr_p[a:b], e[a:b], r[a:b], v[a:b])
        except AttributeError:  # a pure-Python sgp4 build
            e[a:b], r[a:b], v[a:b] = sr.sgp4_array(jd_p[a:b], fr_p[a:b])
    failed = set(np.unique(sat[e != 0]).tolist())
    return r, v, failed


def _psi_teme(p_teme: np.ndarray, site_dir_teme: np.ndarray) -> np.ndarray:
    """Central angle (rad) between TEME positions and the site's geocentric unit
    vector in TEME at the same times (rotating the one site vector is cheaper
    than rotating every satellite)."""
    dot = np.einsum("...i,...i->...", p_teme, site_dir_teme)
    return np.arccos(np.clip(dot / np.sqrt(np.einsum("...i,...i->...", p_teme, p_teme)), -1.0, 1.0))


@dataclass(frozen=True)
class _Bounds:
    """Per-satellite culling bounds: omega (rad/s) bounds how fast the central
    angle psi can change; cap (rad) is the largest psi at which the satellite can
    stand above the minimum elevation."""

    omega: np.ndarray
    cap: np.ndarray


def _bounds(fleet: Fleet, terminal: Terminal, site_radius_km: float) -> _Bounds:
    n_rad_s = np.array([s.no_kozai for s in fleet.satrecs]) / 60.0
    ecc = np.clip(np.array([s.ecco for s in fleet.satrecs]), 0.0, 0.99)
    a_km = (MU_KM3_S2 / np.maximum(n_rad_s, 1e-9) ** 2) ** (1.0 / 3.0)
    # Keplerian angular rate peaks at perigee: n (1+e)^2 / (1-e^2)^1.5; +5% for
    # SGP4's short-period terms; plus the Earth's spin (the site moves under it).
    omega = 1.05 * n_rad_s * (1 + ecc) ** 2 / (1 - ecc**2) ** 1.5 + EARTH_SPIN_RAD_S
    # 0.5 deg of margin covers geodetic vs geocentric vertical (< 0.2 deg) and
    # the ellipsoid's radius change; the cap uses the orbit's highest radius.
    cap = coverage_angle_rad(max(terminal.min_elevation_deg - 0.5, 0.0), site_radius_km * 0.998,
                             a_km * (1 + ecc) * 1.01) + math.radians(0.5)
    return _Bounds(omega, cap)


def _lower_bound(psi_a, psi_b, omega, tau_s):
    """Least psi possible between two samples tau_s apart: psi moves at most
    omega rad/s, so it cannot dip below (psi_a + psi_b - omega tau) / 2."""
    return (psi_a + psi_b - omega * tau_s) * 0.5


PLANE_MARGIN_RAD = math.radians(0.5)  # osculating vs mean orbit plane (J2 short-period terms ~0.1 deg)


def _plane_reachable(fleet, bounds, jd, fr, site_teme, g, step):
    """(S, len(g)-1) bool: can the satellite's orbit plane come within the cap of
    the site during each coarse interval?  A satellite is never nearer the site
    than the site is to its orbit plane (psi >= |delta|), and the plane follows
    from the mean elements (inclination, node and its secular J2 rate, the same
    mean elements SGP4 starts from) at no propagation cost.  The angle delta
    moves with the Earth's spin plus the nodal drift.  Deep-space element sets
    (lunisolar terms move the plane) always pass."""
    sats = fleet.satrecs
    inc = np.array([s.inclo for s in sats])[:, None]
    node0 = np.array([s.nodeo for s in sats])[:, None]
    nodedot = np.array([s.nodedot for s in sats])[:, None]  # rad/min
    epoch = np.array([s.jdsatepoch + s.jdsatepochF for s in sats])[:, None]
    minutes = ((jd[g] + fr[g])[None, :] - epoch) * 1440.0
    node = node0 + nodedot * minutes
    si = np.sin(inc)
    # Orbit normal in TEME from inclination and node: (sin i sin O, -sin i cos O, cos i).
    st = site_teme[g]
    sin_delta = si * np.sin(node) * st[None, :, 0] - si * np.cos(node) * st[None, :, 1] + np.cos(inc) * st[None, :, 2]
    delta = np.abs(np.arcsin(np.clip(sin_delta, -1.0, 1.0)))
    rate = EARTH_SPIN_RAD_S + np.abs(nodedot[:, 0]) / 60.0
    tau = ((g[1:] - g[:-1]) * step)[None, :]
    ok = _lower_bound(delta[:, 1:], delta[:, :-1], rate[:, None], tau) <= (bounds.cap + PLANE_MARGIN_RAD)[:, None]
    deep = np.array([s.method != "n" for s in sats])
    ok[deep] = True
    return ok


def _cull_coarse(fleet, bounds, jd, fr, site_teme, step, f0, fb, report):
    """Passes (A) and (B): candidate [first, last] sample-index runs per satellite."""
    S, n_time = len(fleet), jd.size
    limit = bounds.cap + hermite_error_rad(bounds.omega, f0 * step)  # for interpolated psi
    site_teme32 = site_teme.astype(np.float32)
    nodes = np.arange(0, n_time, f0)
    if nodes[-1] != n_time - 1:
        nodes = np.append(nodes, n_time - 1)
    per_chunk = max(2, CHUNK_POINTS // max(S * (f0 // fb + 1), 1))
    n_chunks = max(1, math.ceil((nodes.size - 1) / per_chunk))
    sub = np.arange(0, f0 + 1, fb)  # sub-grid offsets inside one coarse interval
    evaluations = 0
    failed = np.zeros(S, dtype=bool)
    cand_sat, cand_first, cand_last = [], [], []
    for ci in range(n_chunks):
        # (A) every satellite on this chunk's coarse nodes.
        g = nodes[ci * per_chunk: (ci + 1) * per_chunk + 1]
        # Only the nodes of intervals whose orbit plane can reach the site.
        reach = _plane_reachable(fleet, bounds, jd, fr, site_teme, g, step)
        need = np.zeros((S, g.size), dtype=bool)
        need[:, :-1] |= reach
        need[:, 1:] |= reach
        ps, pj = np.nonzero(need)
        r = np.full((S, g.size, 3), np.nan)
        v = np.full((S, g.size, 3), np.nan)
        rr, vv, bad = _propagate_pairs(fleet.satrecs, ps, g[pj], jd, fr)
        r[ps, pj], v[ps, pj] = rr, vv
        evaluations += ps.size
        failed[list(bad)] = True
        psi = _psi_teme(r, site_teme[g][None, :, :])
        tau_j = ((g[1:] - g[:-1]) * step)[None, :]
        ks, kj = np.nonzero(_lower_bound(psi[:, 1:], psi[:, :-1], bounds.omega[:, None], tau_j)
                            <= bounds.cap[:, None])
        # (B) Hermite onto the sub-grid of each such interval, broadcast as
        # (interval, sub-point, xyz), in cache-sized blocks and in float32
        # (ample for culling: 1e-7 relative is under a metre).
        r32, v32 = r.astype(np.float32), v.astype(np.float32)
        for b0 in range(0, ks.size, B_BLOCK):
            bs, bj = ks[b0:b0 + B_BLOCK], kj[b0:b0 + B_BLOCK]
            L = g[bj + 1] - g[bj]
            offs = np.minimum(sub[None, :], L[:, None])  # the last interval may be short
            u = (offs / L[:, None]).astype(np.float32)[:, :, None]
            tau = (L * step).astype(np.float32)[:, None, None]
            u2 = u * u
            u3 = u2 * u
            p = ((2 * u3 - 3 * u2 + 1) * r32[bs, bj][:, None, :]
                 + (u3 - 2 * u2 + u) * tau * v32[bs, bj][:, None, :]
                 + (3 * u2 - 2 * u3) * r32[bs, bj + 1][:, None, :]
                 + (u3 - u2) * tau * v32[bs, bj + 1][:, None, :])
            psi_b = _psi_teme(p, site_teme32[g[bj][:, None] + offs])
            d_tau = (offs[:, 1:] - offs[:, :-1]) * step
            ok = _lower_bound(psi_b[:, 1:], psi_b[:, :-1], bounds.omega[bs][:, None], d_tau) \
                <= limit[bs][:, None]
            ii, kk = np.nonzero(ok & (d_tau > 0))
            cand_sat.append(bs[ii])
            cand_first.append(g[bj][ii] + offs[ii, kk])
            cand_last.append(g[bj][ii] + offs[ii, kk + 1])
        report(0.5 * (ci + 1) / n_chunks)
    if not cand_sat:
        empty = np.zeros(0, dtype=np.int64)
        return (empty, empty, empty), evaluations, failed
    runs = _runs_from_intervals(np.concatenate(cand_sat), np.concatenate(cand_first), np.concatenate(cand_last))
    return runs, evaluations, failed


def _refine(fleet, bounds, runs, jd, fr, site_teme, step, f1, exact_cull=True):
    """Pass (C): SGP4 states on the f1 grid inside the runs, then (if the window
    has intervals) an exact cull that keeps the node intervals that can reach the
    cap.  Returns the surviving runs and their nodes (sat, index, r, v)."""
    rs, rf, rl = runs
    ns, ni, nrun = _expand_runs(rs, rf, rl, f1)
    rc, vc, bad = _propagate_pairs(fleet.satrecs, ns, ni, jd, fr)
    if exact_cull and ns.size:
        psi = _psi_teme(rc, site_teme[ni])
        same = nrun[1:] == nrun[:-1]
        lower = _lower_bound(psi[1:], psi[:-1], bounds.omega[ns[1:]], (ni[1:] - ni[:-1]) * step)
        keep = np.flatnonzero(same & (lower <= bounds.cap[ns[1:]]))
        runs = _runs_from_intervals(ns[keep], ni[keep], ni[keep + 1])
        # The new runs lie on the node grid, so their nodes are a subset of these.
        sel = np.zeros(ns.size, dtype=bool)
        sel[keep] = True
        sel[keep + 1] = True
        nodes = (ns[sel], ni[sel], rc[sel], vc[sel])
    else:
        nodes = (ns, ni, rc, vc)
    return runs, nodes, ns.size, bad


def _topocentric(runs, nodes, theta, site, enu, step, terminal: Terminal):
    """Pass (D): every sample of each run, from its bracketing (C) nodes by cubic
    Hermite, to azimuth, elevation and range; returns the usable ones as
    (sat, time index, az_deg, el_deg, range_km)."""
    fs, fi, _ = _expand_runs(*runs, 1)
    ns, ni, rc, vc = nodes
    big = np.int64(1) << 32
    key_n = ns.astype(np.int64) * big + ni
    bore = None
    if terminal.scan_half_angle_deg is not None:
        tl, ta = math.radians(terminal.tilt_deg), math.radians(terminal.tilt_azimuth_deg)
        bore = np.array([math.sin(tl) * math.sin(ta), math.sin(tl) * math.cos(ta), math.cos(tl)])
        cos_half = math.cos(math.radians(terminal.scan_half_angle_deg))
    out = []
    for b0 in range(0, fs.size, D_BLOCK):  # blocks keep temporaries in cache
        bs, bi = fs[b0:b0 + D_BLOCK], fi[b0:b0 + D_BLOCK]
        # Bracketing nodes by (satellite, index) key; both lie in the sample's run.
        key_f = bs.astype(np.int64) * big + bi
        k = np.searchsorted(key_n, key_f, side="right") - 1
        k1 = np.where(key_n[k] == key_f, k, np.minimum(k + 1, ns.size - 1))
        tau = ((ni[k1] - ni[k]) * step).astype(np.float64)
        u = np.where(tau > 0, (bi - ni[k]) * step / np.where(tau > 0, tau, 1.0), 0.0)
        d = _teme_to_itrs(_hermite(rc[k], vc[k], rc[k1], vc[k1], u, tau), theta[bi]) - site
        e, n, up = d @ enu[0], d @ enu[1], d @ enu[2]
        rng = np.sqrt(e * e + n * n + up * up)
        el = np.degrees(np.arcsin(np.clip(up / np.where(rng > 0, rng, 1.0), -1.0, 1.0)))
        ok = (el >= terminal.min_elevation_deg) & np.isfinite(el)
        if bore is not None:
            ok &= (e * bore[0] + n * bore[1] + up * bore[2]) / rng >= cos_half
        out.append((bs[ok], bi[ok], np.degrees(np.arctan2(e[ok], n[ok])) % 360.0, el[ok], rng[ok]))
    if not out:
        return tuple(np.zeros(0) for _ in range(5))
    return tuple(np.concatenate(c) for c in zip(*out))


def compute_tracks(fleet: Fleet, observer: Observer, window: WindowSpec, terminal: Terminal,
                   progress=None) -> SkyTracks:
    """Usable-sky samples of every satellite in ``fleet`` over ``window``.

    Four passes (module notes): (A) SGP4 on coarse nodes where the orbit plane
    can come near the site;
    (B) cubic Hermite interpolation of those states onto a ~2 min grid, culled by
    the central-angle bound; (C) SGP4 on a ~1 min grid where a satellite may be
    visible, culled again exactly; (D) Hermite interpolation of (C) onto the
    user's step and exact topocentric geometry.

    ``progress``, if given, is called with a fraction 0..1 as work completes."""
    n_time, step = window.count, window.step_s
    S = len(fleet)
    report = progress or (lambda f: None)
    jd, fr, theta = sample_times(window)
    site, enu = observer_frame(observer)
    site_r = float(np.linalg.norm(site))
    # The site's direction in TEME at every sample: ITRS -> TEME is rot_z(-theta).
    c, sn = np.cos(theta), np.sin(theta)
    u0, u1, u2 = site / site_r
    site_teme = np.stack([c * u0 - sn * u1, sn * u0 + c * u1, np.full_like(c, u2)], axis=1)
    bounds = _bounds(fleet, terminal, site_r)

    # Grid factors in samples: f1 ~ 60 s for the SGP4 nodes of (C); fb = 2 f1 for
    # the interpolated culling grid of (B); f0 a multiple of fb spanning at most
    # 1.5 rad of orbit arc (so the Hermite bound stays a few degrees) and 24 min.
    f1 = max(1, int(round(60.0 / step)))
    fb = 2 * f1
    omega_max = float(bounds.omega.max()) if S else EARTH_SPIN_RAD_S
    f0 = fb * max(1, int(min(1440.0, 1.5 / omega_max) // (fb * step)))

    failed = np.zeros(S, dtype=bool)
    evaluations = 0
    if S == 0:
        empty = np.zeros(0, dtype=np.int64)
        runs = (empty, empty, empty)
    elif n_time == 1:  # a snapshot: nothing to cull, every satellite is one run
        runs = (np.arange(S), np.zeros(S, dtype=np.int64), np.zeros(S, dtype=np.int64))
    else:
        runs, evaluations, failed = _cull_coarse(fleet, bounds, jd, fr, site_teme, step, f0, fb, report)
    runs, nodes, n_nodes, bad = _refine(fleet, bounds, runs, jd, fr, site_teme, step, f1,
                                        exact_cull=n_time > 1)
    evaluations += n_nodes
    failed[list(bad)] = True
    report(0.8)
    sat, t, az, el, rng = _topocentric(runs, nodes, theta, site, enu, step, terminal)
    order = np.lexsort((sat, t))
    report(1.0)
    return SkyTracks(
        sat[order].astype(np.int32), t[order].astype(np.int32),
        az[order].astype(np.float32), el[order].astype(np.float32), rng[order].astype(np.float32),
        window, fleet, observer, terminal, int(evaluations), int(failed.sum()),
    )


def sample_time(window: WindowSpec, k: int) -> datetime:
    """UTC time of sample k."""
    return window.start.astimezone(timezone.utc) + timedelta(seconds=k * window.step_s)
