"""Hostile inputs: every reader either returns a valid object or raises our
InputError with a line naming where, never another exception.

One harness (``only_our_error``) that each reader joins: generated text and
values (hypothesis, seeded, bounded example counts so CI stays in budget), and
the corpus of bad inputs found so far (``CORPUS``), each with the message a user
gets.  README, "Limits", lists the bounds checked here."""

from __future__ import annotations

import json
import os
import subprocess
import sys
import tomllib
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

# Examples per reader: 2,000 in the suite (seeded, so CI stays in its time budget);
# tools/fuzz_readers.py sets more, and a fresh seed, through these variables.
EXAMPLES = int(os.environ.get("LEOSITE_FUZZ_EXAMPLES", "2000"))
SEEDED = os.environ.get("LEOSITE_FUZZ_RANDOM", "") == ""
FUZZ = settings(max_examples=EXAMPLES, deadline=None, derandomize=SEEDED, database=None,
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
    "\u202e", "\ufeff", "1 2", "  ", "\\ud800", "\\udc00", "\\ud83d\\ude00", "\r", "²",
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
       "1 25544U 98067A   26152.50000000  .00016717  00000-0  10270-3 0  9996\n"
       "2 25544  51.6400 208.9163 0006317  69.9862  25.2906 15.49541234 12346\n")
OMM_JSON = json.dumps([{"OBJECT_NAME": "A", "NORAD_CAT_ID": 1, "EPOCH": "2026-06-01T00:00:00", "MEAN_MOTION": 15.0,
                        "ECCENTRICITY": 0.001, "INCLINATION": 53.0, "RA_OF_ASC_NODE": 10.0, "ARG_OF_PERICENTER": 0.0,
                        "MEAN_ANOMALY": 0.0}])


OMM_XML = ('<?xml version="1.0"?>\n<ndm><omm id="CCSDS_OMM_VERS" version="2.0"><body><segment><metadata>'
           "<OBJECT_NAME>A</OBJECT_NAME><OBJECT_ID>2026-001A</OBJECT_ID></metadata><data><meanElements>"
           "<EPOCH>2026-06-01T00:00:00</EPOCH><MEAN_MOTION>15.0</MEAN_MOTION><ECCENTRICITY>0.001</ECCENTRICITY>"
           "<INCLINATION>53.0</INCLINATION><RA_OF_ASC_NODE>10.0</RA_OF_ASC_NODE>"
           "<ARG_OF_PERICENTER>0.0</ARG_OF_PERICENTER><MEAN_ANOMALY>0.0</MEAN_ANOMALY></meanElements>"
           "<tleParameters><NORAD_CAT_ID>1</NORAD_CAT_ID><BSTAR>0.0001</BSTAR></tleParameters></data>"
           "</segment></body></omm></ndm>\n")
OMM_CSV = ("OBJECT_NAME,NORAD_CAT_ID,EPOCH,MEAN_MOTION,ECCENTRICITY,INCLINATION,RA_OF_ASC_NODE,"
           "ARG_OF_PERICENTER,MEAN_ANOMALY\nA,1,2026-06-01T00:00:00,15.0,0.001,53.0,10.0,0.0,0.0\n")


def test_the_seeds_are_good_element_sets():
    """Each splice starts from a file the reader takes, so the fuzzing probes the
    edge of what is accepted, not only the front door."""
    for text in (TLE, OMM_JSON, OMM_XML, OMM_CSV):
        assert len(parse_elements(text, "seed")) == 1


@FUZZ
@given(st.one_of(spliced(TLE), spliced(OMM_JSON), spliced(OMM_XML), spliced(OMM_CSV), TEXT))
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


# ------------------------------------------------------------------ command-line values

VALUES = st.one_of(st.floats().map(repr), st.integers().map(str), TEXT,
                   st.sampled_from(["inf", "-inf", "nan", "1e308", "0", "-0", "1e-320", "9" * 400, "", "2026-13-01",
                                    "9999-12-31T23:00:00Z", "0001-01-01", "2026-06-01T00:00:00+14:00", "1,2,3",
                                    "1,2", "nan,0,0", "1e308,1e308,1e308"]))


@FUZZ
@given(st.sampled_from(["--hours", "--step", "--min-elevation", "--start"]), VALUES)
def test_command_line_run_values(capsys, option, value):
    """What `leosite assess SITE OPTION=VALUE` does before any propagation: the
    parser, the option checks and the window.  A refusal is our one-line error."""
    from survey.cli import build_parser, check_run_args
    from survey.window import resolve_window

    def parse_and_plan():
        try:
            args = build_parser().parse_args(["assess", "demo:alder-brook-farm", f"{option}={value}"])
        except SystemExit as exc:  # the parser's own refusal: one line, exit 2
            err = capsys.readouterr().err.strip().splitlines()
            assert exc.code == 2 and len(err) == 1 and err[0].startswith("leosite: "), err
            return
        check_run_args(args)
        resolve_window(load_site(args.site), args.start, args.hours, args.step)

    only_our_error(parse_and_plan)


@FUZZ
@given(VALUES, VALUES, VALUES, VALUES)
def test_command_line_spot_values(capsys, at, years, spacing, target):
    """`leosite horizon --at --years` and `leosite spots --spacing --target-blocked`,
    through the parser and the checks the commands run before the work."""
    from survey.cli import _parse_at, build_parser
    from survey.spots import check_at, check_options

    def parse(argv):
        try:
            return build_parser().parse_args(argv)
        except SystemExit as exc:
            err = capsys.readouterr().err.strip().splitlines()
            assert exc.code == 2 and len(err) == 1 and err[0].startswith("leosite: "), err
            return None

    def horizon():
        args = parse(["horizon", "demo:alder-brook-farm", f"--at={at}", f"--years={years}"])
        if args is not None:
            check_at(*_parse_at(args.at), args.years)

    def spots():
        args = parse(["spots", "demo:alder-brook-farm", f"--spacing={spacing}", f"--target-blocked={target}"])
        if args is not None:
            check_options(args.years, args.spacing, args.target_blocked)

    only_our_error(horizon)
    only_our_error(spots)


# ------------------------------------------------------------------ the corpus
# Bad inputs found by the fuzzing above or reported by users, one file each in
# tests/corpus/, with the fragment of the message the user must see in
# tests/corpus/expected.toml.
CORPUS_DIR = ROOT / "tests" / "corpus"
CORPUS = tomllib.loads((CORPUS_DIR / "expected.toml").read_text("utf-8"))


def _corpus_reader(name: str):
    if name.startswith("site-"):
        return load_site, None
    if name.startswith("report-"):
        return load_report_inputs, None
    if name.startswith("horizon-"):
        return read_horizon_csv, None
    if name.startswith("shells-"):
        return None, parse_shells
    if name.startswith("elements-"):
        return None, parse_elements
    if name.startswith("plan-"):
        return (lambda p: load_plan_geojson(p, 45.0, -73.0)), None
    raise AssertionError(f"tests/corpus/{name}: no reader for this prefix")


def test_every_corpus_file_has_its_message():
    files = {p.name for p in CORPUS_DIR.iterdir()} - {"expected.toml"}
    assert files == set(CORPUS)


@pytest.mark.parametrize("name", sorted(CORPUS))
def test_corpus(name):
    path_reader, text_reader = _corpus_reader(name)
    path = CORPUS_DIR / name
    if text_reader is not None:
        problems = only_our_error(text_reader, path.read_text("utf-8"), name)
    else:
        problems = only_our_error(path_reader, path)
    assert problems and any(CORPUS[name] in p for p in problems), problems


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


# ------------------------------------------------------------------ horizon photos (survey/photo/)
def _photo_seed() -> bytes:
    """A small 2:1 panorama as JPEG: sky above a dark band (the reader's seed)."""
    import io

    import numpy as np
    from PIL import Image

    img = np.zeros((32, 64, 3), np.uint8)
    img[:] = (80, 140, 230)
    img[12:] = (40, 60, 30)
    buf = io.BytesIO()
    Image.fromarray(img).save(buf, format="JPEG", quality=90)
    return buf.getvalue()


PHOTO_SEED = _photo_seed()


def _read_photo_and_skyline(path):
    from survey.photo import PhotoSpec, photo_skyline
    from survey.photo.read import read_photo

    read_photo(path)
    return photo_skyline(PhotoSpec(path, "equirect", 0.0))


def test_photo_seed_is_accepted(tmp_path):
    path = tmp_path / "seed.jpg"
    path.write_bytes(PHOTO_SEED)
    sky = _read_photo_and_skyline(path)
    assert sky.covered.all() and 20.0 <= float(sky.el_deg.mean()) <= 25.0


@FUZZ
@given(spliced(PHOTO_SEED.decode("latin-1")))
def test_photo_reader(tmp_path_factory, text):
    from survey.photo.read import read_photo

    path = tmp_path_factory.mktemp("photo") / "p.jpg"
    path.write_bytes(text.encode("latin-1", errors="replace"))
    only_our_error(read_photo, path)


@FUZZ
@given(st.integers(0, len(PHOTO_SEED)), st.integers(0, len(PHOTO_SEED) - 1), st.integers(1, 255))
def test_photo_reader_truncated_or_flipped(tmp_path_factory, cut, at, flip):
    from survey.photo.read import read_photo

    data = bytearray(PHOTO_SEED)
    data[at] ^= flip
    path = tmp_path_factory.mktemp("photo") / "p.jpg"
    path.write_bytes(bytes(data[:cut]))
    only_our_error(read_photo, path)


PHOTO_SITE = MINIMAL_SITE + ('\n[horizon]\nreference = "magnetic"\n'
                             'photo = { file = "p.jpg", projection = "fisheye", bearing = 15, lens = "equisolid", '
                             'circle = [32, 16, 14] }\n')


def test_photo_site_seed_is_accepted(tmp_path):
    (tmp_path / "p.jpg").write_bytes(PHOTO_SEED)
    (tmp_path / "site.toml").write_text(PHOTO_SITE, encoding="utf-8")
    site = load_site(tmp_path / "site.toml")
    assert site.photo.projection == "fisheye" and site.photo.circle == (32.0, 16.0, 14.0)


@FUZZ
@given(spliced(PHOTO_SITE))
def test_site_file_with_a_photo_reader(tmp_path_factory, text):
    folder = tmp_path_factory.mktemp("site")
    (folder / "p.jpg").write_bytes(PHOTO_SEED)
    path = folder / "site.toml"
    path.write_text(text, encoding="utf-8", errors="surrogatepass")
    only_our_error(load_site, path)

# ------------------------------------------------------------------ moving installs (issue 15)

GPX_SEED = ('<?xml version="1.0" encoding="UTF-8"?>\n<gpx version="1.1" creator="seed" '
            'xmlns="http://www.topografix.com/GPX/1/1"><trk><name>seed</name><trkseg>'
            '<trkpt lat="45.30" lon="-72.60"><ele>2</ele><time>2026-06-01T00:00:00Z</time></trkpt>'
            '<trkpt lat="45.31" lon="-72.58"><ele>3</ele><time>2026-06-01T00:05:00Z</time></trkpt>'
            '<trkpt lat="45.32" lon="-72.56"><time>2026-06-01T00:10:00Z</time></trkpt>'
            "</trkseg></trk></gpx>\n")
PLATFORM_SEED = (MINIMAL_SITE.replace('kind = "fixed"', 'kind = "marine"')
                 + '\n[horizon]\nframe = "body"\npoints = [[80, 30, "arch"], [100, 30]]\n'
                 + '\n[platform]\nroute = "route.gpx"\nheel_deg = 5.0\nroll_deg = 3.0\nroll_period_s = 8\n'
                 + 'sea = "random"\n')


def test_the_route_and_platform_seeds_are_accepted(tmp_path):
    from survey.platform import read_route

    (tmp_path / "route.gpx").write_text(GPX_SEED, encoding="utf-8")
    assert len(read_route(tmp_path / "route.gpx").times_s) == 3
    (tmp_path / "site.toml").write_text(PLATFORM_SEED, encoding="utf-8")
    site = load_site(tmp_path / "site.toml")
    assert site.platform.heading_mode == "route" and site.platform.attitude.roll_deg == 3.0


@FUZZ
@given(spliced(GPX_SEED))
def test_route_gpx_reader(tmp_path_factory, text):
    from survey.platform import read_route

    path = tmp_path_factory.mktemp("gpx") / "route.gpx"
    path.write_text(text, encoding="utf-8", errors="surrogatepass")
    only_our_error(read_route, path)


@FUZZ
@given(spliced(PLATFORM_SEED))
def test_platform_table_reader(tmp_path_factory, text):
    folder = tmp_path_factory.mktemp("platform")
    (folder / "route.gpx").write_text(GPX_SEED, encoding="utf-8")

# ------------------------------------------------------------------ elevation tiles (issue 17)
# The [terrain] table of a site file, and the two tile readers (GeoTIFF and SRTM
# .hgt, survey/terrain/dem.py, through rasterio) fed spliced bytes: each gives a
# terrain horizon or our one-line error naming the file, never another exception.

TERRAIN_SITE = MINIMAL_SITE + '\n[terrain]\ndem = "tile.tif"\nmax_distance_km = 2\n'


def _seed_tile(folder: Path) -> Path:
    """A small pixel-is-point GeoTIFF (41 x 41 nodes, 3 arc-seconds) round 45 N, 73 W: a hill."""
    import numpy as np

    from .terrain_tiles import grid, local_metres, write_tif

    step = 3.0 / 3600.0
    lat, lon = grid(45.0 + 20 * step, -73.0 - 20 * step, step, 41, 41)
    e, n = local_metres(lat, lon, 45.0, -73.0)
    z = 100.0 + 400.0 * np.clip(1.0 - np.hypot(e - 500.0, n) / 600.0, 0.0, None)
    return write_tif(folder / "tile.tif", z, 45.0 + 20 * step, -73.0 - 20 * step, step, dtype="int16",
                     nodata=-32768)


def _terrain_of_file(path: Path):
    from survey.terrain import read_dem, terrain_horizon

    return terrain_horizon(read_dem(path, 45.0, -73.0, 2000.0), 45.0, -73.0, 5.0, 2000.0)


def spliced_bytes(base: bytes):
    """``base`` with generated bytes put in, written over, or cut off at one place."""
    return st.tuples(st.sampled_from(("insert", "overwrite", "truncate")), st.integers(0, len(base)),
                     st.binary(min_size=1, max_size=12)).map(
        lambda t: base[:t[1]] + t[2] + base[t[1]:] if t[0] == "insert"
        else base[:t[1]] + t[2] + base[t[1] + len(t[2]):] if t[0] == "overwrite" else base[:t[1]])


def test_the_terrain_seeds_are_accepted(tmp_path):
    pytest.importorskip("rasterio")
    _seed_tile(tmp_path)
    (tmp_path / "site.toml").write_text(TERRAIN_SITE, encoding="utf-8")
    site = load_site(tmp_path / "site.toml")
    assert site.terrain is not None and site.terrain.max_distance_km == 2.0
    th = _terrain_of_file(tmp_path / "tile.tif")
    assert th.elevation_deg.max() > 20.0 and not th.voids.any()


@FUZZ
@given(spliced(TERRAIN_SITE))
def test_terrain_table_reader(tmp_path_factory, text):
    folder = tmp_path_factory.mktemp("terrain-site")
    (folder / "tile.tif").write_bytes(b"")  # the table's reader only checks the file is there
    path = folder / "site.toml"
    path.write_text(text, encoding="utf-8", errors="surrogatepass")
    only_our_error(load_site, path)


REPORT_WITH_ROUTE = json.dumps({
    "report": {"kind": "leosite-site-report"},
    "inputs": {"site": {"site": {"name": "Seed boat", "latitude": 45.3, "longitude": -72.6},
                        "mount": {"kind": "marine", "height_m": 2.0},
                        "horizon": {"frame": "body", "points": [[80, 30, "arch"], [100, 30]]},
                        "platform": {"heel_deg": 5.0}},
               "fleet": {"kind": "default"},
               "route": {"source": "seed.gpx", "times_s": [1780272000, 1780272300, 1780272600],
                         "latitude_deg": [45.30, 45.31, 45.32], "longitude_deg": [-72.60, -72.58, -72.56],
                         "elevation_m": [2.0, None, 3.0]}}})


def test_the_report_with_a_route_seed_is_accepted(tmp_path):
    path = tmp_path / "r.json"
    path.write_text(REPORT_WITH_ROUTE, encoding="utf-8")
    saved = load_report_inputs(path)
    assert saved.site.platform.heading_mode == "route" and len(saved.site.platform.route.times_s) == 3


@FUZZ
@given(spliced(REPORT_WITH_ROUTE))
def test_report_json_route_reader(tmp_path_factory, text):
    path = tmp_path_factory.mktemp("rr") / "r.json"
    path.write_text(text, encoding="utf-8", errors="surrogatepass")
    only_our_error(load_report_inputs, path)

# The batch's sites CSV (issue 16, README "Batch runs"): a seed it accepts, and
# splices of it.  Rows may fail one by one (each naming file, line and column);
# the file as a whole is either read or refused with our one-line error.
SITES_CSV_SEED = ("id,latitude,longitude,elevation_m,height_m,min_elevation_deg,reference,horizon\n"
                  "farm-1,45.3182,-72.6415,212,6.5,25,magnetic,95:9;135:36;262:31\n"
                  "\"croft, south\",-45.03,169.2,,,,true,\n")


def test_sites_csv_seed_is_accepted(tmp_path):
    from survey.batch.inputs import read_sites_csv

    path = tmp_path / "sites.csv"
    path.write_text(SITES_CSV_SEED, encoding="utf-8")
    rows = read_sites_csv(path)
    assert [(r.id, r.problems) for r in rows] == [("farm-1", []), ("croft, south", [])]
    assert rows[0].site.horizon.reference == "magnetic" and len(rows[0].site.horizon.points) == 3


@FUZZ
@given(spliced(SITES_CSV_SEED))
def test_sites_csv_reader(tmp_path_factory, text):
    from survey.batch.inputs import read_sites_csv

    path = tmp_path_factory.mktemp("batch") / "sites.csv"
    path.write_text(text, encoding="utf-8", errors="surrogatepass")
    rows = only_our_error(read_sites_csv, path)
    if rows is None:  # read: every row is a site or has problems that name the file and the line
        for row in read_sites_csv(path):
            assert (row.site is None) == bool(row.problems)
            assert all(p.startswith(f"{path}: line ") for p in row.problems), row.problems

_SEED_TIF: list[bytes] = []


def _seed_tif_bytes() -> bytes:
    if not _SEED_TIF:
        import tempfile

        with tempfile.TemporaryDirectory() as d:
            _SEED_TIF.append(_seed_tile(Path(d)).read_bytes())
    return _SEED_TIF[0]


@FUZZ
@given(st.data())
def test_geotiff_tile_reader(tmp_path_factory, data):
    pytest.importorskip("rasterio")
    blob = data.draw(spliced_bytes(_seed_tif_bytes()))
    path = tmp_path_factory.mktemp("tif") / "tile.tif"
    path.write_bytes(blob)
    only_our_error(_terrain_of_file, path)


# An .hgt is 2.9 MB: a quarter of the examples keeps this reader's share of the suite in seconds.
@settings(FUZZ, max_examples=max(EXAMPLES // 4, 1))
@given(st.data())
def test_hgt_tile_reader(tmp_path_factory, data):
    pytest.importorskip("rasterio")
    import numpy as np

    base = np.full((1201, 1201), 300, dtype=">i2")
    base[600:610, 600:610] = 900
    blob = base.tobytes()
    pos = data.draw(st.integers(0, len(blob)))
    cut = data.draw(st.sampled_from(("insert", "overwrite", "truncate")))
    piece = data.draw(st.binary(min_size=1, max_size=12))
    blob = (blob[:pos] + piece + blob[pos:] if cut == "insert"
            else blob[:pos] + piece + blob[pos + len(piece):] if cut == "overwrite" else blob[:pos])
    path = tmp_path_factory.mktemp("hgt") / "N44W074.hgt"
    path.write_bytes(blob)
    only_our_error(lambda p: _terrain_of_file(p), path)
