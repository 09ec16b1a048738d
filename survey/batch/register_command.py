"""``leosite register FILE [--id ID] [--verdict V] [--csv]``: what a site
register holds, newest first (README, "The site register").  Read-only: the
register is opened with SQLite's read-only mode and never written to."""

from __future__ import annotations

import argparse
import csv
import sys
from pathlib import Path

from ..cli import Command
from ..words import NBSP, pct

LISTED = ("recorded_utc", "site_id", "verdict", "blocked_fraction", "availability", "interruption",
          "outages_per_day", "longest_outage_s", "window_start_utc", "window_hours", "window_step_s",
          "fleet_source", "satellites", "batch_id", "tool_version", "error")


def add_arguments(p: argparse.ArgumentParser) -> None:
    from .register import VERDICTS

    p.add_argument("register", metavar="FILE", type=Path, help="the SQLite register a batch wrote (--db)")
    p.add_argument("--id", dest="site_id", metavar="ID", help="one site's history (every assessment of that id)")
    p.add_argument("--verdict", choices=VERDICTS, help="only assessments with this verdict (failed: rows in error)")
    p.add_argument("--csv", action="store_true", help="print CSV instead of a table")


def _cell(v) -> str:
    return "" if v is None else str(v)


def format_table(rows: list[dict], history: bool) -> str:
    """The listing for a terminal: one line an assessment (plain spaces: it greps)."""
    head = f"{'recorded (UTC)':<20} {'id':<16} {'verdict':<14} {'blocked':>8} {'interrupt':>9} {'avail':>8}  "
    head += "window" if history else "note"
    lines = [head]
    for r in rows:
        verdict = r["verdict"] or "failed"
        ident = r["site_id"] if len(r["site_id"]) <= 16 else r["site_id"][:15] + "…"
        figs = [pct(r[k], 2) if r[k] is not None else "" for k in ("blocked_fraction", "interruption", "availability")]
        if history:
            note = (f"{r['window_start_utc']}, {r['window_hours']:g} h at {r['window_step_s']:g} s, "
                    f"{r['satellites']} satellites ({r['fleet_source']})") if r["window_start_utc"] else ""
        else:
            note = ""
        if r["error"]:
            note = r["error"]
        lines.append(f"{r['recorded_utc'][:19]:<20} {ident:<16} {verdict:<14} {figs[0]:>8} {figs[1]:>9} "
                     f"{figs[2]:>8}  {note}".rstrip())
    return "\n".join(lines).replace(NBSP, " ")


def run(args) -> int:
    from .register import list_assessments

    rows = list_assessments(args.register, args.site_id, args.verdict)
    if args.csv:
        w = csv.writer(sys.stdout, lineterminator="\n")
        w.writerow(LISTED)
        for r in rows:
            w.writerow([_cell(r[k]) for k in LISTED])
        return 0
    if not rows:
        what = f" for id {args.site_id!r}" if args.site_id else ""
        print(f"{args.register}: no assessments recorded{what}" + (f" with verdict {args.verdict}" if args.verdict else ""))
        return 0
    print(format_table(rows, history=args.site_id is not None))
    return 0


COMMAND = Command(
    name="register",
    help="list what a site register holds, newest first, or one site's history",
    description="List the assessments recorded in an SQLite site register (leosite batch --db), newest first.",
    add_arguments=add_arguments,
    run=run,
)
