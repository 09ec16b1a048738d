"""What a batch reads: a sites CSV (one row a site) or a folder of site files.

The CSV (README, "Batch runs"): a header naming the columns, ``id``,
``latitude`` and ``longitude`` required, ``elevation_m``, ``height_m``,
``min_elevation_deg``, ``reference`` and ``horizon`` optional (an absent column
or an empty cell takes the site file's default); ``horizon`` is ``az:el`` pairs
separated by ``;``, empty for none yet.  Each row is put through the site
file's own reader (``site.site_from_dict``), so a value is refused for the same
reason as in a site file, and each problem names the file, the line, the id and
the column.  A bad row is kept with its problems and does not stop the others;
a file that cannot be read as a sites CSV at all (no header, an unknown or
missing column) is refused whole.
"""

from __future__ import annotations

import csv
import io
from dataclasses import dataclass, field, replace
from pathlib import Path

from ..errors import InputError
from ..fileio import read_text
from ..site import Site, load_site, site_from_dict
from ..tables import csv_header
from ..terrain.spec import TerrainSpec

REQUIRED = ("id", "latitude", "longitude")
OPTIONAL = ("elevation_m", "height_m", "min_elevation_deg", "reference", "horizon")
COLUMNS = REQUIRED + OPTIONAL
MAX_SITES = 1_000_000  # rows in one batch (README, "Limits")
MAX_ID_CHARS = 200

# Where each column lands in a site document, and how the site reader names it.
_FIELD_OF = {"latitude": ("site", "latitude"), "longitude": ("site", "longitude"),
             "elevation_m": ("site", "elevation_m"), "height_m": ("mount", "height_m"),
             "min_elevation_deg": ("terminal", "min_elevation_deg"), "reference": ("horizon", "reference")}
_COLUMN_OF = {f"{t}.{k}": col for col, (t, k) in _FIELD_OF.items()} | {"horizon.points": "horizon"}


@dataclass
class BatchRow:
    """One site to assess: its place in the input (``line``: the CSV line, or the
    file's number in the folder), its id, and the site or why it cannot be read."""

    index: int
    line: int
    id: str
    site: Site | None = None
    problems: list[str] = field(default_factory=list)
    source: dict = field(default_factory=dict)  # the row as typed (CSV cells), for the register


def read_batch_input(path: str | Path, terrain: TerrainSpec | None = None) -> list[BatchRow]:
    """The rows of a sites CSV, or the site files of a folder (see the module
    notes); with ``terrain`` (``batch --dem``), every site without a ``[terrain]``
    of its own takes that one."""
    path = Path(path)
    rows = read_site_folder(path) if path.is_dir() else read_sites_csv(path)
    if terrain is not None:
        for row in rows:
            if row.site is not None and row.site.terrain is None:
                row.site = replace(row.site, terrain=terrain)
    return rows


def read_site_folder(folder: Path) -> list[BatchRow]:
    """Each ``*.toml`` directly in ``folder`` and each ``*/site.toml`` one level
    down (the text UI keeps a site as ``<name>/site.toml``), sorted by path; the
    id is the file's stem, or its folder's name for a ``site.toml``."""
    files = sorted({p for p in folder.glob("*.toml") if p.is_file()}
                   | {p for p in folder.glob("*/site.toml") if p.is_file()})
    if not files:
        raise InputError(f"{folder}: no site files (*.toml, or */site.toml) in this folder")
    if len(files) > MAX_SITES:
        raise InputError(f"{folder}: {len(files):,} site files, more than the limit of {MAX_SITES:,} in one batch")
    rows, seen = [], {}
    for i, p in enumerate(files):
        ident = p.parent.name if p.name == "site.toml" and p.parent != folder else p.stem
        row = BatchRow(i, i + 1, ident, source={"file": str(p)})
        if ident in seen:
            row.problems.append(f"{p}: id {ident!r} repeats {seen[ident]}")
        else:
            seen[ident] = str(p)
            try:
                row.site = load_site(p)
            except InputError as exc:
                row.problems = list(exc.problems)
        rows.append(row)
    return rows


def read_sites_csv(path: Path) -> list[BatchRow]:
    text = read_text(path, "sites CSV")
    where = str(path)
    numbered = [(n, line) for n, line in enumerate(text.splitlines(), start=1) if line.strip()]
    if not numbered:
        raise InputError(f"{where}: empty: expected a header {','.join(COLUMNS)}")
    if len(numbered) - 1 > MAX_SITES:
        raise InputError(f"{where}: {len(numbered) - 1:,} rows, more than the limit of {MAX_SITES:,} sites in one batch")
    cols = csv_header(where, *numbered[0], COLUMNS, REQUIRED)
    rows, seen = [], {}
    for index, (n, body) in enumerate(numbered[1:]):
        row = _read_row(where, n, body, cols, index)
        if row.id and not row.problems:
            if row.id in seen:
                row.problems.append(f"{where}: line {n}: id {row.id!r}: repeats the id of line {seen[row.id]}")
                row.site = None
            else:
                seen[row.id] = n
        rows.append(row)
    return rows


def _read_row(where: str, n: int, body: str, cols: list[str], index: int) -> BatchRow:
    row = BatchRow(index, n, "")
    here = f"{where}: line {n}"
    if "\x00" in body:
        row.problems.append(f"{here}: holds a NUL character (not a text CSV line)")
        return row
    if body.count('"') % 2:
        row.problems.append(f"{here}: a quote is opened and not closed")
        return row
    try:
        cells = next(csv.reader(io.StringIO(body)))
    except (csv.Error, StopIteration) as exc:
        row.problems.append(f"{here}: not a CSV row: {exc}")
        return row
    if len(cells) != len(cols):
        row.problems.append(f"{here}: expected {len(cols)} values ({','.join(cols)}), got {len(cells)}")
        return row
    rec = {c: v.strip() for c, v in zip(cols, cells)}
    row.source = rec
    row.id = rec.get("id", "")
    if not row.id:
        row.problems.append(f"{here}: id: missing (every row needs an id)")
        return row
    if len(row.id) > MAX_ID_CHARS or not row.id.isprintable():
        row.problems.append(f"{here}: id: expected printable text of at most {MAX_ID_CHARS} characters")
        row.id = ""
        return row
    here = f"{here}: id {row.id!r}"
    doc: dict = {"site": {"name": row.id}}
    for col, (table, key) in _FIELD_OF.items():
        value = rec.get(col, "")
        if value != "":
            doc.setdefault(table, {})[key] = value if col == "reference" else _number(value)
        elif col in ("latitude", "longitude"):
            row.problems.append(f"{here}: {col}: missing")
    points = _horizon_pairs(rec.get("horizon", ""), here, row.problems)
    if points:
        doc.setdefault("horizon", {})["points"] = points
    if row.problems:
        return row
    try:
        row.site = site_from_dict(doc, Path(where))
    except InputError as exc:
        row.problems = [_rename(p, where, here) for p in exc.problems]
    return row


def _number(text: str):
    """A cell as a number when it reads as one (the site reader then checks its
    range); else the text, which the site reader refuses as not a number."""
    try:
        return float(text)
    except ValueError:
        return text


def _horizon_pairs(text: str, here: str, problems: list[str]) -> list[list]:
    """``az:el;az:el;...`` as [[az, el], ...]; a pair that is not two numbers is a problem."""
    out = []
    if not text.strip():
        return out
    for i, pair in enumerate(text.split(";"), start=1):
        if not pair.strip():
            continue
        parts = pair.split(":")
        if len(parts) != 2:
            problems.append(f"{here}: horizon: pair {i} {pair.strip()[:40]!r} is not azimuth:elevation")
            continue
        values = [_number(p.strip()) for p in parts]
        if any(isinstance(v, str) for v in values):
            problems.append(f"{here}: horizon: pair {i} {pair.strip()[:40]!r} is not two numbers of degrees")
            continue
        out.append(values)
    return out


def _rename(problem: str, where: str, here: str) -> str:
    """A site-reader problem (``FILE: site.latitude: ...``) in the CSV's terms
    (``FILE: line N: id X: latitude: ...``)."""
    rest = problem[len(where) + 2:] if problem.startswith(where + ": ") else problem
    field_name, _, message = rest.partition(": ")
    if field_name.startswith("horizon.points["):
        k = field_name[len("horizon.points["):].rstrip("]")
        column = f"horizon: pair {int(k) + 1}" if k.isdigit() else "horizon"
    else:
        column = _COLUMN_OF.get(field_name, field_name)
    return f"{here}: {column}: {message}"
