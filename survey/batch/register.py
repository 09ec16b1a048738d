"""The site register: every assessment a batch made, kept in an SQLite file
(stdlib ``sqlite3``) with a documented schema and a schema version (README,
"The site register").

Each site is recorded in a transaction of its own, committed as soon as the
site is done: a batch killed at any moment leaves every finished site recorded
and no half row (SQLite's journal; WAL mode, so a reader can list the register
while a batch writes).  ``synchronous = NORMAL`` with WAL survives a killed
process; a power cut may lose the last few commits, never the file.

On open the schema version is read from ``meta``: a register of this version
is used as it is; an older one is migrated in one transaction by the steps in
``MIGRATIONS`` (none yet: version 1 is the first); one too old to migrate, a
newer one, or a file that is not a register is refused with one line, never
misread.
"""

from __future__ import annotations

import json
import sqlite3
from datetime import datetime, timezone
from pathlib import Path

from .. import __version__
from ..errors import InputError

SCHEMA_VERSION = 1
KIND = "leosite-site-register"

SCHEMA = """
CREATE TABLE meta (
    key   TEXT PRIMARY KEY,
    value TEXT NOT NULL
);
CREATE TABLE batches (
    batch_id     INTEGER PRIMARY KEY,
    started_utc  TEXT NOT NULL,
    finished_utc TEXT,
    status       TEXT NOT NULL CHECK (status IN ('running', 'done', 'stopped')),
    tool_version TEXT NOT NULL,
    input        TEXT NOT NULL,
    options      TEXT NOT NULL,
    sites        INTEGER NOT NULL,
    failed       INTEGER
);
CREATE TABLE fleets (
    fleet_id INTEGER PRIMARY KEY,
    sha256   TEXT NOT NULL UNIQUE,
    kind     TEXT NOT NULL CHECK (kind IN ('default', 'shells', 'elements')),
    name     TEXT NOT NULL,
    text     TEXT NOT NULL
);
CREATE TABLE assessments (
    assessment_id     INTEGER PRIMARY KEY,
    batch_id          INTEGER NOT NULL REFERENCES batches (batch_id),
    site_id           TEXT NOT NULL,
    line              INTEGER NOT NULL,
    recorded_utc      TEXT NOT NULL,
    verdict           TEXT CHECK (verdict IN ('qualified', 'marginal', 'not-qualified')),
    blocked_fraction  REAL,
    availability      REAL,
    interruption      REAL,
    outages_per_day   REAL,
    longest_outage_s  REAL,
    latitude          REAL,
    longitude         REAL,
    window_start_utc  TEXT,
    window_hours      REAL,
    window_step_s     REAL,
    fleet_id          INTEGER REFERENCES fleets (fleet_id),
    fleet_source      TEXT,
    fleet_epoch_first_utc TEXT,
    fleet_epoch_last_utc  TEXT,
    satellites        INTEGER,
    tool_version      TEXT NOT NULL,
    warnings          TEXT NOT NULL,
    error             TEXT,
    inputs            TEXT NOT NULL,
    result            TEXT
);
CREATE INDEX assessments_by_site ON assessments (site_id, recorded_utc);
"""

# from_version -> SQL that takes a register to from_version + 1 (run in one transaction)
MIGRATIONS: dict[int, str] = {}

COLUMNS = {
    "meta": {"key", "value"},
    "batches": {"batch_id", "started_utc", "finished_utc", "status", "tool_version", "input", "options", "sites",
                "failed"},
    "fleets": {"fleet_id", "sha256", "kind", "name", "text"},
    "assessments": {"assessment_id", "batch_id", "site_id", "line", "recorded_utc", "verdict", "blocked_fraction",
                    "availability", "interruption", "outages_per_day", "longest_outage_s", "latitude", "longitude",
                    "window_start_utc", "window_hours", "window_step_s", "fleet_id", "fleet_source",
                    "fleet_epoch_first_utc", "fleet_epoch_last_utc", "satellites", "tool_version", "warnings",
                    "error", "inputs", "result"},
}
VERDICTS = ("qualified", "marginal", "not-qualified", "failed")


def utc_now() -> str:
    return datetime.now(timezone.utc).strftime("%Y-%m-%dT%H:%M:%S.%fZ")


def _run_script(con: sqlite3.Connection, sql: str) -> None:
    """Statements one by one inside the open transaction (``executescript``
    would commit it first)."""
    for statement in sql.split(";"):
        if statement.strip():
            con.execute(statement)


def _connect(path: Path, read_only: bool) -> sqlite3.Connection:
    try:
        if read_only:
            con = sqlite3.connect(f"{path.resolve().as_uri()}?mode=ro", uri=True, isolation_level=None)
        else:
            con = sqlite3.connect(path, isolation_level=None)  # transactions are explicit (BEGIN ... COMMIT)
        con.execute("PRAGMA busy_timeout = 10000")
        con.execute("SELECT count(*) FROM sqlite_master").fetchone()
    except sqlite3.DatabaseError as exc:
        raise InputError(f"{path}: not a leosite register (SQLite says: {exc})") from None
    return con


def _version(con: sqlite3.Connection, path: Path) -> int | None:
    """The register's schema version; None for an empty file; refuses anything else."""
    tables = {r[0] for r in con.execute("SELECT name FROM sqlite_master WHERE type = 'table'")}
    if not tables:
        return None
    if "meta" not in tables:
        raise InputError(f"{path}: not a leosite register (an SQLite file without its meta table)")
    meta = dict(con.execute("SELECT key, value FROM meta").fetchall())
    if meta.get("kind") != KIND:
        raise InputError(f"{path}: not a leosite register (meta.kind is {meta.get('kind')!r})")
    try:
        version = int(meta.get("schema_version", ""))
    except ValueError:
        raise InputError(f"{path}: meta.schema_version: {meta.get('schema_version')!r} is not a version number") from None
    if version > SCHEMA_VERSION:
        raise InputError(f"{path}: register schema version {version} was written by a newer leosite; this one "
                         f"({__version__}) reads versions up to {SCHEMA_VERSION}: upgrade leosite")
    if version < SCHEMA_VERSION and any(v not in MIGRATIONS for v in range(version, SCHEMA_VERSION)):
        raise InputError(f"{path}: register schema version {version} is older than this leosite can migrate "
                         f"(it reads version {SCHEMA_VERSION}); open it with the leosite that wrote it and export "
                         "with 'leosite register FILE --csv'")
    return version


def _check_columns(con: sqlite3.Connection, path: Path) -> None:
    for table, want in COLUMNS.items():
        have = {r[1] for r in con.execute(f"PRAGMA table_info({table})")}
        if not want <= have:
            missing = ", ".join(sorted(want - have))
            raise InputError(f"{path}: table {table}: missing columns {missing}: not a register this leosite "
                             "can read")


class Register:
    """An open register for writing: one batch, one transaction per site."""

    def __init__(self, path: str | Path):
        self.path = Path(path)
        if self.path.exists() and self.path.is_dir():
            raise InputError(f"{self.path}: --db: is a folder, expected a register file")
        if not self.path.parent.is_dir():
            raise InputError(f"--db: {self.path}: folder {self.path.parent} does not exist")
        self.con = _connect(self.path, read_only=False)
        version = _version(self.con, self.path)
        try:
            self.con.execute("PRAGMA journal_mode = WAL")
            self.con.execute("PRAGMA synchronous = NORMAL")
            self.con.execute("PRAGMA foreign_keys = ON")
            if version is None:
                self._create()
            elif version < SCHEMA_VERSION:
                self._migrate(version)
        except sqlite3.Error as exc:
            raise InputError(f"{self.path}: cannot write the register: {exc}") from None
        _check_columns(self.con, self.path)
        self.batch_id: int | None = None
        self._fleets: dict[str, int] = {}

    def _create(self) -> None:
        self.con.execute("BEGIN IMMEDIATE")
        if _version(self.con, self.path) is None:  # no other writer created it meanwhile
            _run_script(self.con, SCHEMA)
            self.con.executemany("INSERT INTO meta (key, value) VALUES (?, ?)", [
                ("kind", KIND), ("schema_version", str(SCHEMA_VERSION)), ("created_utc", utc_now()),
                ("created_by", f"leosite {__version__}")])
        self.con.execute("COMMIT")

    def _migrate(self, version: int) -> None:
        self.con.execute("BEGIN IMMEDIATE")
        try:
            for v in range(version, SCHEMA_VERSION):
                _run_script(self.con, MIGRATIONS[v])
            self.con.execute("UPDATE meta SET value = ? WHERE key = 'schema_version'", (str(SCHEMA_VERSION),))
            self.con.execute("COMMIT")
        except sqlite3.Error as exc:
            self.con.execute("ROLLBACK")
            raise InputError(f"{self.path}: cannot migrate the register from schema version {version} to "
                             f"{SCHEMA_VERSION}: {exc}; it is left as it was") from None
        except BaseException:
            self.con.execute("ROLLBACK")
            raise

    def start_batch(self, source: str, options: dict, sites: int) -> int:
        with self._tx():
            cur = self.con.execute(
                "INSERT INTO batches (started_utc, status, tool_version, input, options, sites) VALUES (?, ?, ?, ?, ?, ?)",
                (utc_now(), "running", __version__, source, json.dumps(options, sort_keys=True), sites))
        self.batch_id = cur.lastrowid
        return self.batch_id

    def fleet_id(self, kind: str, name: str, text: str) -> int:
        """The fleet's row (kept once, by the digest of its text)."""
        import hashlib

        digest = hashlib.sha256(f"{kind}\0{text}".encode("utf-8", "surrogatepass")).hexdigest()
        if digest not in self._fleets:
            with self._tx():
                self.con.execute("INSERT OR IGNORE INTO fleets (sha256, kind, name, text) VALUES (?, ?, ?, ?)",
                                 (digest, kind, name, text))
            self._fleets[digest] = self.con.execute("SELECT fleet_id FROM fleets WHERE sha256 = ?",
                                                    (digest,)).fetchone()[0]
        return self._fleets[digest]

    def record(self, result, fleet: dict | None) -> None:
        """One site, in one transaction.  ``fleet``: fleet_id, source, epochs and
        satellites of the window the site ran on (None for a row that failed before)."""
        d = result.result
        site = result.inputs.get("site", {}).get("site", {})
        window = result.inputs.get("site", {}).get("window", {})
        f = fleet or {}
        row = (self.batch_id, result.id, result.line, utc_now(), result.verdict or None, result.blocked_fraction,
               result.availability, result.interruption, result.outages_per_day, result.longest_outage_s,
               site.get("latitude"), site.get("longitude"), window.get("start"), window.get("hours"),
               window.get("step_s"), f.get("fleet_id"), f.get("source"), f.get("epoch_first"), f.get("epoch_last"),
               f.get("satellites"), __version__, json.dumps(result.warnings, ensure_ascii=False),
               result.error or None, json.dumps(result.inputs, ensure_ascii=False, default=str),
               json.dumps(d, ensure_ascii=False) if d else None)
        with self._tx():
            self.con.execute(f"INSERT INTO assessments ({', '.join(_RECORD_COLUMNS)}) "
                             f"VALUES ({', '.join('?' * len(_RECORD_COLUMNS))})", row)

    def finish_batch(self, status: str, failed: int) -> None:
        with self._tx():
            self.con.execute("UPDATE batches SET finished_utc = ?, status = ?, failed = ? WHERE batch_id = ?",
                             (utc_now(), status, failed, self.batch_id))

    def close(self) -> None:
        self.con.close()

    def _tx(self):
        return _Transaction(self.con, self.path)


_RECORD_COLUMNS = ("batch_id", "site_id", "line", "recorded_utc", "verdict", "blocked_fraction", "availability",
                   "interruption", "outages_per_day", "longest_outage_s", "latitude", "longitude",
                   "window_start_utc", "window_hours", "window_step_s", "fleet_id", "fleet_source",
                   "fleet_epoch_first_utc", "fleet_epoch_last_utc", "satellites", "tool_version", "warnings", "error",
                   "inputs", "result")


class _Transaction:
    """BEGIN IMMEDIATE ... COMMIT, rolled back on any error; SQLite errors become one line."""

    def __init__(self, con, path):
        self.con, self.path = con, path

    def __enter__(self):
        self.con.execute("BEGIN IMMEDIATE")
        return self.con

    def __exit__(self, kind, exc, tb):
        if kind is None:
            try:
                self.con.execute("COMMIT")
            except sqlite3.Error as err:
                raise InputError(f"{self.path}: cannot write the register: {err}") from None
            return False
        self.con.execute("ROLLBACK")
        if isinstance(exc, sqlite3.Error):
            raise InputError(f"{self.path}: cannot write the register: {exc}") from None
        return False


LIST_COLUMNS = ("recorded_utc", "site_id", "verdict", "blocked_fraction", "availability", "interruption",
                "outages_per_day", "longest_outage_s", "latitude", "longitude", "window_start_utc", "window_hours",
                "window_step_s", "fleet_source", "satellites", "batch_id", "tool_version", "error")


def open_read_only(path: str | Path) -> sqlite3.Connection:
    """The register for reading (the listing, the text UI): never written to."""
    path = Path(path)
    if not path.is_file():
        raise InputError(f"{path}: register not found")
    con = _connect(path, read_only=True)
    try:
        version = _version(con, path)
    except sqlite3.DatabaseError as exc:
        raise InputError(f"{path}: not a leosite register (SQLite says: {exc})") from None
    if version is None:
        raise InputError(f"{path}: an empty SQLite file, not a leosite register")
    if version < SCHEMA_VERSION:
        raise InputError(f"{path}: register schema version {version}: run a batch with --db on it to migrate it "
                         f"to version {SCHEMA_VERSION} first")
    _check_columns(con, path)
    return con


def list_assessments(path: str | Path, site_id: str | None = None, verdict: str | None = None) -> list[dict]:
    """Recorded assessments, newest first (``recorded_utc``, then the order they
    were written), optionally one site's history or one verdict ("failed": the
    rows that could not be assessed)."""
    con = open_read_only(path)
    where, args = [], []
    if site_id is not None:
        where.append("site_id = ?")
        args.append(site_id)
    if verdict == "failed":
        where.append("error IS NOT NULL")
    elif verdict is not None:
        where.append("verdict = ?")
        args.append(verdict)
    sql = (f"SELECT {', '.join(LIST_COLUMNS)}, assessment_id FROM assessments"
           + (" WHERE " + " AND ".join(where) if where else "")
           + " ORDER BY recorded_utc DESC, assessment_id DESC")
    try:
        rows = [dict(zip(LIST_COLUMNS + ("assessment_id",), r)) for r in con.execute(sql, args)]
    except sqlite3.DatabaseError as exc:
        raise InputError(f"{path}: cannot read the register: {exc}") from None
    finally:
        con.close()
    return rows


def recorded_inputs(path: str | Path, assessment_id: int) -> tuple[dict, dict]:
    """(the site document the assessment ran on, its fleet as kind/name/text):
    enough to open it as a site again (the text UI)."""
    con = open_read_only(path)
    try:
        row = con.execute("SELECT a.inputs, f.kind, f.name, f.text FROM assessments a LEFT JOIN fleets f "
                          "ON a.fleet_id = f.fleet_id WHERE a.assessment_id = ?", (assessment_id,)).fetchone()
    finally:
        con.close()
    if row is None:
        raise InputError(f"{path}: assessment {assessment_id}: not in the register")
    inputs = json.loads(row[0])
    return inputs, {"kind": row[1] or "default", "name": row[2] or "", "text": row[3] or ""}


def recorded_site(path: str | Path, assessment_id: int, site_path: str | Path):
    """(the Site an assessment ran on, placed at ``site_path``, and its fleet as a
    FleetChoice): a recorded assessment opened as a site (the text UI writes it
    as a working copy there).  The window it ran on is the site's [window]."""
    from ..pipeline import FleetChoice
    from ..site import site_from_dict

    inputs, fleet = recorded_inputs(path, assessment_id)
    doc = inputs.get("site")
    if not isinstance(doc, dict):
        raise InputError(f"{path}: assessment {assessment_id}: no site recorded (the row had failed)")
    site = site_from_dict(doc, Path(site_path))
    choice = FleetChoice() if fleet["kind"] == "default" else \
        FleetChoice(embedded=(fleet["kind"], f"{path} ({fleet['name']})", fleet["text"]))
    return site, choice
