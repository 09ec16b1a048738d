"""Site-file validation: every wrong value is one clear problem naming file and field."""

from __future__ import annotations

import pytest

from survey.errors import InputError
from survey.horizon import read_horizon_csv
from survey.site import load_site

from .helpers import BAD_CASES, HORIZON_CASES, MINIMAL_SITE


def problems_for(write_site, text):
    path = write_site(text)
    with pytest.raises(InputError) as exc:
        load_site(path)
    return path, exc.value.problems




@pytest.mark.parametrize("desc,change,fragments", BAD_CASES, ids=[c[0] for c in BAD_CASES])
def test_bad_site_values_name_file_and_field(write_site, desc, change, fragments):
    old, new = change
    assert old in MINIMAL_SITE
    path, problems = problems_for(write_site, MINIMAL_SITE.replace(old, new))
    assert len(problems) == 1, problems
    assert problems[0].startswith(f"{path}: ")
    for frag in fragments:
        assert frag in problems[0]


@pytest.mark.parametrize("table,fragments", HORIZON_CASES)
def test_bad_horizon_points(write_site, table, fragments):
    _, problems = problems_for(write_site, MINIMAL_SITE + "\n[horizon]\n" + table + "\n")
    assert len(problems) == 1, problems
    for frag in fragments:
        assert frag in problems[0]


def test_all_problems_reported_together(write_site):
    text = MINIMAL_SITE.replace("latitude = 45.0", "latitude = 99").replace('kind = "fixed"', 'kind = "kite"')
    _, problems = problems_for(write_site, text)
    assert len(problems) == 2
    assert any("site.latitude" in p for p in problems) and any("mount.kind" in p for p in problems)


def test_malformed_toml_names_the_file_and_line(write_site):
    path, problems = problems_for(write_site, "[site]\nname = \"x\nlatitude = 4\n")
    assert problems[0].startswith(f"{path}: not valid TOML")
    assert "line 2" in problems[0]


def test_missing_file(tmp_path):
    with pytest.raises(InputError) as exc:
        load_site(tmp_path / "nowhere.toml")
    assert exc.value.problems == [f"{tmp_path / 'nowhere.toml'}: site file not found"]


def test_non_utf8_file(tmp_path):
    p = tmp_path / "site.toml"
    p.write_bytes(b'[site]\nname = "Caf\xe9"\n')
    with pytest.raises(InputError) as exc:
        load_site(p)
    assert "line 2: not UTF-8" in exc.value.problems[0]


def test_relative_horizon_file_resolves_against_site_folder(tmp_path, write_site, monkeypatch):
    (tmp_path / "h.csv").write_text("azimuth_deg,elevation_deg,distance_m,label\n# note\n10,20,,oak\n200,15,30,barn\n")
    path = write_site(MINIMAL_SITE + '\n[horizon]\nfile = "h.csv"\n')
    monkeypatch.chdir("/")  # the current folder must not matter
    site = load_site(path)
    pts = site.horizon.points
    assert [(p.azimuth_deg, p.elevation_deg, p.distance_m, p.label) for p in pts] == [
        (10.0, 20.0, None, "oak"), (200.0, 15.0, 30.0, "barn")]


def test_horizon_csv_errors_name_line_and_column(tmp_path):
    p = tmp_path / "h.csv"
    p.write_text("azimuth_deg,elevation_deg\n10,20\n30,abc\n40,120\n")
    with pytest.raises(InputError) as exc:
        read_horizon_csv(p)
    probs = exc.value.problems
    assert len(probs) == 2
    assert probs[0].startswith(f"{p}: line 3") and "elevation must be a number" in probs[0]
    assert probs[1].startswith(f"{p}: line 4") and "outside 0 to 90" in probs[1]


def test_horizon_csv_missing_column(tmp_path):
    p = tmp_path / "h.csv"
    p.write_text("bearing,elevation_deg\n10,20\n")
    with pytest.raises(InputError) as exc:
        read_horizon_csv(p)
    assert any("missing column 'azimuth_deg'" in x for x in exc.value.problems)
    assert any("unknown column 'bearing'" in x for x in exc.value.problems)


def test_window_and_criteria_tables(write_site):
    site = load_site(write_site(MINIMAL_SITE + """
[window]
start = "2026-03-01T06:00:00Z"
hours = 6
step_s = 30

[criteria]
qualified_max_blocked = 0.05

[schedule]
reassign_s = 60
"""))
    assert site.window["start"].isoformat() == "2026-03-01T06:00:00+00:00"
    assert site.window["hours"] == 6 and site.window["step_s"] == 30
    assert site.criteria.qualified_max_blocked == 0.05
    assert site.criteria.marginal_max_blocked == 0.10  # default kept
    assert site.schedule.reassign_s == 60


def test_bad_window_start(write_site):
    _, problems = problems_for(write_site, MINIMAL_SITE + '\n[window]\nstart = "next tuesday"\n')
    assert "window.start" in problems[0] and "ISO 8601" in problems[0]


def test_criteria_order_checked(write_site):
    _, problems = problems_for(write_site, MINIMAL_SITE + "\n[criteria]\nqualified_max_blocked = 0.2\n")
    assert "criteria.marginal_max_blocked" in problems[0]


def test_window_defaults_and_overrides(write_site):
    from datetime import datetime, timezone

    from survey.window import resolve_window

    site = load_site(write_site(MINIMAL_SITE))
    now = datetime(2026, 7, 9, 15, 42, tzinfo=timezone.utc)
    w = resolve_window(site, now=now)
    assert (w.start, w.hours, w.step_s, w.count) == (datetime(2026, 7, 9, tzinfo=timezone.utc), 24.0, 15.0, 5760)
    w = resolve_window(site, hours=1.5, step_s=20, now=now)
    assert w.count == 270  # floor(1.5 * 3600 / 20)
    partial = load_site(write_site(MINIMAL_SITE + "\n[window]\nhours = 6\n", "p.toml"))
    w = resolve_window(partial, now=now)
    assert w.start == datetime(2026, 7, 9, tzinfo=timezone.utc) and w.hours == 6 and w.step_s == 15
    with pytest.raises(InputError):
        resolve_window(site, hours=0.001, step_s=15, now=now)  # holds no sample
