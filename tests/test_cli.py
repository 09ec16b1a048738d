"""The `leosite` command line: output contract, exit codes, bad input, no partial files."""

from __future__ import annotations

import json
import os
import subprocess
import sys

import pytest
from PIL import Image

from survey.cli import main

from .helpers import DEMO, MINIMAL_SITE, ROOT

FAST = ["--hours", "2", "--step", "30"]
JSON_KEYS = {"site", "window", "satellites", "declination_deg", "blocked_fraction", "availability",
             "interruption", "outages", "sectors", "verdict", "warnings"}


def run(argv, capsys):
    code = main(argv)
    out, err = capsys.readouterr()
    return code, out, err


def test_json_has_the_contract_keys(capsys):
    code, out, err = run(["assess", str(DEMO / "alder-brook-farm/site.toml"), "--json", *FAST], capsys)
    assert code == 0, err
    d = json.loads(out)
    assert JSON_KEYS <= set(d)
    assert d["site"]["name"] == "Alder Brook farmhouse"
    assert d["site"]["latitude"] == 45.3182 and d["site"]["longitude"] == -72.6415
    assert d["window"] == {"start": "2026-06-01T00:00:00Z", "hours": 2.0, "step_s": 30.0, "samples": 240}
    assert d["satellites"] == 1720 and d["fleet"]["illustrative"] is True
    for key in ("blocked_fraction", "availability", "interruption"):
        assert 0.0 <= d[key] <= 1.0
    assert set(d["outages"]) >= {"count_per_day", "minutes_per_day", "longest_s", "events"}
    assert d["verdict"] in ("qualified", "marginal", "not-qualified")
    assert any("illustrative" in w for w in d["warnings"])
    assert d["horizon_reference"] == "magnetic" and d["declination_deg"] < -10  # western Quebec-like longitudes
    assert err == ""  # no progress bar with --json on a pipe


def test_summary_names_every_figure(capsys):
    code, out, err = run(["assess", str(DEMO / "mill-lane-terrace/site.toml"), *FAST], capsys)
    assert code == 0
    for word in ("Mill Lane terrace", "VERDICT", "blocked", "availability", "interruption", "outages",
                 "obstructions, costliest first", "old mill", "declination", "illustrative", "Safety:"):
        assert word in out
    assert "propagating" in err  # the progress line goes to stderr, not stdout


def test_demo_verdicts_differ(capsys):
    verdicts = {}
    for demo in ("alder-brook-farm", "mill-lane-terrace", "tussock-ridge-croft"):
        code, out, _ = run(["assess", str(DEMO / demo / "site.toml"), "--json", "--hours", "6"], capsys)
        assert code == 0
        verdicts[demo] = json.loads(out)["verdict"]
    assert verdicts == {"alder-brook-farm": "marginal", "mill-lane-terrace": "not-qualified",
                        "tussock-ridge-croft": "qualified"}


def test_plot_is_written_as_png(tmp_path, capsys):
    png = tmp_path / "sky.png"
    code, out, _ = run(["assess", str(DEMO / "tussock-ridge-croft/site.toml"), "--plot", str(png), *FAST], capsys)
    assert code == 0
    with Image.open(png) as im:
        assert im.format == "PNG" and im.size[0] >= 800
    assert not [p for p in tmp_path.iterdir() if p.name.endswith(".tmp")]  # no temp file left


def test_overrides_change_the_window_and_min_elevation(capsys):
    code, out, _ = run(["assess", str(DEMO / "tussock-ridge-croft/site.toml"), "--json", "--start",
                        "2026-07-04T12:00:00Z", "--hours", "1", "--step", "20", "--min-elevation", "40"], capsys)
    d = json.loads(out)
    assert d["window"]["start"] == "2026-07-04T12:00:00Z" and d["window"]["samples"] == 180
    assert d["terminal"]["min_elevation_deg"] == 40.0


def test_shell_file_replaces_the_default(tmp_path, capsys):
    shells = tmp_path / "shells.toml"
    shells.write_text('[[shell]]\nname = "T"\naltitude_km = 550\ninclination_deg = 53\nplanes = 6\n'
                      'per_plane = 10\nphasing = 1\n')
    code, out, _ = run(["assess", str(DEMO / "tussock-ridge-croft/site.toml"), "--json", "--shells",
                        str(shells), *FAST], capsys)
    d = json.loads(out)
    assert code == 0 and d["satellites"] == 60 and d["fleet"]["groups"] == {"T": 60}
    assert not d["fleet"]["illustrative"]
    assert not any("illustrative" in w for w in d["warnings"])


def bad(argv, capsys, tmp_path):
    """Run a failing command; return its stderr lines, after checking the contract."""
    png = tmp_path / "out.png"
    code, out, err = run([*argv, "--plot", str(png)], capsys)
    assert code == 2
    assert out == ""
    assert "Traceback" not in err
    assert not png.exists()  # nothing written on bad input
    lines = err.strip().splitlines()
    assert lines and all(line.startswith("leosite: ") for line in lines)
    return lines


def test_bad_site_value(write_site, capsys, tmp_path):
    site = write_site(MINIMAL_SITE.replace("latitude = 45.0", "latitude = 123.0"))
    lines = bad(["assess", str(site)], capsys, tmp_path)
    assert lines == [f"leosite: {site}: site.latitude: 123.0 is outside -90.0 to 90.0"]


def test_missing_site_file(capsys, tmp_path):
    lines = bad(["assess", str(tmp_path / "missing.toml")], capsys, tmp_path)
    assert lines == [f"leosite: {tmp_path / 'missing.toml'}: site file not found"]


def test_malformed_toml(write_site, capsys, tmp_path):
    site = write_site("[site\nname = 1\n")
    lines = bad(["assess", str(site)], capsys, tmp_path)
    assert len(lines) == 1 and "not valid TOML" in lines[0]


def test_bad_tle_checksum(write_site, capsys, tmp_path):
    site = write_site(MINIMAL_SITE)
    tle = tmp_path / "bad.tle"
    line1 = "1 25544U 98067A   26152.50000000  .00016717  00000-0  10270-3 0  9005"
    line2 = "2 25544  51.6400 208.9163 0006317  69.9862  25.2906 15.49560532 12345"
    tle.write_text(f"TEST SAT\n{line1}\n{line2}\n")
    lines = bad(["assess", str(site), "--tle", str(tle)], capsys, tmp_path)
    assert any(f"{tle}: line 2: checksum mismatch" in x or f"{tle}: line 3: checksum mismatch" in x for x in lines)


def test_bad_shell_file(write_site, capsys, tmp_path):
    site = write_site(MINIMAL_SITE)
    shells = tmp_path / "s.toml"
    shells.write_text('[[shell]]\nname = "X"\naltitude_km = 20\ninclination_deg = 53\nplanes = 0\nper_plane = 4\n')
    lines = bad(["assess", str(site), "--shells", str(shells)], capsys, tmp_path)
    assert any("shell[0].altitude_km: 20 is outside 150 to 3000" in x for x in lines)
    assert any("shell[0].planes" in x for x in lines)


@pytest.mark.parametrize("args,fragment", [
    (["--hours", "0"], "--hours: expected more than 0 and at most 8784 hours"),
    (["--hours", "inf"], "--hours: expected more than 0 and at most 8784 hours"),
    (["--hours", "1e308"], "--hours: expected more than 0 and at most 8784 hours"),
    (["--hours", "87600", "--step", "160"], "--hours: expected more than 0 and at most 8784 hours"),
    (["--hours", "nan"], "--hours: expected more than 0"),
    (["--step", "-15"], "--step: expected 0.1 to 3600 seconds, got -15"),
    (["--step", "inf"], "--step: expected 0.1 to 3600 seconds"),
    (["--step", "1e-320"], "--step: expected 0.1 to 3600 seconds"),  # found by the fuzzing: an infinite count
    (["--min-elevation", "nan"], "--min-elevation: nan is outside 0 to 90"),
    (["--start", "9999-12-31T00:00:00Z"], "ends after the year 9998"),
    (["--hours", "8000", "--step", "15"], "more than the limit of 250,000,000: use a coarser --step"),
    (["--min-elevation", "91"], "--min-elevation: 91 is outside 0 to 90"),
    (["--start", "yesterday"], "--start: expected an ISO 8601 UTC time"),
    (["--tle", "/no/such.tle"], "--tle: /no/such.tle: file not found"),
    (["--hours", "many"], "argument --hours: invalid float value"),
    (["--shells", "a.toml", "--tle", "b.tle"], "not allowed with argument"),
])
def test_bad_options(args, fragment, write_site, capsys, tmp_path):
    site = write_site(MINIMAL_SITE)
    lines = bad(["assess", str(site), *args], capsys, tmp_path)
    assert any(fragment in x for x in lines), lines


def test_plot_into_missing_folder(write_site, capsys, tmp_path):
    site = write_site(MINIMAL_SITE)
    code, out, err = run(["assess", str(site), "--plot", str(tmp_path / "no" / "sky.png")], capsys)
    assert code == 2 and "folder" in err and "does not exist" in err


def test_existing_plot_survives_a_failed_run(write_site, capsys, tmp_path):
    site = write_site(MINIMAL_SITE.replace("latitude = 45.0", "latitude = 123.0"))
    png = tmp_path / "keep.png"
    png.write_bytes(b"previous report")
    code, _, _ = run(["assess", str(site), "--plot", str(png)], capsys)
    assert code == 2 and png.read_bytes() == b"previous report"


def test_console_script_runs_offline_without_traceback(tmp_path):
    """The installed `leosite` entry point, as a user runs it, with no network."""
    exe = os.path.join(os.path.dirname(sys.executable), "leosite")
    env = {**os.environ, "no_proxy": "*", "http_proxy": "http://127.0.0.1:9", "https_proxy": "http://127.0.0.1:9"}
    good = subprocess.run([exe, "assess", str(DEMO / "alder-brook-farm/site.toml"), "--json", *FAST],
                          capture_output=True, text=True, env=env, cwd=tmp_path)
    assert good.returncode == 0, good.stderr
    assert json.loads(good.stdout)["site"]["name"] == "Alder Brook farmhouse"
    badrun = subprocess.run([exe, "assess", "nope.toml"], capture_output=True, text=True, env=env, cwd=tmp_path)
    assert badrun.returncode == 2
    assert badrun.stderr == "leosite: nope.toml: site file not found\n"
    assert (ROOT / "survey").is_dir()


def _tle_file(tmp_path, epoch_days_before: float):
    """A valid three-line element set (exported by sgp4's own exporter) whose epoch
    lies the given number of days before 2026-06-01."""
    import math

    from sgp4.api import WGS72, Satrec
    from sgp4.exporter import export_tle

    sat = Satrec()
    jd_window = 2461192.5  # 2026-06-01 00:00 UTC (JD, from the calendar algorithm)
    sat.sgp4init(WGS72, "i", 90001, jd_window - epoch_days_before - 2433281.5, 2.0e-5, 0.0, 0.0, 0.0001,
                 0.0, math.radians(53.0), 0.0, 15.05 * 2 * math.pi / 1440.0, math.radians(40.0))
    l1, l2 = export_tle(sat)
    p = tmp_path / "fleet.tle"
    p.write_text(f"TEST SAT A\n{l1}\n{l2}\n")
    return p


def test_tle_run_and_stale_elements_warning(write_site, tmp_path, capsys):
    site = write_site(MINIMAL_SITE)
    fresh = _tle_file(tmp_path, 2.0)
    code, out, err = run(["assess", str(site), "--tle", str(fresh), "--json", "--start", "2026-06-01T00:00:00Z",
                          *FAST], capsys)
    assert code == 0, err
    d = json.loads(out)
    assert d["satellites"] == 1 and d["fleet"]["source"] == "TLE file fleet.tle"
    assert not any("older than" in w for w in d["warnings"])
    stale = _tle_file(tmp_path, 30.0)
    code, out, _ = run(["assess", str(site), "--tle", str(stale), "--json", "--start", "2026-06-01T00:00:00Z",
                        *FAST], capsys)
    d = json.loads(out)
    # Common practice: elements older than about two weeks are too stale for planning.
    assert any("1 of 1 element sets are older than 14 days" in w and "oldest 30 days" in w for w in d["warnings"])


def test_compass_warning_outside_wmm_validity(write_site, capsys):
    site = write_site(MINIMAL_SITE + '\n[horizon]\nreference = "magnetic"\npoints = [[10, 20]]\n')
    code, out, _ = run(["assess", str(site), "--json", "--start", "2031-03-01T00:00:00Z", *FAST], capsys)
    d = json.loads(out)
    assert code == 0 and any("outside the WMM2025 validity" in w for w in d["warnings"])


from .helpers import BAD_CASES, HORIZON_CASES  # noqa: E402


@pytest.mark.parametrize("desc,change,fragments", BAD_CASES, ids=[c[0] for c in BAD_CASES])
def test_every_bad_site_value_exits_2_with_one_line(desc, change, fragments, write_site, capsys, tmp_path):
    site = write_site(MINIMAL_SITE.replace(*change))
    lines = bad(["assess", str(site)], capsys, tmp_path)
    assert len(lines) == 1 and lines[0].startswith(f"leosite: {site}: ")
    assert all(f in lines[0] for f in fragments)


@pytest.mark.parametrize("table,fragments", HORIZON_CASES)
def test_every_bad_horizon_exits_2_with_one_line(table, fragments, write_site, capsys, tmp_path):
    site = write_site(MINIMAL_SITE + "\n[horizon]\n" + table + "\n")
    lines = bad(["assess", str(site)], capsys, tmp_path)
    assert len(lines) == 1 and all(f in lines[0] for f in fragments)


def test_non_utf8_site_exits_2(tmp_path, capsys):
    site = tmp_path / "site.toml"
    site.write_bytes(b'[site]\nname = "Caf\xe9"\n')
    lines = bad(["assess", str(site)], capsys, tmp_path)
    assert lines == [f"leosite: {site}: line 2: not UTF-8 text (byte 18)"]


def test_bad_horizon_csv_exits_2(write_site, tmp_path, capsys):
    (tmp_path / "h.csv").write_text("azimuth_deg,elevation_deg\n10,20\n30,95\n")
    site = write_site(MINIMAL_SITE + '\n[horizon]\nfile = "h.csv"\n')
    lines = bad(["assess", str(site)], capsys, tmp_path)
    assert lines == [f"leosite: {tmp_path / 'h.csv'}: line 3: elevation 95.0 is outside 0 to 90 degrees"]


@pytest.mark.parametrize("kind,caution", [("vehicle", "clearance height"), ("marine", "radar beams")])
def test_moving_mounts_are_flagged_and_get_their_own_caution(kind, caution, write_site, capsys):
    site = write_site(MINIMAL_SITE.replace('kind = "fixed"', f'kind = "{kind}"'))
    code, out, _ = run(["assess", str(site), *FAST], capsys)
    assert code == 0
    assert f"mount kind '{kind}': heading, roll and route are not modelled yet" in " ".join(out.split())
    assert caution in " ".join(out.split())


@pytest.mark.parametrize("command", ["assess", "report", "spots", "horizon"])
def test_window_options_state_the_precedence_rule(command, capsys):
    """README "Using it from the command line": the flag, else the site's
    [window] (or [terminal]), else the default; the help must say so."""
    with pytest.raises(SystemExit):
        main([command, "--help"])
    text = " ".join(capsys.readouterr().out.split())
    for option, table_key, default in (("--start", "[window] start", "today 00:00 UTC"),
                                       ("--hours", "[window] hours", "else 24"),
                                       ("--step", "[window] step_s", "else 15"),
                                       ("--min-elevation", "[terminal] min_elevation_deg", "else 25")):
        if option not in text:
            continue
        part = text.split(f"{option} ", 2)[-1].split(" --", 1)[0]
        assert "this flag, else the site's " + table_key in part and default in part, (option, part)
    assert "(default 24)" not in text


def test_demo_name_works_as_the_site_argument(capsys, tmp_path):
    """README: `demo:NAME` names a bundled demo site for every command."""
    code, out, _ = run(["assess", "demo:tussock-ridge-croft", "--json", "--hours", "1", "--step", "60"], capsys)
    assert code == 0 and json.loads(out)["site"]["name"] == "Tussock Ridge croft"
    code, _, err = run(["assess", "demo:no-such-place"], capsys)
    assert code == 2 and "no such demo site" in err and "alder-brook-farm" in err and "Traceback" not in err
    out_file = tmp_path / "r.json"
    code, _, _ = run(["report", "demo:alder-brook-farm", "--out", str(out_file), "--hours", "1", "--step", "60"],
                     capsys)
    assert code == 0 and out_file.exists()
