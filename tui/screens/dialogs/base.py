"""What every dialog shares: buttons that the arrow keys move between, and a dialog that answers with a checked text."""

from __future__ import annotations

from textual.binding import Binding
from textual.containers import Horizontal
from textual.screen import ModalScreen
from textual.widgets import Button, Input, Static


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


class AnswerDialog(ModalScreen):
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
