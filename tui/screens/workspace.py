"""The workspace: one open site, its five tabs, the status line above them
and the keys that work here below."""

from __future__ import annotations

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.screen import Screen
from textual.widgets import Footer, ProgressBar, TabbedContent, TabPane

from ..panes.findings import FindingsPane
from ..panes.horizon_editor import HorizonEditor
from ..panes.site_form import SiteForm
from ..panes.sky_view import SkyView
from ..panes.spots_view import SpotsView
from ..widgets.status import StatusLine

TABS = (("site", "Site", "f2"), ("horizon", "Horizon", "f3"), ("sky", "Sky", "f4"),
        ("findings", "Findings", "f5"), ("spots", "Spots", "f6"))


class Workspace(Screen):
    BINDINGS = [
        Binding("f1", "app.safety", "Safety"),
        *[Binding(key, f"show_tab('{tab}')", title, show=False) for tab, title, key in TABS],
        Binding("ctrl+r", "app.export", "Report"),
        Binding("ctrl+s", "app.save", "Save", show=False),
        Binding("ctrl+g", "app.reassess", "Re-assess", show=False),
        Binding("escape", "app.cancel_assessment", "Cancel", show=False),
        Binding("ctrl+q", "app.quit", "Quit"),
    ]

    def compose(self) -> ComposeResult:
        with Vertical(id="status-area"):
            yield StatusLine(id="status")
            yield ProgressBar(total=100, show_eta=False, id="progress")
        with TabbedContent(initial="site", id="tabs"):
            for tab, title, key in TABS:
                with TabPane(f"{title} {key.upper()}", id=tab):
                    if tab == "site":
                        yield SiteForm(id="form")
                    elif tab == "horizon":
                        yield HorizonEditor(id="editor")
                    elif tab == "sky":
                        yield SkyView(id="skyview")
                    elif tab == "findings":
                        yield FindingsPane(id="findings-pane")
                    else:
                        yield SpotsView(id="spots-pane")
        yield Footer()

    def on_mount(self) -> None:
        self.query_one("#progress", ProgressBar).display = False

    def action_show_tab(self, tab: str) -> None:
        self.query_one("#tabs", TabbedContent).active = tab
        self.focus_tab(tab)

    def focus_tab(self, tab: str) -> None:
        if tab == "horizon":
            self.query_one("#points").focus()
        elif tab == "site":
            self.query_one(SiteForm).focus_first_problem()
        elif tab == "spots":
            self.query_one("#ranking").focus()
        elif tab == "findings":
            self.query_one(FindingsPane).focus()

    def show_refused(self) -> None:
        """The Findings tab says which refused fields hold the assessment up."""
        self.query_one(FindingsPane).show_held(self.query_one(SiteForm).refused())

    def on_site_form_changed(self, event: SiteForm.Changed) -> None:
        self.show_refused()  # not stopped: the app takes the edit on from here

    def on_tabbed_content_tab_activated(self, event: TabbedContent.TabActivated) -> None:
        if event.pane.id == "spots":
            self.app.spots_tab_opened()
