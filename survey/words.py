"""How a figure is written: one format for each kind of value, used by the
report, the command line and the text UI.

A number and its unit are joined by a no-break space (U+00A0), so a line or a
table cell never breaks between them ("5.1 %" stays on one line).  One
precision per kind of value: percentages to one decimal unless a caller asks
for more, azimuths and elevations to 0.1 degree, lengths to the centimetre
("9.0 m", "2.25 m": pole heights come in 0.25 m steps).
"""

from __future__ import annotations

from datetime import datetime, timezone

NBSP = "\u00a0"


def pct(x, digits: int = 1) -> str:
    """A fraction as a percentage ("n/a" when undefined)."""
    return "n/a" if x is None else f"{100 * x:.{digits}f}{NBSP}%"


def azimuth(deg: float) -> str:
    """A bearing in degrees, 0.1 degree (0 to 359.9)."""
    return f"{deg % 360.0:.1f}°"


def elevation(deg: float) -> str:
    """An elevation angle in degrees, 0.1 degree."""
    return f"{deg:.1f}°"


def azimuth_span(from_deg: float, to_deg: float) -> str:
    """A sector clockwise from one bearing to another ("350.0°–12.5°")."""
    return f"{azimuth(from_deg)}–{azimuth(to_deg)}" if to_deg - from_deg < 360.0 else "all round"


def length_number(metres: float) -> str:
    """A length in metres as a number: to the centimetre, with one decimal at
    least and no second decimal that is zero ("9.0", "6.5", "2.25")."""
    text = f"{metres:.2f}"
    return text[:-1] if text.endswith("0") else text


def length(metres: float) -> str:
    """A length with its unit ("9.0 m", "2.25 m"): see length_number."""
    return f"{length_number(metres)}{NBSP}m"


def duration(seconds: float) -> str:
    """A duration: seconds below 90 s, minutes (0.1) below 90 min, else hours (0.1)."""
    seconds = float(seconds)
    if seconds < 90:
        return f"{seconds:.0f}{NBSP}s"
    if seconds < 5400:
        return f"{seconds / 60:.1f}{NBSP}min"
    return f"{seconds / 3600:.1f}{NBSP}h"


def utc(dt: datetime) -> str:
    """An instant as UTC to the minute."""
    return dt.astimezone(timezone.utc).strftime("%Y-%m-%d %H:%M UTC")


def coordinates(lat: float, lon: float) -> str:
    """Latitude and longitude in decimal degrees, hemisphere letters, datum."""
    return (f"{abs(lat):.5f}° {'N' if lat >= 0 else 'S'}, "
            f"{abs(lon):.5f}° {'E' if lon >= 0 else 'W'} (WGS84)")


def window(start: datetime, hours: float, step_s: float) -> str:
    """A time window: its start, length and sample step."""
    return f"{utc(start)}, {hours:g}{NBSP}h at {step_s:g}{NBSP}s steps"
