"""The text UI's terminal drawings (tui/widgets): exact sizes, monochrome output
without styles, and geometry against values worked out by hand here.

Conventions checked (survey/render.py): north up, east right,
azimuth clockwise; sky radius linear in zenith distance; terminal cells twice as
tall as wide (1:2), so a round circle spans 2n columns and n rows from its
centre and the plan keeps one scale east and north."""

from __future__ import annotations

import asyncio
import itertools
import math
from datetime import datetime, timedelta, timezone

import numpy as np
import pytest
from rich.cells import cell_len
from rich.text import Text

from tui.widgets import HorizonProfile as ProfileWidget
from tui.widgets import (
    OutageStrip,
    PlanChart,
    SkyChart,
    horizon_profile,
    outage_strip,
    plan_chart,
    plan_chart_for,
    sky_chart,
    sky_chart_from,
)
from tui.widgets.planchart import BEST, BUILDING, SITE, TREE
from tui.widgets.profile import CURSOR, CURSOR_COLUMN, EIGHTHS
from tui.widgets.skychart import BLOCKED_GLYPHS, CLEAR_GLYPHS, HATCH

SIZES = [(20, 10), (80, 24), (200, 60), (33, 17), (121, 41)]
START = datetime(2026, 6, 1, tzinfo=timezone.utc)


def lines_of(text: Text) -> list[str]:
    return text.plain.split("\n")


def assert_size(text: Text, width: int, height: int) -> None:
    lines = lines_of(text)
    assert len(lines) == height
    assert all(cell_len(ln) == width for ln in lines), [cell_len(ln) for ln in lines]


def assert_mono(text: Text) -> None:
    assert text.spans == [] and not text.style


def find(lines, ch):
    """(row, col) of every occurrence of a one-cell character."""
    return [(r, c) for r, ln in enumerate(lines) for c, x in enumerate(ln) if x == ch]


def one(lines, ch):
    hits = find(lines, ch)
    assert len(hits) == 1, (ch, hits)
    return hits[0]


# ---------------------------------------------------------------- sky chart

def sky_frame(lines):
    """Centre (row, col) and rim distance n (rows) read off the N/S/E/W labels,
    which sit one cell outside the rim: the chart is n rows up and down and 2n
    columns left and right (cells 1:2)."""
    (rn, cn), (rs, cs) = one(lines, "N"), one(lines, "S")
    (re_, ce), (rw, cw) = one(lines, "E"), one(lines, "W")
    assert cn == cs and re_ == rw  # the N-S and E-W axes cross at the centre
    rc, cc = (rn + rs) // 2, cn
    n = rs - rc - 1
    assert rc - rn - 1 == n and re_ == rc
    # Round at a 1:2 cell aspect: the horizontal rim is twice as many cells out.
    assert ce - cc - 1 == 2 * n and cc - cw - 1 == 2 * n
    return rc, cc, n


@pytest.mark.parametrize("width,height", [(80, 24), (200, 60), (60, 30), (20, 10)])
def test_sky_sample_positions(width, height):
    # Hand-worked: el 45 is zenith distance 45 = half of 90, so half the rim
    # distance: n/2 rows above the centre for az 0 (north up), n/2 below for 180,
    # n columns (half of 2n) right for az 90 (east right), left for 270.
    for az, d_row, d_col in ((0.0, -0.5, 0.0), (90.0, 0.0, 1.0), (180.0, 0.5, 0.0),
                             (270.0, 0.0, -1.0)):
        t = sky_chart_from([az], [45.0], [False], [], [], 0.0, width, height, colour=False)
        lines = lines_of(t)
        rc, cc, n = sky_frame(lines)
        hits = [(r, c) for g in CLEAR_GLYPHS for r, c in find(lines, g)
                if abs(r - rc) <= n and abs(c - cc) <= 2 * n]  # the chart, not its legend
        assert len(hits) == 1, hits
        r, c = hits[0]
        # Within one cell of the exact spot (half a cell of rounding each way).
        assert abs(r - (rc + d_row * n)) <= 0.5 + 1e-9, (az, r, rc, n)
        assert abs(c - (cc + d_col * n)) <= 0.5 + 1e-9, (az, c, cc, n)


def test_sky_blocked_and_clear_glyphs():
    # Mask 30 deg all round.  A sample at el 20 is below it (blocked, by the
    # definition el < mask(az)); one at el 60 is above it (clear).
    mask_az, mask_el = [0.0, 180.0], [30.0, 30.0]
    az, el = np.array([90.0, 270.0]), np.array([20.0, 60.0])
    blocked = el < 30.0
    lines = lines_of(sky_chart_from(az, el, blocked, mask_az, mask_el, 0.0, 80, 24, colour=False))
    rc, cc, n = sky_frame(lines)
    # Hand-worked cells: az 90 el 20 -> zenith distance 70 -> 70/90 of 2n columns
    # right of the centre; az 270 el 60 -> 30/90 of 2n columns left.
    r1, c1 = rc, cc + math.floor(70 / 90 * 2 * n + 0.5)
    r2, c2 = rc, cc - math.ceil(30 / 90 * 2 * n - 0.5)
    assert lines[r1][c1] in BLOCKED_GLYPHS, lines[r1]
    assert lines[r2][c2] in CLEAR_GLYPHS, lines[r2]


@pytest.mark.parametrize("width,height", [(80, 24), (200, 60)])
def test_sky_mask_ring_hatch(width, height):
    # A 30 deg mask all round hides zenith distances above 60 deg: radius
    # 60/90 = 2/3 of the rim.  Cell (r, c) has normalised radius
    # hypot((c - cc) / 2n, (r - rc) / n) at its centre (cells 1:2).  Away from
    # the ring and the rim by more than one cell, hatch lies exactly outside.
    lines = lines_of(sky_chart_from([], [], [], [0.0, 120.0, 240.0], [30.0] * 3, 0.0,
                                    width, height, colour=False))
    rc, cc, n = sky_frame(lines)
    tol = 1.0 / n  # one cell (a row; a column is half that)
    inner = outer = 0
    for r in range(rc - n, rc + n + 1):
        for c in range(cc - 2 * n, cc + 2 * n + 1):
            rho = math.hypot((c - cc) / (2 * n), (r - rc) / n)
            if rho < 2 / 3 - tol:
                assert lines[r][c] != HATCH, (r, c, rho)
                inner += 1
            elif 2 / 3 + tol < rho < 1 - tol:
                assert lines[r][c] == HATCH, (r, c, rho, lines[r])
                outer += 1
    assert inner > 50 and outer > 50


def test_sky_sizes_and_monochrome():
    rng = np.random.default_rng(7)
    az = rng.uniform(0, 360, 5000)
    el = rng.uniform(25, 90, 5000)
    m_az, m_el = [0, 90, 180, 270], [10, 40, 20, 5]
    blk = el < np.interp(az, m_az, m_el, period=360)
    for w, h in SIZES + [(15, 9), (14, 9), (10, 4), (1, 1)]:
        for colour in (True, False):
            t = sky_chart_from(az, el, blk, m_az, m_el, 25.0, w, h, colour=colour,
                               fov=(180.0, 60.0, 40.0))
            assert_size(t, w, h)
            if not colour:
                assert_mono(t)
    assert "enlarge" in sky_chart_from(az, el, blk, m_az, m_el, 25.0, 40, 8).plain
    assert sky_chart_from(az, el, blk, m_az, m_el, 25.0, 80, 24).spans  # colour has styles


# ---------------------------------------------------------------- horizon profile

def test_profile_column_height_exact_to_eighths():
    # Layout (tui/widgets/profile.py docstring): 4 label columns, plot columns of
    # 360 / (width - 4) deg, P = height - 3 plot rows over 0..top.  width 76 ->
    # 72 columns of 5 deg: azimuth 90 is column 4 + 90/5 = 22.  height 19 -> 16
    # rows, so on a 0..90 axis 45 deg fills 16 * 45/90 = 8 rows exactly.
    w, h, P = 76, 19, 16
    lines = lines_of(horizon_profile([0.0, 180.0], [45.0, 45.0], w, h, colour=False,
                                     top_deg=90.0))
    col = lines[P + 1].index("E")
    assert col == 4 + 90 // 5
    column = [lines[r][col] for r in range(P)]
    assert column[8:] == ["\u2588"] * 8
    assert not any(ch in EIGHTHS[1:] for ch in column[:8])
    # 30 deg: 16 * 8 * 30/90 = 42.67 -> 43 eighths = 5 full rows and 3/8 (▃).
    lines = lines_of(horizon_profile([0.0], [30.0], w, h, colour=False, top_deg=90.0))
    column = [lines[r][col] for r in range(P)]
    assert column[11:] == ["\u2588"] * 5 and column[10] == "\u2583"
    assert not any(ch in EIGHTHS[1:] for ch in column[:10])


def test_profile_cursor_points_and_min_line():
    w, h, P = 76, 19, 16
    pts = [(90.0, 20.0, "shed"), (200.0, 35.0)]
    m_az = [80.0, 90.0, 100.0, 190.0, 200.0, 210.0]
    m_el = [0.0, 20.0, 0.0, 0.0, 35.0, 0.0]
    lines = lines_of(horizon_profile(m_az, m_el, w, h, points=pts,
                                     colour=False, cursor_az=90.0, min_elevation_deg=25.0,
                                     top_deg=90.0))
    col_e = lines[P + 1].index("E")
    assert lines[P][col_e] == CURSOR  # ▲ under the selected azimuth, on the axis
    assert CURSOR_COLUMN in [lines[r][col_e] for r in range(P)]
    # Point at az 200, el 35: column 4 + floor(200/5) = 44; row holding 35 deg:
    # P - 1 - floor(35/90 * 16) = 15 - 6 = 9.
    assert lines[9][44] == "\u25cf"
    # Minimum elevation 25 deg: row 15 - floor(25/90 * 16) = 11, dashed where open.
    # Row 11 spans 22.5..28.1 deg.  The 35 deg peak (3.5 deg per deg of azimuth
    # either side of 200) reaches above 22.5 only in the two 5 deg columns
    # meeting at 200 (195..200, 200..205; their neighbours top out at 17.5), and
    # the cursor's column shows ┊: 72 - 2 - 1 dashes.
    assert lines[11].count("\u2504") == 72 - 2 - 1
    # Labels N E S W at 0, 90, 180, 270 deg; N again at 360 (the last column).
    lab = lines[P + 1]
    assert [lab.index(x) for x in "NESW"] == [4, 22, 40, 58] and lab.rstrip()[-1] == "N"


def test_profile_sizes_and_monochrome():
    for w, h in SIZES + [(20, 5), (19, 5), (20, 4)]:
        for colour in (True, False):
            t = horizon_profile([0, 100, 200], [5, 40, 10], w, h, points=[(100, 40, "oak")],
                                colour=colour, cursor_az=100.0, min_elevation_deg=25.0)
            assert_size(t, w, h)
            if not colour:
                assert_mono(t)


# ---------------------------------------------------------------- outage strip

def test_outage_strip_marks_the_down_hours():
    # 24 h at 60 s: down 03:00-04:00 and 14:00-15:00 (whole hours) and
    # 20:00-20:15.  Width 54 -> 6 date columns and 48 time columns of 30 min
    # each (module docstring): hours 3 and 14 are columns 6, 7 and 28, 29 (full,
    # █); 20:00-20:30 is half down (4/8, ▄); every other cell is up (·).
    down = np.zeros(1440, dtype=bool)
    down[180:240] = True
    down[840:900] = True
    down[1200:1215] = True
    w, h = 54, 6
    lines = lines_of(outage_strip(START, 24, 60, down, w, h, colour=False))
    row = lines[0][6:]
    expect = ["\u00b7"] * 48
    for j in (6, 7, 28, 29):
        expect[j] = "\u2588"
    expect[40] = "\u2584"
    assert list(row) == expect
    assert lines[0].startswith("06-01")
    # Hour labels: "00" at the left of the time axis, "12" half way.
    assert lines[1][6:8] == "00" and lines[1][6 + 24:6 + 26] == "12"
    # Totals, counted independently with itertools.groupby: 3 runs, 135 min in
    # one day, the longest 60 min.
    runs = [len(list(g)) for k, g in itertools.groupby(down) if k]
    assert len(runs) == 3 and sum(runs) == 135 and max(runs) == 60
    assert lines[2].startswith("3 drop-outs, 135 min/day, longest 60.0\u00a0min")  # words.duration


def test_outage_strip_days_left_off_and_offset_start():
    # 72 h from 12:00 UTC spans 4 UTC days; with 4 rows only 2 days fit.
    start = START + timedelta(hours=12)
    down = np.zeros(72 * 60, dtype=bool)
    down[0:30] = True  # 12:00-12:30 on day one
    lines = lines_of(outage_strip(start, 72, 60, down, 80, 4, colour=False))
    assert lines[0].startswith("2026-06-01") and lines[1].startswith("2026-06-02")
    assert "2 more days not shown" in lines[3]
    row = lines[0][11:]  # 69 columns of 86400/69 s
    first = next(i for i, ch in enumerate(row) if ch != " ")
    assert first == math.floor(12 / 24 * 69)  # nothing before the window starts
    assert row[first] in EIGHTHS[1:]


def test_outage_strip_sizes_and_monochrome():
    down = np.zeros(5760, dtype=bool)
    down[::97] = True
    for w, h in SIZES + [(20, 3), (19, 3), (20, 2)]:
        for colour in (True, False):
            t = outage_strip(START, 24, 15, down, w, h, colour=colour)
            assert_size(t, w, h)
            if not colour:
                assert_mono(t)


# ---------------------------------------------------------------- plan chart

def plan_frame(lines):
    """Site point (row, col) and metres per column from the scale bar: its
    ticks ├ and ┤ are scale_m apart, read from the label after the bar.  The
    map is every row above the scale bar (the legend rows follow it)."""
    (rb, ca), (rb2, cb) = one(lines, "\u251c"), one(lines, "\u2524")
    assert rb == rb2
    r0, c0 = one(lines[:rb], SITE)
    scale_m = float(lines[rb][cb + 1:].split()[0])
    return r0, c0, scale_m / (cb - ca), cb - ca, scale_m


@pytest.mark.parametrize("width,height", [(80, 24), (200, 60), (40, 16)])
def test_plan_north_up_east_right_and_scale(width, height):
    # A 4 m square building centred 10 m north of the site point and a tree
    # 10 m east of it.  North up: the building is straight above the site
    # point, 10 / (2 s) rows up (a row is 2 s metres); east right: the tree is
    # 10 / s columns right, on the site point's row.
    obstacles = [dict(kind="building", polygon=[[-2, 8], [2, 8], [2, 12], [-2, 12]]),
                 dict(kind="tree", at=[10.0, 0.0], radius_m=1.5)]
    lines = lines_of(plan_chart(obstacles, [], [], None, width, height, colour=False))
    r0, c0, s, k, scale_m = plan_frame(lines)
    assert scale_m in (1, 2, 5, 10, 20, 50, 100)  # a round length
    rb = round(r0 - 10 / (2 * s))
    ct = round(c0 + 10 / s)
    assert lines[rb][c0] == BUILDING
    assert lines[r0][ct] == TREE
    # Nothing of the building at the site point's row, nothing of the tree
    # above or below the building's column.
    m = lines[:len(lines) - (3 if height >= 16 else 2)]  # the map rows
    assert BUILDING not in m[r0] and TREE not in "".join(ln[c0] for ln in m)
    # The building's extent: 4 m = 4 / s columns and 4 / (2 s) rows, within a cell.
    cols = [c for c, ch in enumerate(lines[rb]) if ch == BUILDING]
    rows = [r for r, ln in enumerate(m) if ln[c0] == BUILDING]
    assert abs(len(cols) - 4 / s) <= 1.0 and abs(len(rows) - 4 / (2 * s)) <= 1.0
    # The north arrow in the top right corner.
    assert lines[0][-1] == "N" and lines[1][-1] == "\u2191"


def test_plan_cells_markers_best_selected():
    cells = [(-6.0 + 0.5 * i, -6.0, 0.5, f) for i, f in enumerate([0.0, 0.01, 0.03, 0.045] * 6)]
    markers = [dict(name="mast", kind="pole", east_m=8.0, north_m=8.0, blocked_fraction=0.02,
                    height_m=6.0),
               dict(name="bracket", kind="point", east_m=-8.0, north_m=8.0, blocked_fraction=0.04)]
    best = dict(name="mast", east_m=8.0, north_m=8.0, height_m=6.0, blocked_fraction=0.02)
    lines = lines_of(plan_chart([], cells, markers, best, 120, 40, colour=False,
                                selected=(-8.0, 8.0)))
    r0, c0, s, _k, _m = plan_frame(lines)
    rb, cb = one(lines[:-3], BEST)
    assert rb == round(r0 - 8 / (2 * s)) and cb == round(c0 + 8 / s)
    ra, ca = one(lines[:-3], "A")  # the fixed point, lettered; selected: [A]
    assert lines[ra][ca - 1] == "[" and lines[ra][ca + 1] == "]"
    assert ra == rb and ca == round(c0 - 8 / s)
    text = "\n".join(lines)
    # The 4-step scale runs to 5 % (the largest fraction, 4.5 %, rounded up):
    # steps of 1.25 %: 0 and 1 % -> ·, 3 % -> ◐ (2.5..3.75), 4.5 % -> ● (3.75..5).
    for g in "\u00b7\u25d0\u25cf":
        assert g in text
    assert "\u2264" + "5.0 %" in text and "1 mast" in text and "A bracket" in text


def test_plan_sizes_and_monochrome():
    obstacles = [dict(kind="building", polygon=[[-5, -10], [5, -10], [5, 0], [-5, 0]],
                      ridge=[[0, -10], [0, 0]], height_m=4, ridge_height_m=7, name="house"),
                 dict(kind="tree", at=[12, 5], radius_m=3, height_m=15),
                 dict(kind="wall", line=[[-10, 8], [10, 8], [14, 14]], height_m=1.5)]
    cells = [(1.0, -5.0, 1.0, 0.02), (2.0, -5.0, 1.0, float("nan"))]
    for w, h in SIZES + [(20, 8), (19, 8), (20, 7)]:
        for colour in (True, False):
            t = plan_chart(obstacles, cells, [], None, w, h, colour=colour, selected=(1.0, -5.0))
            assert_size(t, w, h)
            if not colour:
                assert_mono(t)


LEGEND_WORDS = {"blocked", "building", "ridge", "tree", "wall", "site", "point", "best", "best:", "selected", "m",
                "north", "mast", "corner", "bracket"}


def legend_problems(lines, words=LEGEND_WORDS) -> list[str]:
    """Legend rows (under the scale bar) with a cut item: an ellipsis, or a
    word that is not one the legend writes (a word cut short)."""
    rb, _ = one(lines, "\u251c")
    bad = []
    for row in lines[rb + 1:]:
        cut = [w for w in row.split() if "\u2026" in w or (any(c.isalpha() for c in w) and w not in words
                                                            and len(w) > 1)]
        if cut:
            bad.append(f"{row!r}: {cut}")
    return bad


def test_plan_legend_keeps_whole_items():
    """The legend wraps whole items onto more rows, shortens marker and best
    labels to their names, or leaves an item off whole: never a word cut."""
    obstacles = [dict(kind="building", polygon=[[-5, -10], [5, -10], [5, 0], [-5, 0]],
                      ridge=[[0, -10], [0, 0]], height_m=4, ridge_height_m=7, name="house"),
                 dict(kind="tree", at=[12, 5], radius_m=3, height_m=15),
                 dict(kind="wall", line=[[-10, 8], [10, 8], [14, 14]], height_m=1.5)]
    cells = [(1.0 + i, -5.0, 1.0, 0.01 * i) for i in range(6)]
    markers = [dict(name="north mast", kind="pole", east_m=8.0, north_m=8.0, blocked_fraction=0.02, height_m=6.0),
               dict(name="corner bracket", kind="point", east_m=-8.0, north_m=8.0, blocked_fraction=0.04)]
    best = dict(name="north mast", east_m=8.0, north_m=8.0, height_m=6.0, blocked_fraction=0.02)
    for w, h in [(38, 12), (38, 14), (46, 20), (60, 16), (80, 24), (120, 40), (200, 60), (24, 10)]:
        lines = lines_of(plan_chart(obstacles, cells, markers, best, w, h, colour=False, selected=(1.0, -5.0)))
        assert not legend_problems(lines), (w, h, legend_problems(lines))
        legend = "\n".join(lines[one(lines, "\u251c")[0] + 1:])
        if h >= 16 and w >= 46:  # room for all of it: every glyph explained
            for item in ("\u25cf", BUILDING + " building", "\u2504 ridge", TREE + " tree", "\u2500 wall",
                         SITE + " site point", BEST + " best", "1 north mast", "A corner bracket", "[ ] selected"):
                assert item in legend, (w, h, item)
    wide = "\n".join(lines_of(plan_chart(obstacles, cells, markers, best, 200, 60, colour=False)))
    assert "1 north mast 6 m 2.0 %" in wide and "best: north mast 6 m 2.0 %" in wide  # room: the figures too


# ---------------------------------------------------------------- a real run

@pytest.fixture(scope="module")
def demo():
    from survey.pipeline import run_site
    from survey.site import load_site
    from survey.spots import rank_spots

    run = run_site(load_site("demo_sites/alder-brook-farm/site.toml"), hours=2)
    return run, rank_spots(run, spacing_m=1.0)


def test_demo_run_drawings(demo):
    run, ranking = demo
    w_ = run.window
    true = run.site.horizon.to_true(run.declination.declination_deg)
    for w, h in ((80, 24), (200, 60), (20, 10)):
        for colour in (True, False):
            drawings = [
                sky_chart(run, w, h, colour=colour),
                horizon_profile(run.mask.az_deg, run.mask.el_deg, w, h, points=true.points,
                                colour=colour, cursor_az=true.points[4].azimuth_deg,
                                min_elevation_deg=25.0),
                outage_strip(w_.start, w_.hours, w_.step_s, run.assessment.down, w, h,
                             colour=colour),
                plan_chart_for(run, ranking, w, h, colour=colour),
            ]
            for t in drawings:
                assert_size(t, w, h)
                if not colour:
                    assert_mono(t)
    sky = sky_chart(run, 200, 60, colour=False).plain
    assert any(g in sky for g in CLEAR_GLYPHS) and any(g in sky for g in "xX") and HATCH in sky
    prof = horizon_profile(run.mask.az_deg, run.mask.el_deg, 200, 60, points=true.points,
                           colour=False).plain.split("\n")
    plot = "".join(prof[:60 - 3])  # the plot rows, not the legend
    assert plot.count("\u25cf") == len(true.points)  # every measured point marked
    # The best spot's star sits at its east/north offset, by the scale bar.
    lines = lines_of(plan_chart_for(run, ranking, 200, 60, colour=False))
    r0, c0, s, _k, _m = plan_frame(lines)
    b = ranking.best.candidate
    rb, cb = one(lines[:-3], BEST)
    assert abs(rb - (r0 - b.north_m / (2 * s))) <= 1 and abs(cb - (c0 + b.east_m / s)) <= 1


# ---------------------------------------------------------------- widgets

def test_widgets_show_resize_and_no_color(demo, monkeypatch):
    from textual.app import App
    from textual.containers import Grid

    run, ranking = demo
    true = run.site.horizon.to_true(run.declination.declination_deg)

    class Demo(App):
        CSS = "Grid { grid-size: 2 2; } Grid > * { width: 1fr; height: 1fr; }"

        def compose(self):
            with Grid():
                yield SkyChart(id="sky")
                yield ProfileWidget(id="profile")
                yield OutageStrip(id="strip")
                yield PlanChart(id="plan")

    async def scenario():
        app = Demo()
        async with app.run_test(size=(100, 40)) as pilot:
            widgets = [app.query_one(f"#{i}") for i in ("sky", "profile", "strip", "plan")]
            for wd in widgets:  # placeholders before any data
                assert wd.size.width > 0
                t = wd.render()
                assert_size(t, wd.size.width, wd.size.height)
                assert "no" in t.plain
            widgets[0].show(run)
            widgets[1].show(run.mask, true.points, min_elevation_deg=25.0,
                            cursor_az=true.points[2].azimuth_deg)
            widgets[2].show(run.window.start, run.window.hours, run.window.step_s,
                            run.assessment.down)
            widgets[3].show(run, ranking, selected=(12.0, 6.0))
            await pilot.pause()
            sizes = []
            for wd in widgets:
                t = wd.render()
                assert_size(t, wd.size.width, wd.size.height)
                sizes.append((wd.size.width, wd.size.height))
            await pilot.resize_terminal(140, 50)
            await pilot.pause()
            for wd, old in zip(widgets, sizes):
                assert (wd.size.width, wd.size.height) != old
                assert_size(wd.render(), wd.size.width, wd.size.height)
            widgets[1].select(true.points[5].azimuth_deg)
            widgets[3].select(None)
            monkeypatch.setenv("NO_COLOR", "1")
            for wd in widgets:
                assert_mono(wd.render())

    asyncio.run(scenario())


def test_colour_detection(monkeypatch):
    from types import SimpleNamespace

    from tui.widgets import colour_allowed

    def widget(system):
        return SimpleNamespace(app=SimpleNamespace(console=SimpleNamespace(color_system=system)))

    monkeypatch.delenv("NO_COLOR", raising=False)
    assert colour_allowed(widget("truecolor")) and not colour_allowed(widget(None))
    monkeypatch.setenv("NO_COLOR", "1")  # https://no-color.org: any non-empty value
    assert not colour_allowed(widget("truecolor"))
