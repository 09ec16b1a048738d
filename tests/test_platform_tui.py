"""Moving installs in the text UI: the by-heading bars drawn by hand geometry,
and a vehicle and a vessel opened in the app (Textual's pilot), their figures
checked against a clean engine run of the saved file."""

from __future__ import annotations

import pytest

pytest.importorskip("textual")

from survey.pipeline import run_site  # noqa: E402
from survey.site import load_site  # noqa: E402
from survey.words import pct  # noqa: E402
from tui.panes.horizon_editor import HorizonEditor, reference_phrases  # noqa: E402
from tui.widgets.headingbars import LEVELS, heading_bars  # noqa: E402

from .test_tui import HOURS, app_for, demo_copy, drive, shown_text, until  # noqa: E402


def test_heading_bars_by_hand():
    """36 sectors at 2 columns each in 72 columns, 5 bar rows: a sector at the
    tallest value fills 5 cells; one at half fills 2.5 cells (2 full and a half
    block ▄); an empty sector draws nothing; N, E, S, W sit under 0°, 90°, 180°, 270°."""
    blocked = [0.0] * 36
    blocked[6] = 0.2  # 60°-70°
    blocked[20] = 0.1  # 200°-210°
    blocked[30] = None
    text = heading_bars(blocked, 72, 7, colour=False).plain.split("\n")
    assert len(text) == 7 and all(len(line) == 72 for line in text[:6])
    column = lambda c: "".join(text[r][c] for r in range(5))  # noqa: E731
    assert column(12) == column(13) == "█████"
    assert column(40) == "  ▄██" and column(41) == "  ▄██"
    assert column(0) == column(60) == "     "
    assert text[5][0] == "N" and text[5][18] == "E" and text[5][36] == "S" and text[5][54] == "W"
    assert text[6].startswith("tallest 20.0\u00a0%; worst heading 60°–70°")
    assert LEVELS[3] == "▄"


def test_body_frame_phrases():
    phrases = reference_phrases(False, 12.0, body=True)
    assert "Body frame: bearings from the bow or front," in phrases and "No declination added" in phrases


@pytest.mark.parametrize("name", ["wren-camper", "tern-sloop"])
def test_a_vehicle_and_a_vessel_open_in_the_app(tmp_path, name):
    site_file = demo_copy(tmp_path, name)
    app = app_for(site_file, tmp_path)

    async def go():
        async with app.run_test(size=(120, 50)) as pilot:
            await until(pilot, lambda: app.workspace.query_one("#findings-body").display, 60, "findings")
            await pilot.pause(1.0)  # a Select set on load reports a change; let the form settle (0.5 s)
            platform = shown_text(app.workspace.query_one("#platform"))
            editor = app.workspace.query_one(HorizonEditor)
            return platform, editor.body_frame, shown_text(app.workspace.query_one("#figures"))

    platform, body, figures = drive(go())
    assert body
    run = run_site(load_site(site_file), hours=HOURS)
    assert pct(run.assessment.blocked_fraction, 2) in figures
    if name == "wren-camper":
        assert "Blocked by heading" in platform and "all headings equally likely" in platform
    else:
        assert "Along the route" in platform and "moderate" in platform


def test_platform_fields_are_checked_by_the_site_reader(tmp_path):
    from tui.fields import parse_field

    assert parse_field("platform.heading_deg", "400")[1] == "400.0 is outside 0.0 to 360.0"
    assert parse_field("platform.heading_deg", "")[:2] == (None, None)  # blank: all headings, or the route
    assert "outside -45.0 to 45.0" in parse_field("platform.heel_deg", "60")[1]
    problem = parse_field("platform.route", "nowhere.gpx", tmp_path)[1]
    assert problem and "not found" in problem
    (tmp_path / "r.gpx").write_text("<gpx><trk><trkseg></trkseg></trk></gpx>", encoding="utf-8")
    assert "no track points" in parse_field("platform.route", "r.gpx", tmp_path)[1]
    assert parse_field("platform.sea_state", "rough")[:2] == ("rough", None)


def test_a_heading_typed_on_the_site_tab_is_saved_and_assessed(tmp_path):
    site_file = demo_copy(tmp_path, "wren-camper")
    app = app_for(site_file, tmp_path)

    async def go():
        async with app.run_test(size=(120, 50)) as pilot:
            await until(pilot, lambda: app.workspace.query_one("#findings-body").display, 60, "findings")
            await pilot.pause(1.0)
            app.workspace.query_one("#f-platform-heading_deg").value = "90"
            await until(pilot, lambda: "heading_deg = 90" in site_file.read_text(encoding="utf-8"), 60, "saved")
            await until(pilot, lambda: "fixed heading 90°" in shown_text(app.workspace.query_one("#platform")),
                        60, "re-assessed")
            await pilot.pause(1.0)
            return shown_text(app.workspace.query_one("#figures"))

    figures = drive(go())
    saved = load_site(site_file)
    assert saved.platform.heading_mode == "fixed" and saved.platform.heading_deg == 90.0
    assert saved.platform.canyon is not None and saved.platform.frame == "body"  # the rest of the table kept
    run = run_site(saved, hours=HOURS)
    assert pct(run.assessment.blocked_fraction, 2) in figures
