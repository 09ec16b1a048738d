"""The ``leosite`` command line: scripts and batch work (the text UI is the main face).

Exit codes: 0 success, 2 bad input (one line per problem on stderr, no traceback),
130 interrupted.
"""

from __future__ import annotations

import argparse
import json
import math
import os
import sys
import textwrap
import time
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path

from . import __version__
from .errors import InputError, Problems
from .fileio import atomic_write_bytes
from .pipeline import FleetChoice, SiteRun, mount_text, result_dict, run_site
from .report import format_for, load_report_inputs, write_report
from .safety import short_note, spot_note
from .site import load_site, parse_time
from .terrain.advice import only_terrain
from .window import MAX_HOURS, MAX_STEP_S, MIN_STEP_S
from .words import NBSP, azimuth_span, duration, elevation, length, length_number, pct


class _Parser(argparse.ArgumentParser):
    def error(self, message):  # one line and exit 2, like every other input problem
        raise InputError(f"command line: {message} (see '{self.prog} --help')")

    def parse_args(self, args=None, namespace=None):
        parsed = super().parse_args(args, namespace)
        for key, value in vars(parsed).items():
            if isinstance(value, list):  # argparse keeps "--opt=--" as a list instead of converting it
                raise InputError(f"command line: --{key.replace('_', '-')}: expected one value")
        return parsed


@dataclass(frozen=True)
class Command:
    """A subcommand a front end adds to the engine's (the text UI adds ``ui``):
    its name and help, a function that adds its arguments to its parser, and the
    function that runs it with the parsed arguments (returning the exit code)."""

    name: str
    help: str
    description: str
    add_arguments: Callable[[argparse.ArgumentParser], None]
    run: Callable[[argparse.Namespace], int]


# Subcommands kept in modules of their own (one concept a module): each such
# module defines ``COMMAND = Command(...)``, imports what is heavy inside its run
# function, and is named here, one line each.
COMMAND_MODULES: tuple[str, ...] = (
    "photo.command",
    "batch.command",
    "batch.register_command",
    "terrain.command",
)


def engine_commands() -> tuple[Command, ...]:
    import importlib

    return tuple(importlib.import_module(f"{__package__}.{m}").COMMAND for m in COMMAND_MODULES)


MAX_PROBLEM_LINES = 20  # the rest are counted, so a wholly broken file does not flood the terminal


def build_parser(extra: tuple[Command, ...] = ()) -> argparse.ArgumentParser:
    p = _Parser(prog="leosite", description="Terminal-site survey and obstruction checker "
                                            "for low-Earth-orbit broadband terminals.")
    p.add_argument("--version", action="version", version=f"leosite {__version__}")
    sub = p.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    a = sub.add_parser("assess", help="assess one site: blocked sky, availability, outages, verdict",
                       description="Assess one site file against a satellite fleet over a time window.")
    a.add_argument("site", metavar="SITE", help="site file (site.toml)")
    add_run_options(a)
    a.add_argument("--json", action="store_true", help="print one JSON object instead of the summary")
    a.add_argument("--plot", metavar="PNG", type=Path, help="write a sky plot (PNG)")
    r = sub.add_parser("report", help="write the site report to hand over: PDF, HTML or JSON",
                       description="Assess one site and write its report; the format follows the "
                                   "--out file's extension (.pdf, .html, .json).")
    r.add_argument("site", metavar="SITE", help="site file (site.toml), or a report .json to make again")
    r.add_argument("--out", metavar="FILE", type=Path, required=True, help="report file: .pdf, .html or .json")
    r.add_argument("--paper", choices=("a4", "letter"), default="a4", help="PDF paper size (default a4)")
    add_run_options(r)
    h = sub.add_parser("horizon", help="the horizon the site plan makes at another point",
                       description="Derive the horizon at a point of the site plan from its obstacles and the "
                                   "measured points that carry a distance.")
    h.add_argument("site", metavar="SITE", help="site file (site.toml) with a plan or distances")
    h.add_argument("--at", metavar="EAST,NORTH,HEIGHT", required=True,
                   help="metres east and north of the site point, antenna height above ground")
    h.add_argument("--years", metavar="N", type=float, default=0.0, help="grow the trees by N years")
    h.add_argument("--json", action="store_true", help="print one JSON object")
    h.add_argument("--plot", metavar="PNG", type=Path, help="write the derived horizon as a panorama (PNG)")
    sp = sub.add_parser("spots", help="rank the plan's candidate mounting spots and pole heights",
                        description="Rank every candidate spot of the site plan (mounting areas on a grid, "
                                    "poles over their height range, fixed points) by blocked sky.")
    sp.add_argument("site", metavar="SITE", help="site file (site.toml) with a [plan]")
    sp.add_argument("--years", metavar="N", type=float, default=0.0, help="grow the trees by N years")
    sp.add_argument("--spacing", metavar="M", type=float, default=0.5,
                    help="grid spacing over mounting areas, metres (default 0.5)")
    sp.add_argument("--target-blocked", metavar="F", type=float,
                    help="blocked fraction a pole must reach (default: the site's qualified limit)")
    sp.add_argument("--json", action="store_true", help="print one JSON object")
    sp.add_argument("--plot", metavar="PNG", type=Path, help="write the site plan figure (PNG)")
    add_run_options(sp)
    for command in extra:
        command.add_arguments(sub.add_parser(command.name, help=command.help, description=command.description))
    return p


def add_run_options(p) -> None:
    """The fleet and window options every command that assesses a site takes."""
    fleet = p.add_mutually_exclusive_group()
    fleet.add_argument("--shells", metavar="FILE", type=Path,
                       help="Walker shell file (TOML); with neither --shells nor --tle, leosite's own "
                            "illustrative shells")
    fleet.add_argument("--tle", metavar="FILE", type=Path,
                       help="element sets: TLE (2- or 3-line) or CCSDS OMM (XML, CSV, JSON)")
    p.add_argument("--start", metavar="ISO",
                   help="window start, UTC, e.g. 2026-06-01T00:00:00Z; this flag, else the site's [window] "
                        "start, else today 00:00 UTC")
    p.add_argument("--hours", metavar="H", type=float,
                   help="window length in hours; this flag, else the site's [window] hours, else 24")
    p.add_argument("--step", metavar="S", type=float,
                   help="sample step in seconds; this flag, else the site's [window] step_s, else 15")
    p.add_argument("--min-elevation", metavar="DEG", type=float,
                   help="minimum elevation in degrees; this flag, else the site's [terminal] "
                        "min_elevation_deg, else 25")
    p.add_argument("--heading", metavar="DEG", type=float,
                   help="vehicle or vessel held at this heading (degrees from true north) for this run, "
                        "instead of its [platform] heading, headings or route")


def _for_terminal(text: str) -> str:
    """Text for the terminal: the no-break spaces that keep a number with its unit
    in a document (words.py) become plain spaces, so the output greps and pastes
    as typed; the summary is wrapped before this, never at a number."""
    return text.replace(NBSP, " ")


def _folder_of(path: Path) -> Path:
    return path.parent if str(path.parent) else Path(".")


def _check_plot(args, problems: Problems) -> None:
    plot = getattr(args, "plot", None)
    if plot is None:
        return
    if plot.suffix.lower() != ".png":
        problems.add("--plot", f"{plot}: expected a .png file name")
    elif not _folder_of(plot).is_dir():
        problems.add("--plot", f"{plot}: folder {plot.parent} does not exist")


def check_run_args(args) -> None:
    problems = Problems("command line")
    if args.hours is not None and not (math.isfinite(args.hours) and 0 < args.hours <= MAX_HOURS):
        problems.add("--hours", f"expected more than 0 and at most {MAX_HOURS:g} hours (a year), got {args.hours:g}")
    if args.step is not None and not (math.isfinite(args.step) and MIN_STEP_S <= args.step <= MAX_STEP_S):
        problems.add("--step", f"expected {MIN_STEP_S:g} to {MAX_STEP_S:g} seconds, got {args.step:g}")
    if args.min_elevation is not None and not (math.isfinite(args.min_elevation) and 0 <= args.min_elevation <= 90):
        problems.add("--min-elevation", f"{args.min_elevation:g} is outside 0 to 90 degrees")
    if args.start is not None:
        args.start = parse_time(args.start, "--start", problems)
    heading = getattr(args, "heading", None)
    if heading is not None and not (math.isfinite(heading) and 0 <= heading <= 360):
        problems.add("--heading", f"{heading:g} is outside 0 to 360 degrees")
    _check_plot(args, problems)
    for opt in ("shells", "tle"):
        f = getattr(args, opt)
        if f is not None and not f.is_file():
            problems.add(f"--{opt}", f"{f}: file not found")
    out = getattr(args, "out", None)
    if out is not None:
        try:
            format_for(out)
        except InputError as exc:
            problems.add("--out", exc.problems[0])
        if not _folder_of(out).is_dir():
            problems.add("--out", f"{out}: folder {out.parent} does not exist")
    problems.raise_if_any()


class _Progress:
    """A one-line bar on stderr, redrawn in place on a terminal; on a pipe just
    one line when done."""

    def __init__(self, label: str, live: bool, quiet: bool):
        self.label, self.live, self.quiet = label, live, quiet
        self.t0 = time.monotonic()

    def __call__(self, fraction: float) -> None:
        if self.live:
            filled = int(30 * fraction)
            sys.stderr.write(f"\r{self.label} [{'#' * filled}{'.' * (30 - filled)}] {fraction:4.0%}")
            sys.stderr.flush()

    def done(self) -> None:
        took = time.monotonic() - self.t0
        if self.live:
            sys.stderr.write(f"\r{self.label} done in {took:.1f} s{' ' * 30}\n")
        elif not self.quiet:
            sys.stderr.write(f"{self.label} done in {took:.1f} s\n")


def format_summary(run: SiteRun) -> str:
    """The human summary, fitted to an 80-column terminal."""
    d = result_dict(run)
    s, w, a = run.site, run.window, run.assessment
    ns = "N" if s.latitude_deg >= 0 else "S"
    ew = "E" if s.longitude_deg >= 0 else "W"
    groups = ", ".join(f"{k} {v}" for k, v in run.fleet.groups.items())
    sky = f"above {s.terminal.min_elevation_deg:g}°"
    if s.terminal.scan_half_angle_deg:
        sky += (f", within {s.terminal.scan_half_angle_deg:g}° of a boresight tilted "
                f"{s.terminal.tilt_deg:g}° toward {s.terminal.tilt_azimuth_deg:g}°"
                + (" from the bow" if s.platform is not None else ""))
    lines = [
        f"{s.name}",
        f"  at {abs(s.latitude_deg):.5f}°{ns} {abs(s.longitude_deg):.5f}°{ew}, ground {s.elevation_m:g} m",
        f"  mount       {mount_text(s)}",
        f"  window      {d['window']['start']}, {w.hours:g} h at {w.step_s:g} s ({w.count} samples)",
        f"  satellites  {len(run.fleet)}: {groups}" + ("  [illustrative]" if run.fleet.illustrative else ""),
        f"  usable sky  {sky}; {a.usable_samples} samples",
        f"  compass     declination {run.declination.declination_deg:+.2f}° (WMM2025); bearings "
        + ("magnetic, turned to true" if s.horizon.reference == "magnetic" else "true"),
    ]
    if run.platform is not None:
        from .platform.text import head_lines

        lines += head_lines(run.platform)
    lines += [
        "",
        f"  VERDICT  {a.verdict.upper()}",
    ]
    lines += _wrap(a.verdict_reason, "           ")
    o = d["outages"]
    lines += [
        "",
        f"  blocked        {pct(a.blocked_fraction, 2):>9}  of usable sky samples",
        f"  availability   {pct(a.availability, 2):>9}  of the time an unblocked satellite is in view",
        f"  interruption   {pct(a.interruption, 2):>9}  of the time down (scheduling period {s.schedule.reassign_s:g} s)",
        f"  outages        {o['count_per_day']:.1f} a day, {o['minutes_per_day']:.1f} min a day, "
        f"longest {duration(o['longest_s'])}",
    ]
    if run.platform is not None:
        from .platform.text import table_lines

        lines += table_lines(run.platform, a, run.window)
    if a.sectors:
        lines += ["", "  obstructions, costliest first",
                  f"    {'azimuths':<16} {'peak':>5} {'share':>7} {'if cleared':>10}  labels"]
        for sec in a.sectors[:8]:
            name = ", ".join(sec.labels) or "(unlabelled)"
            if len(name) > 30:
                name = name[:29] + "…"
            span = azimuth_span(sec.from_deg, sec.to_deg)
            cleared = "cannot" if only_terrain(sec) else pct(sec.blocked_fraction_if_cleared, 2)
            lines.append(f"    {span:<16} {elevation(sec.peak_elevation_deg):>5} {pct(sec.blocked_share):>7} "
                         f"{cleared:>10}  {name}")
        lines.append("    (share of the blocked samples; blocked fraction if that sector were clear)")
    if run.warnings:
        lines += ["", "  warnings"]
        for msg in run.warnings:
            lines += _wrap(msg, "    - ", "      ")
    lines += [""] + _wrap(short_note(s.mount.kind), "  ")
    return _for_terminal("\n".join(lines))


def _wrap(text: str, first: str, rest: str | None = None, width: int = 80) -> list[str]:
    return textwrap.wrap(text, width=width, initial_indent=first,
                         subsequent_indent=first if rest is None else rest) or [first]


def _run(args, site, fleet_choice: FleetChoice, quiet: bool) -> SiteRun:
    """Assess ``site`` with the command line's window overrides, a progress bar on stderr."""
    if getattr(args, "heading", None) is not None:
        from .platform.text import with_heading

        site = with_heading(site, args.heading)
    bar = _Progress("propagating", live=sys.stderr.isatty(), quiet=quiet)
    run = run_site(site, fleet_choice, args.start, args.hours, args.step, args.min_elevation, progress=bar)
    bar.done()
    return run


def cmd_assess(args) -> int:
    check_run_args(args)
    run = _run(args, load_site(args.site), FleetChoice(args.shells, args.tle), quiet=args.json)
    if args.plot is not None:
        from .figures import sky_plot_png

        atomic_write_bytes(args.plot, sky_plot_png(run))
    if args.json:
        print(json.dumps(result_dict(run), indent=2))
    else:
        print(format_summary(run))
        if args.plot is not None:
            print(f"\n  sky plot written to {args.plot}")
    return 0


def cmd_report(args) -> int:
    check_run_args(args)
    fleet_choice = FleetChoice(args.shells, args.tle)
    if Path(args.site).suffix.lower() == ".json":  # a report made before: run its inputs again
        saved = load_report_inputs(args.site)
        site = saved.site
        if args.shells is None and args.tle is None:
            fleet_choice = saved.fleet_choice
    else:
        site = load_site(args.site)
    run = _run(args, site, fleet_choice, quiet=False)
    out = write_report(run, args.out, paper=args.paper)
    a = run.assessment
    print(_for_terminal(f"{site.name}: {a.verdict}, blocked {pct(a.blocked_fraction, 2)}"))
    print(f"report written to {out}")
    return 0


def _parse_at(text: str) -> tuple[float, float, float]:
    parts = text.split(",")
    try:
        if len(parts) != 3:
            raise ValueError
        return tuple(float(x) for x in parts)
    except ValueError:
        raise InputError(f"command line: --at: expected EAST,NORTH,HEIGHT in metres, e.g. 8,-4,6.5; "
                         f"got {text!r}") from None


def cmd_horizon(args) -> int:
    problems = Problems("command line")
    _check_plot(args, problems)
    problems.raise_if_any()
    east, north, height = _parse_at(args.at)
    site = load_site(args.site)
    from .spots import horizon_at

    derived = horizon_at(site, east, north, height, years=args.years)
    if args.plot is not None:
        from .figures import derived_horizon_png

        atomic_write_bytes(args.plot, derived_horizon_png(site, derived))
    if args.json:
        print(json.dumps(derived))
        return 0
    el = derived["elevation_deg"]
    grown = f", trees grown {args.years:g} years" if args.years else ""
    print(f"{site.name}: horizon at {east:g} m east, {north:g} m north, {height:g} m up{grown}")
    print(f"  (true azimuths; highest {max(el):.1f}° at {el.index(max(el))}°)")
    for row in range(0, 360, 60):
        print("  " + "  ".join(f"{a:3d}° {el[a]:4.1f}°" for a in range(row, row + 60, 10)))
    if args.plot is not None:
        print(f"\n  panorama written to {args.plot}")
    return 0


def format_spots(run: SiteRun, ranking) -> str:
    """The spot ranking, fitted to an 80-column terminal: the best spot, then the
    best position of each named candidate, pole heights, and growth."""
    s, sp = run.site, ranking.survey_point
    grown = f", trees grown {ranking.years:g} years" if ranking.years else ""
    b = ranking.best
    lines = [f"{s.name}: {len(ranking.results):,} candidate spots ranked{grown}",
             f"  survey point  blocked {pct(sp['blocked_fraction'], 2)}, interruption {pct(sp['interruption'], 2)} "
             f"(measured, {length(sp['height_m'])} up)",
             f"  BEST  {b.candidate.name} at {length(b.candidate.height_m)} "
             f"({length(b.candidate.east_m)} E, {length(b.candidate.north_m)} N): blocked {pct(b.blocked_fraction, 2)}, "
             f"interruption {pct(b.interruption, 2)}", "",
             "  best position of each candidate",
             f"    {'spot':<22} {'kind':<5} {'east m':>7} {'north m':>7} {'height m':>8} {'blocked':>9} "
             f"{'interrupt':>9}"]
    best_of_each = ranking.best_of_each()
    for r in best_of_each:
        c = r.candidate
        name = c.name if len(c.name) <= 22 else c.name[:21] + "…"
        e, n, h = (length_number(v) for v in (c.east_m, c.north_m, c.height_m))
        lines.append(f"    {name:<22} {c.kind:<5} {e:>7} {n:>7} {h:>8} "
                     f"{pct(r.blocked_fraction, 2):>9} {pct(r.interruption, 2):>9}")
    if ranking.poles:
        lines += ["", f"  poles: lowest height with blocked at most {pct(ranking.target_blocked, 2)}"]
        for p in ranking.poles:
            if p.lowest is None:
                best_here = next(r for r in best_of_each if r.candidate.kind == "pole"
                                 and (r.candidate.east_m, r.candidate.north_m) == (p.east_m, p.north_m))
                lines.append(f"    {p.pole} ({length(p.min_height_m)} to {length(p.max_height_m)}): no height "
                             f"reaches it; best {pct(best_here.blocked_fraction, 2)} at "
                             f"{length(best_here.candidate.height_m)}")
            else:
                lines.append(f"    {p.pole} ({length(p.min_height_m)} to {length(p.max_height_m)}): "
                             f"{length(p.lowest.candidate.height_m)}, blocked {pct(p.lowest.blocked_fraction, 2)}")
    if ranking.over_time:
        lines += ["", "  the best spot as the trees grow"]
        cells = [f"{y:g} y {pct(r.blocked_fraction, 2)}" for y, r in ranking.over_time]
        lines += _wrap(", ".join(cells), "    ")
    if ranking.warnings or run.warnings:
        lines += ["", "  warnings"]
        for msg in list(ranking.warnings) + list(run.warnings):
            lines += _wrap(msg, "    - ", "      ")
    lines += [""] + _wrap(spot_note(s.mount.kind), "  ")
    return _for_terminal("\n".join(lines))


def cmd_spots(args) -> int:
    check_run_args(args)
    site = load_site(args.site)
    from .spots import check_options, rank_spots

    check_options(args.years, args.spacing, args.target_blocked)  # before the propagation, not after
    run = _run(args, site, FleetChoice(args.shells, args.tle), quiet=args.json)
    ranking = rank_spots(run, years=args.years, spacing_m=args.spacing, target_blocked=args.target_blocked)
    if args.plot is not None:
        from .figures import encode_png, spots_plan_figure

        atomic_write_bytes(args.plot, encode_png(spots_plan_figure(run, ranking)))
    if args.json:
        print(json.dumps(ranking.as_dict(), indent=2))
    else:
        print(format_spots(run, ranking))
        if args.plot is not None:
            print(f"\n  plan figure written to {args.plot}")
    return 0


def main(argv=None, extra: tuple[Command, ...] = ()) -> int:
    """Run one command: the engine's own, or one of ``extra`` that a front end
    adds (tui/launch.py adds ``ui``; the engine never imports the front end).
    A reader that closes the pipe early (``| head``) ends the run quietly, with
    the status a shell gives a writer stopped by SIGPIPE (141)."""
    extra = engine_commands() + tuple(extra)
    try:
        code = _dispatch(build_parser(extra), argv, extra)
        sys.stdout.flush()
        return code
    except BrokenPipeError:
        devnull = os.open(os.devnull, os.O_WRONLY)  # Python flushes stdout again at exit
        os.dup2(devnull, sys.stdout.fileno())
        return 141


def _dispatch(parser, argv, extra) -> int:
    try:
        args = parser.parse_args(argv)
        for command in extra:
            if args.command == command.name:
                return command.run(args)
        if args.command == "assess":
            return cmd_assess(args)
        if args.command == "report":
            return cmd_report(args)
        if args.command == "horizon":
            return cmd_horizon(args)
        if args.command == "spots":
            return cmd_spots(args)
        parser.print_help()
        return 2
    except InputError as exc:
        for line in exc.problems[:MAX_PROBLEM_LINES]:
            print(f"leosite: {line}", file=sys.stderr)
        if len(exc.problems) > MAX_PROBLEM_LINES:
            print(f"leosite: ... and {len(exc.problems) - MAX_PROBLEM_LINES:,} more problems", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print("leosite: interrupted", file=sys.stderr)
        return 130


if __name__ == "__main__":
    sys.exit(main())
