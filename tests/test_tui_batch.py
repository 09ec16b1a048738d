"""The text UI opens a batch read-only (README, "Batch runs"): a site register
or a results CSV listed with each row's verdict; Enter on a recorded assessment
opens it as a site whose findings equal what the register recorded, and the
register is not changed."""

from __future__ import annotations

import asyncio
import sqlite3

import pytest

pytest.importorskip("textual")

from survey.cli import main  # noqa: E402
from survey.words import pct  # noqa: E402
from tui.app import LeositeApp  # noqa: E402
from tui.screens.batch_list import BatchList, batch_entries  # noqa: E402
from tui.screens.workspace import Workspace  # noqa: E402
from tui.session import Assessor  # noqa: E402

from .test_tui import type_text, until  # noqa: E402

HEADER = "id,latitude,longitude,elevation_m,height_m,min_elevation_deg,reference,horizon\n"
ROWS = ["farm-1,45.3,-72.6,200,5,25,true,90:20;270:30", "croft-2,-45.0,169.0,,4,,magnetic,10:35;200:28",
        "bad-3,,-72,,,,,"]


@pytest.fixture
def batch(tmp_path, capsys):
    sites = tmp_path / "sites.csv"
    sites.write_text(HEADER + "\n".join(ROWS) + "\n", "utf-8")
    out, db = tmp_path / "results.csv", tmp_path / "register.sqlite"
    code = main(["batch", str(sites), "--out", str(out), "--db", str(db), "--workers", "1",
                 "--start", "2026-06-01T00:00:00Z", "--hours", "2", "--step", "60"])
    assert code == 3, capsys.readouterr().err
    return out, db


def test_both_files_list_every_row_with_its_verdict(batch):
    out, db = batch
    kind, entries = batch_entries(out)
    assert kind == "results" and [e.id for e in entries] == ["farm-1", "croft-2", "bad-3"]
    kind, entries = batch_entries(db)
    assert kind == "register" and sorted(e.id for e in entries) == ["bad-3", "croft-2", "farm-1"]
    assert all(e.verdict or e.error for e in entries)


def test_choosing_a_recorded_assessment_opens_it_as_a_site(batch, tmp_path):
    out, db = batch
    before = db.read_bytes()
    con = sqlite3.connect(db)
    recorded = dict(con.execute("SELECT site_id, blocked_fraction FROM assessments WHERE error IS NULL"))
    con.close()

    async def scenario():
        app = LeositeApp(None, Assessor(), work_root=tmp_path / "work")
        async with app.run_test(size=(120, 40)) as pilot:
            await pilot.press("b")
            await type_text(pilot, str(db))
            await pilot.press("enter")
            await until(pilot, lambda: isinstance(app.screen, BatchList), what="the batch list")
            screen = app.screen
            assert len(screen.entries) == 3
            first = screen.entries[0]  # newest first: the last row recorded
            await pilot.press("enter")
            await until(pilot, lambda: isinstance(app.screen, Workspace) and app.latest is not None,
                        what="the site opened and assessed")
            run = app.latest
            assert run.site.name == first.id
            assert run.window.hours == 2.0 and run.window.step_s == 60.0  # the window the batch used
            assert pct(run.assessment.blocked_fraction) == pct(recorded[first.id])

    asyncio.run(scenario())
    assert db.read_bytes() == before  # read-only
    assert (tmp_path / "work").is_dir()


def test_a_results_csv_lists_and_says_it_cannot_open_a_site(batch, tmp_path):
    out, _ = batch

    async def scenario():
        app = LeositeApp(None, Assessor(), work_root=tmp_path / "work")
        async with app.run_test(size=(120, 40)) as pilot:
            await pilot.press("b")
            await type_text(pilot, str(out))
            await pilot.press("enter")
            await until(pilot, lambda: isinstance(app.screen, BatchList), what="the batch list")
            assert [e.id for e in app.screen.entries] == ["farm-1", "croft-2", "bad-3"]
            await pilot.press("enter")
            await pilot.pause(0.2)
            assert isinstance(app.screen, BatchList)  # nothing to open
            assert not (tmp_path / "work").exists()

    asyncio.run(scenario())
