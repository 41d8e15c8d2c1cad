"""The frame of a dialog that takes a few typed inputs at once: the soil survey, the traverse."""

from __future__ import annotations

from typing import TypeVar

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.screen import ModalScreen
from textual.widgets import Button, Static

ResultType = TypeVar("ResultType")


def entry_bindings(prefix: str, what: str) -> list[Binding]:
    """Esc and ctrl+s, with ids under `prefix` so that a keymap can move them apart."""
    return [
        Binding("escape", "cancel", "Cancel", id=f"{prefix}.cancel", tooltip="Save nothing"),
        Binding("ctrl+s", "save", "Save", id=f"{prefix}.save", tooltip=f"Save {what}"),
    ]


class EntryDialog(ModalScreen[ResultType | None]):
    """A heading, the inputs, one line under them, then Cancel and Save.

    The entries look and close alike, so a key learnt in one works in the
    other. A subclass yields its labels and inputs
    from `inputs`, names the line under them (`NOTE_ID`: where a refusal or a
    preview shows) and says what Save does in `action_save`, which dismisses
    with the entry once it is accepted; Cancel and Esc dismiss with None.
    """

    DEFAULT_CSS = """
    EntryDialog { align: center middle; }
    EntryDialog > Vertical {
        width: 76; max-width: 100%; height: auto; border: thick $primary; background: $surface;
        padding: 0 1;
    }
    EntryDialog Input { height: 1; border: none; padding: 0 1; background: $boost; }
    EntryDialog Input:focus { border: none; background: $primary 30%; }
    EntryDialog Label { margin-top: 1; }
    EntryDialog .entry-note { height: auto; margin-top: 1; }
    EntryDialog Horizontal { height: auto; align-horizontal: right; margin-top: 1; }
    EntryDialog Button { margin-left: 1; }
    """

    #: The id of the line under the inputs.
    NOTE_ID = "entry-note"

    def __init__(self, heading: str) -> None:
        """Args:
        heading: The first line, in Rich markup.
        """
        super().__init__()
        self.heading = heading

    def inputs(self) -> ComposeResult:
        """The labels and inputs, top to bottom."""
        raise NotImplementedError

    def compose(self) -> ComposeResult:
        with Vertical():
            yield Static(self.heading)
            yield from self.inputs()
            yield Static("", id=self.NOTE_ID, classes="entry-note")
            with Horizontal():
                yield Button("Cancel", id="cancel")
                yield Button("Save (ctrl+s)", id="save", variant="primary")

    def on_button_pressed(self, event: Button.Pressed) -> None:
        event.stop()
        if event.button.id == "save":
            self.action_save()
        else:
            self.dismiss(None)

    def action_save(self) -> None:
        raise NotImplementedError

    def action_cancel(self) -> None:
        self.dismiss(None)
