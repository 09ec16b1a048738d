"""The site-plan model: obstacles and candidate mounting spots of one site, as
frozen dataclasses, and the limits every plan keeps (DEVELOPERS.md, "Spot search").

A plan is drawn in local metres east and north of the site point (the survey
point where the horizon was measured), either as TOML tables (read_toml.py) or
as GeoJSON (read_geojson.py).

Obstacles: buildings (footprint, eaves height, optional ridge for a gable roof),
trees (a vertical cylinder of the crown radius up to the top height; the crown
radius stays fixed as a tree grows), walls and fences (polyline, height), other
prisms (polygon, height), and skylines made from measured horizon points that
carry a distance.  Candidates: mounting areas (polygon at an antenna height),
poles (position, height range) and fixed points.

Assumptions, said once: the ground is flat and level (all heights are above the
site point's ground; over the 2 km plan radius the Earth's curvature drops a
point by d^2/2R, 0.3 m at 2 km, which is neglected), and obstacles are opaque.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

PLAN_RADIUS_M = 2000.0  # coordinates farther than this from the site point are a mistake
MAX_HEIGHT_M = 500.0

XY = tuple[float, float]


@dataclass(frozen=True)
class Building:
    """A building: footprint ring (metres east, north; not closed), eaves height.
    With ``ridge`` (two points) and ``ridge_height_m`` the roof is a gable roof:
    two planes meeting along the line through the ridge points, each falling to
    ``height_m`` at the footprint corner farthest from that line on its side
    (exact for a rectangle with the ridge parallel to two sides)."""

    name: str
    footprint: tuple[XY, ...]
    height_m: float
    ridge: tuple[XY, XY] | None = None
    ridge_height_m: float | None = None


@dataclass(frozen=True)
class Tree:
    """A tree as a vertical cylinder: crown radius about ``at``, up to ``height_m``.
    Growth raises the top by ``growth_m_per_year`` a year; the crown radius is kept."""

    name: str
    at: XY
    crown_radius_m: float
    height_m: float
    growth_m_per_year: float = 0.0

    def height_after(self, years: float) -> float:
        return self.height_m + self.growth_m_per_year * years


@dataclass(frozen=True)
class Wall:
    """A wall or fence: a polyline with a constant top height (no thickness)."""

    name: str
    line: tuple[XY, ...]
    height_m: float


@dataclass(frozen=True)
class Prism:
    """Any other solid: a polygon extruded to a flat top at ``height_m``."""

    name: str
    polygon: tuple[XY, ...]
    height_m: float


@dataclass(frozen=True)
class Skyline:
    """A vertical panel from ``start`` to ``end`` whose top height varies linearly
    from ``start_height_m`` to ``end_height_m``: how measured horizon points with
    a distance become obstacles (see :func:`measured_obstacles`)."""

    name: str
    start: XY
    end: XY
    start_height_m: float
    end_height_m: float


@dataclass(frozen=True)
class Area:
    """A mounting area (a roof plane, a flat roof, a yard): candidate points inside
    ``polygon`` with the antenna ``height_m`` above ground."""

    name: str
    polygon: tuple[XY, ...]
    height_m: float


@dataclass(frozen=True)
class Pole:
    """A pole position with the range of heights it may have (antenna above ground)."""

    name: str
    at: XY
    min_height_m: float
    max_height_m: float


@dataclass(frozen=True)
class FixedPoint:
    """A single candidate spot, e.g. a chimney bracket: position and antenna height."""

    name: str
    at: XY
    height_m: float


@dataclass(frozen=True)
class Plan:
    """Obstacles and candidates of one site, in metres east/north of the site point."""

    buildings: tuple[Building, ...] = ()
    trees: tuple[Tree, ...] = ()
    walls: tuple[Wall, ...] = ()
    prisms: tuple[Prism, ...] = ()
    areas: tuple[Area, ...] = ()
    poles: tuple[Pole, ...] = ()
    points: tuple[FixedPoint, ...] = ()
    skylines: tuple[Skyline, ...] = ()
    source: str = ""  # the file the plan was read from

    @property
    def has_obstacles(self) -> bool:
        return bool(self.buildings or self.trees or self.walls or self.prisms or self.skylines)

    @property
    def has_candidates(self) -> bool:
        return bool(self.areas or self.poles or self.points)

    def with_skylines(self, skylines) -> Plan:
        """The same plan with ``skylines`` (from measured points) added."""
        return replace(self, skylines=self.skylines + tuple(skylines))
