"""Small modal questions: a file name, a choice between a few answers, the
safety note, the report export."""

from __future__ import annotations

import os
from pathlib import Path

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.screen import ModalScreen
from textual.widgets import Button, Input, Label, Select, Static

from survey.api import InputError, format_for, notes_for


class DialogButton(Button):
    """A dialog's button; the focused one shows between markers (and in reverse
    video, see the stylesheet), so it reads on a monochrome screen too."""

    def __init__(self, label: str, **kw):
        self.caption = label
        super().__init__(self._label(False), **kw)

    def _label(self, focused: bool) -> str:
        return f"▸ {self.caption} ◂" if focused else f"  {self.caption}  "

    def on_focus(self) -> None:
        self.label = self._label(True)

    def on_blur(self) -> None:
        self.label = self._label(False)


class ButtonRow(Horizontal):
    """A dialog's buttons: the arrow keys move the focus between them (round
    the ends), Enter presses the focused one."""

    BINDINGS = [Binding("left,up", "step(-1)", show=False), Binding("right,down", "step(1)", show=False)]

    def action_step(self, step: int) -> None:
        buttons = list(self.query(Button))
        here = next((i for i, b in enumerate(buttons) if b.has_focus), None)
        if buttons and here is not None:
            buttons[(here + step) % len(buttons)].focus()


class _AnswerDialog(ModalScreen):
    """A dialog around one text field (#answer): Enter or OK answers once
    ``refusal()`` has no objection, which is shown under the field otherwise;
    Escape or Cancel answers None."""

    BINDINGS = [Binding("escape", "cancel", "Cancel")]

    def on_mount(self) -> None:
        self.query_one("#answer", Input).focus()  # the suggestion selected: typing replaces it, End keeps it

    def refusal(self, text: str) -> str | None:
        return None

    def answer(self, text: str):
        return text

    def _answer(self) -> None:
        field = self.query_one("#answer", Input)
        text = field.value.strip()
        problem = self.refusal(text)
        if problem:
            hint = self.query_one("#hint", Static)
            hint.update(problem)
            hint.add_class("problem")
            field.add_class("-invalid")
            return
        self.dismiss(self.answer(text))

    def on_input_submitted(self, event: Input.Submitted) -> None:
        event.stop()
        self._answer()

    def on_button_pressed(self, event: Button.Pressed) -> None:
        event.stop()
        if event.button.id == "ok":
            self._answer()
        else:
            self.dismiss(None)

    def action_cancel(self) -> None:
        self.dismiss(None)


class AskText(_AnswerDialog):
    """One line of text (a file name, mostly).  ``check(text)`` returns a reason
    to refuse the answer, or None."""

    def __init__(self, title: str, value: str = "", hint: str = "", check=None, placeholder: str = ""):
        super().__init__()
        self.title_text, self.value, self.hint, self.check = title, value, hint, check
        self.placeholder = placeholder

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog"):
            yield Label(self.title_text, markup=False, classes="dialog-title")
            yield Input(self.value, placeholder=self.placeholder, id="answer")
            yield Static(self.hint, markup=False, id="hint", classes="hint")
            with ButtonRow(classes="buttons"):
                yield DialogButton("OK", variant="primary", id="ok")
                yield DialogButton("Cancel", id="cancel")

    def refusal(self, text: str) -> str | None:
        return self.check(text) if self.check else None


class AskChoice(ModalScreen[str | None]):
    """A question with a few answers as buttons (first is the default);
    Escape answers None."""

    BINDINGS = [Binding("escape", "cancel", "Cancel")]

    def __init__(self, question: str, answers: list[tuple[str, str]], detail: str = ""):
        super().__init__()
        self.question, self.answers, self.detail = question, answers, detail

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog"):
            yield Label(self.question, markup=False, classes="dialog-title")
            if self.detail:
                yield Static(self.detail, markup=False, classes="hint")
            with ButtonRow(classes="buttons"):
                for i, (key, label) in enumerate(self.answers):
                    yield DialogButton(label, id=f"answer-{key}", variant="primary" if i == 0 else "default")

    def on_mount(self) -> None:
        self.query(Button).first().focus()

    def on_button_pressed(self, event: Button.Pressed) -> None:
        event.stop()
        self.dismiss(event.button.id.removeprefix("answer-"))

    def action_cancel(self) -> None:
        self.dismiss(None)


class SafetyNote(ModalScreen[bool]):
    """The work-at-height cautions for the site's mount kind.  Shown on F1, and
    once before a site's first export (``before_export``)."""

    BINDINGS = [Binding("escape", "back", "Close"), Binding("enter", "understood", "Understood", show=False)]

    def __init__(self, mount_kind: str, before_export: bool = False):
        super().__init__()
        self.mount_kind, self.before_export = mount_kind, before_export

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog safety"):
            yield Label("⚠ Safety before you climb", classes="dialog-title")
            with VerticalScroll(classes="safety-lines"):
                for line in notes_for(self.mount_kind):
                    yield Static(f"• {line}", markup=False, classes="safety-line")
            if self.before_export:
                yield Static("The report carries this note too.  Esc goes back without writing it.",
                             classes="hint")
            with ButtonRow(classes="buttons"):
                yield DialogButton("Understood", variant="primary", id="understood")

    def on_mount(self) -> None:
        self.query_one("#understood", Button).focus()

    def on_button_pressed(self, event: Button.Pressed) -> None:
        event.stop()
        self.dismiss(True)

    def action_understood(self) -> None:
        self.dismiss(True)

    def action_back(self) -> None:
        """Esc: closed unread, so before an export the report is not written."""
        self.dismiss(False)


def check_report_path(text: str) -> str | None:
    """Why a report file name cannot be used, or None."""
    if not text:
        return "type a file name ending in .pdf, .html or .json"
    path = Path(text).expanduser()
    try:
        format_for(path)
    except InputError as exc:
        return exc.problems[0].split(": ", 1)[-1]
    folder = path.parent if str(path.parent) else Path(".")
    if not folder.is_dir():
        return f"folder {folder} does not exist"
    if path.is_dir():
        return f"{path} is a folder"
    if not os.access(folder, os.W_OK) or (path.exists() and not os.access(path, os.W_OK)):
        return f"cannot write in {folder}: choose another folder"
    return None


def check_site_path(text: str) -> str | None:
    """Why ``text`` cannot be opened as a site, or None (a folder holding a
    site.toml will do)."""
    if not text:
        return "type the path of a site.toml file (or of its folder)"
    path = site_file_in(Path(text).expanduser())
    if not path.is_file():
        return f"{path}: no such file" if not path.exists() else f"{path}: not a file"
    return None


def site_file_in(path: Path) -> Path:
    return path / "site.toml" if path.is_dir() else path


class ExportReport(_AnswerDialog):
    """The report's file name (its extension picks PDF, HTML or JSON) and paper;
    answers (path, paper)."""

    def __init__(self, suggested: Path, paper: str = "a4"):
        super().__init__()
        self.suggested, self.paper = suggested, paper

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog"):
            yield Label("Write the site report", classes="dialog-title")
            yield Input(str(self.suggested), id="answer")
            yield Static(".pdf to print or hand over, .html for a phone, .json to keep or remake it",
                         markup=False, id="hint", classes="hint")
            with Horizontal(classes="field-row"):
                yield Label("Paper (PDF) ", classes="paper-label")
                yield Select([("A4 (ISO 216)", "a4"), ("US Letter", "letter")], value=self.paper,
                             allow_blank=False, compact=True, id="paper")
            with ButtonRow(classes="buttons"):
                yield DialogButton("Write", variant="primary", id="ok")
                yield DialogButton("Cancel", id="cancel")

    def refusal(self, text: str) -> str | None:
        return check_report_path(text)

    def answer(self, text: str):
        return Path(text).expanduser(), str(self.query_one("#paper", Select).value)
