"""A labelled text field that saves itself when it is left, and says so only once it has."""

from __future__ import annotations

from collections.abc import Callable

from rich.text import Text
from textual.app import ComposeResult
from textual.containers import Vertical
from textual.message import Message
from textual.widgets import Input, Label, Static

from inspectkit.tui.widgets.held_keys import FieldInput
from inspectkit.walkdown.errors import WalkdownError

#: Takes the text as typed, saves it, and returns what to show under the field;
#: raises WalkdownError (nothing saved) when the text is not valid.
Saver = Callable[[str], Text | str]

SAVED = Text("✓ saved", style="bold green")
UNSAVED = Text("● not saved yet: leave the field or press Enter", style="bold yellow")


class SavingField(Vertical):
    """One entry of a form, saved on Enter or on leaving it, never on each keystroke.

    The status line under the input shows a problem in words ("expected …"), or
    what was saved, and only after the save committed. Text that could not be saved
    stays as typed so it can be corrected. Enter and Tab save and move on as each key
    arrives (see `held_keys`), and `load` shows other content in the same widgets, so
    a form can follow the inspector from one component to the next without rebuilding.
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
        self._input: Input | None = None
        self._status: Static | None = None
        self._shown: Text | str = saved_status or ""

    def compose(self) -> ComposeResult:
        yield Label(self.label)
        yield self.make_input()
        yield Static(self._initial_status or "", classes="status")

    def make_input(self) -> FieldInput:
        """The field's input, wired to save on Enter and Tab the moment they arrive."""
        field = FieldInput(self._initial, placeholder=self._placeholder)
        field.on_enter = self.submit
        field.on_tab = self.tab
        return field

    @property
    def draft_key(self) -> str:
        """What text typed here and not saved is kept under, for the component in view."""
        return self.id or ""

    @property
    def input(self) -> Input:
        if self._input is None:
            self._input = self.query_one(Input)
        return self._input

    @property
    def status(self) -> Static:
        if self._status is None:
            self._status = self.query_one(".status", Static)
        return self._status

    def _show(self, status: Text | str) -> None:
        """Put `status` under the field, unless it is there already (no repaint then)."""
        if status != self._shown:
            self._shown = status
            self.status.update(status)

    def load(
        self, value: str, status: Text | str | None = None, *, typed: str | None = None
    ) -> None:
        """Show another saved value (and text typed but not saved) in the same widgets."""
        self.saved_value = value
        self.remove_class("-error")
        field = self.input
        text = value if typed is None else typed
        if field.value != text:
            with field.prevent(Input.Changed):
                field.value = text
            field.cursor_position = len(text)
        self._show(UNSAVED if typed is not None and typed != value else status or "")

    def set_label(self, label: str) -> None:
        if label != self.label:
            self.label = label
            self.query_one(Label).update(label)

    @property
    def value(self) -> str:
        return self.input.value

    @property
    def dirty(self) -> bool:
        """Typed but not saved (or refused)."""
        return self.input.value != self.saved_value

    def show_status(self, status: Text | str) -> None:
        self.remove_class("-error")
        self._show(status)

    def show_error(self, message: str) -> None:
        self.add_class("-error")
        self._show(Text(f"✗ not saved: {message}"))

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
            self._show(UNSAVED)

    def submit(self) -> None:
        """Enter: save, and on success go to the next field."""
        if self.commit():
            self.screen.focus_next()

    def tab(self, step: int) -> None:
        """Tab or shift+Tab: save what can be saved, and move on either way."""
        self.commit()
        if step > 0:
            self.screen.focus_next()
        else:
            self.screen.focus_previous()

    def on_input_submitted(self, event: Input.Submitted) -> None:
        event.stop()
        self.submit()

    def on_input_blurred(self, event: Input.Blurred) -> None:
        event.stop()
        if self.is_attached:
            self.commit()
