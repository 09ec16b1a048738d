"""A line of short phrases that breaks only between phrases.

A hint such as "Compass bearings.  Declination -13.97° (WMM2025) added" reads
badly when the terminal wraps it in the middle of a phrase.  ``Phrases`` packs
whole phrases onto as few lines as its width allows (two spaces between them);
only a phrase wider than the whole widget is wrapped, at its spaces.  A phrase
``None`` starts a new line."""

from __future__ import annotations

from rich.cells import cell_len
from rich.text import Text
from textual.widget import Widget

GAP = "  "


def pack(phrases, width: int) -> list[str]:
    """``phrases`` (str, or None for a line break) as lines of at most
    ``width`` cells, breaking only between phrases."""
    lines: list[str] = []
    line = ""
    for phrase in phrases:
        if phrase is None:
            lines.append(line)
            line = ""
            continue
        if not phrase:
            continue
        if line and cell_len(line + GAP + phrase) > width:
            lines.append(line)
            line = ""
        line = phrase if not line else line + GAP + phrase
    if line or not lines:
        lines.append(line)
    return lines


class Phrases(Widget):
    """Phrases packed to the widget's width; ``show(*phrases)`` changes them.
    Its height follows the lines (``height: auto`` in the stylesheet)."""

    def __init__(self, *phrases, **kw):
        super().__init__(**kw)
        self.phrases: tuple = phrases

    def show(self, *phrases) -> None:
        if phrases != self.phrases:
            self.phrases = phrases
            self.refresh(layout=True)

    def _text(self, width: int) -> Text:
        return Text("\n".join(pack(self.phrases, max(width, 1))), end="")

    def get_content_height(self, container, viewport, width: int) -> int:
        return len(self._text(width).wrap(self.app.console, max(width, 1)))

    def render(self) -> Text:
        return self._text(self.content_size.width or 80)
