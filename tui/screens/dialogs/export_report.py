"""Writing the report: its file name (checked as typed) and paper size."""

from __future__ import annotations

from pathlib import Path

from textual.app import ComposeResult
from textual.containers import Horizontal, Vertical
from textual.widgets import Input, Label, Select, Static

from .base import AnswerDialog, ButtonRow, DialogButton
from .paths import check_report_path


class ExportReport(AnswerDialog):
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
