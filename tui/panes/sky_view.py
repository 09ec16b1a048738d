"""Sky tab: the polar sky chart, sized to the terminal."""

from __future__ import annotations

from textual.app import ComposeResult
from textual.containers import Vertical
from textual.widgets import Static

from ..widgets.skychart import SkyChart


class SkyView(Vertical):
    def compose(self) -> ComposeResult:
        yield SkyChart(id="sky")
        yield Static("", markup=False, id="sky-caption", classes="hint")

    def show_run(self, run) -> None:
        self.query_one("#sky", SkyChart).show(run)
        w = run.window
        self.query_one("#sky-caption", Static).update(
            f"North up, east right, zenith in the middle.  {len(run.fleet):,} satellites over {w.hours:g} h "
            f"from {w.start:%Y-%m-%d %H:%M} UTC; minimum elevation {run.site.terminal.min_elevation_deg:g}°.")
