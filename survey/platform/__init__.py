"""Moving installs: vehicles and vessels (README, "Moving installs").

``model`` reads the ``[platform]`` table, ``route`` the GPX track, ``frames``
turns true directions into the body frame, ``moving`` computes the sky tracks
for a moving observer, ``body`` gives the figures with the same definitions as
a fixed site.  The pipeline calls :func:`platform_tracks` and
:func:`assess_platform`; nothing here imports the pipeline.
"""

from .body import SECTORS, PlatformRun, assess_platform, platform_dict, route_down
from .model import CANYONS, SEA_STATES, Attitude, Canyon, Platform, Route, platform_from_site, platform_table
from .moving import platform_tracks, route_window, sky_terminal
from .route import read_route

__all__ = ["Attitude", "assess_platform", "Canyon", "CANYONS", "Platform", "platform_dict", "platform_from_site",
           "platform_table", "platform_tracks", "PlatformRun", "read_route", "Route", "route_down", "route_window",
           "SEA_STATES", "SECTORS", "sky_terminal"]
