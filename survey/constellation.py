"""Satellite fleets as SGP4 element sets.

Sources: Walker delta shells from a shell file (Walker, J. British
Interplanetary Society 37, 1984), TLE files (two- or three-line, checksums
verified) and CCSDS OMM files (XML, CSV, JSON), all turned into ``sgp4`` Satrec
objects (Vallado et al. 2006, "Revisiting Spacetrack Report #3").
"""

from __future__ import annotations

import csv
import io
import math
from dataclasses import dataclass
from datetime import datetime, timedelta, timezone
from importlib import resources
from pathlib import Path

from sgp4.api import WGS72, Satrec

from .errors import InputError, Problems
from .fileio import parse_json, parse_toml, read_text
from .tables import Table

MU_KM3_S2 = 398600.4418  # WGS84 Earth gravitational parameter (NIMA TR8350.2)
EARTH_RADIUS_KM = 6378.137  # WGS84 equatorial radius
JD_1949_DEC_31 = 2433281.5  # SGP4's epoch origin (days since 1949 Dec 31 00:00 UT)
STALE_AFTER_DAYS = 14.0  # common practice: TLE accuracy degrades over days
J2 = 1.08263e-3  # Earth's second zonal harmonic, WGS-84/EGM value (Vallado, Fundamentals of Astrodynamics, table D-1)
TROPICAL_YEAR_S = 365.2421897 * 86400.0  # mean tropical year (the Sun's mean motion in right ascension)
MAX_SATELLITES = 50_000  # in one fleet (README, "Limits"): several large shells, well under SGP4's numbering
SUN_SYNCHRONOUS = "sun-synchronous"  # a shell file's inclination_deg may say this instead of a number


@dataclass(frozen=True)
class Shell:
    """One Walker delta shell: T = planes * per_plane satellites, circular."""

    name: str
    altitude_km: float
    inclination_deg: float
    planes: int
    per_plane: int
    phasing: int = 0

    @property
    def total(self) -> int:
        return self.planes * self.per_plane

    def slots(self):
        """(plane, slot, RAAN deg, mean anomaly deg) of every satellite, per Walker:
        RAAN_p = 360 p / P;  M_ps = 360 s / S + 360 F p / T."""
        T = self.total
        for p in range(self.planes):
            for s in range(self.per_plane):
                raan = 360.0 * p / self.planes
                ma = (360.0 * s / self.per_plane + 360.0 * self.phasing * p / T) % 360.0
                yield p, s, raan, ma


@dataclass
class Fleet:
    """Satellites to propagate, with where they came from.

    ``group`` names each satellite's shell or source file; ``epochs_utc`` are the
    element-set epochs.  ``illustrative`` marks the embedded default set."""

    satrecs: list
    names: list[str]
    group: list[str]
    source: str
    illustrative: bool = False
    dropped: tuple[str, ...] = ()  # element sets refused as impossible, each "where: why"

    def __len__(self) -> int:
        return len(self.satrecs)

    @property
    def groups(self) -> dict[str, int]:
        out: dict[str, int] = {}
        for g in self.group:
            out[g] = out.get(g, 0) + 1
        return out

    def epochs_utc(self) -> list[datetime]:
        base = datetime(1949, 12, 31, tzinfo=timezone.utc)
        return [base + timedelta(days=(s.jdsatepoch - JD_1949_DEC_31) + s.jdsatepochF) for s in self.satrecs]

    def age_warnings(self, start: datetime) -> list[str]:
        """Warn when element sets are older than STALE_AFTER_DAYS at the window start,
        or when the window starts well before the epoch."""
        if self.illustrative or not self.satrecs:
            return []
        epochs = self.epochs_utc()
        ages = [(start - e).total_seconds() / 86400.0 for e in epochs]
        notes = []
        old = [a for a in ages if a > STALE_AFTER_DAYS]
        if old:
            notes.append(
                f"{len(old)} of {len(ages)} element sets are older than {STALE_AFTER_DAYS:.0f} days at the "
                f"window start (oldest {max(old):.0f} days): positions may be off by many km; fetch fresh elements"
            )
        early = [a for a in ages if a < -STALE_AFTER_DAYS]
        if early:
            notes.append(
                f"{len(early)} element sets have epochs more than {STALE_AFTER_DAYS:.0f} days after the window start"
            )
        return notes


def kepler_mean_motion_rad_s(altitude_km: float) -> float:
    """Mean motion n = sqrt(mu / a^3) of a circular orbit (Kepler's third law)."""
    a = EARTH_RADIUS_KM + altitude_km
    return math.sqrt(MU_KM3_S2 / a**3)


def sun_synchronous_inclination_deg(altitude_km: float) -> float:
    """Inclination (degrees) at which a circular orbit's node precesses eastward
    by 360 degrees a tropical year, keeping its plane at one local solar time.
    The secular J2 nodal rate of a circular orbit (Vallado, *Fundamentals of
    Astrodynamics and Applications*, section 9.6) is
    dOmega/dt = -(3/2) n J2 (R/a)^2 cos i, so cos i = -(2 pi / year) / ((3/2) n J2 (R/a)^2)."""
    a = EARTH_RADIUS_KM + altitude_km
    n = kepler_mean_motion_rad_s(altitude_km)
    cos_i = -(2.0 * math.pi / TROPICAL_YEAR_S) / (1.5 * n * J2 * (EARTH_RADIUS_KM / a) ** 2)
    if cos_i < -1.0:
        raise ValueError(f"no sun-synchronous orbit at {altitude_km:g} km (the node cannot precess fast enough)")
    return math.degrees(math.acos(cos_i))


MIN_PERIGEE_KM = 0.0  # a perigee under the Earth's surface (WGS-84 equatorial radius) is not an orbit
EPOCH_YEARS = (1957, 2100)  # element-set epochs outside these years are not a real satellite's


def impossible(sat) -> str | None:
    """Why an element set cannot be a satellite in orbit (so no verdict may rest
    on it), or None: mean motion not a positive number, eccentricity outside
    0 to 1, perigee under MIN_PERIGEE_KM, or an epoch outside EPOCH_YEARS."""
    n_rad_min = sat.no_kozai
    if not (math.isfinite(n_rad_min) and n_rad_min > 0):
        return f"mean motion {n_rad_min * 1440 / (2 * math.pi):g} rev/day is not a positive number"
    e = sat.ecco
    if not (math.isfinite(e) and 0 <= e < 1):
        return f"eccentricity {e:g} is outside 0 to 1 (not a closed orbit)"
    a_km = (MU_KM3_S2 / (n_rad_min / 60.0) ** 2) ** (1.0 / 3.0)
    perigee_km = a_km * (1.0 - e) - EARTH_RADIUS_KM
    if perigee_km < MIN_PERIGEE_KM:
        return f"perigee {perigee_km:,.0f} km is below the Earth's surface"
    year = 2000.0 + (sat.jdsatepoch + sat.jdsatepochF - 2451545.0) / 365.25  # Julian years from J2000
    if not (EPOCH_YEARS[0] <= year <= EPOCH_YEARS[1] + 1):
        return f"epoch in the year {int(year)} is outside {EPOCH_YEARS[0]} to {EPOCH_YEARS[1]}"
    return None


def _keep_possible(satrecs: list, names: list, where_of: list[str], where: str) -> tuple[list, list, tuple[str, ...]]:
    """The element sets that can be satellites, and a note for each dropped one;
    none left is an InputError naming the file."""
    keep_s, keep_n, dropped = [], [], []
    for sat, name, at in zip(satrecs, names, where_of):
        why = impossible(sat)
        if why is None:
            keep_s.append(sat)
            keep_n.append(name)
        else:
            dropped.append(f"{at} ({name}): {why}")
    if not keep_s:
        raise InputError(f"{where}: no element set describes a satellite in orbit: " + "; ".join(dropped[:3]))
    return keep_s, keep_n, tuple(dropped)


def walker_fleet(shells: list[Shell], epoch: datetime, source: str, illustrative: bool = False) -> Fleet:
    """Element sets for Walker shells, circular orbits with the window start as epoch."""
    jd = julian_date_utc(epoch)
    sgp4_epoch = jd - JD_1949_DEC_31
    satrecs, names, group = [], [], []
    number = 1
    for shell in shells:
        n_rad_min = kepler_mean_motion_rad_s(shell.altitude_km) * 60.0
        inc = math.radians(shell.inclination_deg)
        for p, s, raan, ma in shell.slots():
            sat = Satrec()
            # ecco 0 and bstar 0: ideal circular orbits without drag.
            sat.sgp4init(WGS72, "i", number, sgp4_epoch, 0.0, 0.0, 0.0, 0.0, 0.0, inc,
                         math.radians(ma), n_rad_min, math.radians(raan))
            satrecs.append(sat)
            names.append(f"{shell.name}-{p + 1:02d}-{s + 1:02d}")
            group.append(shell.name)
            number += 1
    return Fleet(satrecs, names, group, source, illustrative)


def julian_date_utc(when: datetime) -> float:
    """Julian date of a UTC instant (JD 2451545.0 = 2000-01-01 12:00 UTC), as
    SGP4 epochs and times are counted."""
    when = when.astimezone(timezone.utc)
    j2000 = datetime(2000, 1, 1, 12, tzinfo=timezone.utc)
    return 2451545.0 + (when - j2000).total_seconds() / 86400.0


def parse_shells(text: str, where: str) -> list[Shell]:
    """Shells from shell-file TOML text: a list of [[shell]] tables."""
    doc = parse_toml(text, where)
    problems = Problems(where)
    raw = doc.get("shell")
    if not isinstance(raw, list) or not raw:
        raise InputError(f"{where}: shell: expected one or more [[shell]] tables")
    for key in doc:
        if key != "shell":
            problems.add(key, "unknown table (expected [[shell]])")
    shells = []
    known = ("name", "altitude_km", "inclination_deg", "planes", "per_plane", "phasing")
    for i, raw_shell in enumerate(raw):
        t = Table(raw_shell, f"shell[{i}]", problems, known)
        name = t.text("name", f"shell-{i + 1}")
        alt = t.number("altitude_km", None, 150, 3000, required=True)
        if raw_shell.get("inclination_deg") == SUN_SYNCHRONOUS and alt is not None:
            inc = sun_synchronous_inclination_deg(alt)  # altitude <= 3000 km: always possible
        else:
            inc = t.number("inclination_deg", None, 0, 180, required=True)
        planes = t.number("planes", None, 1, 1000, required=True, integer=True)
        per = t.number("per_plane", None, 1, 1000, required=True, integer=True)
        phasing = t.number("phasing", 0, 0, 10**6, integer=True)
        if planes and phasing >= planes:
            problems.add(f"shell[{i}].phasing", f"must be below planes ({planes}) in a Walker delta pattern")
        if None not in (alt, inc, planes, per):
            shells.append(Shell(name, alt, inc, planes, per, phasing))
    problems.raise_if_any()
    total = sum(sh.total for sh in shells)
    if total > MAX_SATELLITES:
        raise InputError(f"{where}: shell: {total:,} satellites in all, more than the limit of {MAX_SATELLITES:,}: "
                         "fewer planes or satellites per plane")
    return shells


def shells_fleet(text: str, where: str, epoch: datetime) -> Fleet:
    """Walker shells from shell-file text (``where`` names the file in errors)."""
    return walker_fleet(parse_shells(text, where), epoch, f"Walker shells from {Path(where).name}")


def default_fleet(epoch: datetime) -> Fleet:
    """The embedded illustrative shell set (our own; not a real constellation)."""
    text = resources.files("survey.data").joinpath("illustrative_shells.toml").read_text("utf-8")
    shells = parse_shells(text, "illustrative_shells.toml")
    return walker_fleet(shells, epoch, "illustrative shells (leosite default, not a real constellation)",
                        illustrative=True)


_DIGITS = frozenset("0123456789")  # str.isdigit() also takes '²' and other scripts' digits


def tle_checksum(line: str) -> int:
    """TLE checksum: sum of digits, minus signs count 1, modulo 10 (column 69)."""
    return sum(int(c) if c in _DIGITS else (1 if c == "-" else 0) for c in line[:68]) % 10


def parse_tle(text: str, where: str) -> Fleet:
    """Two- or three-line element sets; every checksum is verified."""
    lines = [(n, ln.rstrip()) for n, ln in enumerate(text.splitlines(), start=1) if ln.strip()]
    if len(lines) > 3 * MAX_SATELLITES:
        raise InputError(f"{where}: {len(lines):,} lines: more element sets than the limit of {MAX_SATELLITES:,}")
    problems = Problems(where)
    satrecs, names, lines_of = [], [], []
    i = 0
    while i < len(lines):
        n, ln = lines[i]
        name = None
        if not ln.startswith("1 "):
            name = ln[2:].strip() if ln.startswith("0 ") else ln.strip()
            i += 1
            if i >= len(lines):
                problems.add(f"line {n}", "name line without element lines after it")
                break
        if i + 1 >= len(lines):
            problems.add(f"line {lines[i][0]}", "expected TLE line 1 followed by line 2")
            break
        (n1, l1), (n2, l2) = lines[i], lines[i + 1]
        i += 2
        bad = False
        for num, ln_, first in ((n1, l1, "1"), (n2, l2, "2")):
            if not ln_.startswith(first + " ") or len(ln_) < 69:
                problems.add(f"line {num}", f"expected TLE line {first} (69 columns starting '{first} ')")
                bad = True
            elif ln_[68] not in _DIGITS or int(ln_[68]) != tle_checksum(ln_):
                problems.add(f"line {num}", f"checksum mismatch: column 69 says {ln_[68]!r}, "
                                            f"the line sums to {tle_checksum(ln_)}")
                bad = True
        if bad:
            continue
        try:
            day = float(l1[20:32])
        except ValueError:
            day = -1.0
        if not 1.0 <= day < 367.0:
            problems.add(f"line {n1}", f"epoch day of year {l1[20:32].strip()!r} is outside 1 to 366")
            continue
        if l1[2:7] != l2[2:7]:
            problems.add(f"line {n2}", f"catalogue number {l2[2:7].strip()} does not match line 1 ({l1[2:7].strip()})")
            continue
        try:
            sat = Satrec.twoline2rv(l1, l2, WGS72)
        except Exception as exc:  # the sgp4 parser raises ValueError on bad fields
            problems.add(f"line {n1}", f"cannot read element set: {exc}")
            continue
        satrecs.append(sat)
        names.append(name or l1[2:7].strip())
        lines_of.append(f"line {n1}")
    problems.raise_if_any()
    if not satrecs:
        raise InputError(f"{where}: no element sets found")
    satrecs, names, dropped = _keep_possible(satrecs, names, lines_of, where)
    return Fleet(satrecs, names, [Path(where).name] * len(satrecs), f"TLE file {Path(where).name}", dropped=dropped)


_OMM_DEFAULTS = {
    "CLASSIFICATION_TYPE": "U", "OBJECT_ID": "0000-000A", "EPHEMERIS_TYPE": "0",
    "ELEMENT_SET_NO": "999", "REV_AT_EPOCH": "0", "BSTAR": "0", "MEAN_MOTION_DOT": "0",
    "MEAN_MOTION_DDOT": "0",
}
_OMM_REQUIRED = ("EPOCH", "MEAN_MOTION", "ECCENTRICITY", "INCLINATION", "RA_OF_ASC_NODE",
                 "ARG_OF_PERICENTER", "MEAN_ANOMALY", "NORAD_CAT_ID")


def _omm_epoch(text: str) -> str | None:
    """A CCSDS epoch (calendar or day-of-year form, any number of fractional
    digits, optional Z) as the YYYY-MM-DDThh:mm:ss.ffffff text sgp4's OMM reader takes."""
    text = text.strip().rstrip("Z")
    whole, _, frac = text.partition(".")
    if frac and not all(c in _DIGITS for c in frac):
        return None
    for fmt in ("%Y-%m-%dT%H:%M:%S", "%Y-%jT%H:%M:%S"):
        try:
            dt = datetime.strptime(whole, fmt)
            break
        except ValueError:
            continue
    else:
        return None
    # Round the fraction to microseconds (SGP4 epochs carry no more).
    micro = round(float("0." + frac) * 1e6) if frac else 0
    dt += timedelta(microseconds=micro)
    return dt.strftime("%Y-%m-%dT%H:%M:%S.%f")


def parse_omm_records(records, where: str) -> Fleet:
    """Element sets from OMM records (dicts of the CCSDS keyword names)."""
    if len(records) > MAX_SATELLITES:
        raise InputError(f"{where}: {len(records):,} records: more element sets than the limit of {MAX_SATELLITES:,}")
    problems = Problems(where)
    satrecs, names, records_of = [], [], []
    for i, rec in enumerate(records):
        fields = {k.strip().upper(): (str(v).strip() if v is not None else "") for k, v in rec.items() if k}
        missing = [k for k in _OMM_REQUIRED if not fields.get(k)]
        if missing:
            problems.add(f"record {i + 1}", f"missing {', '.join(missing)}")
            continue
        for k, v in _OMM_DEFAULTS.items():
            if not fields.get(k):
                fields[k] = v
        epoch = _omm_epoch(fields["EPOCH"])
        if epoch is None:
            problems.add(f"record {i + 1}", f"EPOCH {fields['EPOCH']!r} is not a CCSDS time "
                                            "(YYYY-MM-DDThh:mm:ss[.fff] or YYYY-DDDThh:mm:ss[.fff])")
            continue
        fields["EPOCH"] = epoch
        sat = Satrec()
        try:
            from sgp4 import omm  # only OMM input needs it

            omm.initialize(sat, fields)
        except (ValueError, KeyError) as exc:
            problems.add(f"record {i + 1}", f"cannot read element set: {exc}")
            continue
        satrecs.append(sat)
        names.append(fields.get("OBJECT_NAME") or fields["NORAD_CAT_ID"])
        records_of.append(f"record {i + 1}")
    problems.raise_if_any()
    if not satrecs:
        raise InputError(f"{where}: no element sets found")
    satrecs, names, dropped = _keep_possible(satrecs, names, records_of, where)
    return Fleet(satrecs, names, [Path(where).name] * len(satrecs), f"OMM file {Path(where).name}", dropped=dropped)


def load_elements(path: str | Path) -> Fleet:
    """A TLE or OMM file, told apart by content: XML, JSON, CSV with a header, or TLE."""
    path = Path(path)
    return parse_elements(read_text(path, "element-set file"), str(path))


def parse_elements(text: str, where: str) -> Fleet:
    """Element sets from the text of a TLE or OMM file (``where`` names it in errors)."""
    head = text.lstrip()[:200]
    if head.startswith("<"):
        import xml.etree.ElementTree as ET  # only OMM XML needs it

        if "<!DOCTYPE" in text or "<!ENTITY" in text:  # README, "Limits": OMM needs neither
            raise InputError(f"{where}: OMM XML with a DOCTYPE or entity declarations is refused "
                             "(OMM needs neither; entities can expand without bound)")

        try:
            root = ET.fromstring(text)
        except ET.ParseError as exc:
            raise InputError(f"{where}: not valid OMM XML: {exc}") from None
        for node in root.iter():  # drop XML namespaces: the keywords are what count
            if isinstance(node.tag, str) and "}" in node.tag:
                node.tag = node.tag.split("}", 1)[1]
        records = []
        for seg in root.iter("segment"):
            rec = {}
            for part in ("metadata", "data/meanElements", "data/tleParameters"):
                node = seg.find(part)
                if node is not None:
                    rec.update((c.tag, c.text) for c in node)
            records.append(rec)
        return parse_omm_records(records, where)
    if head.startswith("[") or head.startswith("{"):
        doc = parse_json(text, where, "OMM JSON")
        records = doc if isinstance(doc, list) else [doc]
        if not all(isinstance(r, dict) for r in records):
            raise InputError(f"{where}: OMM JSON must be an object or a list of objects")
        return parse_omm_records(records, where)
    if head.upper().startswith(("OBJECT_NAME", "CCSDS", "NORAD_CAT_ID", "EPOCH", "OBJECT_ID")) and "," in head:
        try:
            records = list(csv.DictReader(io.StringIO(text, newline="")))
        except csv.Error as exc:
            raise InputError(f"{where}: not an OMM CSV file: {exc}") from None
        return parse_omm_records(records, where)
    return parse_tle(text, where)
