"""Latitudes and longitudes as people type them off a GPS screen.

Decimal degrees (``45.3182``, ``72.6415 W``), degrees-minutes-seconds
(``45°19'05.5"N``, ``45 19 5.5 N``, ``N 45° 19' 5.5"``, ``45d19m5.5s``, primes
′ ″ or ' ") and degrees with decimal minutes (``45 19.092 N``).  After a letter
``m`` for minutes, a small ``s`` glued to a number is seconds; otherwise S is
south.  A value is degrees + minutes/60 + seconds/3600, negative for S and W.
Errors are ValueErrors whose text tells the user what to fix, for an input
field to show.
"""

from __future__ import annotations

import math
import re

KINDS = {"latitude": ("N", "S", 90.0), "longitude": ("E", "W", 180.0)}

# Look-alikes people paste from documents and phone apps, mapped to plain marks.
_SAME = str.maketrans({
    "′": "'", "’": "'", "‘": "'", "´": "'", "`": "'", "ʹ": "'",
    "″": '"', "“": '"', "”": '"', "ʺ": '"',
    "º": "°", "˚": "°", "−": "-", "–": "-",
})
_TOKEN = re.compile(r"""
    (?P<num>\d+(?:\.\d*)?|\.\d+)
  | (?P<sign>[-+])
  | (?P<deg>°)
  | (?P<min>')
  | (?P<sec>")
  | (?P<word>[a-z]+)
  | (?P<space>\s+)
""", re.VERBOSE | re.IGNORECASE)
_WORDS = {
    "deg": ("d", "deg", "degs", "degree", "degrees"),
    "min": ("m", "min", "mins", "minute", "minutes"),
    "sec": ("sec", "secs", "second", "seconds"),  # a lone s is south or seconds: see parse_angle
    "hemi": ("n", "s", "e", "w", "north", "south", "east", "west"),
}
_KIND_OF = {w: k for k, words in _WORDS.items() for w in words}


def _words(word: str) -> list[tuple[str, str]] | None:
    """A run of letters as marks: one known word, or a unit glued to a hemisphere
    ("sN" in 45d19m5.5sN); None if neither."""
    w = word.lower()
    if w in _KIND_OF:
        return [(_KIND_OF[w], word)]
    for cut in range(1, len(w)):
        a, b = w[:cut], w[cut:]
        if _KIND_OF.get(a) in ("deg", "min", "sec", "hemi") and _KIND_OF.get(b) == "hemi":
            return [(_KIND_OF[a], word[:cut]), ("hemi", word[cut:])]
    return None


_PART = {"deg": 0, "min": 1, "sec": 2}
_NAMES = ("degrees", "minutes", "seconds")


def _kind(kind: str) -> tuple[str, str, float]:
    try:
        return KINDS[kind]
    except KeyError:
        raise ValueError(f"kind must be latitude or longitude, not {kind!r}") from None


def parse_angle(text: str, kind: str) -> float:
    """A latitude or longitude (``kind``) in decimal degrees, north and east
    positive, from what a user typed.  Raises ValueError with a short reason."""
    pos, neg, limit = _kind(kind)
    if not isinstance(text, str):
        raise ValueError(f"enter the {kind} as text, e.g. 45.3182")
    raw = text.translate(_SAME).strip().replace("''", '"')
    if not raw:
        example = "45.3182 or 45°19′05.5″N" if kind == "latitude" else "-72.6415 or 72°38′29.4″W"
        raise ValueError(f"enter a {kind}, e.g. {example}")
    if "," in raw:
        if re.fullmatch(r"[-+]?\d+,\d+", raw):
            raise ValueError(f"use a point for decimals: {raw.replace(',', '.')}")
        raise ValueError("no commas: one value only, with spaces between degrees, minutes and seconds")

    tokens = []  # (kind, text, start)
    i = 0
    while i < len(raw):
        m = _TOKEN.match(raw, i)
        if m is None:
            raise ValueError(f"unexpected {raw[i]!r}: type degrees, minutes and seconds as numbers, "
                             f"with {pos} or {neg}")
        if m.lastgroup == "word":
            marks = _words(m.group())
            if marks is None:
                raise ValueError(f"unexpected {m.group()!r}: type degrees, minutes and seconds as numbers, "
                                 f"with {pos} or {neg}")
            at = m.start()
            for k, t in marks:
                tokens.append((k, t, at))
                at += len(t)
        elif m.lastgroup != "space":
            tokens.append((m.lastgroup, m.group(), m.start()))
        i = m.end()

    # "45d19m5.5s": after a letter m for minutes, a small s glued to a number is
    # seconds; a capital S (45d19m5.5S, 45 19 5.5 s) stays south.
    letter_minutes = any(k == "min" and t.lower().startswith("m") for k, t, _ in tokens)
    seen_sec = False
    for n, (k, t, at) in enumerate(tokens):
        if k == "sec":
            seen_sec = True
        if k == "hemi" and t == "s" and letter_minutes and not seen_sec and n > 0 \
                and tokens[n - 1][0] == "num" and raw[at - 1:at].isdigit():
            tokens[n] = ("sec", t, at)
            seen_sec = True

    hemis = [(n, t) for n, (k, t, _) in enumerate(tokens) if k == "hemi"]
    if len(hemis) > 1:
        raise ValueError(f"give {pos} or {neg} once")
    hemi = None
    if hemis:
        n, t = hemis[0]
        hemi = t[0].upper()
        if hemi not in (pos, neg):
            raise ValueError(f"use {pos} or {neg} for a {kind}")
        if n not in (0, len(tokens) - 1):
            raise ValueError(f"put {pos} or {neg} before or after the number, not inside it")
        del tokens[n]

    sign = None
    if tokens and tokens[0][0] == "sign":
        sign = tokens.pop(0)[1]
    if any(k == "sign" for k, _, _ in tokens):
        raise ValueError("a sign goes only at the start")
    if sign is not None and hemi is not None and (sign == "-") != (hemi == neg):
        raise ValueError(f"the sign and {hemi} say different things: use one of them")

    parts: list[float | None] = [None, None, None]
    texts = ["", "", ""]
    slot = 0  # the part a number without a mark fills: the one after the last
    k = 0
    while k < len(tokens):
        what, t, _ = tokens[k]
        if what != "num":
            raise ValueError(f"{t!r} must follow a number")
        mark = tokens[k + 1][0] if k + 1 < len(tokens) and tokens[k + 1][0] in _PART else None
        idx = _PART[mark] if mark else slot
        if idx > 2:
            raise ValueError("too many numbers: give degrees, minutes and seconds at most")
        if idx < slot or parts[idx] is not None:
            raise ValueError("give degrees, then minutes, then seconds")
        if idx > 0 and parts[idx - 1] is None:
            raise ValueError(f"give {_NAMES[idx - 1]} before {_NAMES[idx]}")
        parts[idx], texts[idx] = float(t), t
        slot = idx + 1
        k += 2 if mark else 1
    if parts[0] is None:
        raise ValueError(f"enter the {kind}'s degrees")
    for idx in range(2):
        if parts[idx + 1] is not None and "." in texts[idx]:
            raise ValueError(f"only the last part may have decimals: whole {_NAMES[idx]} before the "
                             f"{_NAMES[idx + 1]}")
    deg, minutes, seconds = (p or 0.0 for p in parts)
    if minutes >= 60:
        raise ValueError("minutes must be below 60")
    if seconds >= 60:
        raise ValueError("seconds must be below 60")
    value = deg + minutes / 60.0 + seconds / 3600.0
    if sign == "-" or hemi == neg:
        value = -value
    if not -limit <= value <= limit:
        raise ValueError(f"{kind} must be within -{limit:g} to {limit:g}")
    return value


def format_dms(value: float, kind: str) -> str:
    """``value`` (decimal degrees) as degrees, minutes and seconds to 0.1″ with the
    hemisphere letter, e.g. 45°19′05.5″N (what a GPS shows; reads back with
    parse_angle to within 0.05″)."""
    pos, neg, limit = _kind(kind)
    if not (isinstance(value, (int, float)) and math.isfinite(value) and -limit <= value <= limit):
        raise ValueError(f"{kind} must be within -{limit:g} to {limit:g}")
    tenths = round(abs(value) * 36000.0)  # whole tenths of an arcsecond: no 60.0″ after rounding
    deg, rest = divmod(tenths, 36000)
    minutes, tenth_s = divmod(rest, 600)
    hemi = neg if value < 0 and tenths else pos
    return f"{deg}°{minutes:02d}′{tenth_s // 10:02d}.{tenth_s % 10}″{hemi}"
