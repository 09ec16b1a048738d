"""The real ``leosite ui`` in a real terminal (tmux) at 80x24 and 200x60: what a
user would see on the screen, read back with ``tmux capture-pane``."""

from __future__ import annotations

import os
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

    def wait_for(self, test, timeout: float = 40.0, what: str = "") -> str:
        end = time.monotonic() + timeout
        while True:
            text = self.screen()
            if test(text):
                return text
            if time.monotonic() > end:
                raise AssertionError(f"screen never showed {what}:\n{text}")
            time.sleep(0.2)

    def close(self) -> None:
        subprocess.run([TMUX, "-L", self.socket, "kill-server"], capture_output=True, timeout=20)


def sky_chart_drawn(screen: str) -> bool:
    lines = screen.splitlines()
    chart = [ln for ln in lines[3:] if any(ch in BRAILLE for ch in ln)]
    north = any(ln.strip() == "N" or ln.strip().startswith("N ") or " N " in ln for ln in lines[2:6])
    return len(chart) >= 10 and north and any(" W" in ln and "E" in ln for ln in chart)


@pytest.mark.parametrize("width,height", [(80, 24), (200, 60)])
def test_real_app_in_tmux(tmp_path, width, height):
    site = tmp_path / "alder-brook-farm"
    shutil.copytree(DEMO / "alder-brook-farm", site)
    term = Terminal(f"leosite-test-{os.getpid()}-{width}", width, height,
                    [sys.executable, "-m", "tui.launch", "ui", str(site / "site.toml"), "--hours", "6"], tmp_path)
    try:
        screen = term.wait_for(lambda s: "MARGINAL" in s, what="the verdict")
        assert "Alder Brook farmhouse" in screen.splitlines()[0]  # the status line names the site
        assert "blocked" in screen.splitlines()[0]
        assert "VERDICT: MARGINAL" in screen  # the Findings tab opens first
        assert "Traceback" not in screen

        term.keys("F4")  # the sky chart: braille rim, N above it, W and E on one row
        screen = term.wait_for(sky_chart_drawn, what="the sky chart")
        assert max(len(ln.rstrip()) for ln in screen.splitlines()) <= width

        term.keys("F3")
        screen = term.wait_for(lambda s: "alders" in s, what="the horizon table")
        assert "Compass bearings" in screen  # the demo's bearings are magnetic, and say so

        term.keys("C-q")
        screen = term.wait_for(lambda s: "LEOSITE-EXIT=" in s, what="the app to quit")
        assert "LEOSITE-EXIT=0" in screen and "Traceback" not in screen
    finally:
        term.close()
