"""The real ``leosite ui`` in a real terminal (tmux) at 80x24, 100x30 and
200x60: what a user would see on the screen, read back with ``tmux capture-pane``."""

from __future__ import annotations

import os
import re
import shlex
import shutil
import subprocess
import sys
import time
from pathlib import Path

import pytest

TMUX = shutil.which("tmux")
pytestmark = pytest.mark.skipif(TMUX is None, reason="tmux is not installed")
DEMO = Path(__file__).resolve().parent.parent / "demo_sites"
BRAILLE = {chr(c) for c in range(0x2801, 0x2900)}
# Partial blocks: a scrollbar's thumb, or a glyph left over at a row's end.
BLOCKS = set("\u258f\u258e\u258d\u258c\u258b\u258a\u2589\u2590\u2580\u2584\u2581\u2582\u2583\u2585\u2586\u2587\u2588")
SPOT_NAMES = ("yard pole", "east roof", "chimney bracket")  # the demo plan's spots
PLAN_WORDS = {"blocked", "building", "ridge", "tree", "wall", "site", "point", "best", "best:", "selected", "m",
              *" ".join(SPOT_NAMES).split()}
PROFILE_WORDS = {"obstruction", "obstacle", "measured", "point", "min", "selected", "cursor"}


class Terminal:
    def __init__(self, socket: str, width: int, height: int, command: list[str], cwd: Path):
        self.socket = socket
        env = dict(os.environ, TERM="xterm-256color")
        env.pop("NO_COLOR", None)
        line = f"cd {shlex.quote(str(cwd))} && {shlex.join(command)}; echo LEOSITE-EXIT=$?; sleep 30"
        self._tmux("new-session", "-d", "-s", "t", "-x", str(width), "-y", str(height), line, env=env)

    def _tmux(self, *args, env=None) -> str:
        out = subprocess.run([TMUX, "-L", self.socket, *args], capture_output=True, text=True, env=env,
                             timeout=20)
        return out.stdout

    def screen(self) -> str:
        return self._tmux("capture-pane", "-p", "-t", "t")

    def keys(self, *keys: str) -> None:
        self._tmux("send-keys", "-t", "t", *keys)

    def wait_for(self, test, timeout: float = 40.0, what: str = "", settled: bool = False) -> str:
        """The screen once ``test`` holds (and, with ``settled``, once it stays
        the same for half a second: the layout has finished moving)."""
        end = time.monotonic() + timeout
        last = None
        while True:
            text = self.screen()
            if test(text) and (not settled or text == last):
                return text
            last = text if test(text) else None
            if time.monotonic() > end:
                raise AssertionError(f"screen never showed {what}:\n{text}")
            time.sleep(0.5 if settled else 0.2)

    def close(self) -> None:
        subprocess.run([TMUX, "-L", self.socket, "kill-server"], capture_output=True, timeout=20)


def sky_chart_drawn(screen: str) -> bool:
    lines = screen.splitlines()
    chart = [ln for ln in lines[3:] if any(ch in BRAILLE for ch in ln)]
    north = any(ln.strip() == "N" or ln.strip().startswith("N ") or " N " in ln for ln in lines[2:6])
    return len(chart) >= 10 and north and any(" W" in ln and "E" in ln for ln in chart)


def cut_words(text: str, words: set[str]) -> list[str]:
    """Words of a legend row that are cut: with an ellipsis, or not a word the
    legend writes (a word cut short, "poi")."""
    return [w for w in text.split()
            if "\u2026" in w or (len(w) > 1 and any(c.isalpha() for c in w) and w not in words)]


def spots_problems(screen: str) -> list[str]:
    """What is wrong with the Spots tab as shown: ranking columns cut off, a
    stray glyph on a ranking row (or the row under it), a legend item cut, or
    the hint line broken in the middle of a phrase."""
    lines = screen.splitlines()
    bad = []
    for phrase in ("u or ⏎: use the selected spot as the mount", "candidate positions ranked; the best of each spot listed"):
        if not any(phrase in ln for ln in lines):
            bad.append(f"phrase broken: {phrase!r}")
    head = next(i for i, ln in enumerate(lines) if "Spot" in ln and "Blocked" in ln)
    if not lines[head].rstrip().endswith("N m"):
        bad.append(f"ranking columns cut: {lines[head]!r}")
    end = head + 1
    while end < len(lines) and any(name in lines[end] for name in SPOT_NAMES):
        end += 1
    if end == head + 1:
        bad.append("no ranked rows")
    bad += [f"stray glyph: {ln!r}" for ln in lines[head:end + 1] if BLOCKS & set(ln)]
    scale = next(i for i, ln in enumerate(lines) if "\u251c" in ln and "\u2524" in ln)  # ├──┤ 10 m
    right = next(ln.index("\u2191") for ln in lines if "\u2191" in ln)  # ↑ in the plan's last column
    legend = [ln[:right + 1] for ln in lines[scale + 1:-1]]  # down to the footer
    if not any("building" in ln for ln in legend):
        bad.append("no legend under the plan")
    bad += [f"legend cut: {ln!r} {cut_words(ln, PLAN_WORDS)}" for ln in legend if cut_words(ln, PLAN_WORDS)]
    return bad


def horizon_problems(screen: str) -> list[str]:
    """What is wrong with the Horizon tab as shown: the line over the table
    broken mid-phrase, a distance column headed only "m", a stray glyph in the
    table's part of the screen, a cut legend word under the profile."""
    lines = screen.splitlines()
    bad = []
    for phrase in ("Compass bearings.", "Key m: use true bearings."):
        if not any(phrase in ln for ln in lines):
            bad.append(f"phrase broken: {phrase!r}")
    if not any(re.search(r"Declination [+-]\d+\.\d\d° \(WMM2025\) added", ln) for ln in lines):
        bad.append("the declination phrase is broken")
    head = next(i for i, ln in enumerate(lines) if "El°" in ln and "Label" in ln)
    if "Dist m" not in lines[head] or re.search(r"El°\s+m\s", lines[head]):
        bad.append(f"distance column not named: {lines[head]!r}")
    axis = next(ln.index("\u2514") for ln in lines if "\u2514" in ln)  # └, the profile's corner
    entry = next(i for i, ln in enumerate(lines) if "bearing elevation" in ln)
    table = [ln[:axis - 4] for ln in lines[head:entry + 1]]  # left of the profile's axis labels
    bad += [f"stray glyph: {ln!r}" for ln in table if BLOCKS & set(ln)]
    row = next(ln for ln in lines if "\u2588 obst" in ln)  # the profile's legend
    if cut_words(row[axis - 4:], PROFILE_WORDS):
        bad.append(f"legend cut: {row!r}")
    return bad


@pytest.mark.parametrize("width,height", [(80, 24), (100, 30), (200, 60)])
def test_real_app_in_tmux(tmp_path, width, height):
    site = tmp_path / "alder-brook-farm"
    shutil.copytree(DEMO / "alder-brook-farm", site)
    term = Terminal(f"leosite-test-{os.getpid()}-{width}", width, height,
                    [sys.executable, "-m", "tui.launch", "ui", str(site / "site.toml"), "--hours", "6"], tmp_path)
    try:
        screen = term.wait_for(lambda s: "VERDICT: MARGINAL" in s, what="the verdict")
        assert "Alder Brook farmhouse" in screen.splitlines()[0]  # the status line names the site
        assert "blocked" in screen.splitlines()[0]
        assert "VERDICT: MARGINAL" in screen  # the Findings tab opens first
        assert "Traceback" not in screen

        term.keys("F4")  # the sky chart: braille rim, N above it, W and E on one row
        screen = term.wait_for(sky_chart_drawn, what="the sky chart")
        assert max(len(ln.rstrip()) for ln in screen.splitlines()) <= width

        term.keys("F3")
        screen = term.wait_for(lambda s: "alders" in s, what="the horizon table", settled=True)
        assert "Compass bearings" in screen  # the demo's bearings are magnetic, and say so
        assert horizon_problems(screen) == [], screen

        term.keys("F6")  # the ranking is worked out when the tab opens
        screen = term.wait_for(lambda s: "ranked" in s and all(n in s for n in SPOT_NAMES) and "\u2191" in s
                               and "building" in s, what="the spot ranking and the plan", settled=True)
        assert spots_problems(screen) == [], screen
        assert max(len(ln.rstrip()) for ln in screen.splitlines()) <= width

        term.keys("C-q")
        screen = term.wait_for(lambda s: "LEOSITE-EXIT=" in s, what="the app to quit")
        assert "LEOSITE-EXIT=0" in screen and "Traceback" not in screen
    finally:
        term.close()
