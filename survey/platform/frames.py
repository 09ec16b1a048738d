"""Directions in the body frame of a vehicle or vessel, vectorised over samples.

The body frame: forward (bow or front), starboard, up through the deck.  A true
direction (azimuth clockwise from north, elevation above the horizon) goes to the
body frame by the heading (a turn about the vertical), then the pitch (about the
starboard axis, positive bow up), then the roll (about the forward axis,
positive starboard side down): the yaw-pitch-roll (z-y-x Tait-Bryan) order used
for ships and aircraft.  Body-frame azimuths are clockwise from the bow,
elevations above the deck plane.
"""

from __future__ import annotations

import numpy as np

from .model import Attitude, Canyon

RANDOM_SEA_COMPONENTS = 16  # sinusoids summed for a random sea
RANDOM_SEA_SEED = 15  # fixed: the same site gives the same figures every run


def to_body(az_deg, el_deg, heading_deg, pitch_deg=None, roll_deg=None):
    """(azimuth from the bow, elevation above the deck), degrees, of true
    directions; arrays broadcast.  With no pitch and roll the elevation is
    returned untouched (a level platform: exactly the true elevation)."""
    az_deg, el_deg = np.asarray(az_deg, dtype=np.float64), np.asarray(el_deg, dtype=np.float64)
    rel = np.radians(az_deg - heading_deg)
    if pitch_deg is None and roll_deg is None:
        return (az_deg - heading_deg) % 360.0, el_deg
    e = np.radians(el_deg)
    f, s, u = np.cos(e) * np.cos(rel), np.cos(e) * np.sin(rel), np.sin(e)
    th = np.radians(pitch_deg if pitch_deg is not None else 0.0)
    ph = np.radians(roll_deg if roll_deg is not None else 0.0)
    f1 = f * np.cos(th) + u * np.sin(th)  # bow up: a satellite ahead is lower above the deck
    u1 = u * np.cos(th) - f * np.sin(th)
    s2 = s * np.cos(ph) - u1 * np.sin(ph)  # starboard down: the deck normal leans to starboard
    u2 = s * np.sin(ph) + u1 * np.cos(ph)
    az_b = np.degrees(np.arctan2(s2, f1)) % 360.0
    el_b = np.degrees(np.arcsin(np.clip(u2, -1.0, 1.0)))
    return az_b, el_b


def in_cone(az_b_deg, el_b_deg, tilt_deg: float, tilt_azimuth_deg: float, half_angle_deg: float) -> np.ndarray:
    """Inside the field-of-view cone fixed to the deck: the boresight tilted
    ``tilt_deg`` from the deck normal toward ``tilt_azimuth_deg`` from the bow."""
    a, e = np.radians(az_b_deg), np.radians(el_b_deg)
    tl, ta = np.radians(tilt_deg), np.radians(tilt_azimuth_deg)
    dot = (np.cos(e) * np.cos(a) * np.sin(tl) * np.cos(ta) + np.cos(e) * np.sin(a) * np.sin(tl) * np.sin(ta)
           + np.sin(e) * np.cos(tl))
    return dot >= np.cos(np.radians(half_angle_deg))


def attitude_series(att: Attitude, t_s: np.ndarray) -> tuple[np.ndarray | None, np.ndarray | None]:
    """(pitch, roll) in degrees at each time (seconds from the window start);
    (None, None) for a level platform.  Roll includes the static heel."""
    if att.still:
        return None, None
    t = np.asarray(t_s, dtype=np.float64)
    if att.sea == "random":
        roll = _random_sea(att.roll_deg, att.roll_period_s, t, 0)
        pitch = _random_sea(att.pitch_deg, att.pitch_period_s, t, 1)
    else:
        roll = att.roll_deg * np.sin(2 * np.pi * t / att.roll_period_s)
        pitch = att.pitch_deg * np.sin(2 * np.pi * t / att.pitch_period_s + np.pi / 2)
    return pitch, roll + att.heel_deg


def _random_sea(significant_deg: float, period_s: float, t: np.ndarray, stream: int) -> np.ndarray:
    """A random sea: RANDOM_SEA_COMPONENTS sinusoids of equal amplitude a with
    periods spread over 0.7 to 1.4 times ``period_s`` and random phases (fixed
    seed).  Their variance is N a^2 / 2; the significant amplitude is two
    standard deviations, so a = significant / sqrt(2 N)."""
    if significant_deg == 0.0:
        return np.zeros_like(t)
    n = RANDOM_SEA_COMPONENTS
    rng = np.random.default_rng([RANDOM_SEA_SEED, stream])
    periods = period_s * np.linspace(0.7, 1.4, n)
    phases = rng.uniform(0.0, 2 * np.pi, n)
    a = significant_deg / np.sqrt(2.0 * n)
    return a * np.sin(2 * np.pi * t[:, None] / periods[None, :] + phases[None, :]).sum(axis=1)


def canyon_elevation_deg(alpha_deg, canyon: Canyon, antenna_height_m: float) -> np.ndarray:
    """The street-canyon mask: el(a) = atan((H - h) |sin a| / (W / 2)), degrees;
    0 where the antenna is above the roadside (H <= h)."""
    rise = max(canyon.height_m - antenna_height_m, 0.0)
    return np.degrees(np.arctan(rise * np.abs(np.sin(np.radians(alpha_deg))) / (canyon.width_m / 2.0)))
