"""Honest warnings: a run that cannot show everything says so, in the command
line, the text UI and the report alike (README, "Limits", last paragraph).

One site trips all five: element sets 30.5 days old (shown as 30) at the window start, a date
before the WMM2025 model's validity (it starts at 2025.0, by the model's own
report) with compass bearings, a one-hour window (an orbit at 15.5 rev/day is
93 minutes: 1440 / 15.5, by hand), a 120 s step, and a horizon with 100° and
160° between readings."""

from __future__ import annotations

import asyncio
import io

import pytest
from pypdf import PdfReader

from survey.cli import main
from survey.pipeline import FleetChoice, run_site
from survey.report import render_report
from survey.site import load_site
from tui.app import LeositeApp
from tui.session import Assessor

from .helpers import MINIMAL_SITE

# The space station's element set as the two-line format's public examples give
# it, moved to a 2024 epoch (day 122.5 = 2024-05-01 12:00 UTC); checksums by the rule.
OLD_TLE = ("ISS\n"
           "1 25544U 98067A   24122.50000000  .00016717  00000-0  10270-3 0  9991\n"
           "2 25544  51.6400 208.9163 0006317  69.9862  25.2906 15.49541234 12346\n")

SITE = MINIMAL_SITE + """
[horizon]
reference = "magnetic"
points = [[0, 10], [100, 10], [200, 10]]

[window]
start = 2024-06-01T00:00:00Z
hours = 1
step_s = 120
"""

SAID = {
    "stale elements": "element sets are older than 14 days at the window start (oldest 30 days)",
    "WMM validity": "is outside the WMM2025 validity",
    "short window": "is shorter than one orbit (93 min)",
    "coarse step": "sample step 120 s is coarser than 60 s",
    "horizon gap": "no horizon point measured across",
}


@pytest.fixture(scope="module")
def files(tmp_path_factory):
    folder = tmp_path_factory.mktemp("warned")
    (folder / "site.toml").write_text(SITE, encoding="utf-8")
    (folder / "old.tle").write_text(OLD_TLE, encoding="utf-8")
    return folder / "site.toml", folder / "old.tle"


def flat(text: str) -> str:
    return " ".join(text.split())


def test_the_command_line_says_each(files, capsys):
    site, tle = files
    assert main(["assess", str(site), "--tle", str(tle)]) == 0
    out = flat(capsys.readouterr().out)
    for what, fragment in SAID.items():
        assert fragment in out, what


def test_the_report_says_each(files):
    site, tle = files
    run = run_site(load_site(site), FleetChoice(elements=tle))
    html = flat(render_report(run, "html").decode())
    pdf = flat("\n".join(p.extract_text() for p in PdfReader(io.BytesIO(render_report(run, "pdf"))).pages))
    for what, fragment in SAID.items():
        assert fragment in html, what
        assert fragment.replace("–", "-") in pdf, what


def test_the_text_ui_says_each(files, tmp_path):
    site, tle = files
    seen = {}

    async def scenario():
        app = LeositeApp(site, Assessor(FleetChoice(elements=tle)), work_root=tmp_path / "work")
        async with app.run_test(size=(120, 40)) as pilot:
            while app.latest is None:
                await pilot.pause(0.05)
            await pilot.press("f4")  # Findings
            await pilot.pause(0.2)
            seen["warnings"] = str(app.workspace.query_one("#warnings").render())
            await pilot.press("ctrl+q")

    asyncio.run(scenario())
    shown = flat(seen["warnings"])
    for what, fragment in SAID.items():
        assert fragment in shown, what
