"""``leosite batch INPUT --out results.csv``: qualify many sites in one run
(README, "Batch runs").

The order of work: read every row (a bad row is kept with its problems); the
window of each good row by window.py's rule; the fleet read once; the
satellites propagated once per window (batch/sky.py); the sites assessed here,
on local processes or on a cluster (batch/runner.py); each finished site
recorded in the register at once (``--db``); the results CSV written whole at
the end.  Exit codes: 0 every row assessed, 3 some row failed, 2 the input
itself unusable (nothing written), 130 interrupted, 143 stopped by SIGTERM (no
results CSV; the register keeps every site finished before).
"""

from __future__ import annotations

import argparse
import re
import signal
import sys
import time
from datetime import datetime, timezone
from pathlib import Path

from ..cli import Command, add_run_options, check_run_args
from ..errors import InputError, Problems

REPORT_FORMATS = ("pdf", "html", "json")


def add_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("input", metavar="INPUT", type=Path,
                   help="a sites CSV (id, latitude, longitude, elevation_m, height_m, min_elevation_deg, reference, "
                        "horizon) or a folder of site files")
    p.add_argument("--out", dest="results", metavar="CSV", type=Path, required=True,
                   help="results CSV to write (whole, at the end)")
    add_run_options(p)
    p.add_argument("--workers", metavar="N", type=int, help="local worker processes (default: all cores)")
    p.add_argument("--scheduler", metavar="ADDRESS",
                   help="run on the Dask distributed scheduler at ADDRESS (tcp://host:8786); needs leosite[cluster]")
    p.add_argument("--db", metavar="FILE", type=Path, help="SQLite register to record every assessment in")
    p.add_argument("--reports", metavar="DIR", type=Path, help="also write each site's report into DIR")
    p.add_argument("--report-format", choices=REPORT_FORMATS, default="pdf", help="report format (default pdf)")
    p.add_argument("--paper", choices=("a4", "letter"), default="a4", help="PDF paper size (default a4)")
    p.add_argument("--dem", metavar="PATH", type=Path,
                   help="elevation tiles (an SRTM .hgt or GeoTIFF file, or a folder of them) for every site without "
                        "its own [terrain]: the mask is max(measured, terrain)")
    p.add_argument("--dem-km", metavar="KM", type=float,
                   help="how far the terrain rays go with --dem, km (default 30)")


class _Stopped(Exception):
    """SIGTERM arrived: stop the batch where it is."""


def _on_sigterm(signum, frame):
    raise _Stopped()


class BatchProgress:
    """``sites [####....] 412/1000, 23.1 sites/s, ETA 25 s`` on stderr: redrawn in
    place on a terminal; on a pipe a line at each tenth of the way."""

    def __init__(self, total: int, live: bool):
        self.total, self.live = total, live
        self.t0 = time.monotonic()
        self.done = self.failed = self.untimed = 0
        self.next_tenth = 1

    def skip(self, rows: int) -> None:
        """Rows that failed on reading: counted as done, not in the rate."""
        self.done += rows
        self.failed += rows
        self.untimed += rows
        self.t0 = time.monotonic()

    def line(self) -> str:
        took = time.monotonic() - self.t0
        rate = (self.done - self.untimed) / took if took > 0 else 0.0
        eta = (self.total - self.done) / rate if rate > 0 else float("nan")
        filled = int(30 * self.done / max(self.total, 1))
        eta_text = f"ETA {eta:.0f} s" if eta == eta else "ETA ..."
        return (f"sites [{'#' * filled}{'.' * (30 - filled)}] {self.done:,}/{self.total:,}, {rate:.1f} sites/s, "
                + (eta_text if self.done < self.total else f"done in {took:.1f} s")
                + (f", {self.failed:,} failed" if self.failed else ""))

    def update(self, done: int, failed: int) -> None:
        self.done += done
        self.failed += failed
        if self.live:
            sys.stderr.write("\r" + self.line() + "   ")
            sys.stderr.flush()
        elif self.done * 10 >= self.next_tenth * self.total or self.done == self.total:
            while self.done * 10 >= self.next_tenth * self.total and self.next_tenth <= 10:
                self.next_tenth += 1
            sys.stderr.write(self.line() + "\n")

    def close(self) -> None:
        if self.live:
            sys.stderr.write("\n")


def _check_args(args) -> None:
    check_run_args(args)
    problems = Problems("command line")
    out = args.results
    folder = out.parent if str(out.parent) else Path(".")
    if not folder.is_dir():
        problems.add("--out", f"{out}: folder {folder} does not exist")
    elif out.is_dir():
        problems.add("--out", f"{out}: is a folder, expected a CSV file name")
    if args.workers is not None and not 1 <= args.workers <= 1024:
        problems.add("--workers", f"expected 1 to 1024 processes, got {args.workers}")
    if args.workers is not None and args.scheduler is not None:
        problems.add("--workers", "give --workers or --scheduler, not both (a cluster has its own workers)")
    if args.reports is not None and args.reports.exists() and not args.reports.is_dir():
        problems.add("--reports", f"{args.reports}: is a file, expected a folder")
    elif args.reports is not None and not (args.reports.parent if str(args.reports.parent) else Path(".")).is_dir():
        problems.add("--reports", f"{args.reports}: folder {args.reports.parent} does not exist")
    if args.scheduler is not None:
        from .runner import cluster_module

        try:
            cluster_module()
        except InputError as exc:
            problems.items.extend(exc.problems)
    if not args.input.exists():
        problems.add("INPUT", f"{args.input}: not found (a sites CSV or a folder of site files)")
    elif args.input.is_file() and out.exists() and out.resolve() == args.input.resolve():
        problems.add("--out", f"{out}: is the input: the results would overwrite it")
    if args.db is not None and out.exists() and out.resolve() == args.db.resolve():
        problems.add("--out", f"{out}: is the register (--db)")
    args.terrain = _terrain_option(args, problems)
    problems.raise_if_any()


def _terrain_option(args, problems: Problems):
    """--dem and --dem-km as the [terrain] table every site without its own takes
    (the site file's reader checks them, by the same rules)."""
    if args.dem is None:
        if args.dem_km is not None:
            problems.add("--dem-km", "needs --dem")
        return None
    from ..terrain.spec import DEFAULT_DISTANCE_KM, terrain_from_site_table

    table = {"dem": str(args.dem.resolve()),
             "max_distance_km": args.dem_km if args.dem_km is not None else DEFAULT_DISTANCE_KM}
    found = Problems("command line")
    spec = terrain_from_site_table(table, Path("command line"), found)
    for line in found.items:  # "command line: terrain.dem: ..." as the options are named
        problems.items.append(line.replace("terrain.max_distance_km", "--dem-km").replace("terrain.dem", "--dem"))
    return spec


def report_name(ident: str, line: int, taken: set[str], ext: str) -> str:
    """A file name for a site's report: its id with anything but letters,
    digits, '.', '-' and '_' as '_'; the input line added when two ids meet."""
    stem = re.sub(r"[^A-Za-z0-9._-]", "_", ident).strip(".") or f"line-{line}"
    name = f"{stem[:120]}.{ext}"
    if name.lower() in taken:
        name = f"{stem[:110]}-line-{line}.{ext}"
    taken.add(name.lower())
    return name


def run(args) -> int:
    _check_args(args)
    from ..fileio import atomic_write_bytes
    from ..pipeline import FleetChoice
    from ..window import resolve_window
    from . import runner
    from .inputs import read_batch_input
    from .register import Register
    from .results import write_results
    from .sky import check_shared_size, propagate
    from .work import Context, Settings, SiteResult, failed_row

    rows = read_batch_input(args.input, terrain=args.terrain)
    if not rows:
        raise InputError(f"{args.input}: no sites: a header and no rows")
    now = datetime.now(timezone.utc)
    choice = FleetChoice(args.shells, args.tle)
    source = choice.as_embedded()  # the fleet file, read once
    settings = Settings(source, args.start, args.hours, args.step, args.min_elevation, now,
                        args.report_format if args.reports is not None else None, args.paper)
    # The window of each good row, by window.py's rule; a row whose own [window] is refused fails alone.
    windows = {}
    for row in rows:
        if row.site is None:
            continue
        try:
            windows.setdefault(resolve_window(row.site, args.start, args.hours, args.step, now=now), []).append(row)
        except InputError as exc:
            row.problems, row.site = list(exc.problems), None
    fleets, skies = {}, {}
    for window in windows:
        fleets[window] = FleetChoice(embedded=source).load(window.start)
        check_shared_size(window, len(fleets[window]))
    register = Register(args.db) if args.db is not None else None
    if args.reports is not None:
        args.reports.mkdir(exist_ok=True)
    live = sys.stderr.isatty()
    old_term = signal.signal(signal.SIGTERM, _on_sigterm)
    results: list[SiteResult] = []
    status = "stopped"
    try:
        for window, fleet in fleets.items():
            t0 = time.monotonic()
            skies[window] = propagate(fleet, window, source)
            sys.stderr.write(f"propagated {len(fleet):,} satellites x {window.count:,} samples "
                             f"({window.hours:g} h at {window.step_s:g} s) once for "
                             f"{len(windows[window]):,} sites in {time.monotonic() - t0:.1f} s\n")
        fleet_rows = {}
        if register is not None:
            register.start_batch(str(args.input), _options(args), len(rows))
            fleet_id = register.fleet_id(*source)
            for window, fleet in fleets.items():
                epochs = fleet.epochs_utc()
                fleet_rows[_window_key(window)] = {
                    "fleet_id": fleet_id, "source": fleet.source, "satellites": len(fleet),
                    "epoch_first": min(epochs).strftime("%Y-%m-%dT%H:%M:%SZ") if epochs else None,
                    "epoch_last": max(epochs).strftime("%Y-%m-%dT%H:%M:%SZ") if epochs else None}
        bad = [failed_row(r) for r in rows if r.site is None]
        good = [r for r in rows if r.site is not None]
        context = Context(settings, skies)
        progress = BatchProgress(len(rows), live)
        taken: set[str] = set()

        def finish(batch: list[SiteResult], timed: bool = True) -> None:
            for r in batch:
                if r.report is not None:
                    name = report_name(r.id, r.line, taken, args.report_format)
                    atomic_write_bytes(args.reports / name, r.report)
                    r.report = None
                if register is not None:
                    w = r.inputs.get("site", {}).get("window")
                    register.record(r, fleet_rows.get(_window_key(w)) if w else None)
                r.inputs, r.result = {}, {}  # recorded: only the results CSV's figures are kept till the end
                results.append(r)
            if timed:
                progress.update(len(batch), sum(r.failed for r in batch))
            else:
                progress.skip(len(batch))

        finish(bad, timed=False)
        if args.scheduler is not None:
            tasks = runner.run_cluster(context, good, args.scheduler)
        else:
            tasks = runner.run_local(context, good, args.workers or runner.default_workers())
        try:
            for batch in tasks:
                finish(batch)
        finally:
            tasks.close()  # stops the pool or the cluster's tasks at once when stopped early
        progress.close()
        write_results(args.results, results)
        status = "done"
    except _Stopped:
        sys.stderr.write(f"\nleosite: stopped by SIGTERM after {len(results):,} of {len(rows):,} sites"
                         + (f" (each recorded in {args.db})" if register is not None else "")
                         + f"; {args.results} not written\n")
        return 143
    finally:
        signal.signal(signal.SIGTERM, old_term)
        if register is not None:
            try:
                register.finish_batch(status, sum(r.failed for r in results))
            finally:
                register.close()
    failed = [r for r in results if r.failed]
    for r in failed[:20]:
        sys.stderr.write(f"leosite: {r.error}\n")
    if len(failed) > 20:
        sys.stderr.write(f"leosite: ... and {len(failed) - 20:,} more failed rows (see the error column)\n")
    counts = {v: sum(r.verdict == v and not r.failed for r in results) for v in ("qualified", "marginal", "not-qualified")}
    sys.stderr.write(f"{len(results):,} sites: {counts['qualified']:,} qualified, {counts['marginal']:,} marginal, "
                     f"{counts['not-qualified']:,} not qualified, {len(failed):,} failed; results in {args.results}\n")
    return 3 if failed else 0


def _window_key(w) -> tuple:
    if isinstance(w, dict):
        return (w.get("start"), w.get("hours"), w.get("step_s"))
    return (w.start.strftime("%Y-%m-%dT%H:%M:%SZ"), w.hours, w.step_s)


def _options(args) -> dict:
    """The command line's options as recorded for the batch."""
    return {k: (str(v) if isinstance(v, (Path, datetime)) else v) for k, v in vars(args).items()
            if k not in ("command", "terrain") and v is not None}  # terrain: --dem and --dem-km say it


COMMAND = Command(
    name="batch",
    help="qualify many sites at once: a sites CSV or a folder of site files to a results CSV",
    description="Assess every site of a sites CSV or a folder of site files with one propagation per window; "
                "write a results CSV (and optionally an SQLite register and each site's report). "
                "Exit codes: 0 all rows assessed, 3 some row failed, 2 unusable input.",
    add_arguments=add_arguments,
    run=run,
)
