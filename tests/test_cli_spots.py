"""`leosite horizon` and `leosite spots`: the JSON contracts of issue 5, the plot
files, and bad input (exit 2, one line, nothing written)."""

from __future__ import annotations

import json
import math

import pytest
from PIL import Image

from survey.cli import main

from .helpers import DEMO, MINIMAL_SITE

ALDER = str(DEMO / "alder-brook-farm/site.toml")
FAST = ["--hours", "2", "--step", "60"]


def run(argv, capsys):
    code = main(argv)
    out, err = capsys.readouterr()
    return code, out, err


def test_horizon_json_contract_and_hand_worked_value(write_site, capsys):
    # A 10 m high, 10 x 10 m building whose near face is 15 m north of an antenna at 2 m:
    # due north the roof edge is seen at atan((10 - 2) / 15) = atan(8/15) = 28.072 deg (hand-worked).
    site = write_site(MINIMAL_SITE + """
[[plan.building]]
name = "block"
footprint = [[-5, 15], [5, 15], [5, 25], [-5, 25]]
height_m = 10.0
""")
    code, out, err = run(["horizon", str(site), "--at", "0,0,2", "--json"], capsys)
    assert code == 0, err
    d = json.loads(out)
    assert d["azimuth_deg"] == list(range(360))
    assert len(d["elevation_deg"]) == 360
    assert d["elevation_deg"][0] == pytest.approx(math.degrees(math.atan(8 / 15)), abs=1e-3)
    # Beyond the corners (atan(5/15) = 18.43 deg either side of north) the sky is clear.
    assert d["elevation_deg"][19] == 0.0 and d["elevation_deg"][341] == 0.0
    assert d["elevation_deg"][90] == 0.0 and d["elevation_deg"][270] == 0.0


def test_horizon_years_grow_trees_and_text_output(write_site, capsys, tmp_path):
    # A 12 m tree of crown radius 3 m centred 20 m south, antenna at 2 m: atan(10/17) = 30.47 deg due south;
    # grown 0.5 m a year for 4 years it is 14 m: atan(12/17) = 35.22 deg (hand-worked).
    site = write_site(MINIMAL_SITE + """
[[plan.tree]]
at = [0, -20]
crown_radius_m = 3.0
height_m = 12.0
growth_m_per_year = 0.5
""")
    code, out, _ = run(["horizon", str(site), "--at", "0,0,2", "--json"], capsys)
    assert json.loads(out)["elevation_deg"][180] == pytest.approx(math.degrees(math.atan(10 / 17)), abs=1e-3)
    code, out, _ = run(["horizon", str(site), "--at", "0,0,2", "--years", "4", "--json"], capsys)
    assert json.loads(out)["elevation_deg"][180] == pytest.approx(math.degrees(math.atan(12 / 17)), abs=1e-3)
    png = tmp_path / "h.png"
    code, out, err = run(["horizon", str(site), "--at", "0,0,2", "--plot", str(png)], capsys)
    assert code == 0, err
    assert "180°" in out and "highest 30.5°" in out
    assert Image.open(png).size == (2400, 800)


def test_spots_json_contract_on_the_demo(capsys, tmp_path):
    png = tmp_path / "plan.png"
    code, out, err = run(["spots", ALDER, "--json", "--spacing", "1", "--plot", str(png), *FAST], capsys)
    assert code == 0, err
    d = json.loads(out)
    keys = {"name", "east_m", "north_m", "height_m", "blocked_fraction", "availability", "interruption"}
    assert keys <= set(d["best"]) and all(keys <= set(c) for c in d["candidates"])
    ranked = [(c["blocked_fraction"], c["interruption"], c["height_m"]) for c in d["candidates"]]
    assert ranked == sorted(ranked)  # best first: blocked, then interruption, then lower height
    assert d["best"] == d["candidates"][0]
    pole = d["poles"][0]
    assert pole["name"] == "yard pole" and "lowest_height_m" in pole
    assert Image.open(png).size == (1600, 1600)


def test_spots_target_and_growth_in_the_summary(capsys):
    code, out, err = run(["spots", ALDER, "--years", "5", "--target-blocked", "0.2", "--spacing", "1", *FAST],
                         capsys)
    assert code == 0, err
    assert "BEST" in out and "yard pole" in out
    assert "lowest height with blocked at most 20.00 %" in out
    assert "the best spot as the trees grow" in out and "5 y" in out
    assert "Safety:" in out and "power lines" in out


@pytest.mark.parametrize("argv, fragment", [
    (["horizon", ALDER, "--at", "1,2"], "--at: expected EAST,NORTH,HEIGHT"),
    (["horizon", ALDER, "--at", "5000,0,2"], "--at: "),
    (["horizon", ALDER, "--at", "0,0,2", "--years", "-1"], "--years"),
    (["horizon", ALDER, "--at", "0,0,2", "--plot", "h.jpg"], "--plot"),
    (["spots", ALDER, "--spacing", "0"], "--spacing"),
    (["spots", ALDER, "--target-blocked", "2"], "--target-blocked"),
    (["spots", ALDER, "--plot", "nowhere/plan.png"], "does not exist"),
])
def test_bad_spot_options_exit_2_with_one_line(argv, fragment, capsys, tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    code, out, err = run(argv, capsys)
    assert code == 2 and fragment in err and "Traceback" not in err
    assert len(err.strip().splitlines()) == 1
    assert list(tmp_path.iterdir()) == []


def test_spots_without_a_plan_is_a_clear_error(write_site, capsys):
    site = write_site(MINIMAL_SITE)
    code, out, err = run(["spots", str(site), *FAST], capsys)
    assert code == 2 and "plan: missing" in err and str(site) in err


def test_bad_geojson_plan_is_named(write_site, tmp_path, capsys):
    (tmp_path / "plan.geojson").write_text(json.dumps({"type": "FeatureCollection", "features": [
        {"type": "Feature", "properties": {"role": "building", "name": "shed"},
         "geometry": {"type": "Polygon", "coordinates": [[[-73.0, 45.0], [-72.9999, 45.0],
                                                           [-72.9999, 45.0001], [-73.0, 45.0]]]}}]}))
    site = write_site(MINIMAL_SITE + '[plan]\nfile = "plan.geojson"\n')
    code, out, err = run(["horizon", str(site), "--at", "0,0,2"], capsys)
    assert code == 2 and "plan.geojson" in err and "height_m" in err and "Traceback" not in err
