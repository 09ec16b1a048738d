"""Sky tab: the polar sky chart, sized to the terminal."""

from __future__ import annotations

from textual.app import ComposeResult
from textual.containers import Vertical
from textual.widgets import Static

from ..widgets.frames import front_word, in_body_frame
from ..widgets.skychart import SkyChart


class SkyView(Vertical):
    def compose(self) -> ComposeResult:
        yield SkyChart(id="sky")
        yield Static("", markup=False, id="sky-caption", classes="hint")

    def show_run(self, run) -> None:
        self.query_one("#sky", SkyChart).show(run)
        w = run.window
        if in_body_frame(run.site):  # the engine gives a platform's tracks in its body frame
            front = front_word(run.site)
            where = f"Body frame (bearings from the {front}, elevations above the deck): {front} up"
        else:
            where = "North up, east right"
        self.query_one("#sky-caption", Static).update(
            f"{where}, zenith in the middle.  {len(run.fleet):,} satellite{'' if len(run.fleet) == 1 else 's'} over {w.hours:g} h "
            f"from {w.start:%Y-%m-%d %H:%M} UTC; minimum elevation {run.site.terminal.min_elevation_deg:g}°.")
