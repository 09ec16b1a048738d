"""Horizon tab: the measured points as a table, a one-line entry to add or
change a point, and a live preview of the profile.

An installer reads a compass and a clinometer and types two numbers: ``135 36``
and Enter adds the point and leaves the cursor in the entry for the next one.
A distance and a label may follow (``135 36 35 alders``).  Each point is checked
by the engine's own reader (``horizon.parse_point``)."""

from __future__ import annotations

import re
from dataclasses import replace

from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.message import Message
from textual.widgets import DataTable, Input, Label, Static

from survey.api import HorizonPoint, HorizonProfile, Problems, combined_mask, measured_mask, parse_point, photo_points

from ..screens.dialogs import AskChoice
from ..widgets.frames import axis_names, front_word, in_body_frame
from ..widgets.phrases import Phrases
from ..widgets.profile import HorizonProfile as ProfilePreview

_LEADING_NUMBER = re.compile(r"\s*([+-]?(?:\d+(?:\.\d*)?|\.\d+))(?:[\s,;]+|$)")


def parse_entry(text: str) -> tuple[HorizonPoint | None, str | None]:
    """A point typed as ``bearing elevation [distance] [label words]`` (spaces,
    commas or semicolons between the numbers), or (None, reason)."""
    rest = text.strip()
    if not rest:
        return None, "type a bearing and an elevation, e.g. 135 36"
    numbers = []
    while len(numbers) < 3:
        m = _LEADING_NUMBER.match(rest)
        if not m:
            break
        numbers.append(float(m.group(1)))
        rest = rest[m.end():]
    label = rest.strip()
    if len(numbers) < 2:
        return None, "expected a bearing and an elevation in degrees first, e.g. 135 36"
    if not 0.0 <= numbers[0] <= 360.0:  # a typo, not a bearing: do not wrap it round silently
        return None, f"bearing {numbers[0]:g} is outside 0 to 360 degrees"
    raw = numbers + ([label] if label else [])
    problems = Problems("point")
    point = parse_point(raw, "point", problems)
    if point is None:
        return None, problems.items[0].split(": ", 2)[-1]
    return point, None


class PointEntry(Input):
    """The one-line point entry; a paste of several lines goes to the editor as
    several points instead of keeping only the first line."""

    class PastedLines(Message):
        def __init__(self, text: str):
            super().__init__()
            self.text = text

    def _on_paste(self, event) -> None:
        if len([ln for ln in event.text.splitlines() if ln.strip()]) > 1:
            event.stop()
            event.prevent_default()  # Textual would run Input's own handler too, keeping line 1
            self.post_message(self.PastedLines(event.text))


def entry_text(p: HorizonPoint) -> str:
    parts = [f"{p.azimuth_deg:g}", f"{p.elevation_deg:g}"]
    if p.distance_m is not None:
        parts.append(f"{p.distance_m:g}")
    if p.label:
        parts.append(p.label)
    return " ".join(parts)


def reference_phrases(magnetic: bool, declination_deg: float | None, note: str = "", body: bool = False,
                      front: str = "") -> tuple:
    """The line over the table: which north the bearings use, the declination
    and the key that switches; each phrase fits the table's narrowest width.
    ``body``: a vehicle's or vessel's body-frame bearings (README, "Moving installs"),
    taken from its ``front`` ("bow" or "front"; blank: either)."""
    if body:
        phrases = (f"Body frame: bearings from the {front or 'bow or front'},", "clockwise;",
                   "elevations above the deck.", "No declination added")
    elif magnetic:
        dec = ("Declination: needs valid coordinates" if declination_deg is None else
               f"Declination {declination_deg:+.2f}° (WMM2025) added")
        phrases = ("Compass bearings.", "Key m: use true bearings.", dec)
    else:
        phrases = ("True bearings.", "Key m: use compass bearings.", "No declination added")
    return phrases + ((None, note) if note else ())


class HorizonEditor(Vertical):
    BINDINGS = [
        Binding("a", "add", "Add point"),
        Binding("e", "edit", "Edit"),
        Binding("delete,d", "delete", "Delete"),
        Binding("shift+up", "move(-1)", "Move up", show=False),
        Binding("shift+down", "move(1)", "Move down", show=False),
        Binding("ctrl+z", "undo", "Undo"),
        Binding("i", "import_csv", "Import CSV"),
        Binding("m", "toggle_reference", "Compass/true"),
        Binding("p", "photo_to_points", "Photo to points"),
        Binding("escape", "leave_entry", "Back", show=False),
    ]

    class Changed(Message):
        def __init__(self, profile: HorizonProfile):
            super().__init__()
            self.profile = profile

    def __init__(self, **kw):
        super().__init__(**kw)
        self.profile = HorizonProfile()
        self.declination_deg: float | None = None
        self.body_frame = False  # a vehicle's or vessel's horizon, bearings from the bow (set_frame sets it)
        self.front = ""  # "bow" or "front" in a body frame
        self.declination_note = ""
        self.min_elevation_deg = 25.0
        self.editing: int | None = None  # row being changed through the entry
        self._undo: list[tuple] = []  # (profile, photo spec, photo skyline) before each edit
        self.photo: tuple | None = None  # (true az, el) of the site's photo skyline, under the points
        self.photo_spec = None  # the site's [horizon] photo (None once turned into points)

    def compose(self) -> ComposeResult:
        with Horizontal(id="horizon-body"):
            with Vertical(id="horizon-left"):
                yield Phrases(id="reference", classes="hint")
                table = DataTable(id="points", cursor_type="row", zebra_stripes=True)
                yield table
                with Horizontal(id="entry-row"):
                    yield Label("Add ", id="entry-label")
                    yield PointEntry(placeholder="bearing elevation [distance m] [label]  ⏎", id="entry",
                                     compact=True)
                yield Static("", markup=False, id="entry-msg", classes="field-msg")
            yield ProfilePreview(id="profile")

    def on_mount(self) -> None:
        self._refresh_all()

    # ------------------------------------------------------------- data in/out
    def load(self, profile: HorizonProfile, declination_deg: float | None, note: str = "", photo_spec=None) -> None:
        self.profile = profile
        self.photo_spec = photo_spec
        if photo_spec is None:
            self.photo = None
        self.declination_deg, self.declination_note = declination_deg, note
        self._undo.clear()
        self.editing = None
        self._refresh_all()

    def set_frame(self, site) -> None:
        """Whether ``site``'s bearings are in a vehicle's or vessel's body frame:
        the reference line, the table's bearing column and the preview's
        direction names follow (``widgets.frames``)."""
        body = in_body_frame(site) and site.platform.frame == "body"
        front = front_word(site) if body else ""
        if (body, front) == (self.body_frame, self.front):
            return
        self.body_frame, self.front = body, front
        self.query_one("#profile", ProfilePreview).names = axis_names(site, body)
        if self.is_mounted:
            self._refresh_all(keep_cursor=True)

    def set_declination(self, declination_deg: float | None, note: str = "") -> None:
        if (declination_deg, note) == (self.declination_deg, self.declination_note):
            return  # every assessment reports it; redraw the table only when it moves
        self.declination_deg, self.declination_note = declination_deg, note
        self._refresh_all(keep_cursor=True)

    def set_min_elevation(self, deg: float) -> None:
        if deg == self.min_elevation_deg:
            return
        self.min_elevation_deg = deg
        self._refresh_preview()

    def set_photo(self, photo: tuple | None) -> None:
        """The site's horizon photo skyline ((true azimuths, elevations) or None),
        drawn under the measured points; the points stay editable over it."""
        if photo is None and self.photo is None:
            return
        self.photo = photo
        self._refresh_preview()

    def true_points(self) -> tuple[HorizonPoint, ...]:
        if self.profile.reference == "true" or self.declination_deg is None:
            return self.profile.points
        return self.profile.to_true(self.declination_deg).points

    def _set(self, profile: HorizonProfile, cursor: int | None = None, detach: bool = False) -> None:
        self._undo.append((self.profile, self.photo_spec, self.photo))
        del self._undo[:-50]
        self.profile = profile
        if detach:  # the photo's skyline is now in the points (action_photo_to_points)
            self.photo_spec = self.photo = None
        self._refresh_all(cursor=cursor)
        self.post_message(self.Changed(profile))

    # ------------------------------------------------------------- drawing
    def _refresh_all(self, cursor: int | None = None, keep_cursor: bool = False) -> None:
        table = self.query_one("#points", DataTable)
        old = table.cursor_row
        magnetic = self.profile.reference == "magnetic"
        table.clear(columns=True)
        bearing = f"{self.front.capitalize()}°" if self.body_frame else ("Cmp°" if magnetic else "Az°")
        cols = ["#", bearing] + (["True°"] if magnetic and not self.body_frame else [])
        table.add_columns(*cols, "El°", "Dist m", "Label")
        trues = self.true_points()
        for i, (p, t) in enumerate(zip(self.profile.points, trues)):
            row = [str(i + 1), f"{p.azimuth_deg:g}"]
            if magnetic and not self.body_frame:
                row.append("?" if self.declination_deg is None else f"{t.azimuth_deg:.1f}")
            row += [f"{p.elevation_deg:g}", "" if p.distance_m is None else f"{p.distance_m:g}", Text(p.label)]
            table.add_row(*row)
        n = len(self.profile.points)
        if n:
            row = cursor if cursor is not None else (old if keep_cursor else min(old, n - 1))
            table.move_cursor(row=max(0, min(row, n - 1)))
        self.query_one("#reference", Phrases).show(*reference_phrases(
            magnetic, self.declination_deg, self.declination_note, body=self.body_frame, front=self.front))
        self.query_one("#entry-label", Label).update(
            "Add " if self.editing is None else f"#{self.editing + 1} ")
        self._refresh_preview()

    def _refresh_preview(self) -> None:
        preview = self.query_one("#profile", ProfilePreview)
        trues = self.true_points()
        mask = measured_mask(self.profile, self.declination_deg)  # the engine's own mask of these points
        if self.photo is not None:  # the engine's max(measured, photo)
            mask = combined_mask(mask, *self.photo)
        table = self.query_one("#points", DataTable)
        cursor_az = trues[table.cursor_row].azimuth_deg if trues and 0 <= table.cursor_row < len(trues) else None
        preview.show(mask, trues, min_elevation_deg=self.min_elevation_deg, cursor_az=cursor_az, photo=self.photo)

    def on_descendant_focus(self, event) -> None:
        if event.widget.id == "entry":
            self.query_one("#entry-label", Label).add_class("-here")

    def on_descendant_blur(self, event) -> None:
        if event.widget.id == "entry":
            self.query_one("#entry-label", Label).remove_class("-here")

    def on_data_table_row_highlighted(self, event: DataTable.RowHighlighted) -> None:
        event.stop()
        self._refresh_preview()

    def on_data_table_row_selected(self, event: DataTable.RowSelected) -> None:
        event.stop()
        self.action_edit()

    # ------------------------------------------------------------- entry
    def on_input_changed(self, event: Input.Changed) -> None:
        if event.input.id != "entry":
            return
        event.stop()
        msg = self.query_one("#entry-msg", Static)
        if not event.value.strip():
            msg.update("")
            event.input.remove_class("-invalid")
            return
        point, problem = parse_entry(event.value)
        event.input.set_class(problem is not None and len(event.value.split()) >= 2, "-invalid")
        msg.set_class(problem is not None, "problem")
        if problem:
            msg.update(f"✗ {problem}" if len(event.value.split()) >= 2 else "")
        else:
            same = [i + 1 for i, p in enumerate(self.profile.points)
                    if p.azimuth_deg == point.azimuth_deg and i != self.editing]
            msg.update(f"⏎ to {'add' if self.editing is None else 'change'}: bearing {point.azimuth_deg:g}°, "
                       f"elevation {point.elevation_deg:g}°"
                       + (f", {point.distance_m:g} m" if point.distance_m is not None else "")
                       + (f", '{point.label}'" if point.label else "")
                       + (f"  (point #{same[0]} has the same bearing)" if same else ""))

    def on_input_submitted(self, event: Input.Submitted) -> None:
        if event.input.id != "entry":
            return
        event.stop()
        point, problem = parse_entry(event.value)
        msg = self.query_one("#entry-msg", Static)
        if problem:
            msg.update(f"✗ {problem}")
            msg.add_class("problem")
            event.input.add_class("-invalid")
            return
        points = list(self.profile.points)
        if self.editing is not None and self.editing < len(points):
            points[self.editing] = point
            at = self.editing
            self.editing = None
            done = f"changed point #{at + 1}"
        else:
            points.append(point)
            at = len(points) - 1
            done = f"added point #{at + 1}"
        event.input.value = ""
        self._set(replace(self.profile, points=tuple(points)), cursor=at)
        msg.remove_class("problem")
        msg.update(f"✓ {done}; type the next one")

    def action_leave_entry(self) -> None:
        """Escape: drop the half-typed point and go back to the table (or, there,
        cancel a running assessment)."""
        entry = self.query_one("#entry", Input)
        if self.editing is not None or entry.has_focus:
            self.editing = None
            entry.value = ""
            self._refresh_all(keep_cursor=True)
            self.query_one("#points", DataTable).focus()
        else:
            self.app.action_cancel_assessment()

    # ------------------------------------------------------------- actions
    def _selected(self) -> int | None:
        table = self.query_one("#points", DataTable)
        n = len(self.profile.points)
        return table.cursor_row if n and 0 <= table.cursor_row < n else None

    def action_add(self) -> None:
        self.editing = None
        self._refresh_all(keep_cursor=True)
        self.query_one("#entry", Input).focus()

    def action_edit(self) -> None:
        i = self._selected()
        if i is None:
            self.action_add()
            return
        self.editing = i
        entry = self.query_one("#entry", Input)
        entry.value = entry_text(self.profile.points[i])
        self._refresh_all(keep_cursor=True)
        entry.focus()

    def action_delete(self) -> None:
        i = self._selected()
        if i is None:
            return
        points = list(self.profile.points)
        gone = points.pop(i)
        self._set(replace(self.profile, points=tuple(points)), cursor=min(i, len(points) - 1))
        self.query_one("#entry-msg", Static).update(f"deleted {entry_text(gone)}; ctrl+z brings it back")

    def action_move(self, step: int) -> None:
        i = self._selected()
        if i is None or not 0 <= i + step < len(self.profile.points):
            return
        points = list(self.profile.points)
        points[i], points[i + step] = points[i + step], points[i]
        self._set(replace(self.profile, points=tuple(points)), cursor=i + step)
        self._say("moved; the order is the record's only (the profile follows the bearings)")

    def _say(self, text: str) -> None:
        msg = self.query_one("#entry-msg", Static)
        msg.remove_class("problem")
        msg.update(text)

    def action_undo(self) -> None:
        if not self._undo:
            self._say("nothing to undo")
            return
        self.profile, self.photo_spec, self.photo = self._undo.pop()
        self._refresh_all(keep_cursor=True)
        self.post_message(self.Changed(self.profile))
        self._say(f"undone; {len(self._undo)} more step{'s' * (len(self._undo) != 1)} can be undone")

    def action_toggle_reference(self) -> None:
        """Say which north the typed bearings refer to (the numbers stay as typed)."""
        if self.body_frame:  # body-frame bearings come from the bow, not from a north
            self.app.notify(f"Body-frame bearings are taken from the {self.front or 'bow or front'}: no compass or "
                            "true north",
                            timeout=4)
            return
        ref = "true" if self.profile.reference == "magnetic" else "magnetic"
        self._set(replace(self.profile, reference=ref), cursor=self._selected())
        what = "compass (magnetic) bearings: the declination is added" if ref == "magnetic" else \
            "true bearings: no declination"
        self._say(f"the points now read as {what}; ctrl+z to undo")
        self.app.notify(f"Bearings now read as {what}", timeout=4)

    def action_photo_to_points(self) -> None:
        """The photo skyline as measured points, thinned to its shape (the
        engine's ``photo_points``), after a confirm; the photo is then detached
        from the site, so the mask is those points (README, "Horizon from a photo")."""
        if self.photo_spec is None:
            self._say("this site has no horizon photo to turn into points")
            return
        if self.photo is None:
            self._say("the photo's skyline comes with the assessment: try again when it is done")
            return
        points, dropped = photo_points(self.profile, *self.photo, self.declination_deg)
        under = (f"  {dropped} measured point{'s' * (dropped != 1)} under the skyline no longer shape"
                 f"{'s' * (dropped == 1)} the mask and {'are' if dropped != 1 else 'is'} left out.") if dropped else ""

        def answered(answer) -> None:
            if answer != "convert":
                return
            self._set(replace(self.profile, points=points), cursor=0, detach=True)
            self._say(f"{len(points)} points from the photo skyline; the photo is detached; ctrl+z to undo")

        self.app.push_screen(AskChoice(
            f"Turn the photo skyline into {len(points)} measured points?",
            [("convert", "Turn into points"), ("cancel", "Cancel")],
            f"The skyline of {self.photo_spec.file.name} is thinned to its shape (within 0.5°), each point "
            f"labelled 'photo', in {'compass' if self.profile.reference == 'magnetic' else 'true'} bearings.  "
            f"The photo is then detached from the site: the mask is these points, and lowering one lowers the "
            f"mask.{under}  ctrl+z undoes it."), answered)

    def action_import_csv(self) -> None:
        self.app.action_import_horizon()

    def replace_points(self, points, append: bool) -> None:
        new = (tuple(self.profile.points) + tuple(points)) if append else tuple(points)
        self._set(replace(self.profile, points=new), cursor=0 if not append else len(new) - 1)
        self._say(f"{len(points)} points {'added' if append else 'imported'}; ctrl+z to undo")

    def on_point_entry_pasted_lines(self, event: PointEntry.PastedLines) -> None:
        """Several lines pasted into the entry (from notes, a spreadsheet): one
        point a line; the lines that do not read are listed, the rest added."""
        event.stop()
        lines = [ln for ln in event.text.splitlines() if ln.strip()]
        good, bad = [], []
        for n, line in enumerate(lines, start=1):
            point, problem = parse_entry(line.replace("\t", " "))
            if point is None:
                bad.append(f"line {n}: {problem}")
            else:
                good.append(point)
        if good:
            self.replace_points(good, append=True)
        if bad:
            msg = self.query_one("#entry-msg", Static)
            msg.add_class("problem")
            msg.update(f"✗ {len(bad)} pasted line{'s' * (len(bad) != 1)} not added: " + "; ".join(bad[:3]))
