"""What every terminal drawing shares: the palette as rich colours (taken from
the engine's one palette), a character canvas with braille sub-cells, fitting
text into cells, and the Textual widget base class that redraws on resize."""


from __future__ import annotations

import os

import numpy as np
from rich.cells import cell_len
from rich.text import Span, Text
from textual.widget import Widget

from survey.api import palette

# ---------------------------------------------------------------------------
# Palette: the Okabe & Ito hues of survey/render.py, as rich colours.
# ---------------------------------------------------------------------------


def hex_colour(rgb) -> str:
    """'#rrggbb' of an (r, g, b) tuple of 0..255 values."""
    return "#{:02x}{:02x}{:02x}".format(*(int(round(v)) for v in rgb))


BLUE = hex_colour(palette.BLUE)
SKY_BLUE = hex_colour(palette.SKY_BLUE)
VERMILLION = hex_colour(palette.VERMILLION)
ORANGE = hex_colour(palette.ORANGE)
REDDISH_PURPLE = hex_colour(palette.REDDISH_PURPLE)
BLUISH_GREEN = hex_colour(palette.BLUISH_GREEN)
DOWN_BAR = hex_colour(palette.DOWN_BAR)
# The figures' greys are drawn on white paper; a terminal may be dark or light,
# so the drawings use mid greys that read on either background.
GREY = "#8c8c8c"       # obstruction hatch, rim, silhouette edge, walls
GREY_FAINT = "#6a6a6a"  # sky below the minimum elevation, grid ticks

# ---------------------------------------------------------------------------
# Character canvas
# ---------------------------------------------------------------------------

# Braille dot bits (Unicode U+2800 block): dot (x, y), x = 0..1 across, y = 0..3 down.
BRAILLE_BITS = np.array([[0x01, 0x02, 0x04, 0x40], [0x08, 0x10, 0x20, 0x80]], dtype=np.int32)


def braille_chars(bits: np.ndarray) -> np.ndarray:
    """Braille characters (array of str) for an int array of dot bit masks."""
    return np.vectorize(lambda b: chr(0x2800 + int(b)), otypes=["<U1"])(bits)


class Canvas:
    """A height x width grid of one-cell characters, each with a style number.

    Style 0 is "no style"; other numbers index ``styles`` (rich style strings
    or ``Style`` objects).  :meth:`to_text` joins the rows with "\\n" and, with
    ``colour=False``, carries no style spans at all."""

    def __init__(self, width: int, height: int, styles=None):
        self.width, self.height = int(width), int(height)
        self.chars = np.full((self.height, self.width), " ", dtype="<U1")
        self.style = np.zeros((self.height, self.width), dtype=np.int16)
        self.styles: list = [None] + list(styles or ())

    def style_id(self, style) -> int:
        """The number of ``style`` (added to the table when new); 0 for None."""
        if style is None:
            return 0
        try:
            return self.styles.index(style)
        except ValueError:
            self.styles.append(style)
            return len(self.styles) - 1

    def put(self, row: int, col: int, s: str, style=None, clip: bool = True) -> int:
        """Write ``s`` (one-cell characters) from (row, col); returns the cells
        written.  Characters falling outside the canvas are dropped."""
        if not 0 <= row < self.height:
            return 0
        sid = self.style_id(style)
        n = 0
        for i, ch in enumerate(s):
            c = col + i
            if 0 <= c < self.width:
                self.chars[row, c] = ch
                self.style[row, c] = sid
                n += 1
        return n

    def fill(self, where: np.ndarray, ch, style=None) -> None:
        """Set every cell where the bool array ``where`` is True (``ch`` a str or
        an array of str of the canvas shape)."""
        sid = self.style_id(style)
        if isinstance(ch, str):
            self.chars[where] = ch
        else:
            self.chars[where] = np.asarray(ch)[where]
        self.style[where] = sid

    def to_text(self, colour: bool = True) -> Text:
        lines = ["".join(row) for row in self.chars.tolist()]
        text = Text("\n".join(lines), no_wrap=True, overflow="crop", end="")
        if not colour:
            return text
        spans = []
        stride = self.width + 1  # each line and its "\n"
        for r in range(self.height):
            s = self.style[r]
            if not s.any():
                continue
            # Runs of equal style numbers along the row.
            edges = np.flatnonzero(np.diff(s)) + 1
            starts = np.concatenate([[0], edges])
            ends = np.concatenate([edges, [self.width]])
            for a, b in zip(starts.tolist(), ends.tolist()):
                sid = int(s[a])
                if sid:
                    spans.append(Span(r * stride + a, r * stride + b, self.styles[sid]))
        text.spans = spans
        return text


def fit(s: str, width: int) -> str:
    """``s`` cut (with an ellipsis) or padded with spaces to exactly ``width`` cells."""
    if width <= 0:
        return ""
    if cell_len(s) > width:
        s = s[: max(0, width - 1)] + "\u2026" if width > 1 else s[:1]
    return s + " " * (width - cell_len(s))


def message_text(message: str, width: int, height: int) -> Text:
    """A short message word-wrapped and centred in width x height cells (cut
    when it cannot fit): the "enlarge the window" and placeholder texts."""
    width, height = max(0, int(width)), max(0, int(height))
    if width == 0 or height == 0:
        return Text("\n".join("" for _ in range(height)), end="")
    lines: list[str] = []
    for para in message.split("\n"):
        cur = ""
        for word in para.split():
            while len(word) > width:  # a word longer than the line: split it
                if cur:
                    lines.append(cur)
                    cur = ""
                lines.append(word[:width])
                word = word[width:]
            if not cur:
                cur = word
            elif len(cur) + 1 + len(word) <= width:
                cur += " " + word
            else:
                lines.append(cur)
                cur = word
        lines.append(cur)
    lines = lines[:height]
    top = (height - len(lines)) // 2
    out = [" " * width] * top
    for ln in lines:
        pad = (width - cell_len(ln)) // 2
        out.append(fit(" " * pad + ln, width))
    out += [" " * width] * (height - len(out))
    return Text("\n".join(out), no_wrap=True, overflow="crop", end="")


def too_small(width: int, height: int, need_w: int, need_h: int) -> Text:
    """The message a drawing returns below its minimum size."""
    return message_text(f"enlarge the window (needs {need_w}\u00d7{need_h})", width, height)


# ---------------------------------------------------------------------------
# Widget base
# ---------------------------------------------------------------------------


def colour_allowed(widget: Widget) -> bool:
    """Colour unless the app's console has no colour or NO_COLOR is set
    (https://no-color.org: any non-empty value)."""
    if os.environ.get("NO_COLOR"):
        return False
    try:
        return widget.app.console.color_system is not None
    except Exception:  # no app (e.g. a widget drawn outside one): assume colour
        return True


class DrawingWidget(Widget):
    """A widget that draws one of the terminal drawings at its current size.

    Subclasses keep their latest data in ``self._data`` (None: nothing yet, the
    placeholder shows), set it in their ``show(...)`` and implement
    ``_draw(width, height, colour) -> Text``.  The drawing is cached per size,
    colour setting and data, so a repaint without a change costs nothing."""

    PLACEHOLDER = "no data yet"

    def __init__(self, *, name: str | None = None, id: str | None = None,
                 classes: str | None = None, disabled: bool = False) -> None:
        super().__init__(name=name, id=id, classes=classes, disabled=disabled)
        self._data = None
        self._generation = 0
        self._cache_key = None
        self._cache_text: Text | None = None

    def _set_data(self, data) -> None:
        self._data = data
        self._generation += 1
        self.refresh(layout=True)  # layout too: with ``height: auto`` the size may change

    def clear(self) -> None:
        """Forget the data: the placeholder shows again."""
        self._set_data(None)

    def _draw(self, width: int, height: int, colour: bool) -> Text:  # pragma: no cover
        raise NotImplementedError

    def drawing(self, width: int, height: int, colour: bool | None = None) -> Text:
        """The drawing at ``width`` x ``height`` (the placeholder with no data)."""
        if colour is None:
            colour = colour_allowed(self)
        if self._data is None:
            return message_text(self.PLACEHOLDER, width, height)
        key = (width, height, colour, self._generation)
        if key != self._cache_key:
            self._cache_text = self._draw(width, height, colour)
            self._cache_key = key
        return self._cache_text

    def preferred_height(self, width: int) -> int:
        """Rows the drawing wants at this width, for ``height: auto`` in the
        stylesheet (the app's tcss sets the real size; this is the fallback)."""
        return 12

    def get_content_height(self, container, viewport, width: int) -> int:
        return self.preferred_height(width)

    def render(self) -> Text:
        w, h = self.size.width, self.size.height
        if w <= 0 or h <= 0:
            return Text("")
        return self.drawing(w, h)

    def on_resize(self) -> None:
        self.refresh()
