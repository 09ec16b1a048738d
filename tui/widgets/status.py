"""The status line on every tab: the site, its verdict and figures, whether
the findings are current, and whether the site is saved."""

from __future__ import annotations

from rich.text import Text
from textual.reactive import reactive
from textual.widget import Widget

from survey.api import pct

from ..verdicts import verdict_text


class StatusLine(Widget):
    site_name = reactive("")
    verdict = reactive("")
    blocked = reactive(None)
    interruption = reactive(None)
    availability = reactive(None)
    state = reactive("")  # what the findings are: "", "computing 40 %", "stale: ...", "error: ..."
    saved = reactive("")  # "saved 10:31:05", "unsaved", "not saved: ..."

    def render(self) -> Text:
        width = self.size.width or 80
        right = Text()
        if self.state:
            right.append(f" {self.state} ", style="reverse" if self.state.startswith(("stale", "error")) else "bold")
        if self.saved:
            narrow = width < 100 and self.saved.startswith("saved ")
            saved = "saved" if narrow else self.saved  # the time only where there is room
            right.append("  ")
            right.append(saved, style="bold" if saved.startswith(("unsaved", "not saved")) else "dim")
        left = Text()
        if self.verdict:
            left.append_text(verdict_text(self.verdict, light=not self.app.current_theme.dark))
            if self.blocked is not None or self.verdict:
                left.append(f"  blocked {pct(self.blocked)}", style="bold")
                left.append(f"  interr. {pct(self.interruption)}")
                if width >= 100:
                    left.append(f"  avail. {pct(self.availability)}")
        if right.cell_len > width // 2:  # a long state gives way to the name and the verdict
            right.truncate(width // 2, overflow="ellipsis")
        room = width - left.cell_len - right.cell_len - 4
        name = self.site_name or "(new site)"
        if room < len(name):
            name = name[:max(room - 1, 4)] + "…"
        out = Text(" ")
        out.append(name, style="bold")
        out.append("  ")
        out.append_text(left)
        pad = width - out.cell_len - right.cell_len
        out.append(" " * max(pad, 1))
        out.append_text(right)
        out.truncate(width)
        return out
