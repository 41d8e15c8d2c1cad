"""A labelled text field that saves itself when it is left, and says so only once it has."""

from __future__ import annotations

from collections.abc import Callable

from rich.text import Text
from textual.app import ComposeResult
from textual.containers import Vertical
from textual.message import Message
from textual.widgets import Input, Label, Static

from inspectkit.walkdown import WalkdownError

#: Takes the text as typed, saves it, and returns what to show under the field;
#: raises WalkdownError (nothing saved) when the text is not valid.
Saver = Callable[[str], Text | str]

SAVED = Text("✓ saved", style="bold green")
UNSAVED = Text("● not saved yet: leave the field or press Enter", style="bold yellow")


class SavingField(Vertical):
    """One entry of a form, saved on Enter or on leaving it, never on each keystroke.

    The status line under the input shows a problem in words ("expected …"), or
    what was saved, and only after the save committed. Text that could not be saved
    stays as typed so it can be corrected.
    """

    DEFAULT_CSS = """
    SavingField { height: auto; margin: 0 0 1 0; }
    SavingField > Label { color: $text-muted; }
    SavingField > .status { height: auto; }
    SavingField.-error > Input { border: tall $error; }
    SavingField.-error > .status { color: $error; text-style: bold; }
    """

    class Saved(Message):
        """A field's text was saved.

        Attributes:
            field: The field that saved.
            text: The text as saved.
        """

        def __init__(self, field: SavingField, text: str) -> None:
            super().__init__()
            self.field = field
            self.text = text

    #: Said when a saved value is emptied, which does not remove it.
    blank_refusal = "a saved value is corrected, not removed; type the right value"

    def __init__(
        self,
        label: str,
        saver: Saver,
        *,
        value: str = "",
        saved_status: Text | str | None = None,
        placeholder: str = "",
        allow_blank: bool = True,
        id: str | None = None,
    ) -> None:
        super().__init__(id=id)
        self.label = label
        self.saver = saver
        self.saved_value = value
        self.allow_blank = allow_blank
        self._initial = value
        self._initial_status = saved_status
        self._placeholder = placeholder

    def compose(self) -> ComposeResult:
        yield Label(self.label)
        yield Input(self._initial, placeholder=self._placeholder)
        yield Static(self._initial_status or "", classes="status")

    @property
    def input(self) -> Input:
        return self.query_one(Input)

    @property
    def value(self) -> str:
        return self.input.value

    @property
    def dirty(self) -> bool:
        """Typed but not saved (or refused)."""
        return self.input.value != self.saved_value

    def show_status(self, status: Text | str) -> None:
        self.remove_class("-error")
        self.query_one(".status", Static).update(status)

    def show_error(self, message: str) -> None:
        self.add_class("-error")
        self.query_one(".status", Static).update(Text(f"✗ not saved: {message}"))

    def commit(self) -> bool:
        """Save the text if it changed; False when it was refused (nothing saved)."""
        text = self.input.value
        if text == self.saved_value and not self.has_class("-error"):
            return True
        if not text.strip() and not self.allow_blank:
            if not self.saved_value:
                self.show_status("")
                return True
            self.show_error(self.blank_refusal)
            return False
        try:
            status = self.saver(text)
        except WalkdownError as exc:
            self.show_error(str(exc))
            return False
        self.saved_value = text
        self.show_status(status)
        self.post_message(self.Saved(self, text))
        return True

    def on_input_changed(self, event: Input.Changed) -> None:
        event.stop()
        if self.dirty:
            self.remove_class("-error")
            self.query_one(".status", Static).update(UNSAVED)

    def on_input_submitted(self, event: Input.Submitted) -> None:
        event.stop()
        if self.commit():
            self.screen.focus_next()

    def on_input_blurred(self, event: Input.Blurred) -> None:
        event.stop()
        if self.is_attached:
            self.commit()
