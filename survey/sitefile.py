"""Saving a site back to its site.toml (and its horizon CSV): the text UI autosaves edits.

A small TOML 1.0 emitter of our own (the standard library only reads TOML).  The
file stays the user's: tables the editor does not change (plan, window,
criteria, schedule) are written as they were in the original file while they
still read as the site's values, a horizon kept in a CSV file stays there, the
leading comment block is kept, and so is each comment on a key whose value did
not change.  Only keys that say something are written (tilt only when set or
already there), so an unchanged demo site is written back byte for byte.
"""

from __future__ import annotations

import csv
import io
import math
import re
import tomllib
import unicodedata
from dataclasses import dataclass, field, replace
from datetime import date, datetime, time, timezone
from pathlib import Path

from .errors import InputError
from .fileio import atomic_write_text, parse_toml, read_text
from .horizon import HorizonPoint
from .plan import plan_tables
from .site import Criteria, Schedule, Site, site_from_dict

TABLE_ORDER = ("site", "mount", "terminal", "horizon", "platform", "plan", "terrain", "window", "criteria", "schedule",
               "survey")
KEPT_AS_WRITTEN = ("plan", "terrain", "window", "criteria", "schedule", "platform")  # the editor does not change these
_KEY_ORDER = {
    "site": ("name", "latitude", "longitude", "elevation_m"),
    "mount": ("kind", "height_m", "east_m", "north_m"),
    "terminal": ("min_elevation_deg", "tilt_deg", "tilt_azimuth_deg", "scan_half_angle_deg"),
    "horizon": ("reference", "frame", "measured_height_m", "points", "file", "photo"),
    "survey": ("surveyor", "organisation", "customer", "notes", "date"),
}
_REVISION = re.compile(r"^(?P<base>.*?)\.rev(?P<n>[0-9]+)$")  # horizon.rev3 (csv_revision_name)
_EXACT_INT = 2.0 ** 53  # integral floats below this are written as whole numbers (read back exactly)


# ------------------------------------------------------------------ TOML values

class _Multiline(list):
    """An array written one item a line (the horizon points), read back as a list."""


_ESCAPES = {'"': '\\"', "\\": "\\\\", "\b": "\\b", "\t": "\\t", "\n": "\\n", "\f": "\\f", "\r": "\\r"}


def toml_string(text: str) -> str:
    """A TOML basic string.  Control characters (and line/paragraph separators, so
    the line structure stays plain) are escaped; other text, non-ASCII included,
    is kept as UTF-8."""
    out = []
    for ch in text:
        if ch in _ESCAPES:
            out.append(_ESCAPES[ch])
        elif 0xD800 <= ord(ch) <= 0xDFFF:
            raise ValueError(f"text holds a lone surrogate U+{ord(ch):04X}, which no UTF-8 file can hold")
        elif unicodedata.category(ch) in ("Cc", "Zl", "Zp"):
            out.append(f"\\u{ord(ch):04X}")
        else:
            out.append(ch)
    return '"' + "".join(out) + '"'


def toml_key(key: str) -> str:
    if key and all(c.isascii() and (c.isalnum() or c in "_-") for c in key):
        return key
    return toml_string(key)


def toml_value(value) -> str:
    """One TOML value, inline.  Floats are written with repr, which reads back to
    the same float; NaN and infinity are refused (no site value is ever one)."""
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        if not math.isfinite(value):
            raise ValueError(f"{value!r} is not a finite number")
        return repr(value)
    if isinstance(value, str):
        return toml_string(value)
    if isinstance(value, (datetime, date, time)):
        return value.isoformat()
    if isinstance(value, dict):
        if not value:
            return "{}"
        return "{ " + ", ".join(f"{toml_key(k)} = {toml_value(v)}" for k, v in value.items()) + " }"
    if isinstance(value, (list, tuple)):
        if isinstance(value, _Multiline) and value:
            return "[\n" + "".join(f"  {toml_value(v)},\n" for v in value) + "]"
        return "[" + ", ".join(toml_value(v) for v in value) + "]"
    raise ValueError(f"cannot write {type(value).__name__} {value!r} in TOML")


def _number(x: float):
    """An integral float as a whole number (as people type horizon points), else itself."""
    x = float(x)
    return int(x) if x.is_integer() and abs(x) < _EXACT_INT and math.copysign(1.0, x) > 0 else x


def _is_array_of_tables(v) -> bool:
    return isinstance(v, list) and bool(v) and all(isinstance(x, dict) for x in v)


# ------------------------------------------------------------------ the original layout

@dataclass
class Layout:
    """What a site file says besides its values: the leading comment block, the
    comment lines before each key or table header (by key path; an array-of-tables
    item counts as its index), each one-line key's original line and trailing
    comment, and comments after the last value."""

    preamble: str = ""
    before: dict[tuple, list[str]] = field(default_factory=dict)
    lines: dict[tuple, tuple[str, str]] = field(default_factory=dict)  # path -> (line, comment)
    tail: list[str] = field(default_factory=list)


def _scan(line: str, i: int, depth: int, mode: str | None):
    """Step through ``line`` from ``i`` tracking strings and brackets: (depth,
    mode, index of a comment's '#' or None)."""
    n = len(line)
    while i < n:
        ch = line[i]
        if mode in ("mlbasic", "mlliteral"):
            q = '"' if mode == "mlbasic" else "'"
            if mode == "mlbasic" and ch == "\\":
                i += 2
                continue
            if ch == q:
                run = len(line[i:]) - len(line[i:].lstrip(q))
                i += run
                if run >= 3:  # up to two quotes before the closing three are content
                    mode = None
                continue
            i += 1
        elif mode == "basic":
            if ch == "\\":
                i += 2
                continue
            if ch == '"':
                mode = None
            i += 1
        elif mode == "literal":
            if ch == "'":
                mode = None
            i += 1
        elif ch == "#":
            return depth, mode, i
        elif line.startswith('"""', i):
            mode, i = "mlbasic", i + 3
        elif line.startswith("'''", i):
            mode, i = "mlliteral", i + 3
        elif ch in "\"'":
            mode, i = ("basic" if ch == '"' else "literal"), i + 1
        else:
            if ch in "[{":
                depth += 1
            elif ch in "]}":
                depth -= 1
            i += 1
    return depth, mode, None


def _key_path(text: str) -> tuple:
    """A (dotted, maybe quoted) key as a tuple of names, read by tomllib itself."""
    node = tomllib.loads(f"{text} = 0")
    path = []
    while isinstance(node, dict):
        (k, node), = node.items()
        path.append(k)
    return tuple(path)


def _until(line: str, i: int, stop: str) -> int:
    """Index of the first ``stop`` character at or after ``i`` outside quoted keys; -1 if none."""
    quote = None
    while i < len(line):
        ch = line[i]
        if quote == '"' and ch == "\\":
            i += 2
            continue
        if quote is not None:
            if ch == quote:
                quote = None
        elif ch in "\"'":
            quote = ch
        elif ch == stop:
            return i
        i += 1
    return -1


def leading_comments(text: str) -> str:
    """The comment block (and blank lines) before a file's first other line, as typed."""
    lines = text.splitlines()
    k = 0
    while k < len(lines) and (not lines[k].strip() or lines[k].lstrip().startswith("#")):
        k += 1
    return "".join(f"{ln}\n" for ln in lines[:k])


def read_layout(text: str) -> Layout:
    """The layout of a valid TOML text (see Layout).  A comment inside a value
    that spans lines (within the horizon points) is not kept."""
    out = Layout(preamble=leading_comments(text))
    lines = text.splitlines()
    k = out.preamble.count("\n")
    table: tuple = ()
    counts: dict[tuple, int] = {}
    pending: list[str] = []
    depth, mode = 0, None
    for line in lines[k:]:
        if depth or mode:  # inside a value that spans lines
            depth, mode, _ = _scan(line, 0, depth, mode)
            continue
        body = line.strip()
        if not body:
            continue
        if body.startswith("#"):
            pending.append(body)
            continue
        if body.startswith("["):
            aot = body.startswith("[[")
            start = line.index("[") + (2 if aot else 1)
            end = _until(line, start, "]")
            path = _key_path(line[start:end].strip())
            if aot:
                counts[path] = counts.get(path, -1) + 1
                path = path + (counts[path],)
            table = path
            if pending:
                out.before[("[]",) + table] = pending
            pending = []
            continue
        eq = _until(line, 0, "=")
        path = table + _key_path(line[:eq].strip())
        depth, mode, hash_at = _scan(line, eq + 1, 0, None)
        if pending:
            out.before[path] = pending
        pending = []
        if not depth and not mode and hash_at is not None:
            out.lines[path] = (line.rstrip(), line[hash_at:].rstrip())
    out.tail = pending
    return out


# ------------------------------------------------------------------ the document

def _lookup(doc, path: tuple):
    node = doc
    for k in path:
        try:
            node = node[k]
        except (KeyError, IndexError, TypeError):
            return _MISSING
    return node


_MISSING = object()


class _Emitter:
    def __init__(self, base: dict | None, layout: Layout | None, where: str):
        self.base, self.layout, self.where = base or {}, layout or Layout(), where
        self.out: list[str] = []

    def _unchanged(self, path: tuple, value) -> bool:
        old = _lookup(self.base, path)
        return old is not _MISSING and old == value and isinstance(old, bool) == isinstance(value, bool)

    def table(self, path: tuple, table: dict, header: str | None = None) -> None:
        simple = {k: v for k, v in table.items() if not isinstance(v, dict) and not _is_array_of_tables(v)}
        name = ".".join(toml_key(p) for p in path if isinstance(p, str))
        if header is not None or simple or not table:
            if self.out:
                self.out.append("")
            self.out.extend(self.layout.before.get(("[]",) + path, []))
            self.out.append(header or f"[{name}]")
        for k, v in simple.items():
            self.key(path + (k,), v)
        for k, v in table.items():
            if isinstance(v, dict):
                self.table(path + (k,), v)
            elif _is_array_of_tables(v):
                for i, item in enumerate(v):
                    self.table(path + (k, i), item, header=f"[[{name}.{toml_key(k)}]]" if name
                               else f"[[{toml_key(k)}]]")

    def key(self, path: tuple, value) -> None:
        dotted = ".".join(str(p) if isinstance(p, int) else p for p in path)
        try:
            code = f"{toml_key(path[-1])} = {toml_value(value)}"
        except ValueError as exc:
            raise InputError(f"{self.where}: {dotted}: {exc}") from None
        if self._unchanged(path, value):
            self.out.extend(self.layout.before.get(path, []))
            line, comment = self.layout.lines.get(path, (None, None))
            if line is not None:
                # The original line as typed (with its alignment) when it says the same.
                code = line if line[: len(line) - len(comment)].strip() == code else f"{code}  {comment}"
        self.out.append(code)

    def text(self, preamble: str) -> str:
        pre = "".join(ln if ln.lstrip().startswith("#") or not ln.strip() else f"# {ln}"
                      for ln in preamble.splitlines(keepends=True))
        if pre and not pre.endswith("\n"):
            pre += "\n"
        body = self.out + ([""] + self.layout.tail if self.layout.tail else [])
        return pre + "\n".join(body) + "\n"


def _ordered(name: str, values: dict, base: dict | None) -> dict:
    """A table's keys in the base file's order; a key new to it goes after the
    key that comes before it in our order."""
    old = list((base or {}).get(name, {}) or {})
    ours = _KEY_ORDER.get(name, ())

    def rank(key):
        if key in old:
            return (old.index(key), 0.0)
        before = [k for k in ours[: ours.index(key)] if k in old] if key in ours else old
        return (old.index(before[-1]) if before else -1, 1.0 + (ours.index(key) if key in ours else 99))

    return dict(sorted(values.items(), key=lambda kv: rank(kv[0])))


def point_list(p: HorizonPoint) -> list:
    """A horizon point as typed in site.toml: [az, el, (distance_m), (label)]."""
    return ([_number(p.azimuth_deg), _number(p.elevation_deg)]
            + ([float(p.distance_m)] if p.distance_m is not None else []) + ([p.label] if p.label else []))


def _when(dt) -> str:
    if isinstance(dt, datetime):
        return dt.astimezone(timezone.utc).strftime("%Y-%m-%dT%H:%M:%SZ")
    return str(dt)


def _from_site(site: Site, base: dict) -> dict[str, dict]:
    """The tables the editor changes, from the Site (only keys that say something)."""
    def given(table, key, value, default, essential=False):
        """Worth writing: not the default, or in the file already; the essentials
        (as in the demo sites) always in a new file."""
        return value != default or key in (base.get(table) or {}) or (essential and not base)

    s = {"name": site.name, "latitude": site.latitude_deg, "longitude": site.longitude_deg}
    if given("site", "elevation_m", site.elevation_m, 0.0):
        s["elevation_m"] = site.elevation_m
    m = {}
    if given("mount", "kind", site.mount.kind, "fixed", essential=True):
        m["kind"] = site.mount.kind
    if given("mount", "height_m", site.mount.height_m, 0.0, essential=True):
        m["height_m"] = site.mount.height_m
    if site.mount.at is not None:
        m.update(east_m=float(site.mount.at[0]), north_m=float(site.mount.at[1]))
    t = {}
    if given("terminal", "min_elevation_deg", site.terminal.min_elevation_deg, 25.0, essential=True):
        t["min_elevation_deg"] = site.terminal.min_elevation_deg
    for key in ("tilt_deg", "tilt_azimuth_deg"):
        if given("terminal", key, getattr(site.terminal, key), 0.0):
            t[key] = getattr(site.terminal, key)
    if site.terminal.scan_half_angle_deg is not None:
        t["scan_half_angle_deg"] = site.terminal.scan_half_angle_deg
    h_base = base.get("horizon") or {}
    h: dict = {}
    if given("horizon", "reference", site.horizon.reference, "true", essential=bool(site.horizon.points)):
        h["reference"] = site.horizon.reference
    if site.platform is not None and site.platform.frame == "body":
        h["frame"] = "body"  # bearings from the bow or front (survey/platform/)
    if site.mount.at is not None and site.measured_height_m is not None:
        h["measured_height_m"] = site.measured_height_m
    if isinstance(h_base.get("file"), str):
        h["file"] = h_base["file"]  # the caller writes the CSV (save_site)
    elif site.horizon.points or "points" in h_base:
        h["points"] = _Multiline(point_list(p) for p in site.horizon.points)
    out = {"site": s, "mount": m, "terminal": t, "horizon": h, "survey": dict(site.survey)}
    return {k: _ordered(k, v, base) for k, v in out.items() if v or k in base}


def _kept_from_site(site: Site) -> dict[str, dict]:
    """plan, window, criteria and schedule written from the Site (no base, or the
    base's no longer reads as the site's)."""
    out: dict[str, dict] = {}
    if site.platform is not None:
        from .platform.model import platform_table

        out["platform"] = platform_table(site.platform, site.path.parent if site.path else None)
    if site.plan is not None:
        out["plan"] = plan_tables(site.plan)
    if site.terrain is not None:
        out["terrain"] = site.terrain.as_table()
    if site.window:
        w = dict(site.window)
        if "start" in w:
            w["start"] = _when(w["start"])
        out["window"] = {k: w[k] for k in ("start", "hours", "step_s") if k in w}
    crit = {k: getattr(site.criteria, k) for k in Criteria.__dataclass_fields__
            if getattr(site.criteria, k) != getattr(Criteria(), k)}
    if crit:
        out["criteria"] = crit
    if site.schedule != Schedule():
        out["schedule"] = {"reassign_s": site.schedule.reassign_s}
    return out


def _base_reads_same(site: Site, base: dict, name: str, path: Path) -> bool:
    """Whether the base file's table ``name`` still reads as the site's value."""
    probe_doc = {"site": {"name": site.name, "latitude": site.latitude_deg, "longitude": site.longitude_deg},
                 name: base[name]}
    if name == "platform":  # read with the mount kind and horizon frame it belongs to (survey/platform/model.py)
        probe_doc["mount"] = {"kind": site.mount.kind}
        probe_doc["horizon"] = {"frame": site.platform.frame} if site.platform is not None else {}
    try:
        probe = site_from_dict(probe_doc, path)
    except InputError:
        return False
    if name == "plan":
        def bare(plan):
            return None if plan is None else replace(plan, source="")
        return bare(probe.plan) == bare(site.plan)
    return getattr(probe, name) == getattr(site, name)


def site_toml(site: Site, base: dict | None = None, preamble: str = "", *, path: str | Path | None = None,
              layout: Layout | None = None) -> str:
    """TOML 1.0 text of ``site`` (tables in the README's order, TABLE_ORDER).

    ``base`` is the original file's parsed document: its plan, window, criteria
    and schedule tables are kept as written while they read as the site's
    (``path``, default ``site.path``, resolves their file references), and a
    horizon ``file`` reference is kept (write the CSV with ``horizon_csv``).
    ``preamble`` is put first (comment lines); ``layout`` (``read_layout``)
    brings back the comments of keys whose values are unchanged."""
    base = base or {}
    path = Path(path) if path is not None else (site.path or Path("site.toml"))
    tables = _from_site(site, base)
    if site.photo is not None:  # [horizon] photo, its file relative to the folder written to
        tables["horizon"] = _ordered("horizon", {**tables.get("horizon", {}), "photo": site.photo.as_table(path.parent)}, base)
    from_site = _kept_from_site(site)
    for name in KEPT_AS_WRITTEN:
        if name in base and _base_reads_same(site, base, name, path):
            tables[name] = base[name]
        elif name in from_site:
            tables[name] = from_site[name]
    em = _Emitter(base, layout, str(path))
    for name in TABLE_ORDER:
        if name in tables:
            em.table((name,), tables[name])
    return em.text(preamble)


# ------------------------------------------------------------------ horizon CSV

def _breaks_a_line(ch: str) -> bool:
    return len(f"a{ch}a".splitlines()) > 1


def horizon_csv(points, preamble: str = "", where: str = "horizon CSV") -> str:
    """The horizon CSV that ``horizon.read_horizon_csv`` reads: header
    ``azimuth_deg,elevation_deg`` with ``distance_m`` and ``label`` columns when
    any point has one; labels quoted when they need it (a ``#``, the reader's
    comment mark, is quoted too).  The reader strips spaces round values, so
    labels are written stripped; a label holding a line break or a NUL cannot be
    written (InputError)."""
    points = list(points)
    with_dist = any(p.distance_m is not None for p in points)
    with_label = any(p.label.strip() for p in points)
    buf = io.StringIO()
    writer = csv.writer(buf, lineterminator="\n")
    writer.writerow(["azimuth_deg", "elevation_deg"] + ["distance_m"] * with_dist + ["label"] * with_label)
    for i, p in enumerate(points):
        label = p.label.strip()
        bad = next((c for c in label if _breaks_a_line(c) or c == "\x00"), None)
        if bad is not None:
            what = "a NUL character" if bad == "\x00" else "a line break"
            raise InputError(f"{where}: horizon point {i + 1} ({p.azimuth_deg:g} deg): its label "
                             f"{p.label!r} holds {what} (U+{ord(bad):04X}), which a horizon CSV "
                             "cannot hold: change the label")
        row = [_csv_number(p.azimuth_deg), _csv_number(p.elevation_deg)]
        if with_dist:
            row.append("" if p.distance_m is None else _csv_number(p.distance_m))
        if with_label and "#" in label:  # quoted, so the reader does not take it for a comment
            buf.write(",".join(row) + ',"' + label.replace('"', '""') + '"\n')
            continue
        if with_label:
            row.append(label)
        writer.writerow(row)
    pre = "".join(ln if ln.startswith("#") else f"# {ln}" for ln in preamble.splitlines(keepends=True))
    if pre and not pre.endswith("\n"):
        pre += "\n"
    return pre + buf.getvalue()


def _csv_number(x: float) -> str:
    v = _number(x)
    if isinstance(v, float) and not math.isfinite(v):
        raise ValueError(f"{v!r} is not a finite number")
    return repr(v)


# ------------------------------------------------------------------ saving

def _read_existing(path: Path, what: str) -> str | None:
    return read_text(path, what) if path.is_file() else None


def _check_reads_back(site: Site, text: str, path: Path) -> None:
    """Refuse to write a site file that would not load (e.g. a value typed out of
    range in the editor): the problems of loading it, one line each."""
    doc = parse_toml(text, str(path))
    h = doc.get("horizon")
    if isinstance(h, dict) and "file" in h:  # the CSV is not written yet: check its points inline
        h = dict(h)
        del h["file"]
        h["points"] = [point_list(p) for p in site.horizon.points]
        doc["horizon"] = h
    site_from_dict(doc, path)


def csv_revision_name(folder: Path, named: str) -> str:
    """The file name the next revision of the horizon CSV ``named`` is saved
    under, in the site file's ``folder``: ``horizon.csv`` -> ``horizon.rev1.csv``
    -> ``horizon.rev2.csv`` (the next number not taken).  README, "Saving"."""
    name = Path(named).name
    stem = name[:-4] if name.lower().endswith(".csv") else name
    m = _REVISION.match(stem)
    base, n = (m["base"], int(m["n"])) if m else (stem, 0)
    base = base or "horizon"
    n += 1
    while (folder / f"{base}.rev{n}.csv").exists():
        n += 1
    return f"{base}.rev{n}.csv"


def _named_elsewhere(name: str, folder: Path, site_path: Path) -> bool:
    """Whether another site file in ``folder`` mentions the file ``name`` (a copied
    site file still pointing at the same revision)."""
    for other in folder.glob("*.toml"):
        if other.name == site_path.name:
            continue
        try:
            if other.stat().st_size <= 4_000_000 and name in other.read_text("utf-8", errors="replace"):
                return True
        except OSError:
            return True  # cannot tell: keep the file
    return False


def _remove_old_revision(old: Path, new_name: str, site_path: Path) -> None:
    """After the site file names the new revision: remove the one it named before,
    when it was a revision of ours (never the file the user first named), in the
    same folder, and named by no other site file there."""
    folder = site_path.parent
    stem = old.name[:-4] if old.name.lower().endswith(".csv") else old.name
    if old.name == new_name or not _REVISION.match(stem) or not old.name.lower().endswith(".csv"):
        return
    try:
        if old.parent.resolve() != folder.resolve() or _named_elsewhere(old.name, folder, site_path):
            return
        old.unlink()
    except OSError:
        pass  # a stale revision left behind does no harm: the site file does not name it


def save_site(site: Site, path: str | Path) -> list[Path]:
    """Write ``site`` to ``path`` (see ``site_toml``), keeping the existing file's
    leading comments, its kept tables and its comments on unchanged keys.

    A horizon kept in a CSV file is saved as a new revision next to the site file
    (``csv_revision_name``), written before the site file; the site file's rename
    then switches to it in one step, so a crash at any point leaves the old pair
    or the new pair, never a new CSV with an old site file.  An unchanged CSV is
    not rewritten.  Nothing is written outside the site file's folder, whatever
    path the site file gives.  Both writes are atomic.  Returns the paths
    written.  Raises InputError (one line per problem) and then writes nothing."""
    path = Path(path)
    text = _read_existing(path, "site file")
    base = parse_toml(text, str(path)) if text is not None else None
    layout = read_layout(text) if text is not None else Layout()
    writes: list[tuple[Path, str]] = []
    hfile = ((base or {}).get("horizon") or {}).get("file")
    old_csv = None
    if isinstance(hfile, str) and hfile:
        old_csv = path.parent / hfile
        old = _read_existing(old_csv, "horizon CSV")
        try:
            csv_text = horizon_csv(site.horizon.points, leading_comments(old) if old is not None else "", str(old_csv))
        except ValueError as exc:
            raise InputError(f"{old_csv}: {exc}") from None
        if csv_text != old:
            new_name = csv_revision_name(path.parent, hfile)
            base = dict(base, horizon=dict(base["horizon"], file=new_name))
            writes.append((path.parent / new_name, csv_text))
    toml_text = site_toml(site, base, layout.preamble, path=path, layout=layout)
    _check_reads_back(site, toml_text, path)
    writes.append((path, toml_text))
    for p, t in writes:
        atomic_write_text(p, t)
    if old_csv is not None and len(writes) == 2:
        _remove_old_revision(old_csv, writes[0][0].name, path)
    return [p for p, _ in writes]
