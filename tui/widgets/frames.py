"""The names the drawings give the four main directions: N E S W for a fixed
site (true azimuths), and, for a vehicle's or vessel's body frame (README,
"Moving installs"), where the bearings are taken clockwise from the bow or
the front, the boat's or the vehicle's own sides."""

from __future__ import annotations

__all__ = ["COMPASS", "VEHICLE", "VESSEL", "axis_names", "front_word", "in_body_frame"]

COMPASS = {0: "N", 90: "E", 180: "S", 270: "W"}
VESSEL = {0: "bow", 90: "stbd", 180: "stern", 270: "port"}
VEHICLE = {0: "front", 90: "right", 180: "rear", 270: "left"}


def in_body_frame(site) -> bool:
    """Whether the site's horizon and sky figures are in the body frame: a
    vehicle or vessel with a ``[platform]`` table (its tracks are turned into
    the body frame by the engine)."""
    return site is not None and getattr(site, "platform", None) is not None


def axis_names(site=None, body: bool | None = None) -> dict[int, str]:
    """{0, 90, 180, 270: name} for ``site``'s figures (``body`` overrides)."""
    if not (in_body_frame(site) if body is None else body):
        return COMPASS
    return VESSEL if site is not None and site.mount.kind == "marine" else VEHICLE


def front_word(site) -> str:
    """'bow' for a vessel, 'front' for a vehicle."""
    return "bow" if site is not None and site.mount.kind == "marine" else "front"
