"""Typed reading of one TOML table at the input edge.

Each wrong value is recorded as one problem naming the field; the caller raises
them all together (``Problems.raise_if_any``)."""

from __future__ import annotations

import math

from .errors import InputError, Problems


def is_number(x) -> bool:
    """A finite int or float that is not a bool: how a raw value read from a file
    (TOML, CSV, GeoJSON) passes as a number before its range is checked."""
    if isinstance(x, bool) or not isinstance(x, (int, float)):
        return False
    if isinstance(x, int):
        return abs(x) < 10**300  # a 400-digit integer is not a measurement (and overflows a float)
    return math.isfinite(x)


class Table:
    """Typed access to one TOML table (``name`` is how fields are reported)."""

    def __init__(self, data, name: str, problems: Problems, known: tuple[str, ...]):
        self.name, self.problems = name, problems
        if not isinstance(data, dict):
            problems.add(name, "expected a table")
            data = {}
        self.data = data
        for key in data:
            if key not in known:
                problems.add(f"{name}.{key}", f"unknown key (expected one of: {', '.join(known)})")

    def _value(self, key, required):
        """(present, value); records 'missing' for an absent required key."""
        if key in self.data:
            return True, self.data[key]
        if required:
            self.problems.add(f"{self.name}.{key}", "missing")
        return False, None

    def number(self, key, default=None, lo=None, hi=None, required=False, positive=False, integer=False):
        """A number (a whole number with ``integer``) within [lo, hi]; else the
        default, with the problem recorded."""
        present, v = self._value(key, required)
        if not present:
            return default
        field = f"{self.name}.{key}"
        kinds = int if integer else (int, float)
        if not is_number(v) or not isinstance(v, kinds):
            self.problems.add(field, f"expected {'a whole number' if integer else 'a number'}, got {v!r}")
            return default
        if lo is not None and v < lo or hi is not None and v > hi:
            self.problems.add(field, f"{v} is outside {lo} to {hi}")
            return default
        if positive and v <= 0:
            self.problems.add(field, f"must be greater than 0, got {v}")
            return default
        return int(v) if integer else float(v)

    def text(self, key, default="", required=False, choices=None):
        present, v = self._value(key, required)
        if not present:
            return default
        field = f"{self.name}.{key}"
        if not isinstance(v, str):
            self.problems.add(field, f"expected text, got {v!r}")
            return default
        if choices and v not in choices:
            self.problems.add(field, f"{v!r} is not one of: {', '.join(choices)}")
            return default
        return v


def csv_header(where: str, line: int, header: str, known: tuple[str, ...], required: tuple[str, ...]) -> list[str]:
    """The columns a CSV header line names (a leading byte-order mark dropped),
    checked: every column known, none twice, the required ones there; else one
    InputError line per problem, naming ``where`` and the line.  The horizon CSV
    and the batch's sites CSV share this rule."""
    import csv

    try:
        cols = [c.strip().lstrip("\ufeff") for c in next(csv.reader([header]))]
    except csv.Error as exc:
        raise InputError(f"{where}: line {line}: not a CSV header: {exc}") from None
    problems = Problems(where)
    for c in cols:
        if c not in known:
            problems.add(f"line {line}", f"unknown column {c[:40]!r} (expected {', '.join(known)})")
    for c in sorted({c for c in cols if cols.count(c) > 1}):
        problems.add(f"line {line}", f"column {c[:40]!r} appears more than once")
    for need in required:
        if need not in cols:
            problems.add(f"line {line}", f"missing column {need!r}")
    problems.raise_if_any()
    return cols
