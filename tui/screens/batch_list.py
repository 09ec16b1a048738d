"""A batch's sites, read-only: the rows of a results CSV or the assessments of
a site register (README, "Batch runs", "The site register"), each with its
verdict; Enter on a recorded assessment opens it as a site (a working copy of
the inputs the register keeps, under ./leosite-sites)."""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.screen import Screen
from textual.widgets import DataTable, Footer, Static

from survey.api import InputError, list_assessments, pct, read_results, recorded_site, save_site

from ..session import slug
from ..verdicts import verdict_text

SQLITE_MAGIC = b"SQLite format 3\x00"


@dataclass(frozen=True)
class Entry:
    """One listed site: what the table shows, and where its inputs are (a
    register's assessment id; None for a results CSV, which keeps no inputs)."""

    id: str
    verdict: str  # "" when the row failed
    blocked: float | None
    interruption: float | None
    availability: float | None
    when: str
    error: str
    assessment_id: int | None = None


def _number(text: str) -> float | None:
    try:
        return float(text) if text else None
    except ValueError:
        return None


def batch_entries(path: Path) -> tuple[str, list[Entry]]:
    """("register" | "results", the entries), newest first for a register and in
    input order for a results CSV.  Raises InputError for anything else."""
    path = Path(path)
    try:
        with open(path, "rb") as fh:
            head = fh.read(len(SQLITE_MAGIC))
    except OSError as exc:
        raise InputError(f"{path}: cannot read: {exc.strerror}") from None
    if head == SQLITE_MAGIC:
        rows = list_assessments(path)
        return "register", [Entry(r["site_id"], r["verdict"] or "", r["blocked_fraction"], r["interruption"],
                                  r["availability"], r["recorded_utc"][:19].replace("T", " "), r["error"] or "",
                                  r["assessment_id"]) for r in rows]
    rows = read_results(path)
    return "results", [Entry(r["id"], r["verdict"], _number(r["blocked_fraction"]), _number(r["interruption"]),
                             _number(r["availability"]), "", r["error"]) for r in rows]


class BatchList(Screen):
    """The list; the app opens the chosen site."""

    BINDINGS = [
        Binding("escape", "app.pop_screen", "Back"),
        Binding("enter", "open_selected", "Open as a site", show=True),
        Binding("ctrl+q", "app.quit", "Quit"),
    ]

    def __init__(self, path: Path, kind: str, entries: list[Entry]):
        super().__init__()
        self.path, self.kind, self.entries = Path(path), kind, entries

    def compose(self) -> ComposeResult:
        with Vertical(id="batch-list"):
            counts = {v: sum(e.verdict == v for e in self.entries) for v in ("qualified", "marginal", "not-qualified")}
            failed = sum(bool(e.error) for e in self.entries)
            what = "site register (newest first)" if self.kind == "register" else "results CSV (input order)"
            yield Static(f"{self.path.name}: {what}, read-only · {len(self.entries):,} rows: {counts['qualified']} "
                         f"qualified, {counts['marginal']} marginal, {counts['not-qualified']} not qualified, "
                         f"{failed} failed", markup=False, id="batch-title")
            hint = ("↑ ↓ to pick, Enter opens the assessment as a site (a working copy of its recorded inputs), "
                    "Esc back." if self.kind == "register" else
                    "A results CSV keeps no inputs: open the batch's register (--db) to open a site. Esc back.")
            yield Static(hint, markup=False, classes="hint")
            yield DataTable(id="batch-table", cursor_type="row", zebra_stripes=True)
        yield Footer()

    def on_mount(self) -> None:
        table = self.query_one(DataTable)
        table.add_columns("Id", "Verdict", "Blocked", "Interr.", "Avail.", "Why it failed",
                          *(("Recorded UTC",) if self.kind == "register" else ()))
        for e in self.entries:
            verdict = verdict_text(e.verdict) if e.verdict else Text("! failed", style="bold")
            cells = [Text(e.id), verdict, pct(e.blocked), pct(e.interruption), pct(e.availability),
                     Text(short_error(e.error))]
            if self.kind == "register":
                cells.append(e.when)
            table.add_row(*cells)
        table.focus()

    def on_data_table_row_selected(self, event: DataTable.RowSelected) -> None:
        event.stop()
        self.action_open_selected()

    def action_open_selected(self) -> None:
        table = self.query_one(DataTable)
        if not self.entries or not 0 <= table.cursor_row < len(self.entries):
            return
        entry = self.entries[table.cursor_row]
        if entry.assessment_id is None:
            self.app.notify("A results CSV keeps no inputs: open the batch's register (--db) to open a site",
                            severity="warning")
            return
        if entry.error:
            self.app.notify(f"{entry.id} was not assessed: {entry.error}", severity="warning", timeout=8)
            return
        dest = Path(self.app.work_root) / f"{slug(entry.id)}-{entry.assessment_id}" / "site.toml"
        try:
            site, choice = recorded_site(self.path, entry.assessment_id, dest)
            if not dest.exists():  # an earlier copy opens as it is, with its edits
                dest.parent.mkdir(parents=True, exist_ok=True)
                save_site(site, dest)
        except InputError as exc:
            self.app.notify("\n".join(exc.problems[:4]), title="Cannot open the site", severity="error", timeout=10)
            return
        except OSError as exc:
            self.app.notify(f"{dest}: cannot write the working copy: {exc.strerror}", severity="error")
            return
        if choice.as_embedded()[0] != "default":
            self.app.assessor = self.app.assessor.with_fleet(choice)  # the satellites the batch used
        if self.app.open_site(dest):
            self.app.notify(f"Working on a copy of {entry.id} as recorded: {dest}", timeout=6)


def short_error(error: str, width: int = 40) -> str:
    """The part of a row's first problem after its file, line and id (the
    column and what is wrong), cut to ``width``; the whole text is in the file."""
    first = error.split("; ")[0]
    if "': " in first:
        first = first.split("': ", 1)[1]
    return first if len(first) <= width else first[:width - 1] + "…"


def open_batch(app, text: str) -> None:
    """Push the list for a typed path (the start screen's answer)."""
    if not text:
        return
    path = Path(text).expanduser()
    try:
        kind, entries = batch_entries(path)
    except InputError as exc:
        app.notify("\n".join(exc.problems[:4]), title="Cannot open the batch", severity="error", timeout=10)
        return
    app.push_screen(BatchList(path, kind, entries))


def check_batch_path(text: str) -> str | None:
    if not text:
        return "type the path of a results CSV or a site register (.sqlite)"
    path = Path(text).expanduser()
    if not path.is_file():
        return f"{path}: no such file" if not path.exists() else f"{path}: not a file"
    return None
