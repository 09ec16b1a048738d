"""``leosite batch`` (README, "Batch runs"): the figures of each row equal
``leosite assess`` on the same site to the printed precision; the shared,
Earth-fixed propagation gives skyfield's own topocentric positions; bad rows of
every kind are reported per row while the good rows still come out; an
unusable input is refused whole with exit code 2 and nothing written."""

from __future__ import annotations

import csv
import io
import json
import math
import shutil
from datetime import datetime, timedelta, timezone

import numpy as np
import pytest

from survey.cli import main
from survey.errors import InputError
from survey.words import duration, pct

from .helpers import DEMO, MINIMAL_SITE

START = "2026-06-01T00:00:00Z"
WINDOW = ["--start", START, "--hours", "3", "--step", "30"]
HEADER = "id,latitude,longitude,elevation_m,height_m,min_elevation_deg,reference,horizon\n"
# A handful of invented sites: one with a horizon through north, one south of the
# equator with compass bearings, one far north, one with no horizon yet, one high
# minimum elevation.
GOOD_ROWS = [
    "north-through,45.3182,-72.6415,212,6.5,25,true,350:32;10:28;95:9;180:12;262:31",
    "south-compass,-45.03,169.2,410,4,25,magnetic,20:18;135:36;250:22",
    "far-north,78.2,15.6,30,3,30,true,0:10;120:40;240:15",
    "no-horizon-yet,10.5,-60.1,,,,,",
    "steep,51.5,-0.1,50,8,40,true,90:45;270:45",
]


def run(argv, capsys):
    code = main(argv)
    out, err = capsys.readouterr()
    return code, out, err


def read_csv(path):
    return list(csv.DictReader(io.StringIO(path.read_text("utf-8"))))


def site_toml(row: str) -> str:
    """The same site as a site file, written out by hand from the CSV row."""
    ident, lat, lon, elev, height, min_el, ref, horizon = row.split(",")
    pts = [[float(x) for x in pair.split(":")] for pair in horizon.split(";") if pair]
    return (f'[site]\nname = "{ident}"\nlatitude = {lat}\nlongitude = {lon}\n'
            + (f"elevation_m = {elev}\n" if elev else "")
            + (f"[mount]\nheight_m = {height}\n" if height else "")
            + (f"[terminal]\nmin_elevation_deg = {min_el}\n" if min_el else "")
            + f'[horizon]\nreference = "{ref or "true"}"\npoints = {pts}\n')


def test_batch_figures_equal_assess_on_the_same_sites(tmp_path, capsys):
    sites = tmp_path / "sites.csv"
    sites.write_text(HEADER + "\n".join(GOOD_ROWS) + "\n", "utf-8")
    out = tmp_path / "results.csv"
    code, _, err = run(["batch", str(sites), "--out", str(out), "--workers", "1", *WINDOW], capsys)
    assert code == 0, err
    assert "5 sites:" in err and "0 failed" in err
    rows = read_csv(out)
    assert [r["id"] for r in rows] == [r.split(",")[0] for r in GOOD_ROWS]
    for row, got in zip(GOOD_ROWS, rows):
        path = tmp_path / f"{got['id']}.toml"
        path.write_text(site_toml(row), "utf-8")
        code, text, err = run(["assess", str(path), "--json", *WINDOW], capsys)
        assert code == 0, err
        want = json.loads(text)
        assert got["verdict"] == want["verdict"], got["id"]
        # The printed precision: assess prints percentages to 0.01 % and outages
        # to 0.1 a day and the duration format (cli.format_summary).
        for key in ("blocked_fraction", "availability", "interruption"):
            batch_value = float(got[key]) if got[key] else None
            assert pct(batch_value, 2) == pct(want[key], 2), (got["id"], key)
        assert f"{float(got['outages_per_day']):.1f}" == f"{want['outages']['count_per_day']:.1f}"
        assert duration(float(got["longest_outage_s"])) == duration(want["outages"]["longest_s"])
        assert got["warnings"].split(" | ") == want["warnings"]
        assert got["error"] == ""


def test_the_shared_sky_is_skyfields_topocentric_sky():
    """Reference: skyfield's ``(satellite - site).at(t).altaz()`` for a plain loop
    over a sub-fleet, at every sample (no refraction, as tracks.py).  The same
    usable samples, and azimuth and elevation within 0.01 degree (the tolerance
    of tests/test_tracks.py)."""
    from skyfield.api import EarthSatellite, load, wgs84

    from survey.batch.sky import propagate
    from survey.constellation import default_fleet
    from survey.site import Terminal
    from survey.tracks import Observer
    from survey.window import WindowSpec

    window = WindowSpec(datetime(2026, 6, 1, tzinfo=timezone.utc), 2.0, 60.0)
    full = default_fleet(window.start)
    fleet = type(full)(full.satrecs[::40], full.names[::40], full.group[::40], full.source)
    sky = propagate(fleet, window, ("default", "", ""))
    ts = load.timescale(builtin=True)
    times = ts.utc(2026, 6, 1, 0, 0, np.arange(window.count) * 60.0)
    for lat, lon in ((45.3, -72.6), (-41.2, 174.8), (89.5, 10.0)):  # mid north, south, near the pole
        terminal = Terminal(20.0)
        tracks = sky.tracks(Observer(lat, lon, 300.0), terminal)
        got = {(int(s), int(k)): (float(a), float(e)) for s, k, a, e in
               zip(tracks.sat, tracks.time_index, tracks.az_deg, tracks.el_deg)}
        want = {}
        for i, sat in enumerate(fleet.satrecs):
            alt, az, _ = (EarthSatellite.from_satrec(sat, ts) - wgs84.latlon(lat, lon, elevation_m=300.0)) \
                .at(times).altaz()
            for k in np.flatnonzero(alt.degrees >= terminal.min_elevation_deg):
                want[(i, int(k))] = (az.degrees[k], alt.degrees[k])
        assert want and set(got) == set(want), (lat, lon)
        for key, (a, e) in want.items():
            assert abs(got[key][1] - e) < 0.01
            assert abs((got[key][0] - a + 180.0) % 360.0 - 180.0) < 0.01


BAD_ROWS = [
    ("lat-missing,,-72.6,,,,,", "line 3: id 'lat-missing': latitude: missing"),
    ("garbage,45,-72,,,,,95:9;oak", "horizon: pair 2 'oak' is not azimuth:elevation"),
    ("garbage2,45,-72,,,,,95:x", "horizon: pair 1 '95:x' is not two numbers of degrees"),
    ("far-lat,95,-72,,,,,", "latitude: 95.0 is outside -90.0 to 90.0"),
    ("low-el,45,-72,,,-5,,", "min_elevation_deg: -5.0 is outside 0.0 to 90.0"),
    ("tall-el,45,-72,,,,,10:95", "horizon: pair 1: elevation 95.0 is outside 0 to 90 degrees"),
    ("good,46,-71,,,,grid,", "reference: 'grid' is not one of: true, magnetic"),
    ("good,46,-71,,,,,", "id 'good': repeats the id of line 2"),
    (",46,-71,,,,,", "id: missing"),
    ("short,46", "expected 8 values"),
    ("text-lat,north,-71,,,,,", "latitude: expected a number, got 'north'"),
]


def test_bad_rows_of_every_kind_are_reported_per_row_and_the_good_rows_come_out(tmp_path, capsys):
    sites = tmp_path / "sites.csv"
    lines = ["good,45.3,-72.6,200,5,25,true,90:20;270:30"] + [r for r, _ in BAD_ROWS] + ["also-good,-33.9,18.4,,,,,"]
    sites.write_text(HEADER + "\n".join(lines) + "\n", "utf-8")
    out = tmp_path / "results.csv"
    code, _, err = run(["batch", str(sites), "--out", str(out), "--workers", "1", *WINDOW], capsys)
    assert code == 3, err
    rows = read_csv(out)
    assert len(rows) == len(lines)  # one row out per row in, in input order
    assert rows[0]["id"] == "good" and rows[0]["verdict"] and not rows[0]["error"]
    assert rows[-1]["id"] == "also-good" and rows[-1]["verdict"] and not rows[-1]["error"]
    for (_, fragment), got in zip(BAD_ROWS, rows[1:-1]):
        assert fragment in got["error"], (fragment, got["error"])
        assert got["error"].startswith(f"{sites}: line ")
        assert got["verdict"] == "" and got["blocked_fraction"] == ""
    assert f"{len(lines)} sites:" in err and f"{len(BAD_ROWS)} failed" in err
    assert "Traceback" not in err


@pytest.mark.parametrize("text, fragment", [
    ("", "empty: expected a header"),
    ("id,latitude\nx,1\n", "missing column 'longitude'"),
    ("id,latitude,longitude,lattitude\n", "unknown column 'lattitude'"),
    ("id,latitude,longitude,id\n", "column 'id' appears more than once"),
    ("id,latitude,longitude\n", "no sites: a header and no rows"),
    (b"id,latitude,longitude\n\xff\xfe,1,2\n", "not UTF-8 text"),
])
def test_an_unusable_input_is_refused_whole_with_exit_2_and_nothing_written(tmp_path, capsys, text, fragment):
    sites = tmp_path / "sites.csv"
    sites.write_bytes(text if isinstance(text, bytes) else text.encode("utf-8"))
    out = tmp_path / "results.csv"
    code, _, err = run(["batch", str(sites), "--out", str(out), *WINDOW], capsys)
    assert code == 2 and fragment in err, err
    assert err.startswith(f"leosite: {sites}") and "Traceback" not in err
    assert not out.exists()


@pytest.mark.parametrize("argv, fragment", [
    (["--workers", "0"], "--workers: expected 1 to 1024"),
    (["--out", "{sites}"], "is the input: the results would overwrite it"),
    (["--hours", "0"], "--hours: expected more than 0"),
    (["--workers", "2", "--scheduler", "tcp://127.0.0.1:1"], "give --workers or --scheduler, not both"),
])
def test_bad_options_are_refused_before_any_work(tmp_path, capsys, argv, fragment):
    sites = tmp_path / "sites.csv"
    sites.write_text(HEADER + GOOD_ROWS[0] + "\n", "utf-8")
    argv = [a.format(sites=sites) for a in argv]
    code, _, err = run(["batch", str(sites), "--out", str(tmp_path / "r.csv"), *argv], capsys)
    assert code == 2 and fragment in err, err
    assert sites.read_text("utf-8") == HEADER + GOOD_ROWS[0] + "\n"


def test_a_shell_file_is_the_fleet_as_for_assess(tmp_path, capsys):
    shells = tmp_path / "shells.toml"
    shells.write_text('[[shell]]\nname = "test-53"\naltitude_km = 550\ninclination_deg = 53\nplanes = 12\n'
                      'per_plane = 10\nphasing = 1\n', "utf-8")
    sites = tmp_path / "sites.csv"
    sites.write_text(HEADER + GOOD_ROWS[0] + "\n", "utf-8")
    out = tmp_path / "r.csv"
    code, _, err = run(["batch", str(sites), "--out", str(out), "--shells", str(shells), "--workers", "1", *WINDOW],
                       capsys)
    assert code == 0, err
    assert "propagated 120 satellites" in err
    got = read_csv(out)[0]
    path = tmp_path / "site.toml"
    path.write_text(site_toml(GOOD_ROWS[0]), "utf-8")
    code, text, err = run(["assess", str(path), "--json", "--shells", str(shells), *WINDOW], capsys)
    want = json.loads(text)
    assert got["verdict"] == want["verdict"] and "illustrative" not in got["warnings"]
    for key in ("blocked_fraction", "availability", "interruption"):
        assert pct(float(got[key]), 2) == pct(want[key], 2)


def test_a_folder_of_site_files_is_a_batch_with_each_files_own_window(tmp_path, capsys):
    """The demo sites as a folder (each <name>/site.toml): each keeps its [window]
    unless a flag overrides it; the results equal assess of each file."""
    folder = tmp_path / "sites"
    for name in ("alder-brook-farm", "mill-lane-terrace", "tussock-ridge-croft"):
        shutil.copytree(DEMO / name, folder / name)
    (folder / "broken.toml").write_text("[site]\nname = 'x'\n", "utf-8")
    (folder / "next-day.toml").write_text(MINIMAL_SITE + "[window]\nstart = 2026-06-02\n", "utf-8")
    out = tmp_path / "results.csv"
    window = ["--hours", "2", "--step", "60"]  # each file's own start (the demo's: 2026-06-01)
    code, _, err = run(["batch", str(folder), "--out", str(out), "--workers", "1", *window], capsys)
    assert code == 3, err
    assert err.count("propagated 1,720 satellites") == 2  # once per window: two starts
    rows = read_csv(out)
    assert [r["id"] for r in rows] == ["alder-brook-farm", "broken", "mill-lane-terrace", "next-day",
                                       "tussock-ridge-croft"]  # sorted by path
    assert "site.latitude: missing" in rows[1]["error"]
    for got in rows[:1] + rows[2:]:
        path = folder / got["id"] / "site.toml"
        path = path if path.exists() else folder / f"{got['id']}.toml"
        code, text, err = run(["assess", str(path), "--json", *window], capsys)
        want = json.loads(text)
        assert got["verdict"] == want["verdict"]
        assert pct(float(got["blocked_fraction"]), 2) == pct(want["blocked_fraction"], 2)
        assert pct(float(got["interruption"]), 2) == pct(want["interruption"], 2)


def test_reports_are_written_for_each_site_in_the_chosen_format(tmp_path, capsys):
    sites = tmp_path / "sites.csv"
    sites.write_text(HEADER + GOOD_ROWS[0] + "\n" + "a/b,45,-72,,,,,\n", "utf-8")
    out, reports = tmp_path / "results.csv", tmp_path / "reports"
    code, _, err = run(["batch", str(sites), "--out", str(out), "--workers", "1", "--reports", str(reports),
                        "--report-format", "json", *WINDOW], capsys)
    assert code == 0, err
    assert sorted(p.name for p in reports.iterdir()) == ["a_b.json", "north-through.json"]
    doc = json.loads((reports / "north-through.json").read_text("utf-8"))
    row = read_csv(out)[0]
    assert doc["result"]["verdict"] == row["verdict"]
    assert f"{doc['result']['blocked_fraction']:.6f}" == row["blocked_fraction"]
    # The report's inputs run again through `leosite report` give the same figures.
    again = tmp_path / "again.json"
    code, _, err = run(["report", str(reports / "north-through.json"), "--out", str(again)], capsys)
    assert code == 0, err
    assert json.loads(again.read_text("utf-8"))["result"]["blocked_fraction"] == doc["result"]["blocked_fraction"]


def test_a_pdf_report_is_a_real_pdf(tmp_path, capsys):
    pypdf = pytest.importorskip("pypdf")
    sites = tmp_path / "sites.csv"
    sites.write_text(HEADER + GOOD_ROWS[0] + "\n", "utf-8")
    reports = tmp_path / "reports"
    code, _, err = run(["batch", str(sites), "--out", str(tmp_path / "r.csv"), "--workers", "1",
                        "--reports", str(reports), *WINDOW], capsys)
    assert code == 0, err
    text = "".join(p.extract_text() for p in pypdf.PdfReader(reports / "north-through.pdf").pages)
    assert "north-through" in text


def test_local_worker_processes_give_the_same_csv_as_one(tmp_path, capsys):
    sites = tmp_path / "sites.csv"
    sites.write_text(HEADER + "\n".join(GOOD_ROWS) + "\n", "utf-8")
    outs = []
    for workers in ("1", "2"):
        out = tmp_path / f"r{workers}.csv"
        code, _, err = run(["batch", str(sites), "--out", str(out), "--workers", workers, *WINDOW], capsys)
        assert code == 0, err
        outs.append(out.read_bytes())
    assert outs[0] == outs[1]


def test_the_progress_line_has_a_rate_and_an_eta():
    from survey.batch.command import BatchProgress

    bar = BatchProgress(10, live=False)
    bar.t0 -= 2.0  # two seconds in
    bar.update(4, 1)
    line = bar.line()
    assert "4/10" in line and "sites/s" in line and "ETA" in line and "1 failed" in line
    rate = float(line.split(", ")[1].split()[0])
    assert math.isclose(rate, 2.0, rel_tol=0.05)
    assert math.isclose(float(line.split("ETA ")[1].split()[0]), 3.0, abs_tol=1.0)  # 6 left at 2 a second


def test_a_row_whose_window_is_refused_fails_alone(tmp_path, capsys):
    folder = tmp_path / "sites"
    folder.mkdir()
    (folder / "ok.toml").write_text(MINIMAL_SITE + "[window]\nhours = 1\nstep_s = 60\n", "utf-8")
    (folder / "long.toml").write_text(MINIMAL_SITE + "[window]\nstart = 2026-06-01\nhours = 8000\nstep_s = 0.1\n",
                                      "utf-8")
    out = tmp_path / "r.csv"
    code, _, err = run(["batch", str(folder), "--out", str(out), "--workers", "1", "--start", START], capsys)
    assert code == 3, err
    rows = {r["id"]: r for r in read_csv(out)}
    assert "samples per satellite is too many" in rows["long"]["error"]
    assert rows["ok"]["verdict"]


def test_the_batch_size_limit_is_checked_before_the_work(tmp_path, capsys):
    sites = tmp_path / "sites.csv"
    sites.write_text(HEADER + GOOD_ROWS[0] + "\n", "utf-8")
    code, _, err = run(["batch", str(sites), "--out", str(tmp_path / "r.csv"), "--hours", "720", "--step", "10"],
                       capsys)
    assert code == 2 and "more than the batch limit of 50,000,000" in err, err


def test_sites_csv_reader_names_the_line_and_column():
    from survey.batch.inputs import read_sites_csv

    with pytest.raises(InputError) as exc:
        read_sites_csv(DEMO / "nothing-here.csv")
    assert "sites CSV not found" in exc.value.problems[0]


def test_default_window_is_one_day_from_today_for_every_row(tmp_path, capsys):
    """window.py's rule: no flag and no [window]: today 00:00 UTC; one clock for all rows."""
    sites = tmp_path / "sites.csv"
    sites.write_text(HEADER + GOOD_ROWS[3] + "\n", "utf-8")
    db = tmp_path / "reg.sqlite"
    code, _, err = run(["batch", str(sites), "--out", str(tmp_path / "r.csv"), "--workers", "1", "--hours", "1",
                        "--step", "60", "--db", str(db)], capsys)
    assert code == 0, err
    import sqlite3

    start = sqlite3.connect(db).execute("SELECT window_start_utc FROM assessments").fetchone()[0]
    today = datetime.now(timezone.utc).replace(hour=0, minute=0, second=0, microsecond=0)
    assert start in (today.strftime("%Y-%m-%dT%H:%M:%SZ"), (today - timedelta(days=1)).strftime("%Y-%m-%dT%H:%M:%SZ"))


def test_dem_gives_every_site_its_terrain_horizon_as_assess_does(tmp_path, capsys):
    """batch --dem (issue 17): a sites CSV on the invented valley tile gives the
    figures `leosite assess` gives the same site written with [terrain] (README,
    "Batch runs"); without --dem the ridge is missing and the sky is clearer; a
    site file's own [terrain] is kept."""
    tile = DEMO / "larchwater-hollow" / "larchwater-6s.tif"
    row = "cabin,45.618,-110.902,884,4,25,true,"
    sites = tmp_path / "sites.csv"
    sites.write_text(HEADER + row + "\n", "utf-8")
    with_dem, without = tmp_path / "dem.csv", tmp_path / "plain.csv"
    code, _, err = run(["batch", str(sites), "--out", str(with_dem), "--workers", "1", "--dem", str(tile),
                        "--dem-km", "25", *WINDOW], capsys)
    assert code == 0, err
    code, _, err = run(["batch", str(sites), "--out", str(without), "--workers", "1", *WINDOW], capsys)
    assert code == 0, err
    site = tmp_path / "cabin.toml"
    site.write_text(site_toml(row) + f'[terrain]\ndem = "{tile.as_posix()}"\nmax_distance_km = 25\n', "utf-8")
    code, text, err = run(["assess", str(site), "--json", *WINDOW], capsys)
    assert code == 0, err
    want = json.loads(text)
    (got,), (plain,) = read_csv(with_dem), read_csv(without)
    # Within 0.02 %: the batch runs SGP4 at every sample and assess between minute
    # points (README, "Batch runs"), so a sample grazing the ridge's edge can flip.
    for key in ("blocked_fraction", "availability", "interruption"):
        assert abs(float(got[key]) - want[key]) <= 2e-4, (key, got[key], want[key])
    assert float(got["blocked_fraction"]) > float(plain["blocked_fraction"]) + 0.02  # the ridge stands above 25°


@pytest.mark.parametrize("argv, fragment", [
    (["--dem", "no-such-tiles"], "--dem:"),
    (["--dem-km", "10"], "--dem-km: needs --dem"),
])
def test_bad_dem_options_are_refused(tmp_path, capsys, argv, fragment):
    sites = tmp_path / "sites.csv"
    sites.write_text(HEADER + GOOD_ROWS[0] + "\n", "utf-8")
    code, _, err = run(["batch", str(sites), "--out", str(tmp_path / "r.csv"), *argv], capsys)
    assert code == 2 and fragment in err and "Traceback" not in err, err
    assert not (tmp_path / "r.csv").exists()
