"""The engine's front door: what the text UI and scripts use.

A site in, figures out::

    from survey import api

    site = api.load_site("demo:alder-brook-farm")
    run = api.run_site(site)                    # window, fleet, declination, mask, tracks, figures
    print(api.pct(run.assessment.blocked_fraction), run.assessment.verdict)
    ranking = api.rank_spots(run)               # when the site has a plan
    api.write_report(run, "report.pdf", ranking=ranking)

Every name here is a stable part of the engine; the modules behind it own one
concept each (README, "Layout").  Nothing outside ``survey`` needs a private
(``_name``) engine symbol, and ``survey`` never imports the text UI.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from . import palette
from .angles import format_dms, parse_angle
from .batch.register import list_assessments, recorded_site
from .batch.results import read_results
from .cli import Command, add_run_options, check_run_args
from .cli import main as command_line
from .demos import DemoSite, bundled_demo, demo_sites, resolve_site_path
from .errors import InputError, Problems
from .evaluate import Evaluator
from .fileio import parse_toml, read_text
from .geometry import cone_edge, nice_ceil, nice_floor, points_in_polygon
from .horizon import HorizonMask, HorizonPoint, HorizonProfile, parse_point, read_horizon_csv
from .mask import combined_mask, measured_mask, site_declination, site_mask, site_photo_skyline
from .photo.points import photo_points
from .pipeline import FleetChoice, SiteRun, TrackCache, run_site
from .platform import SEA_STATES, platform_from_site, platform_table
from .platform import route_down as route_down_time
from .report import format_for, pole_text, recommendations, write_report
from .safety import notes_for, short_note, spot_note
from .site import MOUNT_KINDS, Mount, Schedule, Site, Terminal, load_site, parse_time, site_from_dict
from .sitefile import save_site
from .spots import horizon_at, rank_spots
from .terrain.advice import only_terrain
from .terrain.report import terrain_setup
from .window import WindowSpec, resolve_window, window_start
from .words import NBSP, azimuth, azimuth_span, duration, elevation, length, length_number, pct, utc

__all__ = [
    "combined_mask", "site_photo_skyline", "photo_points",
    "list_assessments", "read_results", "recorded_site",
    "length_number", "only_terrain", "terrain_setup",
    "measured_mask",
    "cone_edge", "nice_ceil", "nice_floor", "points_in_polygon",
    "add_run_options", "azimuth", "azimuth_span", "bundled_demo", "centroid", "check_run_args", "Command",
    "command_line", "compact_pct", "demo_sites", "DemoSite", "duration", "elevation", "Evaluator",
    "FleetChoice", "format_dms", "format_for", "horizon_at", "HorizonMask", "HorizonPoint", "HorizonProfile",
    "InputError", "length", "load_site", "Mount", "MOUNT_KINDS", "NBSP", "notes_for", "obstacle_shapes",
    "palette", "parse_angle", "parse_point", "parse_time", "parse_toml", "pct", "plan_cells",
    "plan_extent_points", "pole_text", "Problems", "rank_spots", "read_horizon_csv", "read_text",
    "recommendations", "resolve_site_path", "route_down_time", "SEA_STATES", "platform_from_site",
    "platform_table", "resolve_window", "run_site", "save_site", "Schedule",
    "short_note", "Site", "site_declination", "site_from_dict", "site_mask", "SiteRun", "spot_note",
    "spots_plan_inputs", "Terminal", "TrackCache", "utc", "window_start", "WindowSpec", "write_report",
]

if TYPE_CHECKING:
    from .figures import centroid, compact_pct, obstacle_shapes, plan_cells, plan_extent_points, spots_plan_inputs

# The figure helpers pull in Pillow: imported when first asked for, so the command
# line starts without them.
_FROM_FIGURES = ("centroid", "compact_pct", "obstacle_shapes", "plan_cells", "plan_extent_points", "spots_plan_inputs")


def __getattr__(name: str):
    if name in _FROM_FIGURES:
        from . import figures

        return getattr(figures, name)
    raise AttributeError(f"module 'survey.api' has no attribute {name!r}")
