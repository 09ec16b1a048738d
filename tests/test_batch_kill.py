"""A batch killed mid-run (README, "Batch runs": exit codes; "The site
register"): SIGTERM stops it cleanly (exit 143, no results CSV, the register
says the batch stopped); SIGKILL at random moments leaves a register that
SQLite itself finds intact, holding every site that was finished, each row
whole, and a results CSV that is absent or whole."""

from __future__ import annotations

import csv
import io
import json
import random
import signal
import sqlite3
import subprocess
import sys
import time

from .helpers import ROOT

HEADER = "id,latitude,longitude,elevation_m,height_m,min_elevation_deg,reference,horizon\n"
SITES = 150
CHILD = ("import sys; from survey.cli import main; sys.exit(main(sys.argv[1:]))")


def write_sites(path):
    rng = random.Random(16)
    rows = [f"s{i:03d},{rng.uniform(-60, 60):.4f},{rng.uniform(-180, 180):.4f},100,5,25,true,"
            f"{rng.uniform(0, 360):.0f}:{rng.uniform(0, 40):.0f};{rng.uniform(0, 360):.0f}:{rng.uniform(0, 40):.0f}"
            for i in range(SITES)]
    path.write_text(HEADER + "\n".join(rows) + "\n", "utf-8")


def start(tmp_path):
    sites, out, db = tmp_path / "sites.csv", tmp_path / "results.csv", tmp_path / "register.sqlite"
    if not sites.exists():
        write_sites(sites)
    argv = ["batch", str(sites), "--out", str(out), "--db", str(db), "--workers", "1",
            "--start", "2026-06-01T00:00:00Z", "--hours", "6", "--step", "30"]
    child = subprocess.Popen([sys.executable, "-c", CHILD, *argv], cwd=ROOT, stderr=subprocess.PIPE, text=True)
    return child, out, db


def recorded(db) -> int:
    try:
        con = sqlite3.connect(f"file:{db}?mode=ro", uri=True, timeout=5)
        try:
            return con.execute("SELECT count(*) FROM assessments").fetchone()[0]
        finally:
            con.close()
    except sqlite3.Error:
        return 0


def wait_for(db, n, child, limit_s=60.0):
    t0 = time.monotonic()
    while recorded(db) < n and child.poll() is None:
        assert time.monotonic() - t0 < limit_s, "the batch recorded nothing"
        time.sleep(0.01)


def check_register(db) -> list[tuple]:
    """SQLite's own integrity check, and every row whole: the figures of a row
    are those of its full result JSON, and its inputs parse."""
    con = sqlite3.connect(db)
    assert con.execute("PRAGMA integrity_check").fetchone() == ("ok",)
    rows = con.execute("SELECT site_id, verdict, blocked_fraction, interruption, inputs, result, batch_id "
                       "FROM assessments ORDER BY assessment_id").fetchall()
    for site_id, verdict, blocked, interruption, inputs, result, _ in rows:
        d = json.loads(result)
        assert d["verdict"] == verdict and d["blocked_fraction"] == blocked and d["interruption"] == interruption
        assert json.loads(inputs)["site"]["site"]["name"] == site_id
    assert len({(r[0], r[6]) for r in rows}) == len(rows)  # no site twice in one batch
    con.close()
    return rows


def check_results(out) -> bool:
    """Absent, or whole: every site once, in input order, each with a verdict."""
    if not out.exists():
        return False
    rows = list(csv.DictReader(io.StringIO(out.read_text("utf-8"))))
    assert [r["id"] for r in rows] == [f"s{i:03d}" for i in range(SITES)]
    assert all(r["verdict"] for r in rows)
    return True


def test_sigterm_stops_the_batch_cleanly(tmp_path):
    child, out, db = start(tmp_path)
    wait_for(db, 10, child)
    child.send_signal(signal.SIGTERM)
    _, err = child.communicate(timeout=60)
    assert child.returncode == 143, err
    assert "stopped by SIGTERM after" in err and "not written" in err
    assert not out.exists()
    rows = check_register(db)
    assert 10 <= len(rows) < SITES
    said = int(err.split("stopped by SIGTERM after ")[1].split(" of ")[0].replace(",", ""))
    assert said == len(rows)  # every site it finished is recorded
    con = sqlite3.connect(db)
    assert con.execute("SELECT status, failed FROM batches").fetchone() == ("stopped", 0)
    con.close()


def test_sigkill_at_random_moments_leaves_a_consistent_register_and_no_torn_results(tmp_path):
    rng = random.Random("batch-kill")
    kills = 0
    for _ in range(3):
        child, out, db = start(tmp_path)
        before = len(check_register(db)) if db.exists() else 0
        wait_for(db, before + 1, child)
        time.sleep(rng.uniform(0.0, 1.5))
        child.send_signal(signal.SIGKILL)
        child.communicate(timeout=60)
        kills += child.returncode == -signal.SIGKILL
        rows = check_register(db)
        assert len(rows) > before
        check_results(out)  # absent, or whole when the kill came after the end
        out.unlink(missing_ok=True)
    assert kills >= 1
    # The register takes the next batch after the kills, and that one finishes.
    child, out, db = start(tmp_path)
    _, err = child.communicate(timeout=120)
    assert child.returncode == 0, err
    assert check_results(out)
    con = sqlite3.connect(db)
    statuses = [s for (s,) in con.execute("SELECT status FROM batches ORDER BY batch_id")]
    assert statuses[-1] == "done" and len(statuses) == 4
    assert con.execute("SELECT count(*) FROM assessments WHERE batch_id = ?", (len(statuses),)).fetchone()[0] == SITES
    con.close()


def _children(pid: int) -> list[int]:
    try:
        with open(f"/proc/{pid}/task/{pid}/children", encoding="ascii") as fh:
            return [int(x) for x in fh.read().split()]
    except OSError:
        return []


def _alive(pid: int) -> bool:
    try:
        with open(f"/proc/{pid}/status", encoding="ascii") as fh:
            state = next(line for line in fh if line.startswith("State:"))
    except (OSError, StopIteration):
        return False
    return "Z" not in state.split()[1]  # a zombie has ended (its parent is gone, nobody reaps it yet)


def test_worker_processes_end_when_the_batch_is_killed(tmp_path):
    """SIGKILL runs no cleanup: the local workers notice their parent is gone."""
    import os

    if not os.path.exists("/proc/self/task"):
        import pytest

        pytest.skip("needs Linux /proc to find the worker processes")
    sites, out, db = tmp_path / "sites.csv", tmp_path / "results.csv", tmp_path / "register.sqlite"
    write_sites(sites)
    argv = ["batch", str(sites), "--out", str(out), "--db", str(db), "--workers", "2",
            "--start", "2026-06-01T00:00:00Z", "--hours", "6", "--step", "30"]
    child = subprocess.Popen([sys.executable, "-c", CHILD, *argv], cwd=ROOT, stderr=subprocess.PIPE, text=True)
    wait_for(db, 5, child)
    workers = _children(child.pid)
    child.send_signal(signal.SIGKILL)
    child.communicate(timeout=60)
    assert workers, "no worker processes seen"
    t0 = time.monotonic()
    while any(_alive(p) for p in workers) and time.monotonic() - t0 < 10:
        time.sleep(0.1)
    assert not any(_alive(p) for p in workers)
    check_register(db)
    assert not out.exists() or check_results(out)
