"""A question answered with a line of text, checked as it is typed."""

from __future__ import annotations

from textual.app import ComposeResult
from textual.containers import Vertical
from textual.widgets import Input, Label, Static

from .base import AnswerDialog, ButtonRow, DialogButton


class AskText(AnswerDialog):
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
