"""Horizon from a photo: one 8192 x 4096 equirectangular panorama (JPEG and
PNG, drawn here from the demo scene of tools/make_demo_photo.py), its skyline
timed in a fresh process each (reading, decoding, the grid, Otsu, the sky
region, the skyline), with the process's peak memory.  Target (issue 18):
under 2 s, with bounded memory.

    python bench/bench_photo.py
"""

from __future__ import annotations

import json
import subprocess
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

CHILD = r"""
import json, sys, time
from pathlib import Path
def peak_mb():  # VmHWM: this process's own peak (ru_maxrss would carry the parent's over the fork)
    for line in open("/proc/self/status"):
        if line.startswith("VmHWM:"):
            return int(line.split()[1]) / 1024
t0 = time.perf_counter()
from survey.photo import PhotoSpec, photo_skyline
t1 = time.perf_counter()
sky = photo_skyline(PhotoSpec(Path(sys.argv[1]), "equirect", 180.0))
t2 = time.perf_counter()
print(json.dumps({"import_s": t1 - t0, "skyline_s": t2 - t1, "peak_mb": peak_mb(),
                  "threshold": sky.threshold, "points": int(sky.covered.sum())}))
"""


def main() -> int:
    from PIL import Image

    from tools.make_demo_photo import panorama

    with tempfile.TemporaryDirectory() as d:
        arr = panorama(8192)
        files = {"JPEG q90": Path(d) / "p.jpg", "PNG": Path(d) / "p.png"}
        Image.fromarray(arr).save(files["JPEG q90"], quality=90)
        Image.fromarray(arr).save(files["PNG"], compress_level=6)
        del arr
        for name, path in files.items():
            out = subprocess.run([sys.executable, "-c", CHILD, str(path)], capture_output=True, text=True, cwd=ROOT,
                                 check=True)
            r = json.loads(out.stdout)
            print(f"8192 x 4096 {name:<8} ({path.stat().st_size / 2**20:5.1f} MB): skyline {r['skyline_s']:.2f} s "
                  f"(target < 2 s: ratio {2.0 / r['skyline_s']:.1f}x), imports {r['import_s']:.2f} s, "
                  f"peak memory {r['peak_mb']:.0f} MB, threshold {r['threshold']}, {r['points']} points")
    return 0


if __name__ == "__main__":
    sys.exit(main())
