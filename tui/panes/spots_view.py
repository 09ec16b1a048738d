"""Spots tab: the site plan from above, the candidate spots ranked, and a way
to make the chosen spot the site's mount."""

from __future__ import annotations

from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.message import Message
from textual.widgets import DataTable, Static

from survey.api import length_number, pct, pole_text, spot_note

from ..widgets.phrases import Phrases
from ..widgets.planchart import PlanChart

GROWTH_STEPS = (0.0, 5.0, 10.0)


class SpotsView(Vertical):
    BINDINGS = [
        Binding("r", "rank", "Rank spots"),
        Binding("g", "growth", "Tree growth"),
        Binding("u", "use_spot", "Use as mount"),
        Binding("b", "back_to_survey_point", "Mount at survey point"),
    ]

    class UseSpot(Message):
        """Make this candidate the site's mount."""

        def __init__(self, result):
            super().__init__()
            self.result = result

    class UseSurveyPoint(Message):
        """Put the mount back at the survey point, on the measured horizon."""

    class RankRequested(Message):
        def __init__(self, years: float):
            super().__init__()
            self.years = years

    def __init__(self, **kw):
        super().__init__(**kw)
        self.ranking = None
        self.ranked = None  # the run the ranking is of
        self.run = None
        self.rows: list = []
        self.years = 0.0

    def compose(self) -> ComposeResult:
        yield Phrases(id="spots-head", classes="hint")
        with Vertical(id="spots-body"):  # the ranking across the top: every column fits from 80 columns
            yield DataTable(id="ranking", cursor_type="row", zebra_stripes=True)
            with Horizontal(id="spots-lower"):
                yield PlanChart(id="plan")
                with VerticalScroll(id="spots-side"):
                    yield Static("", markup=False, id="spots-notes", classes="hint")

    def on_mount(self) -> None:
        self._head()

    def _head(self, extra: str = "") -> None:
        has_plan = self.run is not None and self.run.site.plan is not None and self.run.site.plan.has_candidates
        if self.run is not None and not has_plan:
            phrases = ("This site has no plan with candidate spots.",
                       "To rank where to mount, add a [plan] to the site file",
                       "(obstacles, mounting areas, poles; see the README).")
        else:
            back = self.run is not None and self.run.site.mount.at
            phrases = ("r: rank", f"g: tree growth ({self.years:g} years)",
                       "u or ⏎: use the selected spot as the mount", "b: back to the survey point" if back else "",
                       extra)
        self.query_one("#spots-head", Phrases).show(*phrases)
        self.query_one("#spots-body").display = self.run is None or has_plan

    def show_run(self, run) -> None:
        """A new assessment: an earlier ranking is out of date."""
        changed = self.run is None or run.site.plan != self.run.site.plan or run.tracks is not self.run.tracks
        self.run = run
        if changed and self.ranking is not None:
            self.ranking = None
            self._head("(site changed: press r to rank again)")
        else:
            self._head()

    def show_ranking(self, run, ranking) -> None:
        self.run, self.ranking, self.ranked = run, ranking, run
        table = self.query_one("#ranking", DataTable)
        table.clear(columns=True)
        table.add_columns("Spot", "Blocked", "H m", "Interr.", "Kind", "E m", "N m")  # what matters first
        self.rows = ranking.best_of_each()
        for r in self.rows:
            c = r.candidate
            table.add_row(Text(c.name), pct(r.blocked_fraction), length_number(c.height_m), pct(r.interruption),
                          c.kind, length_number(c.east_m), length_number(c.north_m))
        sp = ranking.survey_point
        notes = [f"Survey point ({sp['height_m']:g} m, measured horizon): blocked {pct(sp['blocked_fraction'])}."]
        notes += [f"Pole {pole_text(p)}" for p in ranking.poles]
        for y, r in ranking.over_time[1:]:
            notes.append(f"Best spot after {y:g} years of growth: blocked {pct(r.blocked_fraction)}.")
        notes += [f"! {w}" for w in ranking.warnings]
        notes.append(spot_note(run.site.mount.kind))
        self.query_one("#spots-notes", Static).update(Text("\n".join(notes)))
        self._head(f"{len(ranking.results):,} candidate positions ranked; the best of each spot listed")
        self._show_plan()
        if self.rows:
            table.move_cursor(row=0)

    def ranking_of(self, run):
        """The ranking shown when it is of ``run`` with the trees as they are
        now (what a report would rank), else None."""
        r = self.ranking
        return r if r is not None and self.ranked is run and r.years == 0 else None

    def _selected(self):
        table = self.query_one("#ranking", DataTable)
        if not self.rows or not 0 <= table.cursor_row < len(self.rows):
            return None
        return self.rows[table.cursor_row]

    def _show_plan(self) -> None:
        if self.run is None or self.ranking is None:
            return
        sel = self._selected()
        at = (sel.candidate.east_m, sel.candidate.north_m) if sel is not None else None
        self.query_one("#plan", PlanChart).show(self.run, self.ranking, selected=at)

    def on_data_table_row_highlighted(self, event: DataTable.RowHighlighted) -> None:
        event.stop()
        self._show_plan()

    def on_data_table_row_selected(self, event: DataTable.RowSelected) -> None:
        event.stop()
        self.action_use_spot()

    def action_rank(self) -> None:
        self.post_message(self.RankRequested(self.years))

    def action_growth(self) -> None:
        i = GROWTH_STEPS.index(self.years) if self.years in GROWTH_STEPS else 0
        self.years = GROWTH_STEPS[(i + 1) % len(GROWTH_STEPS)]
        self._head()
        self.action_rank()

    def action_back_to_survey_point(self) -> None:
        if self.run is not None and self.run.site.mount.at is None:
            self.app.notify("the mount is already at the survey point", timeout=3)
            return
        self.post_message(self.UseSurveyPoint())

    def action_use_spot(self) -> None:
        sel = self._selected()
        if sel is None:
            has_plan = self.run is not None and self.run.site.plan is not None and self.run.site.plan.has_candidates
            self.app.notify("rank the spots first (r), then pick one" if has_plan else
                            "this site has no plan with candidate spots to choose from", timeout=3)
            return
        self.post_message(self.UseSpot(sel))
