"""The safety note, read before an export and from F1."""

from __future__ import annotations

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical, VerticalScroll
from textual.screen import ModalScreen
from textual.widgets import Button, Label, Static

from survey.api import notes_for

from .base import ButtonRow, DialogButton


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
