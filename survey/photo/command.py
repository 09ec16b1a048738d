"""``leosite photo SITE IMAGE``: the skyline of a horizon photo (README,
"Horizon from a photo"), printed, as JSON, drawn over the photo with the sky
tracks (``--plot``), or recorded in the site file (``--save``)."""

from __future__ import annotations

import argparse
import json
import math
from dataclasses import replace
from pathlib import Path

from ..cli import Command, add_run_options, check_run_args
from ..errors import InputError, Problems
from .spec import LENSES, PROJECTIONS, PhotoSpec, check_spec, parse_circle


def add_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("site", metavar="SITE", help="site file (site.toml)")
    p.add_argument("image", metavar="IMAGE", type=Path, help="the photo (JPEG, PNG, TIFF, WebP ...)")
    p.add_argument("--projection", choices=PROJECTIONS, required=True,
                   help="equirect: a 360° x 180° panorama; fisheye: a shot looking straight up")
    p.add_argument("--bearing", metavar="DEG",
                   help="bearing of the centre column (equirect) or of the top of the image (fisheye), in the "
                        "site's [horizon] reference; an equirect photo's own heading is used without it")
    p.add_argument("--lens", choices=LENSES, default="equidistant",
                   help="fisheye projection: equidistant r = f·θ (default) or equisolid r = 2f·sin(θ/2)")
    p.add_argument("--circle", metavar="CX,CY,R", help="fisheye image circle in pixels (default: found)")
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.add_argument("--plot", metavar="PNG", type=Path,
                   help="write the photo unrolled with the skyline and the sky tracks (PNG)")
    p.add_argument("--save", action="store_true", help="record the photo in the site file ([horizon] photo)")
    add_run_options(p)


def spec_from_args(args) -> PhotoSpec:
    """The photo the command line describes; one line per problem."""
    problems = Problems("command line")
    bearing = None
    if args.bearing is not None:
        try:
            bearing = float(args.bearing)
        except ValueError:
            bearing = None
            problems.add("--bearing", f"expected a number of degrees, got {args.bearing!r}")
        else:
            if not math.isfinite(bearing) or not -360.0 <= bearing < 720.0:
                problems.add("--bearing", f"{args.bearing} is outside -360 to 720 degrees")
                bearing = None
            else:
                bearing %= 360.0
    circle = parse_circle(args.circle, "--circle", problems) if args.circle is not None else None
    if args.lens != "equidistant" and args.projection != "fisheye":
        problems.add("--lens", "applies to a fisheye photo only")
    problems.raise_if_any()
    try:
        image = args.image.resolve() if args.image.exists() else args.image
    except (OSError, ValueError):  # a name the OS refuses: check_spec says why, in one line
        image = args.image
    spec = PhotoSpec(image, args.projection, bearing, args.lens, circle)
    check_spec(spec)
    return spec


def _text(site, spec: PhotoSpec, sky) -> str:
    from ..words import elevation

    lines = [f"{site.name}: skyline from {spec.describe(site.horizon.reference)}",
             f"  Otsu threshold {sky.threshold} (blue channel), open sky {sky.sky_fraction:.1%} of the upper "
             "hemisphere", "  true azimuth and skyline elevation, every 10°:"]
    pts = {round(a, 2): e for a, e in sky.points()}
    for row in range(0, 360, 60):
        cells = [f"{a:3d}° {elevation(pts[a]) if a in pts else '  -  ':>6}" for a in range(row, row + 60, 10)]
        lines.append("  " + "  ".join(cells).replace("\u00a0", " "))
    for w in sky.warnings:
        lines.append(f"  - {w}")
    return "\n".join(lines)


def run(args) -> int:
    from ..fileio import atomic_write_bytes
    from ..mask import photo_declination, site_declination
    from ..site import load_site
    from .run import photo_skyline

    check_run_args(args)  # the plot's name and the window options, before any work
    spec = spec_from_args(args)
    site = load_site(args.site)
    dec = site_declination(site, args.start)
    sky = photo_skyline(spec, photo_declination(site, dec))
    with_photo = replace(site, photo=spec)
    if args.plot is not None:
        from ..figures.photo import photo_panorama_png
        from ..pipeline import FleetChoice, run_site

        run_ = run_site(with_photo, FleetChoice(args.shells, args.tle), args.start, args.hours, args.step,
                        args.min_elevation)
        atomic_write_bytes(args.plot, photo_panorama_png(run_))
    if args.save:
        from ..sitefile import save_site

        if site.path is None or str(args.site).startswith("demo:"):
            raise InputError(f"command line: --save: {args.site} is a bundled demo site: open a copy (leosite ui) "
                             "and save that")
        save_site(with_photo, site.path)
    if args.json:
        print(json.dumps({"points": sky.points(), "threshold": sky.threshold,
                          "sky_fraction": round(sky.sky_fraction, 4), "warnings": list(sky.warnings)}))
        return 0
    print(_text(site, spec, sky))
    if args.plot is not None:
        print(f"\n  photo panorama written to {args.plot}")
    if args.save:
        print(f"  photo recorded in {site.path}: the mask is now max(measured points, photo skyline)")
    return 0


COMMAND = Command(
    name="photo",
    help="a horizon from a photo: an equirect panorama or a fisheye shot looking up",
    description="Find the skyline in a photo taken at the mount spot (blue channel, Otsu's threshold, the sky "
                "connected to the zenith) and give it in true azimuths; --save records the photo in the site file.",
    add_arguments=add_arguments,
    run=run,
)
