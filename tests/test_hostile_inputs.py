"""Hostile inputs: every reader either returns a valid object or raises our
InputError with a line naming where, never another exception.

One harness (``only_our_error``) that each reader joins: generated text and
values (hypothesis, seeded, bounded example counts so CI stays in budget), and
the corpus of bad inputs found so far (``CORPUS``), each with the message a user
gets.  README, "Limits", lists the bounds checked here."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from survey.constellation import parse_elements, parse_shells
from survey.errors import InputError
from survey.horizon import read_horizon_csv
from survey.plan import load_plan_geojson
from survey.report import load_report_inputs
from survey.site import load_site

from .helpers import MINIMAL_SITE, ROOT

FUZZ = settings(max_examples=300, deadline=None, derandomize=True,
                suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow])


def only_our_error(read, *args):
    """Run ``read``; an InputError must name where (file: field or line)."""
    try:
        read(*args)
    except InputError as exc:
        assert exc.problems and all(": " in line for line in exc.problems), exc.problems
        return exc.problems
    return None


# Text a hostile or careless file may hold: TOML/CSV/JSON punctuation, control
# characters, huge and odd numbers, non-Latin letters.
PIECES = st.sampled_from([
    "[", "]", "{", "}", "=", ",", '"', "'", "#", "\n", "\x00", "\t", ":", ";", "-", ".", "e", "inf", "nan",
    "1e308", "-1e308", "9" * 400, "0x1F", "true", "[[", "]]", "points", "latitude", "azimuth_deg", "Ōtaki",
    "\u202e", "\ufeff", "1 2", "  ",
])
TEXT = st.lists(st.one_of(PIECES, st.text(max_size=6)), max_size=40).map("".join)


def spliced(base: str):
    """``base`` with generated text put in at one place (a realistic corruption)."""
    return st.tuples(st.integers(0, len(base)), TEXT).map(lambda t: base[:t[0]] + t[1] + base[t[0]:])


@FUZZ
@given(spliced(MINIMAL_SITE + '\n[horizon]\nreference = "true"\npoints = [[10, 20], [200, 30, 15.0, "oak"]]\n'))
def test_site_file_reader(tmp_path_factory, text):
    path = tmp_path_factory.mktemp("site") / "site.toml"
    path.write_text(text, encoding="utf-8", errors="surrogatepass")
    only_our_error(load_site, path)


@FUZZ
@given(spliced("azimuth_deg,elevation_deg,distance_m,label\n10,20,,oak\n200,30.5,15,\"barn, east\"\n"))
def test_horizon_csv_reader(tmp_path_factory, text):
    path = tmp_path_factory.mktemp("csv") / "h.csv"
    path.write_text(text, encoding="utf-8", errors="surrogatepass")
    only_our_error(read_horizon_csv, path)


@FUZZ
@given(spliced('[[shell]]\nname = "a"\naltitude_km = 550\ninclination_deg = 53\nplanes = 4\nper_plane = 3\nphasing = 1\n'))
def test_shell_file_reader(text):
    only_our_error(parse_shells, text, "shells.toml")


TLE = ("ONE\n"
       "1 25544U 98067A   26152.50000000  .00016717  00000-0  10270-3 0  9993\n"
       "2 25544  51.6400 208.9163 0006317  69.9862  25.2906 15.49541234 12345\n")
OMM_JSON = json.dumps([{"OBJECT_NAME": "A", "NORAD_CAT_ID": 1, "EPOCH": "2026-06-01T00:00:00", "MEAN_MOTION": 15.0,
                        "ECCENTRICITY": 0.001, "INCLINATION": 53.0, "RA_OF_ASC_NODE": 10.0, "ARG_OF_PERICENTER": 0.0,
                        "MEAN_ANOMALY": 0.0}])


@FUZZ
@given(st.one_of(spliced(TLE), spliced(OMM_JSON), TEXT))
def test_element_set_reader(text):
    only_our_error(parse_elements, text, "elements.txt")


GEOJSON = json.dumps({"type": "FeatureCollection", "features": [
    {"type": "Feature", "geometry": {"type": "Point", "coordinates": [-72.64, 45.318]},
     "properties": {"kind": "tree", "name": "oak", "height_m": 12, "crown_radius_m": 3}}]})


@FUZZ
@given(spliced(GEOJSON))
def test_geojson_plan_reader(tmp_path_factory, text):
    path = tmp_path_factory.mktemp("plan") / "plan.geojson"
    path.write_text(text, encoding="utf-8", errors="surrogatepass")
    only_our_error(load_plan_geojson, path, 45.318, -72.64)


REPORT = json.dumps({"report": {"kind": "leosite-site-report"}, "inputs": {
    "site": {"site": {"name": "x", "latitude": 45.0, "longitude": -73.0}}, "fleet": {"kind": "default"}}})


@FUZZ
@given(spliced(REPORT))
def test_report_json_reader(tmp_path_factory, text):
    path = tmp_path_factory.mktemp("report") / "r.json"
    path.write_text(text, encoding="utf-8", errors="surrogatepass")
    only_our_error(load_report_inputs, path)


# ------------------------------------------------------------------ the corpus
# Bad inputs found by the fuzzing above or reported by users, each with the
# fragment of the message the user must see.
CORPUS = [
    ("site", MINIMAL_SITE.replace("latitude = 45.0", "latitude = " + "9" * 400), "site.latitude: expected a number"),
    ("site", MINIMAL_SITE + "\n[survey]\nnotes = " + "[" * 5000 + "]" * 5000 + "\n", "nested too deeply"),
    ("report", json.dumps({"report": [1, 2]}), "report.kind: not a leosite site report"),
    ("report", "[" * 100000 + "]" * 100000, "JSON nested too deeply"),
    ("report", REPORT.replace('"fleet": {"kind": "default"}', '"fleet": [1]'), "inputs.fleet: expected an object"),
    ("csv", "azimuth_deg,elevation_deg,label\n10,20," + "x" * 200000 + "\n", "line 2: not a CSV row"),
    ("csv", "azimuth_deg,elevation_deg,elevation_deg\n10,20,30\n", "column 'elevation_deg' appears more than once"),
    ("shells", '[[shell]]\nname="x"\naltitude_km=550\ninclination_deg=53\nplanes=1000\nper_plane=1000\n',
     "1,000,000 satellites in all, more than the limit of 50,000"),
]


@pytest.mark.parametrize("kind, text, fragment", CORPUS, ids=[f"{k}-{i}" for i, (k, _, _) in enumerate(CORPUS)])
def test_corpus(tmp_path, kind, text, fragment):
    read = {"site": (load_site, "site.toml"), "report": (load_report_inputs, "r.json"),
            "csv": (read_horizon_csv, "h.csv"), "shells": (None, "s.toml")}[kind]
    if kind == "shells":
        problems = only_our_error(parse_shells, text, "s.toml")
    else:
        path = tmp_path / read[1]
        path.write_text(text, encoding="utf-8")
        problems = only_our_error(read[0], path)
    assert problems and any(fragment in p for p in problems), problems


def test_a_closed_pipe_ends_quietly(tmp_path):
    """`leosite assess ... --json | head -1`: the reader goes away; no traceback,
    the status a shell gives a writer stopped by SIGPIPE."""
    site = tmp_path / "site.toml"
    site.write_text(MINIMAL_SITE, encoding="utf-8")
    code = "import sys; from tui.launch import main; sys.exit(main(sys.argv[1:]))"
    p = subprocess.Popen([sys.executable, "-c", code, "assess", str(site), "--json", "--hours", "1", "--step", "60"],
                         stdout=subprocess.PIPE, stderr=subprocess.PIPE, cwd=Path(ROOT))
    p.stdout.close()
    err = p.stderr.read().decode()
    assert p.wait(timeout=120) == 141 and "Traceback" not in err, err


OMM_ONE = json.loads(OMM_JSON)[0]


@pytest.mark.parametrize("key, value, why", [
    ("MEAN_MOTION", 0, "mean motion 0 rev/day is not a positive number"),
    ("MEAN_MOTION", -1, "is not a positive number"),
    ("MEAN_MOTION", "nan", "is not a positive number"),
    ("ECCENTRICITY", 1.0, "eccentricity 1 is outside 0 to 1"),
    ("ECCENTRICITY", 1.5, "outside 0 to 1"),
    ("MEAN_MOTION", 40, "is below the Earth's surface"),  # a = 3,600 km: inside the Earth
    ("EPOCH", "9999-12-31T00:00:00", "epoch in the year 9999 is outside 1957 to 2100"),
])
def test_an_impossible_satellite_is_left_out_and_named(key, value, why):
    """Kepler's third law: 40 rev/day gives a = (mu / n^2)^(1/3) of about 3,600 km,
    under the Earth's 6,378 km radius (hand computation)."""
    bad = dict(OMM_ONE, **{key: value}, OBJECT_NAME="B", NORAD_CAT_ID=2)
    fleet = parse_elements(json.dumps([bad, OMM_ONE]), "x.json")
    assert len(fleet) == 1 and fleet.names == ["A"]
    (note,) = fleet.dropped
    assert note.startswith("record 1 (B): ") and why in note, note
    with pytest.raises(InputError) as exc:  # none left: no verdict from nothing
        parse_elements(json.dumps([bad]), "x.json")
    assert "no element set describes a satellite in orbit" in exc.value.problems[0]


def test_the_run_warns_of_what_was_left_out(tmp_path):
    from survey.pipeline import FleetChoice, run_site

    bad = dict(OMM_ONE, MEAN_MOTION=0, OBJECT_NAME="B", NORAD_CAT_ID=2)
    (tmp_path / "f.json").write_text(json.dumps([bad, OMM_ONE]))
    (tmp_path / "site.toml").write_text(MINIMAL_SITE)
    run = run_site(load_site(tmp_path / "site.toml"), FleetChoice(elements=tmp_path / "f.json"), hours=1, step_s=60)
    assert any("1 element sets left out as impossible" in w and "record 1 (B)" in w for w in run.warnings)


@pytest.mark.parametrize("points, fragment", [
    ("[[720, 10]]", "azimuth 720 is outside -360 to 720 degrees"),
    ("[[-1e308, 10]]", "is outside -360 to 720 degrees"),
])
def test_azimuths_beyond_one_turn_either_side_are_refused(write_site, points, fragment):
    """README, "Limits": a bearing in -360 to 720 is taken modulo 360; beyond, refused."""
    path = write_site(MINIMAL_SITE + f'\n[horizon]\nreference = "true"\npoints = {points}\n')
    problems = only_our_error(load_site, path)
    assert problems and any(fragment in p for p in problems), problems
    ok = write_site(MINIMAL_SITE + '\n[horizon]\nreference = "true"\npoints = [[-10, 5], [370, 8]]\n', "ok.toml")
    assert [p.azimuth_deg for p in load_site(ok).horizon.points] == [350.0, 10.0]


@pytest.mark.parametrize("row, fragment", [
    ('10,20,"oak\n', "a quote is opened and not closed"),
    ("10,20,o\x00k\n", "holds a NUL character"),
])
def test_csv_rows_a_reader_cannot_trust_are_refused(tmp_path, row, fragment):
    path = tmp_path / "h.csv"
    path.write_text("azimuth_deg,elevation_deg,label\n" + row, encoding="utf-8")
    problems = only_our_error(read_horizon_csv, path)
    assert problems and any("line 2" in p and fragment in p for p in problems), problems


@pytest.mark.parametrize("value, ok", [("1e-300", False), ("0.5", False), ("1", True), ("86400", True),
                                       ("86401", False)])
def test_scheduling_period_bounds(write_site, value, ok):
    path = write_site(MINIMAL_SITE + f"\n[schedule]\nreassign_s = {value}\n")
    problems = only_our_error(load_site, path)
    assert (problems is None) == ok, problems
    if not ok:
        assert any("schedule.reassign_s" in p for p in problems)


def test_tle_day_of_year_999_is_refused():
    from survey.constellation import tle_checksum

    l1 = "1 25544U 98067A   26999.50000000  .00016717  00000-0  10270-3 0  999"
    l2 = "2 25544  51.6400 208.9163 0006317  69.9862  25.2906 15.49541234 1234"
    text = l1 + str(tle_checksum(l1 + "0")) + "\n" + l2 + str(tle_checksum(l2 + "0")) + "\n"
    problems = only_our_error(parse_elements, text, "x.tle")
    assert problems and "line 1: epoch day of year '999.50000000' is outside 1 to 366" in problems[0]
