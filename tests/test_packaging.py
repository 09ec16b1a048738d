"""The package as a user installs it: a wheel built from this checkout,
installed into a folder away from it, carries the engine, the text UI's
stylesheet and the demo sites (README, "demo:NAME")."""

from __future__ import annotations

import json
import os
import subprocess
import sys
import zipfile

import pytest

from .helpers import ROOT


@pytest.fixture(scope="module")
def wheel(tmp_path_factory):
    out = tmp_path_factory.mktemp("wheel")
    done = subprocess.run([sys.executable, "-m", "pip", "wheel", "--no-deps", "--no-build-isolation", "-q",
                           "-w", str(out), str(ROOT)], capture_output=True, text=True, timeout=300)
    if done.returncode != 0:  # no setuptools in this environment: build it the usual way
        done = subprocess.run([sys.executable, "-m", "pip", "wheel", "--no-deps", "-q", "-w", str(out), str(ROOT)],
                              capture_output=True, text=True, timeout=300)
    assert done.returncode == 0, done.stderr[-2000:]
    (path,) = out.glob("leosite-*.whl")
    return path


def test_wheel_holds_every_package_and_the_demo_sites(wheel):
    names = set(zipfile.ZipFile(wheel).namelist())
    for need in ("survey/api.py", "survey/plan/rays.py", "survey/data/illustrative_shells.toml",
                 "tui/leosite.tcss", "tui/launch.py", "survey/demo_sites/alder-brook-farm/site.toml",
                 "survey/demo_sites/alder-brook-farm/plan.geojson", "survey/demo_sites/mill-lane-terrace/horizon.csv",
                 "survey/demo_sites/larchwater-hollow/larchwater-6s.tif"):
        assert need in names, need


def test_installed_wheel_assesses_a_demo_away_from_the_checkout(wheel, tmp_path):
    target = tmp_path / "site-packages"
    done = subprocess.run([sys.executable, "-m", "pip", "install", "--no-deps", "-q", "--target", str(target),
                           str(wheel)], capture_output=True, text=True, timeout=300)
    assert done.returncode == 0, done.stderr[-2000:]
    work = tmp_path / "elsewhere"
    work.mkdir()
    env = dict(os.environ, PYTHONPATH=str(target))
    code = "import sys; from tui.launch import main; sys.exit(main(sys.argv[1:]))"
    done = subprocess.run([sys.executable, "-I", "-c", f"import sys; sys.path.insert(0, {str(target)!r}); {code}",
                           "assess", "demo:alder-brook-farm", "--json", "--hours", "1", "--step", "60"],
                          capture_output=True, text=True, cwd=work, env=env, timeout=300)
    assert done.returncode == 0, done.stderr[-2000:]
    d = json.loads(done.stdout)
    assert d["site"]["name"] == "Alder Brook farmhouse"
    # It ran the installed copy, not the checkout.
    done = subprocess.run([sys.executable, "-I", "-c", f"import sys; sys.path.insert(0, {str(target)!r}); "
                           "import survey, tui.demos; print(survey.__file__); print(len(tui.demos.demo_sites()))"],
                          capture_output=True, text=True, cwd=work, timeout=120)
    assert done.returncode == 0, done.stderr[-2000:]
    where, count = done.stdout.split()
    assert where.startswith(str(target)) and int(count) == 7  # alder, mill, tussock, fernbank, wren, tern, larchwater
