"""The site register (README, "The site register"): every assessment a batch
makes is in the SQLite file, read back with Python's own sqlite3 (not our
reader); listed newest first with a site's history; a register of another
schema version, or a file that is not one, is refused with one line; the
inputs recorded open as the same site and give the same figures."""

from __future__ import annotations

import csv
import io
import json
import sqlite3

import pytest

from survey.batch import register as reg
from survey.cli import main
from survey.errors import InputError
from survey.pipeline import FleetChoice, run_site
from survey.site import site_from_dict

from .helpers import ROOT

HEADER = "id,latitude,longitude,elevation_m,height_m,min_elevation_deg,reference,horizon\n"
WINDOW = ["--start", "2026-06-01T00:00:00Z", "--hours", "2", "--step", "60", "--workers", "1"]
FIRST = ["farm-1,45.3,-72.6,200,5,25,true,90:20;270:30", "croft-2,-45.0,169.0,,,,magnetic,10:15",
         "bad-3,,-72,,,,,"]
RESURVEY = ["farm-1,45.3,-72.6,200,9,25,true,90:10", "new-4,60.1,24.9,,,,,"]


def run(argv, capsys):
    code = main(argv)
    out, err = capsys.readouterr()
    return code, out, err


@pytest.fixture
def register(tmp_path, capsys):
    """A register of two batches: farm-1 surveyed, then re-surveyed with a higher mount."""
    db = tmp_path / "register.sqlite"
    for i, rows in enumerate((FIRST, RESURVEY)):
        sites = tmp_path / f"sites{i}.csv"
        sites.write_text(HEADER + "\n".join(rows) + "\n", "utf-8")
        code, _, err = run(["batch", str(sites), "--out", str(tmp_path / f"r{i}.csv"), "--db", str(db), *WINDOW],
                           capsys)
        assert code == (3 if i == 0 else 0), err
    return db


def test_every_assessment_is_recorded_with_its_inputs_window_fleet_and_version(register, tmp_path):
    con = sqlite3.connect(register)
    assert dict(con.execute("SELECT key, value FROM meta"))["schema_version"] == str(reg.SCHEMA_VERSION)
    rows = con.execute("SELECT site_id, verdict, blocked_fraction, window_start_utc, window_hours, window_step_s, "
                       "fleet_source, fleet_epoch_first_utc, satellites, tool_version, error, batch_id "
                       "FROM assessments ORDER BY assessment_id").fetchall()
    assert [r[0] for r in rows] == ["bad-3", "farm-1", "croft-2", "farm-1", "new-4"]  # bad rows first, as read
    bad = rows[0]
    assert bad[1] is None and "latitude: missing" in bad[10]
    for r in rows[1:]:
        assert r[1] in ("qualified", "marginal", "not-qualified") and r[10] is None
        assert r[3:6] == ("2026-06-01T00:00:00Z", 2.0, 60.0)
        assert r[6] == "leosite illustrative shells" or "illustrative" in r[6]
        assert r[7] == "2026-06-01T00:00:00Z"  # Walker shells take the window start as their epoch
        assert r[8] == 1720 and r[9]
    # the figures are those of the results CSV
    results = {row["id"]: row for row in csv.DictReader(io.StringIO((tmp_path / "r1.csv").read_text("utf-8")))}
    assert f"{rows[3][2]:.6f}" == results["farm-1"]["blocked_fraction"]
    assert [s for (s,) in con.execute("SELECT status FROM batches ORDER BY batch_id")] == ["done", "done"]
    assert con.execute("PRAGMA integrity_check").fetchone() == ("ok",)


def test_the_listing_is_newest_first_and_shows_a_sites_history(register, capsys):
    code, out, err = run(["register", str(register)], capsys)
    assert code == 0, err
    lines = out.splitlines()
    assert lines[0].startswith("recorded (UTC)")
    ids = [line.split()[1] for line in lines[1:]]
    assert ids == ["new-4", "farm-1", "croft-2", "farm-1", "bad-3"]
    code, out, err = run(["register", str(register), "--id", "farm-1", "--csv"], capsys)
    history = list(csv.DictReader(io.StringIO(out)))
    assert [h["site_id"] for h in history] == ["farm-1", "farm-1"]
    assert history[0]["recorded_utc"] > history[1]["recorded_utc"]
    assert history[0]["batch_id"] == "2" and history[1]["batch_id"] == "1"  # the re-survey first
    code, out, _ = run(["register", str(register), "--verdict", "failed", "--csv"], capsys)
    assert [h["site_id"] for h in csv.DictReader(io.StringIO(out))] == ["bad-3"]
    code, out, _ = run(["register", str(register), "--id", "nobody"], capsys)
    assert code == 0 and "no assessments recorded for id 'nobody'" in out


def test_listing_never_writes_to_the_register(register, capsys):
    before = register.read_bytes()
    assert run(["register", str(register)], capsys)[0] == 0
    assert register.read_bytes() == before


def test_the_recorded_inputs_open_as_the_same_site_with_the_same_figures(register):
    con = sqlite3.connect(register)
    aid, blocked = con.execute("SELECT assessment_id, blocked_fraction FROM assessments WHERE site_id = 'croft-2'") \
        .fetchone()
    inputs, fleet = reg.recorded_inputs(register, aid)
    site = site_from_dict(inputs["site"], register)
    assert site.horizon.reference == "magnetic" and site.latitude_deg == -45.0
    run_again = run_site(site, FleetChoice() if fleet["kind"] == "default" else
                         FleetChoice(embedded=(fleet["kind"], fleet["name"], fleet["text"])))
    assert run_again.window.hours == 2.0
    assert abs(run_again.assessment.blocked_fraction - blocked) < 5e-5  # assess's own tracks (Hermite) vs shared


def test_a_newer_register_is_refused_and_an_older_one_too_old_to_migrate(register, tmp_path, capsys):
    for version, fragment in ((reg.SCHEMA_VERSION + 1, "written by a newer leosite"),
                              (0, "older than this leosite can migrate")):
        copy = tmp_path / f"v{version}.sqlite"
        copy.write_bytes(register.read_bytes())
        con = sqlite3.connect(copy)
        con.execute("UPDATE meta SET value = ? WHERE key = 'schema_version'", (str(version),))
        con.commit()
        con.close()
        for argv in (["register", str(copy)],
                     ["batch", str(ROOT / "demo_sites"), "--out", str(tmp_path / "x.csv"), "--db", str(copy), *WINDOW]):
            code, _, err = run(argv, capsys)
            assert code == 2 and fragment in err, err
        assert not (tmp_path / "x.csv").exists()


@pytest.mark.parametrize("make, fragment", [
    (lambda p: p.write_bytes(b"not a database at all" * 100), "not a leosite register"),
    (lambda p: sqlite3.connect(p).execute("CREATE TABLE other (x)").connection.commit(), "without its meta table"),
    (lambda p: sqlite3.connect(p).executescript("CREATE TABLE meta (key, value);"
                                                "INSERT INTO meta VALUES ('kind', 'else');"), "meta.kind is 'else'"),
])
def test_a_file_that_is_not_a_register_is_refused(tmp_path, capsys, make, fragment):
    path = tmp_path / "x.sqlite"
    make(path)
    code, _, err = run(["register", str(path)], capsys)
    assert code == 2 and fragment in err, err


def test_a_register_missing_columns_is_refused_not_misread(register, tmp_path):
    copy = tmp_path / "cut.sqlite"
    copy.write_bytes(register.read_bytes())
    con = sqlite3.connect(copy)
    con.execute("ALTER TABLE assessments DROP COLUMN availability")
    con.commit()
    con.close()
    with pytest.raises(InputError) as exc:
        reg.list_assessments(copy)
    assert "table assessments: missing columns availability" in exc.value.problems[0]


def test_migrations_run_in_one_transaction(tmp_path, monkeypatch):
    """A register one version behind is taken up with the MIGRATIONS step (here a
    test step: version 1 is the first) and refused whole if the step fails."""
    path = tmp_path / "r.sqlite"
    reg.Register(path).close()
    monkeypatch.setattr(reg, "SCHEMA_VERSION", 2)
    monkeypatch.setattr(reg, "MIGRATIONS", {1: "ALTER TABLE batches ADD COLUMN note TEXT"})
    reg.Register(path).close()
    con = sqlite3.connect(path)
    assert dict(con.execute("SELECT key, value FROM meta"))["schema_version"] == "2"
    assert "note" in {r[1] for r in con.execute("PRAGMA table_info(batches)")}
    con.close()
    monkeypatch.setattr(reg, "SCHEMA_VERSION", 3)
    monkeypatch.setattr(reg, "MIGRATIONS", {2: "ALTER TABLE batches ADD COLUMN x TEXT; ALTER TABLE nothing ADD y"})
    with pytest.raises(InputError) as exc:
        reg.Register(path)
    assert "cannot migrate the register from schema version 2 to 3" in exc.value.problems[0]
    con = sqlite3.connect(path)
    assert dict(con.execute("SELECT key, value FROM meta"))["schema_version"] == "2"
    assert "x" not in {r[1] for r in con.execute("PRAGMA table_info(batches)")}  # rolled back whole


def test_the_readme_documents_every_column():
    readme = (ROOT / "README.md").read_text("utf-8")
    section = readme.split("## The site register", 1)[1].split("\n## ", 1)[0]
    for table, columns in reg.COLUMNS.items():
        assert f"CREATE TABLE {table}" in section, table
        for column in columns:
            assert column in section, (table, column)
    assert json.dumps(reg.SCHEMA_VERSION) in section
