"""The first screen when no site is given: start a new site, open a copy of a
demo site, or open a site file."""

from __future__ import annotations

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.screen import Screen
from textual.widgets import Footer, OptionList, Static
from textual.widgets.option_list import Option

from ..demos import demo_sites


class StartScreen(Screen):
    BINDINGS = [
        Binding("n", "choose('new')", "New site"),
        Binding("o", "choose('open')", "Open file"),
        Binding("b", "choose('batch')", "Open a batch"),
        Binding("f1", "app.safety", "Safety"),
        Binding("ctrl+q", "app.quit", "Quit"),
    ]

    def compose(self) -> ComposeResult:
        with Vertical(id="start"):
            yield Static("leosite · sky survey for a low-orbit terminal", markup=False, id="start-title")
            yield Static("Pick with ↑ ↓ and Enter (or click).", classes="hint")
            options = [Option("＋ Start a new site", id="new"), None]
            for i, demo in enumerate(demo_sites()):
                options.append(Option(f"◇ Demo: {demo.name} — {demo.blurb}", id=f"demo-{i}"))
            options += [None, Option("… Open a site file (site.toml)", id="open"),
                        Option("… Open a batch: results CSV or site register (read-only)", id="batch")]
            yield OptionList(*options, id="start-options")
            yield Static("Demo sites open as a copy in ./leosite-sites, so the bundled files stay as they are.",
                         classes="hint")
        yield Footer()

    def on_mount(self) -> None:
        self.query_one(OptionList).focus()

    def on_option_list_option_selected(self, event: OptionList.OptionSelected) -> None:
        event.stop()
        self.action_choose(event.option.id)

    def action_choose(self, what: str) -> None:
        if what == "new":
            self.app.action_new_site()
        elif what == "open":
            self.app.action_open_site()
        elif what == "batch":
            from .batch_list import check_batch_path, open_batch
            from .dialogs.ask_text import AskText

            self.app.push_screen(AskText("Open a batch's results", "", "A results CSV or a site register "
                                         "(leosite batch --out / --db); nothing in it is changed.", check_batch_path,
                                         placeholder="results.csv or register.sqlite"),
                                 lambda text: open_batch(self.app, text))
        elif what.startswith("demo-"):
            self.app.open_demo(demo_sites()[int(what.removeprefix("demo-"))])
