"""The leosite text UI: the app, its keys and commands, and the wiring between
the tabs and the engine.

Flow: a tab reports an edit -> the app builds the new site (only from valid
values) -> it is saved a moment later (atomically) and assessed in a worker
thread, reusing the cached sky tracks -> every tab and the status line show the
new findings.  The app reaches the tabs only through the workspace's methods
(screens/workspace.py).  Errors become messages in the app, never tracebacks, and leave
the open site as it was."""

from __future__ import annotations

import time
from dataclasses import replace
from datetime import datetime, timezone
from pathlib import Path

from textual import work
from textual.app import App, SystemCommand
from textual.binding import Binding
from textual.worker import get_current_worker

from survey.api import (
    InputError,
    palette,
    recommendations,
    site_declination,
    write_report,
)

from .demos import bundled_demo, copy_demo
from .panes.horizon_editor import HorizonEditor
from .panes.site_form import SiteForm
from .panes.spots_view import SpotsView
from .screens.dialogs import (
    AskChoice,
    AskText,
    ExportReport,
    SafetyNote,
    check_new_site_path,
    check_site_path,
    names_a_file,
    new_site_path,
    site_file_in,
)
from .screens.start import StartScreen
from .screens.workspace import Workspace
from .session import Assessor, Cancelled, Session, fleet_choice_for, slug

AUTOSAVE_S = 1.5  # a killed terminal loses at most this much typing
FORM_SETTLE_S = 0.5  # a form edit is taken once typing pauses this long


class LeositeApp(App):
    CSS_PATH = "leosite.tcss"
    TITLE = "leosite"
    ENABLE_COMMAND_PALETTE = True
    BINDINGS = [
        Binding("ctrl+q", "quit", "Quit", priority=True),
        Binding("f1", "safety", "Safety"),
        Binding("ctrl+t", "toggle_daylight", "Day/night", show=False),
    ]

    def get_css_variables(self) -> dict[str, str]:
        """The stylesheet's colours that carry a meaning come from the engine's one
        palette (``$verdict-qualified`` ... in leosite.tcss), not typed out there."""
        hues = {f"verdict-{k}": palette.hex_code(v) for k, v in palette.VERDICT.items()}
        return {**super().get_css_variables(), **hues}

    def __init__(self, site_path: str | Path | None = None, assessor: Assessor | None = None,
                 work_root: str | Path | None = None):
        super().__init__()
        self.site_path = Path(site_path) if site_path is not None else None
        self.assessor = assessor or Assessor()
        self.work_root = Path(work_root) if work_root is not None else Path.cwd() / "leosite-sites"
        self.session: Session | None = None
        self.latest = None  # the last SiteRun shown
        self._assessed = None  # the site it was made from
        self.advice: list[dict] = []
        self._save_timer = None
        self._form_timer = None
        self._new_name = ""
        self._edited_at: float | None = None
        self.update_times: list[float] = []  # seconds from an edit to its findings drawn
        self._generation = 0

    def notify(self, message: str, *, markup: bool = False, **kw) -> None:
        """Messages carry file names and typed labels: never read them as markup."""
        super().notify(message, markup=markup, **kw)

    # ---------------------------------------------------------------- start
    def on_mount(self) -> None:
        self.push_screen(StartScreen())
        if self.site_path is not None:
            self.open_site(self.site_path)

    @property
    def workspace(self) -> Workspace | None:
        return self.screen if isinstance(self.screen, Workspace) else next(
            (s for s in self.screen_stack if isinstance(s, Workspace)), None)

    def open_site(self, path: Path) -> bool:
        demo = bundled_demo(path)
        if demo is not None:  # edits autosave: never into the bundled demo files
            self.open_demo(demo)
            return self.session is not None
        try:
            session = Session.open(path)
        except InputError as exc:
            self.notify("\n".join(exc.problems[:4]), title="Cannot open the site", severity="error", timeout=10)
            return False
        self._enter(session)
        return True

    def open_demo(self, demo) -> None:
        try:
            path = copy_demo(demo, self.work_root)
        except OSError as exc:
            self.notify(f"{self.work_root}: cannot copy the demo site: {exc.strerror}", severity="error")
            return
        if self.open_site(path):
            self.notify(f"Working on a copy: {path}", timeout=6)

    def _enter(self, session: Session, name: str = "") -> None:
        self.session = session
        self._new_name = name
        self.latest = None  # the last SiteRun shown
        self._assessed = None  # the site it was made from
        self.advice = []
        ws = Workspace()
        if self.workspace is not None:
            self.switch_screen(ws)
        else:
            self.push_screen(ws)
        self.call_after_refresh(self._load_workspace)

    def _load_workspace(self) -> None:
        site = self.session.site
        self.workspace.load(site, self._new_name, self._declination(site) if site is not None else (None, ""))
        if site is not None:
            self.request_assessment()

    def _declination(self, site) -> tuple[float | None, str]:
        """The declination the assessment will use: at the window's start by the
        engine's one rule (the session's --start, else the site's [window], else
        today: survey/window.py)."""
        try:
            d = site_declination(site, self.assessor.start)
        except Exception as exc:  # a model failure must not take the editor down
            return None, f"declination unavailable: {exc}"
        return d.declination_deg, "; ".join(d.warnings)

    # ---------------------------------------------------------------- edits
    @property
    def _form_problem(self) -> str | None:
        """The first refused field as 'Label: reason' (the form is the one record)."""
        ws = self.workspace
        return ws.form_problem() if ws is not None else None

    def on_site_form_changed(self, event: SiteForm.Changed) -> None:
        """Typing in a field: the field is checked at once (by the form, and the
        workspace shows it); the site follows once typing pauses, so half-typed
        numbers ("9" on the way to "95.5") are never assessed or saved."""
        if self._form_timer is not None:
            self._form_timer.stop()
        self._form_timer = self.set_timer(FORM_SETTLE_S, self._form_settled)

    def _form_settled(self) -> None:
        self._form_timer = None
        self._site_edited()

    def on_horizon_editor_changed(self, event: HorizonEditor.Changed) -> None:
        self._site_edited()

    def _site_edited(self) -> None:
        """Build the site from the form and the horizon table; only a valid one
        goes on to be saved and assessed."""
        ws, base = self.workspace, self.session.site
        try:
            site = ws.edited_site(base, self.session.path)
        except (TypeError, ValueError, KeyError) as exc:
            self._status(state=f"stale: {exc}")
            return
        if site is None or site == base:  # a field refused (the status line says which), or nothing changed
            return
        moved = base is None or (site.latitude_deg, site.longitude_deg, site.elevation_m) != (
            base.latitude_deg, base.longitude_deg, base.elevation_m)
        self.session.update(site)
        if moved:
            ws.set_declination(*self._declination(site))
        ws.set_min_elevation(site.terminal.min_elevation_deg)
        self._status(site_name=site.name, saved="unsaved")
        self._schedule_autosave()
        self._edited_at = time.monotonic()
        self.request_assessment()

    def _schedule_autosave(self) -> None:
        if self._save_timer is not None:
            self._save_timer.stop()
        self._save_timer = self.set_timer(AUTOSAVE_S, self._autosave)

    def _autosave(self) -> None:
        self._save_timer = None
        self.save_now(quiet=True)

    def save_now(self, quiet: bool = False) -> bool:
        if self.session is None or self.session.site is None:
            return False
        if not self.session.dirty:
            return True
        try:
            written = self.session.save()
        except InputError as exc:
            self._status(saved="not saved: see message")
            self.notify(exc.problems[0], title="Could not save", severity="error", timeout=10)
            return False
        self._status(saved=f"saved {time.strftime('%H:%M:%S')}")
        if not quiet:
            self.notify("Saved " + ", ".join(str(p) for p in written), timeout=4)
        return True

    def action_save(self) -> None:
        if self._form_problem:
            self.notify(f"Not saved: {self._form_problem}", severity="warning")
            return
        if self.session is not None and not self.session.dirty:
            self.notify(f"Already saved: {self.session.path}", timeout=3)
            return
        self.save_now()

    # ---------------------------------------------------------------- assessment
    def request_assessment(self) -> None:
        if self.session is None or self.session.site is None:
            return
        self._generation += 1
        self._assess(self.session.site, self._generation)

    @work(thread=True, exclusive=True, group="assess", exit_on_error=False)
    def _assess(self, site, generation: int) -> None:
        worker = get_current_worker()
        started = time.monotonic()

        def progress(fraction: float) -> None:
            if time.monotonic() - started > 0.15:  # a cached re-assessment never shows the bar
                self.call_from_thread(self._progress, generation, fraction)

        try:
            run = self.assessor.run(site, progress, cancelled=lambda: worker.is_cancelled)
            if not worker.is_cancelled:  # the figures first; the what-if advice follows
                self.call_from_thread(self._assess_done, generation, run, site)
            advice = recommendations(run)
        except Cancelled:
            return
        except InputError as exc:
            self.call_from_thread(self._assess_failed, generation, exc.problems)
            return
        except Exception as exc:  # shown, not raised: the open site must survive
            self.call_from_thread(self._assess_failed, generation, [f"unexpected error: {exc!r}"])
            return
        if not worker.is_cancelled:
            self.call_from_thread(self._advice_done, generation, run, advice)

    def _progress(self, generation: int, fraction: float) -> None:
        if generation != self._generation or self.workspace is None:
            return
        self.workspace.show_progress(fraction)

    def _hide_progress(self) -> None:
        if self.workspace is not None:
            self.workspace.hide_progress()

    def _assess_failed(self, generation: int, problems: list[str]) -> None:
        if generation != self._generation:
            return
        self._hide_progress()
        self._status(state="error: findings not updated")
        self.notify("\n".join(problems[:4]), title="Assessment failed", severity="error", timeout=10)

    def _advice_done(self, generation: int, run, advice: list[dict]) -> None:
        if generation != self._generation or self.workspace is None or run is not self.latest:
            return
        self.advice = advice
        self.workspace.show_advice(advice)

    def _assess_done(self, generation: int, run, site) -> None:
        if generation != self._generation or self.workspace is None:
            return
        self.latest, self.advice = run, []
        self._assessed = site  # the site as edited (the run's may carry a --min-elevation override)
        self.workspace.show_run(run)  # the status line and every tab
        if self._edited_at is not None:  # edit to findings on screen, for bench/bench_ui.py
            edited, self._edited_at = self._edited_at, None
            self.call_after_refresh(lambda: self.update_times.append(time.monotonic() - edited))

    def action_cancel_assessment(self) -> None:
        running = [w for w in self.workers if w.group == "assess" and w.is_running]
        if not running:
            return
        self.workers.cancel_group(self, "assess")
        self._generation += 1
        self._hide_progress()
        self._status(state="stale: assessment cancelled (ctrl+g to run it)")

    def action_reassess(self) -> None:
        self.request_assessment()

    def _status(self, **values) -> None:
        if self.workspace is not None:
            self.workspace.set_status(**values)

    # ---------------------------------------------------------------- spots
    def spots_tab_opened(self, years: float) -> None:
        """The Spots tab opened with nothing ranked: rank the plan's spots, if any."""
        if self.latest is not None and self.latest.site.plan is not None:
            self.rank_spots(years)

    def on_spots_view_rank_requested(self, event: SpotsView.RankRequested) -> None:
        self.rank_spots(event.years)

    def rank_spots(self, years: float) -> None:
        if self.latest is None:
            self.notify("wait for the assessment to finish", timeout=3)
            return
        plan = self.latest.site.plan
        if plan is None or not plan.has_candidates:
            self.notify("this site has no plan with candidate spots", severity="warning")
            return
        self._rank(self.latest, years)

    @work(thread=True, exclusive=True, group="spots", exit_on_error=False)
    def _rank(self, run, years: float) -> None:
        from survey.api import rank_spots

        self.call_from_thread(self._status, state="ranking spots…")
        try:
            ranking = rank_spots(run, years=years)
        except InputError as exc:
            self.call_from_thread(self.notify, exc.problems[0], severity="error")
            self.call_from_thread(self._status, state="")
            return
        self.call_from_thread(self._ranked, run, ranking)

    def _ranked(self, run, ranking) -> None:
        self._status(state="")
        if self.workspace is not None:
            self.workspace.show_ranking(run, ranking)

    def on_spots_view_use_spot(self, event: SpotsView.UseSpot) -> None:
        c = event.result.candidate

        def answered(answer) -> None:
            if answer != "use":
                return
            site = self.session.site
            self._set_site(replace(site, mount=replace(site.mount, height_m=c.height_m, at=(c.east_m, c.north_m))))
            self.notify(f"Mount set to {c.name} ({c.east_m:.1f} m E, {c.north_m:.1f} m N, {c.height_m:g} m up); "
                        "findings now use the horizon derived there", timeout=6)

        self.push_screen(AskChoice(
            f"Mount the terminal at {c.name}?",
            [("use", "Use this spot"), ("cancel", "Cancel")],
            f"{c.kind} at {c.east_m:.1f} m east, {c.north_m:.1f} m north, antenna {c.height_m:g} m up.  "
            "The findings will use the horizon the plan gives there; the measured points stay as the "
            "survey-point record."), answered)

    def on_spots_view_use_survey_point(self, event: SpotsView.UseSurveyPoint) -> None:
        site = self.session.site
        mount = replace(site.mount, at=None, height_m=site.horizon_height_m)
        self._set_site(replace(site, mount=mount))
        self.notify(f"Mount back at the survey point, {mount.height_m:g} m up, on the measured horizon", timeout=5)

    def _set_site(self, site) -> None:
        """A site changed outside the form (a spot chosen): show it, save it, assess it."""
        self.session.update(site)
        self.workspace.show_site(self.session.site)
        self._status(saved="unsaved")
        self._schedule_autosave()
        self.request_assessment()

    # ---------------------------------------------------------------- files
    def action_new_site(self) -> None:
        def answered(text) -> None:
            if not text:
                return
            try:
                session = Session.new(new_site_path(text, self.work_root))
            except InputError as exc:
                self.notify(exc.problems[0], severity="error")
                return
            self._enter(session, name="" if names_a_file(text) else text)

        self.push_screen(AskText("New site: its name", "",
                                 f"Kept in {self.work_root}/<name>/site.toml (or type a path ending in "
                                 "site.toml).  The file is written once the site has valid coordinates.",
                                 lambda text: check_new_site_path(text, self.work_root),
                                 placeholder="e.g. Hillside farm"), answered)

    def action_open_site(self) -> None:
        def answered(text) -> None:
            if text:
                self.open_site(site_file_in(Path(text).expanduser()))

        self.push_screen(AskText("Open a site file", "", f"A site.toml file, or its folder (from {Path.cwd()}).",
                                 check_site_path, placeholder="path/to/site.toml"), answered)

    def action_import_horizon(self) -> None:
        if self.session is not None and self.workspace is not None:
            self.workspace.import_horizon(self.session.path.parent)

    def action_load_satellites(self) -> None:
        def answered(text) -> None:
            if not text:
                return
            try:
                choice = fleet_choice_for(Path(text).expanduser())
                fleet = choice.load(datetime.now(timezone.utc))
            except InputError as exc:
                self.notify("\n".join(exc.problems[:4]), title="Satellites not loaded", severity="error",
                            timeout=10)
                return
            if len(fleet) == 0:
                self.notify(f"{text}: no satellites in the file", severity="error")
                return
            self.assessor = self.assessor.with_fleet(choice)
            self.notify(f"Using {len(fleet):,} satellites from {text}")
            self.request_assessment()

        self.push_screen(AskText("Load satellites: element sets (TLE, OMM) or a shell file (.toml)", "",
                                 "The current satellites stay in use if the file cannot be read."), answered)

    # ---------------------------------------------------------------- report
    def action_safety(self) -> None:
        kind = self.session.site.mount.kind if self.session and self.session.site else "fixed"
        self.push_screen(SafetyNote(kind))

    def action_export(self) -> None:
        if self.session is None or self.session.site is None:
            self.notify("open or start a site first", severity="warning")
            return
        if self._form_problem:
            self.notify(f"Fix the site first: {self._form_problem}", severity="warning")
            return
        if self.latest is None or self._assessed != self.session.site:
            self.notify("the findings are not up to date yet: wait for the assessment", severity="warning")
            return
        if not self.session.safety_seen:
            def seen(understood: bool) -> None:
                if understood:
                    self.session.safety_seen = True
                    self._ask_report_path()

            self.push_screen(SafetyNote(self.session.site.mount.kind, before_export=True), seen)
            return
        self._ask_report_path()

    def _ask_report_path(self) -> None:
        last = self.session.reports[-1] if self.session.reports else None
        suggested = last or self.session.path.parent / f"{slug(self.session.site.name)}-report.pdf"

        def answered(answer) -> None:
            if answer is None:
                return
            path, paper = answer
            if not path.exists() or path.resolve() in self.session.reports:
                self._report(path, paper)
                return
            self.push_screen(AskChoice(f"{path.name} already exists", [("keep", "Keep it, pick another name"),
                                                                      ("replace", "Replace it")],
                                       str(path)),
                             lambda a: self._report(path, paper) if a == "replace" else self._ask_report_path())

        self.push_screen(ExportReport(suggested), answered)

    def _report(self, path: Path, paper: str) -> None:
        """Write the report of the findings shown, with the Spots tab's ranking
        when it is of this run (so the engine does not rank the spots again)."""
        ws = self.workspace
        self._write_report(self.latest, path, paper, ws.ranking_for(self.latest) if ws is not None else None)

    @work(thread=True, exclusive=True, group="report", exit_on_error=False)
    def _write_report(self, run, path: Path, paper: str, ranking=None) -> None:
        self.call_from_thread(self._status, state="writing the report…")
        try:
            out = write_report(run, path, paper=paper, ranking=ranking)
        except InputError as exc:
            self.call_from_thread(self.notify, exc.problems[0], title="Report not written", severity="error",
                                  timeout=10)
            self.call_from_thread(self._status, state="")
            return
        self.call_from_thread(self._report_written, out.resolve())

    def _report_written(self, path: Path) -> None:
        self._status(state="")
        if self.session is not None:
            self.session.reports.append(path)
        self.notify(f"Report written to {path}", title="Report", timeout=10)

    # ---------------------------------------------------------------- quit
    def _unsaved_reason(self) -> str | None:
        if self.session is None:
            return None
        if self._form_problem:
            return f"a field is not valid ({self._form_problem}), so the last change cannot be saved"
        if self.session.site is None:
            return "the new site has no valid name and coordinates yet, so nothing is saved"
        return None

    async def action_quit(self) -> None:
        if self._form_timer is not None:  # a form edit still settling is taken now
            self._form_timer.stop()
            self._form_settled()
        reason = self._unsaved_reason()
        if reason is None:
            if self.session is not None and self.session.dirty and not self.save_now(quiet=True):
                reason = "saving failed"
            else:
                self.exit()
                return

        def answered(answer) -> None:
            if answer == "quit":
                self.exit()

        self.push_screen(AskChoice("Quit with unsaved changes?", [("stay", "Stay"), ("quit", "Quit without saving")],
                                   reason[:1].upper() + reason[1:] + "."), answered)

    def action_toggle_daylight(self) -> None:
        """A light, high-contrast theme reads better in sunlight."""
        self.theme = "textual-light" if self.theme != "textual-light" else "textual-dark"
        if self.workspace is not None and self.latest is not None:  # the verdict's hue follows the theme
            self.workspace.show_findings(self.latest, self.advice)

    # ---------------------------------------------------------------- palette
    def get_system_commands(self, screen):
        yield from super().get_system_commands(screen)
        yield SystemCommand("Safety note", "Cautions for roof, ladder and mast work (F1)", self.action_safety)
        yield SystemCommand("New site", "Start a survey from scratch", self.action_new_site)
        yield SystemCommand("Open site", "Open a site.toml file", self.action_open_site)
        if isinstance(screen, Workspace):
            yield SystemCommand("Write report", "PDF, HTML or JSON site report (ctrl+r)", self.action_export)
            yield SystemCommand("Save site", "Write the site file now (ctrl+s)", self.action_save)
            yield SystemCommand("Re-assess", "Run the assessment again (ctrl+g)", self.action_reassess)
            yield SystemCommand("Import horizon CSV", "Read measured points from a CSV file",
                                self.action_import_horizon)
            yield SystemCommand("Photo skyline to points", "Turn the horizon photo into editable points (p)",
                                self.workspace.query_one("#editor").action_photo_to_points)
            yield SystemCommand("Load satellites", "Use element sets (TLE/OMM) or a shell file",
                                self.action_load_satellites)
            yield SystemCommand("Rank mounting spots", "Rank the plan's candidate spots",
                                lambda: self.rank_spots(0.0))
        yield SystemCommand("Day/night colours", "Light theme for sunlight, dark for indoors (ctrl+t)",
                            self.action_toggle_daylight)
