"""The workspace: one open site, its five tabs, the status line above them
and the keys that work here below.

The app reaches the tabs through the named methods here only (``load``,
``edited_site``, ``show_run``, ``show_ranking``, ``set_status`` ...): it says
what to show, the workspace knows which tab shows it.  Tabs still report edits
to the app with their messages, which pass through here.  The Horizon tab's CSV
import (the file asked for, read, put into the table) is done here too."""

from __future__ import annotations

from dataclasses import replace
from pathlib import Path

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.screen import Screen
from textual.widgets import Footer, ProgressBar, TabbedContent, TabPane

from survey.api import InputError, read_horizon_csv, site_photo_skyline

from ..fields import apply_fields, new_site_defaults
from ..panes.findings import FindingsPane
from ..panes.horizon_editor import HorizonEditor
from ..panes.site_form import SiteForm
from ..panes.sky_view import SkyView
from ..panes.spots_view import SpotsView
from ..widgets.status import StatusLine
from .dialogs import AskChoice, AskText

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
        self._progress.display = False

    # ---------------------------------------------------------------- the tabs
    @property
    def _form(self) -> SiteForm:
        return self.query_one(SiteForm)

    @property
    def _editor(self) -> HorizonEditor:
        return self.query_one(HorizonEditor)

    @property
    def _findings(self) -> FindingsPane:
        return self.query_one(FindingsPane)

    @property
    def _spots(self) -> SpotsView:
        return self.query_one(SpotsView)

    @property
    def _progress(self) -> ProgressBar:
        return self.query_one("#progress", ProgressBar)

    def action_show_tab(self, tab: str) -> None:
        self.query_one("#tabs", TabbedContent).active = tab
        self.focus_tab(tab)

    def focus_tab(self, tab: str) -> None:
        if tab == "horizon":
            self.query_one("#points").focus()
        elif tab == "site":
            self._form.focus_first_problem()
        elif tab == "spots":
            self.query_one("#ranking").focus()
        elif tab == "findings":
            self._findings.focus()

    def on_tabbed_content_tab_activated(self, event: TabbedContent.TabActivated) -> None:
        if event.pane.id == "spots" and self._spots.ranking is None:
            self.app.spots_tab_opened(self._spots.years)

    # ---------------------------------------------------------------- the status line
    def set_status(self, **values) -> None:
        """Set status line fields (site_name, saved, state, verdict, blocked, ...)."""
        status = self.query_one(StatusLine)
        for k, v in values.items():
            setattr(status, k, v)

    def show_progress(self, fraction: float) -> None:
        bar = self._progress
        bar.display = True
        bar.update(progress=100 * fraction)
        self.set_status(state=f"computing sky tracks {100 * fraction:.0f} % (Esc cancels)")

    def hide_progress(self) -> None:
        self._progress.display = False

    # ---------------------------------------------------------------- the site
    def load(self, site, new_name: str = "", declination: tuple[float | None, str] = (None, "")) -> None:
        """A site opened: the form, the horizon table and the status line show
        ``site``, at ``declination`` (degrees or None, and a note).  A new site
        (None) gets the defaults the engine would assume, shown, and today's
        date, named ``new_name``; the Site tab opens for its coordinates."""
        form, editor = self._form, self._editor
        form.load(site)
        if site is None:
            for key, text in new_site_defaults(new_name).items():
                form.prefill(key, text)
        self.show_refused()
        if site is not None:
            editor.set_frame(site)
            editor.load(site.horizon, *declination, photo_spec=site.photo)
            editor.set_min_elevation(site.terminal.min_elevation_deg)
        else:
            editor.load(editor.profile, None)
        self.set_status(site_name=site.name if site else "", saved="" if site is None else "saved")
        if site is None:
            self.action_show_tab("site")
            self.set_status(state="stale: enter the site's name and coordinates")
        else:
            self.action_show_tab("findings")

    def show_site(self, site) -> None:
        """A site changed outside the form (a spot chosen): the form shows it."""
        self._form.load(site)

    def edited_site(self, base, path):
        """The site as the Site and Horizon tabs read now (the form's fields
        applied to ``base``, the horizon table's points), or None while a field
        is refused (the status line says which).  A value the site cannot take
        raises TypeError, ValueError or KeyError."""
        form = self._form
        if form.problems:
            self.set_status(state=f"stale: fix {form.first_problem_label()}", saved="unsaved")
            return None
        site = apply_fields(form.values, base, path)  # as the fields read now (a chosen spot reloads them)
        self._editor.set_frame(site)
        return replace(site, horizon=self._editor.profile, photo=self._editor.photo_spec)

    def refused_fields(self) -> list[tuple[str, str]]:
        """Each refused field of the Site tab as (label, reason)."""
        return self._form.refused()

    def form_problem(self) -> str | None:
        """The first refused field as 'Label: reason' (the form is the one record)."""
        return self._form.first_problem()

    def show_refused(self) -> None:
        """The Findings tab says which refused fields hold the assessment up."""
        self._findings.show_held(self.refused_fields())

    def on_site_form_changed(self, event: SiteForm.Changed) -> None:
        """Not stopped: the app takes the edit on from here."""
        self.show_refused()
        self.set_status(site_name=self._form.values.get("site.name") or "")  # as typed, even before it is valid
        if self.form_problem():
            self.set_status(state=f"stale: fix {self._form.first_problem_label()}", saved="unsaved")

    def set_declination(self, declination_deg: float | None, note: str = "") -> None:
        """The declination the horizon table turns magnetic bearings by."""
        self._editor.set_declination(declination_deg, note)

    def set_min_elevation(self, deg: float) -> None:
        self._editor.set_min_elevation(deg)

    def import_horizon(self, folder: Path) -> None:
        """Ask for a CSV file of horizon points (a relative name is taken from
        ``folder``) and put them into the table: an edit, as if typed."""

        def answered(text) -> None:
            if not text:
                return
            path = Path(text).expanduser()
            if not path.is_absolute():
                path = folder / path
            try:
                points = read_horizon_csv(path)
            except InputError as exc:
                self.app.notify("\n".join(exc.problems[:4]), title="Horizon CSV not imported", severity="error",
                                timeout=10)
                return
            editor = self._editor
            if not editor.profile.points:
                editor.replace_points(points, append=False)
                self.app.notify(f"Imported {len(points)} points from {path}")
                return

            def how(answer) -> None:
                if answer in ("replace", "append"):
                    editor.replace_points(points, append=answer == "append")
                    self.app.notify(f"Imported {len(points)} points from {path} ({answer}d)")

            self.app.push_screen(AskChoice(f"{len(points)} points read from {path.name}",
                                           [("replace", "Replace the table"), ("append", "Add to the end"),
                                            ("cancel", "Cancel")],
                                           f"The table holds {len(editor.profile.points)} points.  Bearings are "
                                           f"taken as {editor.profile.reference} like the table's."), how)

        self.app.push_screen(AskText("Import horizon points from a CSV file", "",
                                     "Columns azimuth_deg,elevation_deg[,distance_m][,label]; relative names are "
                                     f"taken from {folder}", placeholder="horizon.csv"), answered)

    # ---------------------------------------------------------------- findings
    def show_run(self, run) -> None:
        """A new assessment: the status line, every tab, and the horizon table's
        declination (the run's own, for magnetic bearings)."""
        self.hide_progress()
        a = run.assessment
        self.set_status(verdict=a.verdict, blocked=a.blocked_fraction, interruption=a.interruption,
                        availability=a.availability, state="")
        self._findings.show_run(run)
        self.query_one(SkyView).show_run(run)
        self._spots.show_run(run)
        photo = site_photo_skyline(run.site, run.declination)
        self._editor.set_photo(None if photo is None else (photo.az_deg, photo.el_deg))
        if run.site.horizon.reference == "magnetic":
            self.set_declination(run.declination.declination_deg, "; ".join(run.declination.warnings))

    def show_advice(self, advice: list[dict]) -> None:
        self._findings.show_advice(advice)

    def show_findings(self, run, advice: list[dict]) -> None:
        """The Findings tab drawn again (the verdict's hue follows the theme)."""
        self._findings.show_run(run)
        self._findings.show_advice(advice)

    # ---------------------------------------------------------------- spots
    def show_ranking(self, run, ranking) -> None:
        self._spots.show_ranking(run, ranking)

    def ranking_for(self, run):
        """The Spots tab's ranking when it ranks ``run`` the way the report
        would (trees as they are now), else None."""
        return self._spots.ranking_of(run)
