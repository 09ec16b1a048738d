"""Moving installs in every output: the command line (summary, --json,
--heading), the figures (read back with Pillow) and the report (read back with
pypdf and html.parser)."""

from __future__ import annotations

import json
import math
import subprocess
import sys
from html.parser import HTMLParser

import numpy as np
import pytest

from survey.palette import DOWN_BAR, VERMILLION
from survey.pipeline import run_site
from survey.site import load_site

from .helpers import DEMO, START

CAMPER = DEMO / "wren-camper" / "site.toml"
SLOOP = DEMO / "tern-sloop" / "site.toml"


def leosite(*args):
    return subprocess.run([sys.executable, "-m", "survey.cli", *map(str, args)], capture_output=True, text=True,
                          timeout=300)


@pytest.fixture(scope="module")
def camper_run():
    return run_site(load_site(CAMPER), start=START, hours=6.0, step_s=30.0)


@pytest.fixture(scope="module")
def sloop_run():
    return run_site(load_site(SLOOP), start=START, hours=6.0, step_s=30.0)


def test_json_says_platform_heading_mode_attitude_and_by_heading():
    out = leosite("assess", CAMPER, "--json", "--hours", "3", "--step", "60")
    assert out.returncode == 0, out.stderr
    p = json.loads(out.stdout)["platform"]
    assert p["kind"] == "vehicle" and p["heading_mode"] == "uniform" and p["canyon"]["name"] == "open-highway"
    assert p["attitude"]["heel_deg"] == 0.0 and p["horizon_frame"] == "body"
    assert [r["heading_deg"] for r in p["by_heading"]] == [5.0 + 10 * j for j in range(36)]
    assert all(0 <= r["blocked_fraction"] <= 1 and 0 <= r["availability"] <= 1 for r in p["by_heading"])
    held = leosite("assess", CAMPER, "--json", "--hours", "3", "--step", "60", "--heading", "65")
    q = json.loads(held.stdout)
    assert q["platform"]["heading_mode"] == "fixed" and q["platform"]["heading_deg"] == 65.0
    # Held at 65°, the figures are the by-heading row of the 60°-70° sector (its centre).
    row = next(r for r in p["by_heading"] if r["heading_deg"] == 65.0)
    assert q["blocked_fraction"] == pytest.approx(row["blocked_fraction"], abs=1e-12)


def test_route_json_gives_the_down_time_along_the_route():
    out = leosite("assess", SLOOP, "--json", "--hours", "4", "--step", "30")
    assert out.returncode == 0, out.stderr
    d = json.loads(out.stdout)
    route = d["platform"]["route"]
    assert "by_heading" not in d["platform"] and route["points"] == 1441
    assert route["down_minutes"] == pytest.approx(d["outages"]["minutes_per_day"] * 4 / 24, rel=1e-9)
    assert len(route["events"]) == len(d["outages"]["events"])
    assert [s["sea_state"] for s in d["platform"]["sea_states"]] == ["calm", "moderate", "rough"]
    # 5.5 knots for 4 hours (the invented passage's own speed): 40.7 km.
    assert route["distance_km"] == pytest.approx(5.5 * 1.852 * 4, rel=0.01)


def test_summary_and_heading_override_errors():
    out = leosite("assess", SLOOP, "--hours", "2", "--step", "60")
    assert out.returncode == 0, out.stderr
    for words in ("platform    marine, route passage.gpx", "attitude    heel 12° to starboard",
                  "along the route", "sea state", "moderate"):
        assert words in out.stdout, words
    bad = leosite("assess", DEMO / "alder-brook-farm" / "site.toml", "--heading", "90")
    assert bad.returncode == 2 and bad.stderr.count("\n") == 1 and "--heading: only for a site with a [platform]" \
        in bad.stderr


def test_heading_chart_wedges_follow_the_table(camper_run):
    """Read back with Pillow: along the worst sector's centre line the wedge is
    vermillion out to its length, and white past it (geometry from the figure's
    own description: centre (500, 560), radius 360 units, scale the nice ceiling)."""
    from survey.figures import heading_chart_for_run
    from survey.geometry import nice_ceil

    img = np.asarray(heading_chart_for_run(camper_run, size_px=1000).convert("RGB")).astype(int)
    rows = camper_run.platform.by_heading
    top = nice_ceil(max(r.blocked_fraction for r in rows))
    for r in rows:
        length = 360.0 * r.blocked_fraction / top
        t = math.radians(r.heading_deg)
        inside = (500 + 0.8 * length * math.sin(t), 560 - 0.8 * length * math.cos(t))
        colour = img[int(round(inside[1])), int(round(inside[0]))]
        if length > 40:
            assert np.abs(colour - np.array(VERMILLION)).max() < 40, (r.heading_deg, colour)
        past = (500 + (length + 12) * math.sin(t), 560 - (length + 12) * math.cos(t))
        if length + 12 < 340:
            assert np.abs(img[int(round(past[1])), int(round(past[0]))] - np.array(VERMILLION)).max() > 60


def test_route_map_marks_the_down_time(sloop_run):
    from survey.figures import route_map_for_run

    img = np.asarray(route_map_for_run(sloop_run).convert("RGB")).astype(int)
    down_px = np.all(np.abs(img - np.array(DOWN_BAR)) < 20, axis=2).sum()
    assert (down_px > 0) == bool(sloop_run.assessment.down.any())


class _Text(HTMLParser):
    def __init__(self):
        super().__init__()
        self.parts = []

    def handle_data(self, data):
        self.parts.append(data)


def test_reports_carry_the_platform_section_and_the_safety_notes(tmp_path, sloop_run, camper_run):
    from pypdf import PdfReader

    from survey.report import write_report

    pdf = write_report(sloop_run, tmp_path / "sloop.pdf")
    text = " ".join(page.extract_text() for page in PdfReader(pdf).pages)
    for words in ("Platform: vehicle or vessel", "By sea state", "Along the route", "radar beams",
                  "compass safe distance", "never go aloft alone", "vessel's own rules"):
        assert words in text, words
    html = write_report(camper_run, tmp_path / "camper.html")
    parser = _Text()
    parser.feed(html.read_text(encoding="utf-8"))
    body = " ".join(parser.parts)
    for words in ("Platform: vehicle or vessel", "all headings equally likely", "clearance", "roof or rack load",
                  "Never mount or adjust a terminal while the vehicle is moving", "vehicle maker's rules"):
        assert words in body, words
    doc = json.loads(write_report(camper_run, tmp_path / "camper.json").read_text(encoding="utf-8"))
    assert len(doc["result"]["platform"]["by_heading"]) == 36


def test_a_route_report_json_runs_again_with_no_other_file(tmp_path):
    """README, "The site report": the JSON carries every input; for a vessel on a
    route that includes the route itself, so the GPX file is not needed again."""
    import shutil

    folder = tmp_path / "boat"
    shutil.copytree(DEMO / "tern-sloop", folder)
    first = tmp_path / "first.json"
    assert leosite("report", folder / "site.toml", "--out", first, "--hours", "2", "--step", "60").returncode == 0
    shutil.rmtree(folder)
    again = tmp_path / "again.json"
    out = leosite("report", first, "--out", again)
    assert out.returncode == 0, out.stderr
    a, b = (json.loads(p.read_text(encoding="utf-8"))["result"] for p in (first, again))
    for key in ("blocked_fraction", "availability", "interruption", "outages"):
        assert a[key] == b[key], key
    assert a["platform"]["route"]["events"] == b["platform"]["route"]["events"]


def test_the_text_ui_refuses_heading_on_its_command_line():
    out = subprocess.run([sys.executable, "-c", "import sys; from tui.launch import main; sys.exit(main())", "ui",
                          str(CAMPER), "--heading", "90"], capture_output=True, text=True, timeout=120)
    assert out.returncode == 2 and "--heading: not for the text UI" in out.stderr and "Traceback" not in out.stderr
