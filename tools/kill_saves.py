"""Kill every writer at random moments (SIGKILL) and check what is left on disk.

Each scenario starts a child process that saves over and over, waits until it
has saved once, kills it with SIGKILL after a random delay, and then checks the
files: either the old version or a new one, whole, and (for a site kept with a
horizon CSV) a site file and CSV that belong together.  README, "Saving".

    python tools/kill_saves.py                    # 100 kills of each writer
    python tools/kill_saves.py --runs 20 --only site-pair,report

The test suite runs a few kills of each (tests/test_kill_saves.py); this script
is the longer run.  Exit status 0 when every kill left whole files, 1 otherwise.
"""

from __future__ import annotations

import argparse
import hashlib
import random
import shutil
import subprocess
import sys
import tempfile
import time
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
DEMO = ROOT / "demo_sites" / "mill-lane-terrace"  # its horizon is kept in a CSV

# ---------------------------------------------------------------- the children
# Each prints "ready" once a first save is complete, then keeps saving until killed.

SITE_PAIR = r"""
import sys
from dataclasses import replace
from pathlib import Path
from survey.api import HorizonPoint, load_site, save_site
path = Path(sys.argv[1])
n = 0
while True:
    n += 1
    site = load_site(path)
    points = site.horizon.points[:16] + (HorizonPoint(float(n % 360), 5.0, None, f"gen {n}"),)
    save_site(replace(site, name=f"gen {n}", horizon=replace(site.horizon, points=points)), path)
    if n == 1:
        print("ready", flush=True)
"""

REPORT = r"""
import hashlib, os, sys
from datetime import datetime, timedelta, timezone
from pathlib import Path
from survey.api import load_site, run_site, write_report
from survey.report import render_report
site_path, out, log = Path(sys.argv[1]), Path(sys.argv[2]), Path(sys.argv[3])
run = run_site(load_site(site_path), hours=1, step_s=120)
fmt = out.suffix[1:]
start = datetime(2026, 6, 1, tzinfo=timezone.utc)
with open(log, "a") as fh:
    for n in range(1, 10**9):
        when = start + timedelta(seconds=n)  # a new report id each time: new bytes
        fh.write(hashlib.sha256(render_report(run, fmt, generated=when)).hexdigest() + "\n")
        fh.flush()
        os.fsync(fh.fileno())
        write_report(run, out, generated=when)
        if n == 1:
            print("ready", flush=True)
"""

PLOT = r"""
import sys
from survey.api import command_line
site, out = sys.argv[1], sys.argv[2]
for n in range(1, 10**9):
    code = command_line(["assess", site, "--plot", out, "--hours", str(1 + n % 2), "--step", "120", "--json"])
    assert code == 0, code
    if n == 1:
        print("ready", flush=True)
"""

TUI = r"""
import asyncio, sys
from pathlib import Path
from tui.app import LeositeApp
from tui.session import Assessor

async def main():
    app = LeositeApp(Path(sys.argv[1]), Assessor(hours=1, step_s=120), work_root=Path(sys.argv[2]))
    async with app.run_test(size=(100, 30)) as pilot:
        while app.latest is None:
            await pilot.pause(0.05)
        await pilot.press("f3")
        await pilot.press("a")
        for n in range(1, 10**9):
            for ch in f"{n % 360} 5 gen{n}":
                await pilot.press({" ": "space"}.get(ch, ch))
            await pilot.press("enter")
            while app.session.dirty:  # the autosave comes 1.5 s after the last edit
                await pilot.pause(0.05)
            print(f"saved {n}", flush=True)
            if n == 1:
                print("ready", flush=True)

asyncio.run(main())
"""


# ---------------------------------------------------------------- the checks

def _site_in(folder: Path):
    from survey.api import load_site  # the same reader a user's next run uses
    return load_site(folder / "site.toml")


def check_site_pair(folder: Path, _log: Path, _stdout: str) -> str | None:
    site = _site_in(folder)
    labels = [p.label for p in site.horizon.points if p.label.startswith("gen ")]
    if site.name.startswith("gen "):
        if labels != [site.name]:
            return f"torn pair: the site file says {site.name!r}, its CSV holds {labels}"
    elif labels:
        return f"torn pair: the original site file with a saved CSV ({labels})"
    return None


def check_report(folder: Path, log: Path, _stdout: str) -> str | None:
    outs = [p for p in folder.iterdir() if p.name.startswith("report.")]
    hashes = {line.strip() for line in log.read_text().splitlines() if len(line.strip()) == 64}
    for out in outs:
        digest = hashlib.sha256(out.read_bytes()).hexdigest()
        if digest not in hashes:
            return f"{out.name}: {out.stat().st_size} bytes that no finished render made (torn or mixed)"
    return None if outs else "no report on disk after a save was complete"


def check_plot(folder: Path, _log: Path, _stdout: str) -> str | None:
    from PIL import Image
    out = folder / "sky.png"
    try:
        with Image.open(out) as im:
            im.load()  # decodes every byte: a truncated PNG fails here
    except Exception as exc:  # noqa: BLE001 - any failure to decode is the finding
        return f"sky.png does not decode: {exc}"
    return None


def check_tui(folder: Path, _log: Path, stdout: str) -> str | None:
    site = _site_in(folder)
    gens = [int(p.label[3:]) for p in site.horizon.points if p.label.startswith("gen")]
    saved = [int(line.split()[1]) for line in stdout.splitlines() if line.startswith("saved ")]
    if gens != list(range(1, len(gens) + 1)):
        return f"the saved points are not the edits in order: {gens}"
    if saved and len(gens) < saved[-1]:
        return f"the app said save {saved[-1]} was done, the file holds {len(gens)}"
    return None


@dataclass(frozen=True)
class Scenario:
    name: str
    child: str
    args: Callable[[Path, Path], list[str]]
    check: Callable[[Path, Path, str], str | None]
    max_delay_s: float


SCENARIOS = {
    s.name: s for s in (
        Scenario("site-pair", SITE_PAIR, lambda f, log: [str(f / "site.toml")], check_site_pair, 0.5),
        Scenario("report-pdf", REPORT, lambda f, log: [str(f / "site.toml"), str(f / "report.pdf"), str(log)],
                 check_report, 2.0),
        Scenario("report-json", REPORT, lambda f, log: [str(f / "site.toml"), str(f / "report.json"), str(log)],
                 check_report, 1.0),
        Scenario("plot", PLOT, lambda f, log: [str(f / "site.toml"), str(f / "sky.png")], check_plot, 1.5),
        Scenario("tui-autosave", TUI, lambda f, log: [str(f / "site.toml"), str(f / "work")], check_tui, 4.0),
    )
}


def kill_once(scenario: Scenario, rng: random.Random, work: Path) -> str | None:
    """One child, one SIGKILL at a random moment after its first save; the
    finding, or None when the files on disk are whole and consistent."""
    folder = work / "site"
    shutil.copytree(DEMO, folder)
    log = work / "hashes.log"
    proc = subprocess.Popen([sys.executable, "-c", scenario.child, *scenario.args(folder, log)],
                            cwd=ROOT, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    try:
        first = proc.stdout.readline()
        while first and first.strip() != "ready":
            first = proc.stdout.readline()
        if not first:
            return f"the child ended before its first save: {proc.stderr.read()[-500:]}"
        time.sleep(rng.uniform(0.0, scenario.max_delay_s))
        proc.kill()  # SIGKILL: no handler, no cleanup
    finally:
        proc.kill()
        out, _err = proc.communicate()
    try:
        return scenario.check(folder, log, out)
    except Exception as exc:  # noqa: BLE001 - a file that does not load is the finding
        return f"{type(exc).__name__}: {exc}"


def run(names: list[str], runs: int, seed: int, echo=print) -> dict[str, tuple[int, list[str]]]:
    """Kill each named scenario ``runs`` times; {name: (survived, findings)}."""
    rng = random.Random(seed)
    results = {}
    for name in names:
        scenario = SCENARIOS[name]
        findings = []
        for i in range(runs):
            with tempfile.TemporaryDirectory(prefix=f"kill-{name}-") as tmp:
                finding = kill_once(scenario, rng, Path(tmp))
            if finding:
                findings.append(f"run {i + 1}: {finding}")
                echo(f"{name}: run {i + 1}: {finding}")
        results[name] = (runs - len(findings), findings)
        echo(f"{name}: {runs - len(findings)} of {runs} kills left whole, consistent files")
    return results


def main(argv=None) -> int:
    p = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    p.add_argument("--runs", type=int, default=100, help="kills of each writer (default 100)")
    p.add_argument("--seed", type=int, default=1)
    p.add_argument("--only", help="comma-separated scenarios: " + ", ".join(SCENARIOS))
    args = p.parse_args(argv)
    names = args.only.split(",") if args.only else list(SCENARIOS)
    unknown = [n for n in names if n not in SCENARIOS]
    if unknown:
        p.error(f"unknown scenario {unknown[0]!r}")
    results = run(names, args.runs, args.seed)
    return 0 if all(not f for _, f in results.values()) else 1


if __name__ == "__main__":
    sys.exit(main())
