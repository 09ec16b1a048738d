"""Saving a site back to its file: the demo sites round-trip (byte for byte when
unchanged), text survives TOML and CSV as read by the standard library's own
readers (tomllib, csv), and a failed save leaves the old file as it was."""

from __future__ import annotations

import csv
import io
import math
import os
import shutil
import tomllib
from dataclasses import replace

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from survey.errors import InputError
from survey.horizon import HorizonPoint, HorizonProfile, read_horizon_csv
from survey.site import Criteria, Mount, Site, load_site
from survey.sitefile import (
    horizon_csv,
    leading_comments,
    read_layout,
    save_site,
    site_toml,
    toml_string,
)

from .helpers import DEMO

DEMOS = sorted(p.name for p in DEMO.iterdir() if (p / "site.toml").is_file())
LABEL = 'Ō-ridge "big" oak, 3\\4'  # quotes, a backslash, a comma and a letter outside ASCII


@pytest.fixture
def demo_copy(tmp_path):
    def _copy(name):
        folder = tmp_path / name
        shutil.copytree(DEMO / name, folder)
        return folder

    return _copy


def bare(site: Site) -> Site:
    return replace(site, path=None)


@pytest.mark.parametrize("name", DEMOS)
def test_demo_sites_round_trip(demo_copy, name):
    folder = demo_copy(name)
    before = {p.name: p.read_bytes() for p in folder.iterdir()}
    site = load_site(folder / "site.toml")
    written = save_site(site, folder / "site.toml")
    assert written[-1] == folder / "site.toml"
    again = load_site(folder / "site.toml")
    assert bare(again) == bare(site)
    # Unchanged, every file is written back as it was, byte for byte: the leading
    # comment block, the plan reference, the window as typed (hours = 24, not 24.0),
    # comments on unchanged keys, the horizon CSV and its comment lines.
    for p in folder.iterdir():
        assert p.read_bytes() == before[p.name], p.name
    old = tomllib.loads(before["site.toml"].decode())
    new = tomllib.loads((folder / "site.toml").read_text(encoding="utf-8"))
    assert new.get("plan") == old.get("plan") and new["window"] == old["window"]
    assert isinstance(new["window"]["hours"], int)
    assert leading_comments(before["site.toml"].decode()).startswith("# Invented demo site")


def test_the_plan_reference_and_window_survive_an_edit(demo_copy):
    folder = demo_copy("alder-brook-farm")
    site = load_site(folder / "site.toml")
    edited = replace(site, name="Alder Brook (pole)", mount=replace(site.mount, height_m=8.25, at=(12.0, 6.0)))
    save_site(edited, folder / "site.toml")
    text = (folder / "site.toml").read_text(encoding="utf-8")
    doc = tomllib.loads(text)
    assert doc["plan"] == {"file": "plan.toml"} and doc["window"] == {
        "start": "2026-06-01T00:00:00Z", "hours": 24, "step_s": 15}
    assert text.startswith("# Invented demo site: a farmhouse in a river valley.")
    # A comment stays on a key whose value is unchanged, and goes with a changed one.
    assert 'file = "plan.toml"      # obstacles and candidate spots' in text
    assert "ridge-line bracket" not in text
    back = load_site(folder / "site.toml")
    assert bare(back) == bare(edited)
    assert back.mount == Mount("fixed", 8.25, (12.0, 6.0)) and back.measured_height_m == 6.5


def test_a_hard_label_round_trips_through_toml_and_csv(demo_copy):
    point = HorizonPoint(301.5, 12.25, 14.0, LABEL)
    # TOML, read by tomllib (the standard library's reader) as the reference.
    folder = demo_copy("tussock-ridge-croft")
    site = load_site(folder / "site.toml")
    site = replace(site, horizon=replace(site.horizon, points=site.horizon.points + (point,)))
    save_site(site, folder / "site.toml")
    doc = tomllib.loads((folder / "site.toml").read_text(encoding="utf-8"))
    assert doc["horizon"]["points"][-1] == [301.5, 12.25, 14.0, LABEL]
    assert load_site(folder / "site.toml").horizon.points[-1] == point
    # CSV, read by the csv module (the standard library's reader) as the reference.
    folder = demo_copy("mill-lane-terrace")
    site = load_site(folder / "site.toml")
    site = replace(site, horizon=replace(site.horizon, points=site.horizon.points + (point,)))
    written = save_site(site, folder / "site.toml")
    original = (folder / "horizon.csv").read_bytes()
    assert written == [folder / "horizon.rev1.csv", folder / "site.toml"]  # a new revision, then the switch
    assert (folder / "horizon.csv").read_bytes() == original  # the file the user named is left as it was
    text = (folder / "horizon.rev1.csv").read_text(encoding="utf-8")
    assert text.startswith("# Mill Lane terrace: measured from the eaves bracket")  # comments kept
    rows = list(csv.DictReader(io.StringIO("".join(ln for ln in text.splitlines(True) if not ln.startswith("#")))))
    assert rows[-1] == {"azimuth_deg": "301.5", "elevation_deg": "12.25", "distance_m": "14", "label": LABEL}
    assert tomllib.loads((folder / "site.toml").read_text(encoding="utf-8"))["horizon"]["file"] == "horizon.rev1.csv"
    assert bare(load_site(folder / "site.toml")) == bare(site)


def test_toml_string_escapes_by_the_spec():
    # TOML 1.0, "String": quotation mark, backslash and control characters other
    # than tab must be escaped; \b \t \n \f \r have short forms, others \uXXXX.
    assert toml_string('a"b\\c') == '"a\\"b\\\\c"'
    assert toml_string("t\tn\nr\r\x01\x7f") == '"t\\tn\\nr\\r\\u0001\\u007F"'
    assert toml_string("Ō-ridge é") == '"Ō-ridge é"'  # non-ASCII kept as typed
    assert tomllib.loads("x = " + toml_string("\x00\x1f\x85\u2028"))["x"] == "\x00\x1f\x85\u2028"
    with pytest.raises(ValueError, match="surrogate"):
        toml_string("\ud800")


def test_a_label_with_the_comment_mark_round_trips_through_the_csv(demo_copy):
    folder = demo_copy("mill-lane-terrace")
    site = load_site(folder / "site.toml")
    site = replace(site, horizon=replace(site.horizon, points=site.horizon.points
                                         + (HorizonPoint(10.0, 5.0, None, 'oak #2, "leaning"'),)))
    save_site(site, folder / "site.toml")
    assert '10,5,,"oak #2, ""leaning"""' in (folder / "horizon.rev1.csv").read_text("utf-8")  # RFC 4180 quoting
    assert load_site(folder / "site.toml").horizon.points[-1].label == 'oak #2, "leaning"'


def test_a_label_a_csv_cannot_hold_is_refused_and_nothing_written(demo_copy):
    folder = demo_copy("mill-lane-terrace")
    before = {p.name: p.read_bytes() for p in folder.iterdir()}
    site = load_site(folder / "site.toml")
    site = replace(site, horizon=replace(site.horizon, points=site.horizon.points
                                         + (HorizonPoint(10.0, 5.0, None, "oak\nsecond line"),)))
    with pytest.raises(InputError) as exc:
        save_site(site, folder / "site.toml")
    (line,) = exc.value.problems
    assert line.startswith(f"{folder / 'horizon.csv'}: horizon point 17") and "line break" in line
    assert {p.name: p.read_bytes() for p in folder.iterdir()} == before


def test_a_site_that_would_not_load_is_not_saved(demo_copy):
    folder = demo_copy("tussock-ridge-croft")
    before = (folder / "site.toml").read_bytes()
    site = load_site(folder / "site.toml")
    site = replace(site, mount=replace(site.mount, at=(3000.0, 0.0)))
    with pytest.raises(InputError) as exc:
        save_site(site, folder / "site.toml")
    assert len(exc.value.problems) == 1 and "mount.east_m" in exc.value.problems[0]
    assert (folder / "site.toml").read_bytes() == before


@pytest.mark.parametrize("name", ["alder-brook-farm", "mill-lane-terrace"])
def test_saving_is_atomic(demo_copy, monkeypatch, name):
    folder = demo_copy(name)
    before = {p.name: p.read_bytes() for p in folder.iterdir()}
    site = load_site(folder / "site.toml")
    site = replace(site, name="renamed", horizon=replace(site.horizon, points=site.horizon.points[:-1]))

    def fail(src, dst):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(os, "replace", fail)
    with pytest.raises(InputError) as exc:
        save_site(site, folder / "site.toml")
    assert len(exc.value.problems) == 1 and "No space left on device" in exc.value.problems[0]
    assert {p.name: p.read_bytes() for p in folder.iterdir()} == before  # unchanged, and no temp file left


def test_a_new_file_and_edited_kept_tables(demo_copy, tmp_path):
    site = load_site(demo_copy("alder-brook-farm") / "site.toml")
    # No file yet: everything from the Site, the plan inline.
    out = tmp_path / "new" / "site.toml"
    out.parent.mkdir()
    assert save_site(site, out) == [out]
    doc = tomllib.loads(out.read_text(encoding="utf-8"))
    assert [t["name"] for t in doc["plan"]["pole"]] == ["yard pole"] and "criteria" not in doc
    again = load_site(out)
    assert replace(again.plan, source="") == replace(site.plan, source="")
    assert bare(replace(again, plan=site.plan)) == bare(site)
    # A kept table that no longer reads as the site's is written from the Site.
    edited = replace(site, window={**site.window, "hours": 6.0},
                     criteria=replace(Criteria(), qualified_max_blocked=0.02))
    save_site(edited, site.path)
    doc = tomllib.loads(site.path.read_text(encoding="utf-8"))
    assert doc["window"]["hours"] == 6.0 and doc["criteria"] == {"qualified_max_blocked": 0.02}
    assert doc["plan"] == {"file": "plan.toml"}
    assert bare(load_site(site.path)) == bare(edited)


def test_only_keys_that_say_something(tmp_path):
    site = Site("Bare", 45.0, -73.0)
    doc = tomllib.loads(site_toml(site))
    assert doc == {"site": {"name": "Bare", "latitude": 45.0, "longitude": -73.0},
                   "mount": {"kind": "fixed", "height_m": 0.0}, "terminal": {"min_elevation_deg": 25.0}}
    tilted = replace(site, terminal=replace(site.terminal, tilt_deg=10.0, scan_half_angle_deg=55.0))
    assert tomllib.loads(site_toml(tilted))["terminal"] == {"min_elevation_deg": 25.0, "tilt_deg": 10.0,
                                                           "scan_half_angle_deg": 55.0}
    # A default is written when the file had it (tilt 0 here), and left out when it did not.
    base = {"site": {"name": "Bare", "latitude": 45.0, "longitude": -73.0},
            "terminal": {"min_elevation_deg": 25.0, "tilt_deg": 0.0}}
    assert tomllib.loads(site_toml(site, base)) == {"site": base["site"], "terminal": base["terminal"]}


def test_layout_reader_is_not_fooled_by_strings_and_arrays():
    text = (
        "# head\n\n"
        "[site]\n"
        'name = "a # not a comment [x]"   # real comment\n'
        "# before latitude\n"
        "latitude = 1.5\n"
        "\"quoted key\" = 'lit # eral' # q\n"
        "[horizon]\n"
        "points = [\n"
        "  [0, 4],  # inside a value: dropped\n"
        "  [1, 2, \"]\"],\n"
        "]\n"
        "reference = \"true\" # after\n"
        "[[plan.pole]]\n"
        "name = \"p\" # first\n"
        "[[plan.pole]]\n"
        "name = \"q\" # second\n"
        "# tail\n"
    )
    tomllib.loads(text)  # the input is valid TOML
    lay = read_layout(text)
    assert lay.preamble == "# head\n\n"
    assert lay.lines[("site", "name")][1] == "# real comment"
    assert lay.before[("site", "latitude")] == ["# before latitude"]
    assert lay.lines[("site", "quoted key")][1] == "# q"
    assert lay.lines[("horizon", "reference")][1] == "# after"
    assert ("horizon", "points") not in lay.lines
    assert lay.lines[("plan", "pole", 1, "name")][1] == "# second"
    assert lay.tail == ["# tail"]


# ------------------------------------------------------------------ properties

finite = st.floats(allow_nan=False, allow_infinity=False)
any_text = st.text(st.characters(exclude_categories=("Cs",)), max_size=40)  # all but lone surrogates


@settings(max_examples=200, deadline=None)
@given(any_text, any_text, finite, finite, finite, finite, finite, finite)
def test_text_and_floats_round_trip_through_toml(label, name, lat, elev, height, az, el, dist):
    site = Site(name, lat, 0.0, elev, Mount("fixed", height, (az, dist)),
                horizon=HorizonProfile((HorizonPoint(az, el, dist, label),)), survey={"notes": label})
    doc = tomllib.loads(site_toml(site))  # tomllib: the reference reader
    s, m = doc["site"], doc["mount"]
    assert s["name"] == name and doc["survey"]["notes"] == label
    assert ("elevation_m" in s) == (elev != 0.0)  # a zero elevation is not written
    for got, want in ((s["latitude"], lat), (s.get("elevation_m", elev), elev), (m["height_m"], height),
                      (m["east_m"], az), (m["north_m"], dist)):
        assert type(got) is float and got == want and math.copysign(1, got) == math.copysign(1, want)
    p = doc["horizon"]["points"][0]
    for got, want in zip(p[:3], (az, el, dist)):  # whole numbers may be written as TOML integers
        assert float(got) == want and math.copysign(1, got) == math.copysign(1, want)
    assert p[3:] == ([label] if label else [])


csv_label = st.text(st.characters(exclude_categories=("Cs",), exclude_characters="\x00"), max_size=30).filter(
    lambda s: len(f"a{s}a".splitlines()) == 1)  # a line break or a NUL cannot be written (README, "Limits")


@settings(max_examples=150, deadline=None)
@given(st.lists(st.tuples(st.floats(0, 359.999), st.floats(0, 90), st.none() | st.floats(0.01, 1e6), csv_label),
                min_size=1, max_size=6))
def test_points_round_trip_through_the_csv(tmp_path_factory, rows):
    points = tuple(HorizonPoint(a, e, d, lab) for a, e, d, lab in rows)
    path = tmp_path_factory.mktemp("csv") / "h.csv"
    path.write_text(horizon_csv(points, "# a comment\n"), encoding="utf-8")
    back = read_horizon_csv(path)
    # The reader strips spaces round every value, so labels come back stripped.
    assert back == tuple(replace(p, azimuth_deg=p.azimuth_deg % 360.0, label=p.label.strip()) for p in points)


# ------------------------------------------------------------------ the site file and its CSV as one pair
# README, "Saving": a CSV-kept horizon is saved as a new revision beside the site
# file, and the site file's one rename switches to it.

def _with_point(site: Site, az: float) -> Site:
    return replace(site, horizon=replace(site.horizon, points=site.horizon.points + (HorizonPoint(az, 5.0),)))


def test_each_save_makes_the_next_revision_and_removes_the_one_before(demo_copy):
    folder = demo_copy("mill-lane-terrace")
    site = load_site(folder / "site.toml")
    save_site(_with_point(site, 1.0), folder / "site.toml")
    save_site(_with_point(load_site(folder / "site.toml"), 2.0), folder / "site.toml")
    csvs = sorted(p.name for p in folder.glob("*.csv"))
    assert csvs == ["horizon.csv", "horizon.rev2.csv"]  # rev1 removed; the original kept as it was
    doc = tomllib.loads((folder / "site.toml").read_text("utf-8"))
    assert doc["horizon"]["file"] == "horizon.rev2.csv"
    assert [p.azimuth_deg for p in load_site(folder / "site.toml").horizon.points[-2:]] == [1.0, 2.0]


def test_an_unchanged_horizon_is_not_written_again(demo_copy):
    folder = demo_copy("mill-lane-terrace")
    site = load_site(folder / "site.toml")
    written = save_site(replace(site, name="Renamed terrace"), folder / "site.toml")
    assert written == [folder / "site.toml"]
    assert tomllib.loads((folder / "site.toml").read_text("utf-8"))["horizon"]["file"] == "horizon.csv"


def test_a_revision_another_site_file_names_is_kept(demo_copy):
    folder = demo_copy("mill-lane-terrace")
    save_site(_with_point(load_site(folder / "site.toml"), 1.0), folder / "site.toml")
    shutil.copy(folder / "site.toml", folder / "copy.toml")  # both name horizon.rev1.csv
    save_site(_with_point(load_site(folder / "site.toml"), 2.0), folder / "site.toml")
    assert (folder / "horizon.rev1.csv").is_file()
    assert load_site(folder / "copy.toml").horizon.points[-1].azimuth_deg == 1.0


@pytest.mark.parametrize("named", ["../elsewhere/h.csv", "ABSOLUTE"])
def test_a_path_in_the_site_file_never_makes_a_write_outside_its_folder(tmp_path, named):
    site_folder, elsewhere = tmp_path / "site", tmp_path / "elsewhere"
    site_folder.mkdir()
    elsewhere.mkdir()
    (elsewhere / "h.csv").write_text("azimuth_deg,elevation_deg\n10,20\n", encoding="utf-8")
    named = str(elsewhere / "h.csv") if named == "ABSOLUTE" else named
    (site_folder / "site.toml").write_text(
        f'[site]\nname = "x"\nlatitude = 45.0\nlongitude = -73.0\n[mount]\nheight_m = 3\n'
        f'[horizon]\nfile = {toml_string(named)}\n', encoding="utf-8")
    before = {p: p.read_bytes() for p in tmp_path.rglob("*") if p.is_file()}
    written = save_site(_with_point(load_site(site_folder / "site.toml"), 99.0), site_folder / "site.toml")
    assert all(p.parent == site_folder for p in written)
    assert written[0].name == "h.rev1.csv"
    assert (elsewhere / "h.csv").read_bytes() == before[elsewhere / "h.csv"]
    assert sorted(p.name for p in elsewhere.iterdir()) == ["h.csv"]
    assert [p.azimuth_deg for p in load_site(site_folder / "site.toml").horizon.points] == [10.0, 99.0]
