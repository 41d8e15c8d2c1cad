"""A yes/no question asked before anything destructive."""

from __future__ import annotations

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.screen import ModalScreen
from textual.widgets import Button, Static


class ConfirmDialog(ModalScreen[bool]):
    """Asks one question; dismisses with True only when the user confirms."""

    DEFAULT_CSS = """
    ConfirmDialog { align: center middle; }
    ConfirmDialog > Vertical {
        width: 60; max-width: 100%; height: auto; border: thick $error; background: $surface;
        padding: 1 2;
    }
    ConfirmDialog Horizontal { height: auto; align-horizontal: right; margin-top: 1; }
    ConfirmDialog Button { margin-left: 1; }
    """

    BINDINGS = [
        Binding("y", "answer(True)", "Yes", id="confirm.yes", tooltip="Go ahead"),
        Binding("n,escape", "answer(False)", "No", id="confirm.no", tooltip="Leave it as it is"),
    ]

    def __init__(self, question: str, yes_label: str = "Yes") -> None:
        super().__init__()
        self.question = question
        self.yes_label = yes_label

    def compose(self) -> ComposeResult:
        with Vertical():
            yield Static(self.question, id="question")
            with Horizontal():
                yield Button("No", id="no")
                yield Button(self.yes_label, id="yes", variant="error")

    def on_mount(self) -> None:
        self.query_one("#no", Button).focus()

    def on_button_pressed(self, event: Button.Pressed) -> None:
        event.stop()
        self.dismiss(event.button.id == "yes")

    def action_answer(self, answer: bool) -> None:
        self.dismiss(answer)
