"""Terminal drawings for the text UI, and thin Textual widgets that show them.

Each drawing is a pure function returning a ``rich.text.Text`` of exactly the
requested width x height character cells (lines joined with "\\n"), drawn from
plain data or a ``pipeline.SiteRun``:

- :func:`~tui.widgets.skychart.sky_chart`: the polar sky view (zenith at the
  centre, north up, east right), track density, blocked tracks, obstruction;
- :func:`~tui.widgets.profile.horizon_profile`: the horizon unrolled, azimuth
  0..360 along x, the obstruction in eighth blocks;
- :func:`~tui.widgets.timeline.outage_strip`: one row per UTC day, when the
  link is down;
- :func:`~tui.widgets.planchart.plan_chart`: the site from above, candidate
  spots shaded by blocked fraction.

They share the visual language of ``survey/render.py`` (the Pillow figures):
Okabe & Ito (2008) hues with the same meanings (blue clear tracks,
vermillion/orange blocked tracks, grey plus a hatch glyph for obstructions, a
dashed minimum-elevation ring, reddish purple for the field of view), and every
meaning is also carried by the glyph's shape, so ``colour=False`` output (no
style at all) reads on a monochrome terminal or a laptop screen in sunlight.

Terminal cells are taken to be twice as tall as wide (aspect 1:2, width:height):
one row spans the same distance as two columns, so circles stay round and the
plan keeps one scale east and north.

The shared pieces (a character canvas, the palette as rich styles, the widget
base class) live in :mod:`tui.widgets.drawing`; this package only gathers the
drawings.
"""

from __future__ import annotations

from .drawing import Canvas, DrawingWidget, colour_allowed, message_text
from .planchart import PlanChart, plan_chart, plan_chart_for
from .profile import HorizonProfile, horizon_profile
from .skychart import SkyChart, sky_chart, sky_chart_from
from .timeline import OutageStrip, outage_strip

__all__ = [
    "sky_chart", "sky_chart_from", "SkyChart",
    "horizon_profile", "HorizonProfile",
    "outage_strip", "OutageStrip",
    "plan_chart", "plan_chart_for", "PlanChart",
    "Canvas", "DrawingWidget", "colour_allowed", "message_text",
]
