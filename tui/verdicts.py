"""How a verdict reads in the terminal: a word and a glyph that say it without
colour, and an Okabe & Ito hue (2008) that says it at a glance."""

from __future__ import annotations

from rich.text import Text

# bluish green, orange, vermillion: the same hues the report uses for the verdict; on a
# light background the same hues darkened (about 5:1 contrast on white, WCAG 2.1 AA)
STYLE = {"qualified": "bold #009E73", "marginal": "bold #E69F00", "not-qualified": "bold #D55E00"}
STYLE_ON_LIGHT = {"qualified": "bold #00664A", "marginal": "bold #8A5A00", "not-qualified": "bold #A33C00"}
GLYPH = {"qualified": "✓", "marginal": "≈", "not-qualified": "✗"}
WORD = {"qualified": "QUALIFIED", "marginal": "MARGINAL", "not-qualified": "NOT QUALIFIED"}


def verdict_text(verdict: str, big: bool = False, light: bool = False) -> Text:
    word = WORD.get(verdict, verdict.upper())
    label = f"{GLYPH.get(verdict, '?')} {'VERDICT: ' if big else ''}{word}"
    return Text(label, style=(STYLE_ON_LIGHT if light else STYLE).get(verdict, "bold"))
