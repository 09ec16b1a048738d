"""Pillow figures: the sky plot, the horizon panorama, the outage timeline and
the site plan for spot search, one concept a module:

- colours come from ``survey/palette.py`` (the one place colours live);
- ``canvas``: the drawing surface (``Sheet``), fonts and text, dashes,
  hatching, nice-number ticks, PNG encoding; ``labels``: label placement and
  the compact numbers labels use; ``legend``: swatches and legend rows;
- ``samples`` and ``density``: track samples and masks checked, and the track
  density shading the sky plot and the panorama share;
- ``sky``, ``panorama``, ``timeline``: one figure each; ``plan`` with
  ``plan_shapes`` (inputs), ``plan_layout`` (where things go) and
  ``plan_labels``: the site plan;
- ``from_run``: each figure of an assessed site (``pipeline.SiteRun``).

Each figure takes plain arrays and values and returns a ``PIL.Image.Image``;
:func:`encode_png` returns bytes; writing files is left to the caller.  A
figure is a frame (where its plot sits, public so tests can find it), a few
layers drawn in order on a :class:`~survey.figures.canvas.Sheet`, a legend
and a caption.  All share one visual language: hatched grey obstructions
(readable in black-and-white print), Okabe & Ito hues chosen for meaning,
text sized in 1/1000ths of the image width so it prints legibly at about
150 mm.  Values written in captions take survey/words.py's forms.
"""

from ..palette import BLUE, BLUISH_GREEN, DOWN_BAR, ORANGE, REDDISH_PURPLE, SKY_BLUE, VERMILLION, YELLOW
from ..words import duration
from .canvas import encode_png, indexed_for_print
from .from_run import (
    derived_horizon_png,
    heading_chart_for_run,
    horizon_panorama_for_run,
    outage_timeline_for_run,
    plan_obstacles,
    route_map_for_run,
    sky_plot_for_run,
    sky_plot_png,
    spots_plan_figure,
    spots_plan_inputs,
    terrain_panorama_png,
)
from .labels import compact_pct
from .panorama import PanoramaFrame, horizon_panorama, panorama_frame, panorama_xy
from .plan import plan_figure
from .plan_layout import PlanFrame, PlanLayout, plan_layout, plan_xy
from .plan_shapes import ObstacleShape, centroid, obstacle_shapes, plan_cells, plan_extent_points
from .sky import PlotFrame, plot_frame, project, sky_plot
from .timeline import TimelineFrame, outage_timeline, outage_timeline_frame

__all__ = [
    # figures and their frames
    "sky_plot", "plot_frame", "PlotFrame", "project",
    "horizon_panorama", "panorama_frame", "panorama_xy", "PanoramaFrame",
    "outage_timeline", "outage_timeline_frame", "TimelineFrame",
    "plan_figure", "plan_layout", "plan_xy", "PlanFrame", "PlanLayout",
    "encode_png",
    "indexed_for_print",
    # from an assessed site
    "sky_plot_for_run", "sky_plot_png", "horizon_panorama_for_run", "outage_timeline_for_run",
    "derived_horizon_png", "heading_chart_for_run", "route_map_for_run", "terrain_panorama_png", "spots_plan_figure",
    "spots_plan_inputs", "plan_obstacles",
    # what the text UI draws with
    "BLUE", "SKY_BLUE", "VERMILLION", "ORANGE", "REDDISH_PURPLE", "BLUISH_GREEN", "YELLOW", "DOWN_BAR",
    "duration", "compact_pct", "ObstacleShape", "obstacle_shapes", "plan_cells", "plan_extent_points",
    "centroid",
]
