"""Nothing lost: writers killed with SIGKILL at random moments leave the old
files or the new ones, whole and consistent (README, "Saving").  A few kills of
each writer here; ``tools/kill_saves.py`` is the long run (100 of each)."""

from __future__ import annotations

import importlib.util
import os
import random
import shutil
import subprocess
import sys
import time

import pytest

from survey.fileio import STALE_TEMP_S, atomic_write_text
from survey.site import load_site

from .helpers import DEMO, ROOT

_spec = importlib.util.spec_from_file_location("kill_saves", ROOT / "tools" / "kill_saves.py")
kill_saves = importlib.util.module_from_spec(_spec)
sys.modules["kill_saves"] = kill_saves  # its dataclasses look their module up
_spec.loader.exec_module(kill_saves)

# kills per writer in CI (seeded): bounded so the suite stays in its time budget
KILLS = {"site-pair": 4, "report-json": 2, "report-pdf": 1, "plot": 1, "tui-autosave": 1}


@pytest.mark.parametrize("name", list(KILLS))
def test_a_killed_writer_leaves_whole_consistent_files(name, tmp_path):
    rng = random.Random(f"kill-{name}")
    for i in range(KILLS[name]):
        work = tmp_path / f"run{i}"
        work.mkdir()
        assert kill_saves.kill_once(kill_saves.SCENARIOS[name], rng, work) is None


def test_the_checks_find_a_torn_pair(tmp_path):
    """The check itself can fail: a site file saying one generation beside a CSV
    of another is reported (a check that cannot fail proves nothing)."""
    folder = tmp_path / "site"
    shutil.copytree(DEMO / "mill-lane-terrace", folder)
    text = (folder / "site.toml").read_text("utf-8")
    (folder / "site.toml").write_text(text.replace('name = "Mill Lane terrace"', 'name = "gen 5"'), "utf-8")
    with open(folder / "horizon.csv", "a", encoding="utf-8") as fh:
        fh.write("10,5,,gen 4\n")
    assert "torn pair" in kill_saves.check_site_pair(folder, tmp_path / "log", "")


CRASH_BETWEEN = r"""
import os, sys
from dataclasses import replace
from pathlib import Path
import survey.sitefile as sf
from survey.api import HorizonPoint, load_site
calls = []
real = sf.atomic_write_text
def crash_after_first(path, text):
    real(path, text)
    calls.append(path)
    if len(calls) == 1:
        os._exit(9)  # the process dies between the CSV and the site file
sf.atomic_write_text = crash_after_first
path = Path(sys.argv[1])
site = load_site(path)
site = replace(site, name="after", horizon=replace(site.horizon, points=site.horizon.points + (HorizonPoint(1.0, 5.0),)))
sf.save_site(site, path)
"""


def test_a_crash_between_the_csv_and_the_site_file_keeps_the_old_pair(tmp_path):
    folder = tmp_path / "site"
    shutil.copytree(DEMO / "mill-lane-terrace", folder)
    before = load_site(folder / "site.toml")
    done = subprocess.run([sys.executable, "-c", CRASH_BETWEEN, str(folder / "site.toml")], cwd=ROOT)
    assert done.returncode == 9
    assert (folder / "horizon.rev1.csv").is_file()  # the new CSV was written ...
    after = load_site(folder / "site.toml")  # ... but the site file still names the old one
    assert after.name == before.name and after.horizon.points == before.horizon.points


def test_temp_files_a_killed_writer_left_are_swept(tmp_path):
    target = tmp_path / "site.toml"
    stale, fresh = tmp_path / ".site.toml.abc123.tmp", tmp_path / ".site.toml.def456.tmp"
    stale.write_text("half")
    fresh.write_text("another writer at work")
    old = time.time() - STALE_TEMP_S - 60
    os.utime(stale, (old, old))
    atomic_write_text(target, "x = 1\n")
    assert not stale.exists() and fresh.exists() and target.read_text() == "x = 1\n"
