"""Site tab: where the site is, how the terminal is mounted, who surveyed it.

Every field is checked as it is typed (``tui.fields``: the engine's own site
reader decides), with the reason shown beside it; the form reports a complete
set of valid values, or None while any field is refused."""

from __future__ import annotations

from textual.app import ComposeResult
from textual.containers import Horizontal, VerticalScroll
from textual.message import Message
from textual.widgets import Input, Label, Select, Static

from ..fields import BY_KEY, CHOICES, FIELDS, field_values, parse_field
from ..widgets.frames import in_body_frame

_SECTIONS = {"site.name": "Where", "mount.kind": "Mount and terminal", "platform.heading_deg": "Vehicle or vessel",
             "survey.surveyor": "Survey"}


def _dom_id(key: str) -> str:
    return "f-" + key.replace(".", "-")


class SiteForm(VerticalScroll):
    class Changed(Message):
        """The form's values changed: ``values`` (None while any field is refused)
        and ``problems`` (field key -> reason)."""

        def __init__(self, values: dict | None, problems: dict[str, str]):
            super().__init__()
            self.values, self.problems = values, problems

    def __init__(self, **kw):
        super().__init__(**kw)
        self._loading = False
        self.site = None  # the site last loaded: where its mount stands
        self.problems: dict[str, str] = {}
        self.values: dict = {}

    def compose(self) -> ComposeResult:
        for spec in FIELDS:
            if spec.key in _SECTIONS:
                yield Static(_SECTIONS[spec.key], classes="section")
            with Horizontal(classes="field-row"):
                yield Label(spec.label + (" *" if spec.required else ""), classes="field-label")
                if spec.kind == "choice":
                    yield Select([(c, c) for c in CHOICES[spec.key]], allow_blank=False, id=_dom_id(spec.key),
                                 compact=True, classes="field-input")
                else:
                    yield Input(placeholder=spec.placeholder, id=_dom_id(spec.key), compact=True,
                                classes="field-input")
            yield Static("", markup=False, id=_dom_id(spec.key) + "-msg", classes="field-msg")

    def load(self, site) -> None:
        """Fill the fields from a site (None: a new site, fields blank)."""
        self.site = site
        self._loading = True
        texts = field_values(site) if site is not None else {}
        for spec in FIELDS:
            widget = self.query_one("#" + _dom_id(spec.key))
            text = texts.get(spec.key, "")
            if isinstance(widget, Select):
                widget.value = text or CHOICES[spec.key][0]
            else:
                widget.value = text
        self._loading = False
        self._check_all(post=False)
        self._relabel(site)  # after the check: it reads the mount kind as the form has it

    def _relabel(self, site) -> None:
        """On a vehicle or vessel the cone is fixed to the deck: its tilt is from
        the deck's normal, toward a bearing from the bow or front (README,
        "Moving installs"); the labels say so."""
        kind = self.values.get("mount.kind") or (site.mount.kind if site is not None else "")
        front = None
        if in_body_frame(site) and kind in ("vehicle", "marine"):  # as the mount kind reads now
            front = "bow" if kind == "marine" else "front"
        for key, fixed, moving in (
                ("terminal.tilt_azimuth_deg", BY_KEY["terminal.tilt_azimuth_deg"].label,
                 f"Tilted toward, ° from {front}"),
                ("terminal.tilt_deg", BY_KEY["terminal.tilt_deg"].label, "Tilt from deck normal, °")):
            widget = self.query_one("#" + _dom_id(key), Input)
            widget.parent.query_one(".field-label", Label).update(fixed if front is None else moving)
            widget.placeholder = BY_KEY[key].placeholder if front is None else (
                f"clockwise from the {front}" if key.endswith("azimuth_deg") else "0 = square to the deck")

    def _context_note(self, key: str, value) -> str:
        """What a valid value means here, where that is not obvious."""
        if key == "mount.height_m":
            site = self.site
            if site is not None and site.mount.at is not None:
                e, n = site.mount.at
                return (f"at the plan spot {e:.1f} m E, {n:.1f} m N; horizon measured from "
                        f"{site.horizon_height_m:g} m (Spots tab, b: back to the survey point)")
            return "the measured horizon counts as seen from this height"
        if key == "terminal.tilt_deg" and value and not self.values.get("terminal.scan_half_angle_deg"):
            return "the tilt only matters with a field-of-view half-angle"
        return ""

    def prefill(self, key: str, text: str) -> None:
        """Put ``text`` in one field (a new site's name and defaults)."""
        self._loading = True
        widget = self.query_one("#" + _dom_id(key))
        if isinstance(widget, Select):
            widget.value = text or CHOICES[key][0]
        else:
            widget.value = text
        self._loading = False
        self._check_all(post=False)

    def _text(self, key: str) -> str:
        widget = self.query_one("#" + _dom_id(key))
        return str(widget.value) if widget.value is not Select.BLANK else ""

    def _check(self, key: str) -> None:
        folder = self.site.path.parent if self.site is not None and self.site.path is not None else None
        value, problem, note = parse_field(key, self._text(key), folder)
        if not problem:
            note = note or self._context_note(key, value)
        msg = self.query_one("#" + _dom_id(key) + "-msg", Static)
        widget = self.query_one("#" + _dom_id(key))
        widget.set_class(bool(problem), "-invalid")
        msg.set_class(bool(problem), "problem")
        msg.update(f"✗ {problem}" if problem else note)
        msg.display = bool(problem or note)
        if problem:
            self.problems[key] = problem
            if self.query_one("#" + _dom_id(key)).has_focus:
                self.call_after_refresh(msg.scroll_visible)  # the reason, even under the last field
        else:
            self.problems.pop(key, None)
        self.values[key] = value

    def _check_all(self, post: bool = True) -> None:
        for spec in FIELDS:
            self._check(spec.key)
        if post:
            self._post()

    def _post(self) -> None:
        self.post_message(self.Changed(None if self.problems else dict(self.values), dict(self.problems)))

    def on_input_changed(self, event: Input.Changed) -> None:
        event.stop()
        if self._loading:
            return
        self._check(event.input.id.removeprefix("f-").replace("-", ".", 1))
        self._post()

    def on_select_changed(self, event: Select.Changed) -> None:
        event.stop()
        if self._loading:
            return
        self._check(event.select.id.removeprefix("f-").replace("-", ".", 1))
        if event.select.id == _dom_id("mount.kind"):
            self._relabel(self.site)
        self._post()

    def refused(self) -> list[tuple[str, str]]:
        """Each refused field as (label, reason), in the form's order."""
        return [(spec.label, self.problems[spec.key]) for spec in FIELDS if spec.key in self.problems]

    def first_problem(self) -> str | None:
        """The first refused field as 'Label: reason', for the status line."""
        return next((f"{label}: {reason}" for label, reason in self.refused()), None)

    def on_descendant_focus(self, event) -> None:
        self._mark_row(event.widget, True)

    def on_descendant_blur(self, event) -> None:
        self._mark_row(event.widget, False)

    @staticmethod
    def _mark_row(widget, here: bool) -> None:
        """The focused field's label in reverse video (CSS :focus-within does not
        restyle a sibling here), so the cursor's row shows without colour."""
        row = widget.parent
        if row is not None and row.has_class("field-row"):
            row.query_one(".field-label").set_class(here, "-here")

    def first_problem_label(self) -> str:
        return next((spec.label for spec in FIELDS if spec.key in self.problems), "")

    def focus_first_problem(self) -> None:
        for spec in FIELDS:
            if spec.key in self.problems:
                self.query_one("#" + _dom_id(spec.key)).focus()
                return
        self.query_one("#" + _dom_id(FIELDS[0].key)).focus()
