"""The results CSV of a batch: one row per input row, in input order (README,
"Batch runs": the columns and how each is written), written once, whole,
through ``fileio.atomic_write_bytes``: a batch stopped before its end leaves no
results file, never half of one.

Numbers are for a spreadsheet, not a person: fractions 0..1 to six decimals
(a hundredth of the printed percentage and finer), outages a day to three
decimals, the longest outage in whole seconds as the sample step gives them.
An empty cell is a figure that does not exist (a failed row, or a blocked
fraction with no usable sky)."""

from __future__ import annotations

import csv
import io
from pathlib import Path

from ..fileio import atomic_write_bytes
from .work import SiteResult

RESULT_COLUMNS = ("id", "verdict", "blocked_fraction", "availability", "interruption", "outages_per_day",
                  "longest_outage_s", "warnings", "error")
WARNING_SEPARATOR = " | "


def _num(value, digits: int) -> str:
    return "" if value is None else f"{value:.{digits}f}"


def result_cells(r: SiteResult) -> list[str]:
    return [r.id, r.verdict, _num(r.blocked_fraction, 6), _num(r.availability, 6), _num(r.interruption, 6),
            _num(r.outages_per_day, 3), "" if r.longest_outage_s is None else f"{r.longest_outage_s:g}",
            WARNING_SEPARATOR.join(r.warnings), r.error]


def results_csv(results: list[SiteResult]) -> str:
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(RESULT_COLUMNS)
    for r in sorted(results, key=lambda r: r.index):
        w.writerow(result_cells(r))
    return buf.getvalue()


def write_results(path: Path, results: list[SiteResult]) -> None:
    atomic_write_bytes(path, results_csv(results).encode("utf-8"))


def read_results(path: Path) -> list[dict]:
    """A results CSV read back (the text UI lists it): rows as dicts of the columns."""
    from ..errors import InputError
    from ..fileio import read_text

    text = read_text(path, "results CSV")
    rows = list(csv.DictReader(io.StringIO(text)))
    if not rows and not text.strip():
        raise InputError(f"{path}: empty: expected a results CSV with a header {','.join(RESULT_COLUMNS)}")
    header = next(csv.reader(io.StringIO(text)), [])
    if tuple(header) != RESULT_COLUMNS:
        raise InputError(f"{path}: line 1: not a leosite results CSV (expected the columns {','.join(RESULT_COLUMNS)})")
    return rows
