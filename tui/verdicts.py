"""How a verdict reads in the terminal: a word and a glyph that say it without
colour, and an Okabe & Ito hue (2008) that says it at a glance."""

from __future__ import annotations

from rich.text import Text

from survey.api import palette

# The engine's verdict hues (survey/palette.py, VERDICT), the same the report uses.
STYLE = {k: f"bold {palette.hex_code(v)}" for k, v in palette.VERDICT.items()}
STYLE_ON_LIGHT = {k: f"bold {palette.hex_code(v)}" for k, v in palette.VERDICT_ON_LIGHT.items()}
GLYPH = {"qualified": "✓", "marginal": "≈", "not-qualified": "✗"}
WORD = {"qualified": "QUALIFIED", "marginal": "MARGINAL", "not-qualified": "NOT QUALIFIED"}


def verdict_text(verdict: str, big: bool = False, light: bool = False) -> Text:
    word = WORD.get(verdict, verdict.upper())
    label = f"{GLYPH.get(verdict, '?')} {'VERDICT: ' if big else ''}{word}"
    return Text(label, style=(STYLE_ON_LIGHT if light else STYLE).get(verdict, "bold"))
