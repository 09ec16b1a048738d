"""What the sky figures take in, checked and put in order: the track samples
(azimuth, elevation, blocked), the seconds each stands for, and the horizon
mask.  Angles in degrees; azimuth clockwise from true north."""

from __future__ import annotations

import numpy as np


def samples(az_deg, el_deg, blocked):
    """Finite (az, el, blocked) sample arrays (float32, float32, bool), az in
    [0, 360), el in [0, 90]; ``blocked`` None: none blocked."""
    az = np.asarray(az_deg, dtype=np.float32).ravel()
    el = np.asarray(el_deg, dtype=np.float32).ravel()
    blk = (np.zeros(az.shape, bool) if blocked is None
           else np.asarray(blocked, dtype=bool).ravel())
    if not (az.shape == el.shape == blk.shape):
        raise ValueError("az_deg, el_deg and blocked must have the same length")
    ok = np.isfinite(az) & np.isfinite(el)
    if not ok.all():
        az, el, blk = az[ok], el[ok], blk[ok]
    return np.mod(az, 360.0), np.clip(el, 0.0, 90.0), blk


def sample_weight(weight_s) -> float:
    """Seconds of time each sample stands for (ValueError unless positive)."""
    weight_s = float(weight_s)
    if not weight_s > 0:
        raise ValueError("weight_s must be positive")
    return weight_s


def mask_arrays(mask_az_deg, mask_el_deg):
    """Mask samples sorted by azimuth in [0, 360), elevations clipped to 0..90;
    no finite sample: a clear horizon."""
    m_az = np.asarray(mask_az_deg, dtype=np.float64).ravel()
    m_el = np.clip(np.asarray(mask_el_deg, dtype=np.float64).ravel(), 0.0, 90.0)
    if m_az.shape != m_el.shape:
        raise ValueError("mask_az_deg and mask_el_deg must have the same length")
    ok = np.isfinite(m_az) & np.isfinite(m_el)
    m_az, m_el = m_az[ok], m_el[ok]
    if m_az.size == 0:
        return np.array([0.0, 180.0]), np.zeros(2)
    order = np.argsort(np.mod(m_az, 360.0), kind="stable")
    return np.mod(m_az, 360.0)[order], m_el[order]
