"""Findings tab: the verdict and why, the figures, drop-outs with a small
timeline, the costliest obstructions with computed advice, what was assessed,
and the warnings."""

from __future__ import annotations

from rich.console import Group
from rich.table import Table
from rich.text import Text
from textual.app import ComposeResult
from textual.containers import Vertical, VerticalScroll
from textual.widgets import Static

from survey.api import Schedule, SiteRun, only_terrain, pct, route_down_time, terrain_setup
from survey.api import duration as fmt_duration

from ..verdicts import verdict_text
from ..widgets.headingbars import heading_bars
from ..widgets.timeline import OutageStrip


class FindingsPane(VerticalScroll):
    assessed = False  # findings shown yet

    def show_advice(self, advice: list[dict]) -> None:
        """What clearing each costly sector would do (report.recommendations)."""
        adv = Text()
        for item in advice:
            adv.append("→ ", style="bold")
            adv.append(item["text"] + "\n")
        self.query_one("#advice", Static).update(adv)

    def compose(self) -> ComposeResult:
        yield Static("", markup=False, id="held")
        yield Static("Assessing…", markup=False, id="verdict-box")
        with Vertical(id="findings-body"):  # shown from the first findings on
            yield Static("", markup=False, id="figures")
            yield Static("Drop-outs under the scheduling model (UTC)", classes="section")
            yield OutageStrip(id="outages")
            yield Static("", markup=False, id="outage-list")
            yield Static("Platform", classes="section", id="platform-head")
            yield Static("", markup=False, id="platform")
            yield Static("Costliest obstructions", classes="section")
            yield Static("", markup=False, id="sectors")
            yield Static("", markup=False, id="advice")
            yield Static("What was assessed", classes="section")
            yield Static("", markup=False, id="assessed")
            yield Static("", markup=False, id="warnings")

    def on_mount(self) -> None:
        self.query_one("#held").display = self.query_one("#findings-body").display = False

    def show_held(self, refused: list[tuple[str, str]]) -> None:
        """What holds the assessment up: each refused field of the Site tab
        ``(label, reason)``, and the way there; [] when nothing does."""
        held = self.query_one("#held", Static)
        held.display = bool(refused)
        self.query_one("#verdict-box").display = self.assessed or not refused  # never "Assessing…" meanwhile
        if not refused:
            return
        n = len(refused)
        head = Text()
        head.append("✗ Not assessed", style="bold reverse")
        head.append(f": {'a field' if n == 1 else f'{n} fields'} on the Site tab {'is' if n == 1 else 'are'} refused",
                    style="bold")
        fields = Table.grid(padding=(0, 1))
        fields.add_column(style="bold", no_wrap=True)
        fields.add_column(overflow="fold")
        for label, reason in refused:
            fields.add_row(f"  {label}:", reason)
        foot = Text("Press F2 to fix " + ("it on the Site tab (the cursor goes to the field)." if n == 1 else
                                          "them on the Site tab (the cursor goes to the first)."), style="bold")
        if self.assessed:
            foot.append("\nThe findings below are from before the change.", style="dim")
        held.update(Group(head, fields, foot))

    def _show_platform(self, run: SiteRun) -> None:
        """A vehicle or vessel: heading, attitude, and the by-heading bars or the
        down time along the route (the route's timeline is the strip above)."""
        pr = run.platform
        self.query_one("#platform-head").display = self.query_one("#platform").display = pr is not None
        if pr is None:
            return
        p = pr.platform
        text = Text()
        text.append(f"{run.site.mount.kind}: {p.heading_text()}; {p.attitude.text()}\n")
        if p.canyon is not None:
            text.append(f"roadside canyon {p.canyon.name} ({p.canyon.height_m:g} m, road {p.canyon.width_m:g} m)\n")
        if p.route is None:
            text.append("Blocked by heading (the platform held in each 10° sector):\n", style="bold")
            text.append_text(heading_bars([r.blocked_fraction for r in pr.by_heading], 72, 7,
                                          colour=self.app.console.color_system is not None))
        else:
            d = route_down_time(pr, run.assessment, run.window)
            text.append(f"Along the route: {d['distance_km']:.1f} km, down {d['down_minutes']:.1f} min "
                        f"({pct(d['down_share'], 2)}) in {len(d['events'])} outages (the strip above is the "
                        "route's timeline)")
        for row in pr.sea_states:
            text.append(f"\n  {row.name:<9} blocked {pct(row.blocked_fraction, 2):>8}, availability "
                        f"{pct(row.availability, 2):>8}, interruption {pct(row.interruption, 2):>7}")
        self.query_one("#platform", Static).update(text)

    def show_run(self, run: SiteRun) -> None:
        self.assessed = True
        self.query_one("#findings-body").display = self.query_one("#verdict-box").display = True
        s, a, w = run.site, run.assessment, run.window
        box = Text()
        box.append_text(verdict_text(a.verdict, big=True, light=not self.app.current_theme.dark))
        box.append("\n" + a.verdict_reason)
        verdict = self.query_one("#verdict-box", Static)
        verdict.update(box)
        for v in ("qualified", "marginal", "not-qualified"):
            verdict.set_class(a.verdict == v, f"verdict-{v}")

        o = a.outage_summary(run.tracks)
        fig = Table.grid(padding=(0, 2))
        fig.add_column(justify="left", style="bold")
        fig.add_column(justify="right")
        fig.add_column(justify="left")
        fig.add_row("Blocked", pct(a.blocked_fraction, 2), "of the usable sky samples")
        fig.add_row("Availability", pct(a.availability, 2), "of the time an unblocked satellite is in view")
        fig.add_row("Interruption", pct(a.interruption, 2),
                    f"of the time down (scheduling period {s.schedule.reassign_s:g} s)")
        fig.add_row("Drop-outs", f"{o['count_per_day']:.1f}/day",
                    f"{o['minutes_per_day']:.1f} min a day, longest {fmt_duration(o['longest_s'])}")
        self.query_one("#figures", Static).update(fig)

        self.query_one("#outages", OutageStrip).show(w.start, w.hours, w.step_s, a.down)
        longest = sorted(o["events"], key=lambda e: -e["duration_s"])[:5]
        lines = Text()
        if longest:
            lines.append("Longest: ")
            lines.append(", ".join(f"{e['start'][11:19]} ({fmt_duration(e['duration_s'])})" for e in longest))
        outage_list = self.query_one("#outage-list", Static)
        outage_list.update(lines)
        outage_list.display = bool(longest)

        self._show_platform(run)
        if a.sectors:
            t = Table(box=None, padding=(0, 1), show_edge=False, header_style="bold")
            t.add_column("Azimuths (from the bow)" if run.platform is not None else "Azimuths (true)")
            t.add_column("Peak", justify="right")
            t.add_column("Share", justify="right")
            t.add_column("If cleared", justify="right")
            t.add_column("Labels", overflow="fold")
            for sec in a.sectors[:8]:
                t.add_row(f"{sec.from_deg:5.1f}°–{sec.to_deg:5.1f}°", f"{sec.peak_elevation_deg:.1f}°",
                          pct(sec.blocked_share),
                          "cannot" if only_terrain(sec) else pct(sec.blocked_fraction_if_cleared),
                          Text(", ".join(sec.labels) or "(unlabelled)"))
            self.query_one("#sectors", Static).update(t)
        else:
            self.query_one("#sectors", Static).update("Nothing above the minimum elevation blocks a satellite.")
        self.query_one("#advice", Static).update(Text("Working out what clearing each obstruction would do…"
                                                      if a.blocked_samples else "", style="dim"))

        groups = ", ".join(f"{k} {v}" for k, v in run.fleet.groups.items())
        assessed = Text()
        assessed.append(f"Window  {w.start:%Y-%m-%d %H:%M} UTC, {w.hours:g} h at {w.step_s:g} s "
                        f"({w.count:,} samples)\n")
        assessed.append(f"Satellites  {len(run.fleet):,}: {groups}"
                        + (" — illustrative shells, not a real constellation" if run.fleet.illustrative else "")
                        + "\n")
        sky = f"above {s.terminal.min_elevation_deg:g}°"
        if s.terminal.scan_half_angle_deg:
            sky += f", within {s.terminal.scan_half_angle_deg:g}° of the boresight"
        assessed.append(f"Usable sky  {sky}; {a.usable_samples:,} samples, {a.blocked_samples:,} blocked\n")
        assessed.append(f"Scheduling period  {s.schedule.reassign_s:g} s: a setting, default "
                        f"{Schedule().reassign_s:g} s; set it to what your network uses "
                        "(the site file's [schedule] reassign_s)\n")
        assessed.append(f"Compass  declination {run.declination.declination_deg:+.2f}° (WMM2025); bearings "
                        + ("magnetic, turned to true" if s.horizon.reference == "magnetic" else "true"))
        for label, value in terrain_setup(run.mask):  # the elevation model, with [terrain]
            assessed.append(f"\n{label}  {value}")
        self.query_one("#assessed", Static).update(assessed)
        warn = Text()
        if run.warnings:
            warn.append("Warnings\n", style="bold")
            for msg in run.warnings:
                warn.append(f"! {msg}\n")
        self.query_one("#warnings", Static).update(warn)
