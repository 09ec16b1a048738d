"""The text UI driven through Textual's pilot (``App.run_test``): the whole
workflow on a demo site, and the error paths.

Every figure the app shows is checked against a clean engine run of the site
file the app saved (``pipeline.run_site`` with no cache), so the cache, the
autosave and the screens cannot drift from the command line."""

from __future__ import annotations

import asyncio
import shutil
from pathlib import Path

import pytest

pytest.importorskip("textual")

from survey.pipeline import run_site  # noqa: E402
from survey.site import load_site  # noqa: E402
from survey.words import pct  # noqa: E402
from tui.app import LeositeApp  # noqa: E402
from tui.panes.horizon_editor import HorizonEditor, parse_entry  # noqa: E402
from tui.panes.site_form import SiteForm  # noqa: E402
from tui.screens.dialogs import AskChoice, AskText, ExportReport, SafetyNote  # noqa: E402
from tui.screens.start import StartScreen  # noqa: E402
from tui.screens.workspace import Workspace  # noqa: E402
from tui.session import Assessor, Cancelled  # noqa: E402
from tui.widgets.status import StatusLine  # noqa: E402

DEMO = Path(__file__).resolve().parent.parent / "demo_sites"
HOURS = 4.0  # a short window keeps each pilot run to a few seconds


def demo_copy(tmp_path: Path, name: str = "alder-brook-farm") -> Path:
    dest = tmp_path / name
    shutil.copytree(DEMO / name, dest)
    return dest / "site.toml"


def drive(coro):
    return asyncio.run(coro)


async def until(pilot, condition, timeout: float = 30.0, what: str = "condition"):
    """Let the app run until ``condition()`` holds (workers run in threads)."""
    loop = asyncio.get_running_loop()
    end = loop.time() + timeout
    while not condition():
        if loop.time() > end:
            raise AssertionError(f"timed out waiting for {what}")
        await pilot.pause(0.05)


def status_text(app) -> str:
    return str(app.workspace.query_one(StatusLine).render())


def app_for(site: Path | None, tmp_path: Path) -> LeositeApp:
    return LeositeApp(site, Assessor(hours=HOURS), work_root=tmp_path / "work")


async def type_text(pilot, text: str) -> None:
    for ch in text:
        await pilot.press({" ": "space"}.get(ch, ch))


def test_entry_parsing_uses_the_engine_reader():
    p, err = parse_entry("135 36")
    assert err is None and (p.azimuth_deg, p.elevation_deg, p.distance_m, p.label) == (135, 36, None, "")
    p, _ = parse_entry("135, 36, 35 tall alders")
    assert (p.distance_m, p.label) == (35, "tall alders")
    p, _ = parse_entry("200 12 barn roof")
    assert (p.distance_m, p.label) == (None, "barn roof")
    assert parse_entry("135")[1].startswith("expected a bearing")
    assert "outside 0 to 90" in parse_entry("135 95")[1]  # horizon.parse_point's own wording
    assert "positive" in parse_entry("135 20 -4")[1]


def test_whole_workflow_open_edit_export_quit(tmp_path):
    """Open a demo site, add a horizon point, see the findings change, export a
    PDF (the safety note comes first), quit."""
    site_file = demo_copy(tmp_path)
    report = tmp_path / "alder-report.pdf"

    async def scenario():
        app = app_for(site_file, tmp_path)
        async with app.run_test(size=(120, 40)) as pilot:
            await until(pilot, lambda: app.latest is not None, what="first assessment")
            first = app.latest
            text = status_text(app)
            assert "Alder Brook farmhouse" in text and "MARGINAL" in text
            assert pct(first.assessment.blocked_fraction) in text  # the one percentage format

            await until(pilot, lambda: app.advice, what="the what-if advice")
            advice = str(app.workspace.query_one("#advice").render())
            assert "Trimming or removing the alders" in advice  # report.recommendations, computed
            await pilot.press("f3")
            assert app.workspace.query_one("#points").has_focus
            await pilot.press("a")
            await type_text(pilot, "20 70 leaning spruce")  # a tall tree to the north-north-east
            await pilot.press("enter")
            editor = app.workspace.query_one(HorizonEditor)
            assert editor.profile.points[-1].label == "leaning spruce"
            await until(pilot, lambda: app.latest is not first, what="re-assessment")
            second = app.latest
            assert second.tracks is first.tracks  # the horizon edit reused the cached tracks
            assert second.assessment.blocked_fraction > first.assessment.blocked_fraction
            assert pct(second.assessment.blocked_fraction) in status_text(app)

            await until(pilot, lambda: not app.session.dirty, what="autosave")
            clean = run_site(load_site(site_file), hours=HOURS)  # what the command line would say
            assert clean.assessment.blocked_samples == second.assessment.blocked_samples
            assert clean.assessment.interruption == second.assessment.interruption
            assert clean.assessment.verdict == second.assessment.verdict

            await pilot.press("ctrl+r")
            assert isinstance(app.screen, SafetyNote)  # shown once before the first export
            await pilot.press("enter")
            assert isinstance(app.screen, ExportReport)
            field = app.screen.query_one("#answer")
            field.value = str(report)
            await pilot.press("enter")
            await until(pilot, lambda: report.exists() and app.session.reports, what="report")
            await pilot.press("ctrl+r")  # the second export goes straight to the file name
            assert isinstance(app.screen, ExportReport)
            await pilot.press("escape")

            await pilot.press("ctrl+q")
            await pilot.pause()
        return app, second

    app, second = drive(scenario())
    assert app.return_code in (0, None)
    from pypdf import PdfReader  # reference reader, not ours

    pdf_text = "\n".join(page.extract_text() for page in PdfReader(report).pages)
    assert "Alder Brook farmhouse" in pdf_text
    assert f"VERDICT: {second.assessment.verdict.upper()}" in pdf_text
    saved = load_site(site_file)
    assert saved.horizon.points[-1].label == "leaning spruce"
    assert saved.plan is not None  # the plan file reference survived the save


def test_command_line_overrides_reach_the_app_and_the_report(tmp_path):
    """leosite ui SITE --min-elevation 40: assessed at 40 degrees, the site file
    keeps its own 25, and the report can still be written."""
    site_file = demo_copy(tmp_path)
    before = site_file.read_bytes()
    report = tmp_path / "r.json"

    async def scenario():
        app = LeositeApp(site_file, Assessor(hours=HOURS, min_elevation_deg=40.0), work_root=tmp_path / "w")
        async with app.run_test(size=(100, 30)) as pilot:
            await until(pilot, lambda: app.latest is not None)
            assert app.latest.site.terminal.min_elevation_deg == 40.0
            assert float(app.latest.tracks.el_deg.min()) >= 40.0
            app.session.safety_seen = True
            await pilot.press("ctrl+r")
            assert isinstance(app.screen, ExportReport)
            app.screen.query_one("#answer").value = str(report)
            await pilot.press("enter")
            await until(pilot, lambda: report.exists(), what="the report")
            await pilot.press("ctrl+q")

    drive(scenario())
    import json

    assert json.loads(report.read_text("utf-8"))["result"]["terminal"]["min_elevation_deg"] == 40.0
    assert site_file.read_bytes() == before


def test_invalid_latitude_is_flagged_and_never_reaches_the_engine(tmp_path):
    site_file = demo_copy(tmp_path)
    before = site_file.read_bytes()

    async def scenario():
        app = app_for(site_file, tmp_path)
        async with app.run_test(size=(100, 30)) as pilot:
            await until(pilot, lambda: app.latest is not None)
            runs = app.latest
            await pilot.press("f2")
            lat = app.workspace.query_one("#f-site-latitude")
            lat.focus()
            lat.value = ""
            await type_text(pilot, "95.5")
            await pilot.pause(0.3)
            msg = str(app.workspace.query_one("#f-site-latitude-msg").render())
            assert lat.has_class("-invalid") and "90" in msg
            assert "stale" in status_text(app) and "Latitude" in status_text(app)
            await pilot.pause(2.0)  # past the autosave delay
            assert app.latest is runs  # not assessed
            assert app.session.site.latitude_deg == pytest.approx(45.3182)

            # degrees, minutes and seconds as read off a GPS are accepted
            lat.value = "45°19'05.5\"N"
            await pilot.pause(0.3)
            assert not lat.has_class("-invalid")
            assert "45.318194" in str(app.workspace.query_one("#f-site-latitude-msg").render())

            lat.value = "north"
            await pilot.pause(0.2)
            await pilot.press("ctrl+q")  # unsaved: asks first
            await pilot.pause()
            assert isinstance(app.screen, AskChoice)
            await pilot.press("enter")  # the default answer is to stay
            assert isinstance(app.screen, Workspace)
            await pilot.press("ctrl+q")
            await pilot.pause()
            app.screen.query_one("#answer-quit").press()
            await pilot.pause()

    drive(scenario())
    assert site_file.read_bytes() == before  # nothing invalid was saved, and quitting did not save


def test_bad_csv_import_is_a_message_and_leaves_the_site(tmp_path):
    site_file = demo_copy(tmp_path)
    bad = tmp_path / "bad.csv"
    bad.write_text("azimuth_deg,elevation_deg\n120,30\n130,ninety\n", encoding="utf-8")
    good = tmp_path / "good.csv"
    good.write_text("azimuth_deg,elevation_deg,label\n10,5,fence\n90,12,shed\n", encoding="utf-8")

    async def scenario():
        app = app_for(site_file, tmp_path)
        async with app.run_test(size=(100, 30)) as pilot:
            await until(pilot, lambda: app.latest is not None)
            points = app.session.site.horizon.points
            await pilot.press("f3")
            await pilot.press("i")
            assert isinstance(app.screen, AskText)
            app.screen.query_one("#answer").value = str(bad)
            await pilot.press("enter")
            await pilot.pause()
            notes = [n.message for n in app._notifications]
            assert any("bad.csv: line 3: elevation must be a number" in m for m in notes), notes
            assert app.session.site.horizon.points == points

            await pilot.press("i")
            app.screen.query_one("#answer").value = str(good)
            await pilot.press("enter")
            await pilot.pause()
            assert isinstance(app.screen, AskChoice)  # replace or append?
            app.screen.query_one("#answer-append").press()
            await pilot.pause()
            assert app.session.site.horizon.points[-2:][1].label == "shed"
            assert len(app.session.site.horizon.points) == len(points) + 2
            await pilot.press("ctrl+z")
            await pilot.pause()
            assert app.session.site.horizon.points == points

            await pilot.press("f1")  # the safety note is one key away
            assert isinstance(app.screen, SafetyNote)
            await pilot.press("escape")
            await pilot.press("ctrl+q")

    drive(scenario())


def test_new_site_from_scratch(tmp_path):
    site_file = tmp_path / "work" / "hillside-test-plot" / "site.toml"  # the name makes the folder

    async def scenario():
        app = app_for(None, tmp_path)
        async with app.run_test(size=(80, 24)) as pilot:
            assert isinstance(app.screen, StartScreen)
            await pilot.press("n")
            assert isinstance(app.screen, AskText)
            await type_text(pilot, "Hillside test plot")
            await pilot.press("enter")
            await until(pilot, lambda: isinstance(app.screen, Workspace))
            await pilot.pause()
            assert "stale" in status_text(app)
            ws = app.workspace
            assert ws.query_one("#f-site-name").value == "Hillside test plot"
            for key, value in (("site-latitude", "52 12.5 N"),
                               ("site-longitude", "0 7 W"), ("mount-height_m", "4")):
                ws.query_one(f"#f-{key}").value = value
                await pilot.pause(0.05)
            assert ws.query_one(SiteForm).problems == {}
            await until(pilot, lambda: app.latest is not None, what="assessment of the new site")
            assert app.latest.site.latitude_deg == pytest.approx(52 + 12.5 / 60)
            assert app.latest.site.longitude_deg == pytest.approx(-7 / 60)
            await pilot.press("f3")
            await pilot.press("a")
            await type_text(pilot, "180 30")
            await pilot.press("enter")
            await until(pilot, lambda: site_file.exists() and not app.session.dirty, what="autosave")
            await pilot.press("ctrl+q")

    drive(scenario())
    site = load_site(site_file)
    assert site.name == "Hillside test plot" and site.mount.height_m == 4
    assert [(p.azimuth_deg, p.elevation_deg) for p in site.horizon.points] == [(180, 30)]


def test_assessor_caches_tracks_and_can_be_cancelled(tmp_path):
    site = load_site(demo_copy(tmp_path))
    assessor = Assessor(hours=1)
    first = assessor.run(site)
    from dataclasses import replace

    from survey.horizon import HorizonProfile

    again = assessor.run(replace(site, horizon=HorizonProfile((), "true")))
    assert again.tracks is first.tracks and again.assessment.blocked_samples == 0
    moved = replace(site, latitude_deg=site.latitude_deg + 0.5)
    with pytest.raises(Cancelled):
        assessor.run(moved, cancelled=lambda: True)
    assert assessor.run(moved).tracks is not first.tracks


def test_spot_made_the_mount(tmp_path):
    site_file = demo_copy(tmp_path)

    async def scenario():
        app = app_for(site_file, tmp_path)
        async with app.run_test(size=(140, 45)) as pilot:
            await until(pilot, lambda: app.latest is not None)
            await pilot.press("f6")
            view = app.workspace.query_one("#spots-pane")
            await until(pilot, lambda: view.ranking is not None, what="spot ranking")
            best = view.rows[0]
            await pilot.press("u")
            assert isinstance(app.screen, AskChoice)
            await pilot.press("enter")
            await until(pilot, lambda: app.latest is not None and app.latest.site.mount.at is not None,
                        what="re-assessment at the spot")
            assert app.latest.assessment.blocked_fraction == best.blocked_fraction  # the ranking's own figure
            assert app.workspace.query_one("#f-mount-height_m").value == f"{best.candidate.height_m:g}"
            await pilot.press("f3")  # a later horizon edit keeps the chosen spot
            await pilot.press("a")
            await type_text(pilot, "300 3")
            await pilot.press("enter")
            await until(pilot, lambda: len(app.latest.site.horizon.points) == 16, what="re-assessment")
            assert app.latest.site.mount.at is not None
            assert app.latest.site.mount.height_m == best.candidate.height_m
            await until(pilot, lambda: not app.session.dirty)
            await pilot.press("ctrl+q")
        return best

    best = drive(scenario())
    saved = load_site(site_file)
    assert saved.mount.at == pytest.approx((best.candidate.east_m, best.candidate.north_m), abs=1e-3)
    assert saved.mount.height_m == pytest.approx(best.candidate.height_m)


def test_a_bundled_demo_opens_as_a_copy(tmp_path):
    """Opening a bundled demo by its path edits a working copy, never the bundle."""
    bundled = DEMO / "tussock-ridge-croft" / "site.toml"
    before = bundled.read_bytes()

    async def scenario():
        app = app_for(bundled, tmp_path)
        async with app.run_test(size=(100, 30)) as pilot:
            await until(pilot, lambda: app.latest is not None)
            assert app.session.path == (tmp_path / "work" / "tussock-ridge-croft" / "site.toml").resolve()
            await pilot.press("f3")
            await pilot.press("a")
            await type_text(pilot, "90 40 new shed")
            await pilot.press("enter")
            await until(pilot, lambda: app.session.dirty is False and app.latest.site.horizon.points[-1].label
                        == "new shed")
            await pilot.press("ctrl+q")
        return app

    app = drive(scenario())
    assert bundled.read_bytes() == before
    assert load_site(app.session.path).horizon.points[-1].label == "new shed"


class SlowAssessor(Assessor):
    """The real assessor, after a slow start that reports progress and can be
    cancelled, as a long propagation would (so the bar and Esc can be seen)."""

    def run(self, site, progress=None, cancelled=lambda: False):
        import time

        for k in range(40):
            if cancelled():
                raise Cancelled()
            if progress is not None:
                progress(k / 40)
            time.sleep(0.05)
        return super().run(site, progress, cancelled)


def test_progress_shows_and_escape_cancels(tmp_path):
    site_file = demo_copy(tmp_path)

    async def scenario():
        app = LeositeApp(site_file, SlowAssessor(hours=HOURS), work_root=tmp_path / "work")
        async with app.run_test(size=(100, 30)) as pilot:
            bar = None
            await until(pilot, lambda: app.workspace is not None and app.workspace.query("#progress"))
            bar = app.workspace.query_one("#progress")
            await until(pilot, lambda: bar.display, what="the progress bar")
            assert "computing" in status_text(app)
            await pilot.press("escape")
            await pilot.pause(0.3)
            assert not bar.display and "cancelled" in status_text(app)
            assert app.latest is None  # nothing half-computed is shown
            await pilot.press("ctrl+g")  # run it again, to the end this time
            await until(pilot, lambda: app.latest is not None, what="the assessment")
            assert "MARGINAL" in status_text(app)
            await pilot.press("ctrl+q")

    drive(scenario())


def test_unreadable_satellite_file_keeps_the_current_fleet(tmp_path):
    site_file = demo_copy(tmp_path)
    bad = tmp_path / "broken.tle"
    bad.write_text("SAT A\n1 00001U 26001A   26152.00000000  .00000000  00000-0  00000-0 0  9990\n"
                   "2 00001  53.0000 100.0000 0001000  90.0000 270.0000 15.0000000000001\n", encoding="utf-8")

    async def scenario():
        app = app_for(site_file, tmp_path)
        async with app.run_test(size=(100, 30)) as pilot:
            await until(pilot, lambda: app.latest is not None)
            fleet = app.latest.fleet
            titles = [c.title for c in app.get_system_commands(app.screen)]
            for title in ("Write report", "Safety note", "Import horizon CSV", "Load satellites",
                          "Rank mounting spots", "Save site"):
                assert title in titles  # the command palette lists the actions
            app.action_load_satellites()
            await pilot.pause()
            app.screen.query_one("#answer").value = str(bad)
            await pilot.press("enter")
            await pilot.pause()
            notes = [n.message for n in app._notifications]
            assert any("broken.tle" in m and "checksum" in m for m in notes), notes
            assert isinstance(app.screen, Workspace)
            app.request_assessment()
            await until(pilot, lambda: app.latest.fleet is fleet, what="re-assessment")
            await pilot.press("ctrl+q")

    drive(scenario())


def test_form_fields_use_the_site_readers_rules():
    """tui.fields: the reason at a field is the site reader's own; numbers may use
    a decimal comma; coordinates may be typed as read off a GPS."""
    from tui.fields import parse_field

    assert parse_field("mount.height_m", "6,5")[1].startswith("use a point")  # 6.5 or 65? ask
    assert parse_field("site.elevation_m", "1,200")[1].startswith("use a point")  # not 1.2
    assert parse_field("mount.height_m", "6.5")[0] == 6.5
    assert parse_field("mount.height_m", "-2")[1] == "-2.0 is outside 0.0 to 500.0"
    assert parse_field("site.latitude", "95")[1]
    assert parse_field("site.name", "")[1] == "required"
    assert parse_field("terminal.scan_half_angle_deg", "")[:2] == (None, None)  # blank: no cone
    assert parse_field("terminal.scan_half_angle_deg", "0")[1]  # must be greater than 0
    value, problem, note = parse_field("site.longitude", "72 38 29.4 W")
    assert problem is None and value == pytest.approx(-(72 + 38 / 60 + 29.4 / 3600))  # worked by hand
    assert "72°38′29.4″W" in note
    assert parse_field("survey.date", "yesterday")[1].startswith("expected an ISO 8601")


def test_a_horizon_kept_in_a_csv_is_saved_there(tmp_path):
    site_file = demo_copy(tmp_path, "mill-lane-terrace")
    toml_before = site_file.read_text("utf-8")

    async def scenario():
        app = app_for(site_file, tmp_path)
        async with app.run_test(size=(100, 30)) as pilot:
            await until(pilot, lambda: app.latest is not None)
            await pilot.press("f3")
            await pilot.press("a")
            await type_text(pilot, "350 18 30 oak #2")
            await pilot.press("enter")
            await until(pilot, lambda: not app.session.dirty, what="autosave")
            await pilot.press("ctrl+q")

    drive(scenario())
    # The CSV is saved as a new revision and the site file switched to it; nothing else changed.
    assert site_file.read_text("utf-8") == toml_before.replace('file = "horizon.csv"', 'file = "horizon.rev1.csv"')
    csv_text = (site_file.parent / "horizon.rev1.csv").read_text("utf-8")
    assert csv_text.startswith("# Mill Lane terrace")  # the file's own comments kept
    assert load_site(site_file).horizon.points[-1].label == "oak #2"


def test_opening_and_quitting_leaves_the_file_byte_for_byte(tmp_path):
    """A site nobody edited is not rewritten: exact numbers, comments and all."""
    site_file = demo_copy(tmp_path)
    text = site_file.read_text("utf-8").replace("latitude = 45.3182",
                                                "latitude = 45.31823456   # from a phone, 3 m accuracy")
    site_file.write_text(text, encoding="utf-8")

    async def scenario():
        app = app_for(site_file, tmp_path)
        async with app.run_test(size=(100, 30)) as pilot:
            await until(pilot, lambda: app.latest is not None)
            await pilot.press("f2")
            await pilot.pause(2.0)  # past the form's settle and the autosave delay
            assert not app.session.dirty
            await pilot.press("ctrl+q")

    drive(scenario())
    assert site_file.read_text("utf-8") == text


def test_escape_on_the_safety_note_writes_no_report(tmp_path):
    site_file = demo_copy(tmp_path)

    async def scenario():
        app = app_for(site_file, tmp_path)
        async with app.run_test(size=(100, 30)) as pilot:
            await until(pilot, lambda: app.latest is not None)
            await pilot.press("ctrl+r")
            assert isinstance(app.screen, SafetyNote)
            await pilot.press("escape")
            assert isinstance(app.screen, Workspace) and not app.session.safety_seen
            await pilot.press("ctrl+r")
            assert isinstance(app.screen, SafetyNote)  # still shown before the first report
            await pilot.press("enter")
            assert isinstance(app.screen, ExportReport)
            await pilot.press("escape")
            await pilot.press("ctrl+q")

    drive(scenario())
    assert not list(site_file.parent.glob("*report*"))


def test_pasted_lines_become_points_and_bad_bearings_are_refused(tmp_path):
    from textual import events

    site_file = demo_copy(tmp_path, "tussock-ridge-croft")

    async def scenario():
        app = app_for(site_file, tmp_path)
        async with app.run_test(size=(100, 30)) as pilot:
            await until(pilot, lambda: app.latest is not None)
            n = len(app.session.site.horizon.points)
            await pilot.press("f3")
            await pilot.press("a")
            entry = app.workspace.query_one("#entry")
            entry.post_message(events.Paste("10 5 fence\n20\t7\nabc\n30 9 40 shed\n"))
            await pilot.pause(0.3)
            points = app.workspace.query_one(HorizonEditor).profile.points
            assert [(p.azimuth_deg, p.label) for p in points[n:]] == [(10, "fence"), (20, ""), (30, "shed")]
            assert "line 3" in str(app.workspace.query_one("#entry-msg").render())
            assert entry.value == ""
            await type_text(pilot, "400 20")
            await pilot.pause(0.1)
            assert "outside 0 to 360" in str(app.workspace.query_one("#entry-msg").render())
            await pilot.press("enter")
            assert len(app.workspace.query_one(HorizonEditor).profile.points) == n + 3  # refused, not wrapped
            await pilot.press("ctrl+q")

    drive(scenario())


def shown_text(widget) -> str:
    """What a Static shows, as plain text (any rich renderable)."""
    import io

    from rich.console import Console

    console = Console(width=100, file=io.StringIO(), record=True)
    console.print(widget.content)
    return console.export_text()


def test_a_refused_field_shows_its_reason_on_the_findings_tab(tmp_path):
    """The Findings tab says what holds the assessment up (the field, its
    reason and the way there), not "Assessing…"; the figures name the
    scheduling period as the setting it is."""
    site_file = demo_copy(tmp_path)

    async def scenario():
        app = app_for(site_file, tmp_path)
        async with app.run_test(size=(80, 24)) as pilot:
            await until(pilot, lambda: app.latest is not None)
            ws = app.workspace
            held = ws.query_one("#held")
            assert not held.display
            assert "of the time down (scheduling period 15 s)" in shown_text(ws.query_one("#figures"))
            assert "default 15 s; set it to what your network uses" in shown_text(ws.query_one("#assessed"))
            await pilot.press("f2")
            lat = ws.query_one("#f-site-latitude")
            lat.focus()
            lat.value = "95.5"
            await pilot.pause(0.3)
            reason = ws.query_one(SiteForm).problems["site.latitude"]
            assert "90" in reason
            await pilot.press("f5")
            assert held.display
            text = " ".join(shown_text(held).split())
            assert "Not assessed" in text and f"Latitude: {reason}" in text
            assert "F2" in text and "Site tab" in text
            assert "from before the change" in text  # the old findings stay, said to be old
            lat.value = "45.3182"
            await pilot.pause(0.3)
            assert not held.display
            await pilot.press("ctrl+q")

    drive(scenario())


def test_a_new_site_asks_for_the_antenna_height(tmp_path):
    """A new site starts with the antenna height blank and required: it is not
    assessed until the height is typed, and the Findings tab says so; an
    existing site's height is kept."""
    from tui.fields import new_site_defaults, parse_field

    assert new_site_defaults("x")["mount.height_m"] == ""
    value, problem, _ = parse_field("mount.height_m", "")
    assert value is None and problem == "required: measure the antenna's height above the ground (or deck)"

    async def scenario():
        app = app_for(None, tmp_path)
        async with app.run_test(size=(80, 24)) as pilot:
            await pilot.press("n")
            await type_text(pilot, "Height test")
            await pilot.press("enter")
            await until(pilot, lambda: isinstance(app.screen, Workspace))
            await pilot.pause()
            ws = app.workspace
            assert ws.query_one("#f-mount-height_m").value == ""
            ws.query_one("#f-site-latitude").value = "52.2"
            ws.query_one("#f-site-longitude").value = "-0.1"
            await pilot.pause(1.0)  # past the form's settle time
            assert ws.query_one(SiteForm).problems == {"mount.height_m": problem}
            assert app.latest is None and app.session.site is None  # neither assessed nor saved
            assert "Antenna height" in status_text(app)
            await pilot.press("f5")
            held = ws.query_one("#held")
            assert held.display and not ws.query_one("#verdict-box").display  # no "Assessing…" meanwhile
            assert f"Antenna height, m: {problem}" in " ".join(shown_text(held).split())
            ws.query_one("#f-mount-height_m").value = "3.5"
            await until(pilot, lambda: app.latest is not None, what="the assessment")
            assert app.latest.site.mount.height_m == 3.5 and not held.display
            await pilot.press("ctrl+q")

    drive(scenario())

    site_file = demo_copy(tmp_path)  # a file that gives a height keeps it

    async def existing():
        app = app_for(site_file, tmp_path)
        async with app.run_test(size=(80, 24)) as pilot:
            await until(pilot, lambda: app.latest is not None)
            assert app.workspace.query_one("#f-mount-height_m").value == "6.5"
            assert app.workspace.query_one(SiteForm).problems == {}
            await pilot.press("ctrl+q")

    drive(existing())


def test_arrow_keys_move_between_dialog_buttons(tmp_path):
    """In the quit dialog the arrow keys move the focus between the buttons,
    the focused one shows its markers, and Enter presses it."""
    site_file = demo_copy(tmp_path)

    async def scenario():
        app = app_for(site_file, tmp_path)
        async with app.run_test(size=(80, 24)) as pilot:
            await until(pilot, lambda: app.latest is not None)
            app.workspace.query_one("#f-site-latitude").value = "north"  # unsaved: quitting asks
            await pilot.pause(0.2)
            await pilot.press("ctrl+q")
            await pilot.pause()
            dialog = app.screen
            assert isinstance(dialog, AskChoice)
            stay, leave = dialog.query_one("#answer-stay"), dialog.query_one("#answer-quit")

            def focused():
                return dialog.focused.id, str(stay.label), str(leave.label)

            assert focused() == ("answer-stay", "▸ Stay ◂", "  Quit without saving  ")
            for key, where in (("right", "answer-quit"), ("left", "answer-stay"), ("down", "answer-quit"),
                               ("up", "answer-stay"), ("left", "answer-quit")):  # round the ends too
                await pilot.press(key)
                assert focused()[0] == where, key
            assert focused()[1:] == ("  Stay  ", "▸ Quit without saving ◂")
            await pilot.press("enter")  # presses the focused button: quit without saving
            await pilot.pause()
            assert app.return_code == 0

    drive(scenario())
