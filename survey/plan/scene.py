"""A plan compiled for ray casting (the Scene): every obstacle reduced to
vertical panels whose top height is linear along them, tree cylinders, and the
solid footprints with their roofs (DEVELOPERS.md, "Spot search")."""

from __future__ import annotations

import math

import numpy as np
import shapely

from .model import PLAN_RADIUS_M, XY, Building, Plan


class Scene:
    """A plan compiled into arrays for the derived-horizon kernel: panels (P, Q,
    top heights at P and Q), tree cylinders, and solid footprints (for an antenna
    standing inside one)."""

    def __init__(self, plan: Plan):
        self.plan = plan
        P, Q, hP, hQ = [], [], [], []
        self.panel_names: list[str] = []  # the obstacle each panel belongs to (labels sectors)
        owner = [""]

        def panel(a, b, ha, hb):
            if a != b:
                P.append(a), Q.append(b), hP.append(ha), hQ.append(hb)
                self.panel_names.append(owner[0])

        self.solids = []  # (shapely polygon, roof height function)
        for b in plan.buildings:
            owner[0] = b.name
            roof = _roof_function(b)
            ring = list(b.footprint)
            for a, c in zip(ring, ring[1:] + ring[:1]):
                if b.ridge is not None:
                    da, dc = roof.signed(a), roof.signed(c)
                    if da * dc < 0:  # the edge crosses the ridge line: the gable's apex
                        f = da / (da - dc)
                        m = (a[0] + f * (c[0] - a[0]), a[1] + f * (c[1] - a[1]))
                        panel(a, m, roof.height(a), b.ridge_height_m)
                        panel(m, c, b.ridge_height_m, roof.height(c))
                        continue
                panel(a, c, roof.height(a), roof.height(c))
            poly = shapely.Polygon(b.footprint)
            if b.ridge is not None:
                for seg in roof.ridge_segments(poly):
                    panel(seg[0], seg[1], b.ridge_height_m, b.ridge_height_m)
            self.solids.append((poly, roof))
        for p in plan.prisms:
            owner[0] = p.name
            ring = list(p.polygon)
            for a, c in zip(ring, ring[1:] + ring[:1]):
                panel(a, c, p.height_m, p.height_m)
            self.solids.append((shapely.Polygon(p.polygon), _FlatRoof(p.height_m)))
        for w in plan.walls:
            owner[0] = w.name
            for a, c in zip(w.line, w.line[1:]):
                panel(a, c, w.height_m, w.height_m)
        for s in plan.skylines:
            owner[0] = s.name
            panel(s.start, s.end, s.start_height_m, s.end_height_m)
        self.P = np.array(P, dtype=np.float64).reshape(-1, 2)
        self.Q = np.array(Q, dtype=np.float64).reshape(-1, 2)
        self.hP = np.array(hP, dtype=np.float64)
        self.hQ = np.array(hQ, dtype=np.float64)
        t = plan.trees
        self.tree_xy = np.array([tr.at for tr in t], dtype=np.float64).reshape(-1, 2)
        self.tree_r = np.array([tr.crown_radius_m for tr in t], dtype=np.float64)
        self.tree_h = np.array([tr.height_m for tr in t], dtype=np.float64)
        self.tree_g = np.array([tr.growth_m_per_year for tr in t], dtype=np.float64)

    def inside(self, east_m, north_m, height_m, years: float = 0.0) -> list[list[str]]:
        """For each point, the names of the solids or tree crowns it stands inside
        (below their top): such a point sees no sky."""
        e, n, z = (np.atleast_1d(np.asarray(v, dtype=np.float64)) for v in (east_m, north_m, height_m))
        e, n, z = np.broadcast_arrays(e, n, z)
        out: list[list[str]] = [[] for _ in range(e.size)]
        names = [b.name for b in self.plan.buildings] + [p.name for p in self.plan.prisms]
        for (poly, roof), name in zip(self.solids, names):
            for i in np.flatnonzero(_under_roof(poly, roof, e, n, z)):
                out[i].append(name)
        if self.tree_r.size:
            h = self.tree_h + self.tree_g * years
            d = np.hypot(self.tree_xy[None, :, 0] - e[:, None], self.tree_xy[None, :, 1] - n[:, None])
            for i, j in zip(*np.nonzero((d <= self.tree_r[None, :]) & (h[None, :] > z[:, None] + 1e-9))):
                out[i].append(self.plan.trees[j].name)
        return out


class _FlatRoof:
    def __init__(self, h: float):
        self.h = h

    def height(self, p):
        return self.h

    def heights(self, x, y):
        return np.full(np.shape(x), self.h)


class _GableRoof:
    """Two roof planes meeting along the ridge line (see Building)."""

    def __init__(self, b: Building):
        (x0, y0), (x1, y1) = b.ridge
        length = math.hypot(x1 - x0, y1 - y0)
        self.o = (x0, y0)
        self.u = ((x1 - x0) / length, (y1 - y0) / length)
        self.nrm = (-self.u[1], self.u[0])
        d = [self.signed(p) for p in b.footprint]
        self.w_pos = max([v for v in d if v > 0], default=0.0) or 1.0
        self.w_neg = max([-v for v in d if v < 0], default=0.0) or 1.0
        self.eave, self.ridge_h = b.height_m, b.ridge_height_m

    def signed(self, p) -> float:
        return (p[0] - self.o[0]) * self.nrm[0] + (p[1] - self.o[1]) * self.nrm[1]

    def height(self, p) -> float:
        return float(self.heights(np.array([p[0]]), np.array([p[1]]))[0])

    def heights(self, x, y):
        d = (np.asarray(x) - self.o[0]) * self.nrm[0] + (np.asarray(y) - self.o[1]) * self.nrm[1]
        w = np.where(d >= 0, self.w_pos, self.w_neg)
        return self.ridge_h - (self.ridge_h - self.eave) * np.minimum(np.abs(d) / w, 1.0)

    def ridge_segments(self, poly) -> list[tuple[XY, XY]]:
        """The ridge line's pieces over the footprint (the line extended across it)."""
        far = 2.0 * PLAN_RADIUS_M + 1000.0
        line = shapely.LineString([(self.o[0] - far * self.u[0], self.o[1] - far * self.u[1]),
                                   (self.o[0] + far * self.u[0], self.o[1] + far * self.u[1])])
        cut = poly.intersection(line)
        parts = getattr(cut, "geoms", [cut])
        out = []
        for g in parts:
            if isinstance(g, shapely.LineString) and g.length > 0:
                c = list(g.coords)
                out.append((tuple(c[0]), tuple(c[-1])))
        return out


def _roof_function(b: Building):
    return _GableRoof(b) if b.ridge is not None else _FlatRoof(b.height_m)


def _under_roof(poly, roof, e, n, z) -> np.ndarray:
    """Points on or inside the footprint that are below its roof there."""
    on = shapely.intersects_xy(poly, e, n)
    out = np.zeros(e.shape, dtype=bool)
    if on.any():
        out[on] = roof.heights(e[on], n[on]) > z[on] + 1e-9
    return out


def compile_plan(plan: Plan) -> Scene:
    return plan if isinstance(plan, Scene) else Scene(plan)
