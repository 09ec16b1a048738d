"""A choice between a few answers."""

from __future__ import annotations

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.screen import ModalScreen
from textual.widgets import Button, Label, Static

from .base import ButtonRow, DialogButton


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
