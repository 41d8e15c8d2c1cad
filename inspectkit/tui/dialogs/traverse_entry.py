"""Typing a fall-of-potential traverse: the E–C distance and the readings along it."""

from __future__ import annotations

from rich.text import Text
from textual.app import ComposeResult
from textual.widgets import Input, Label, Static

from inspectkit.earthing_input import parse_traverse
from inspectkit.earthing_values import Traverse
from inspectkit.tui.dialogs.entry_dialog import EntryDialog, entry_bindings
from inspectkit.tui.widgets.traverse_view import traverse_line
from inspectkit.units import UnitError


class TraverseDialog(EntryDialog[Traverse]):
    """The traverse as typed, judged on every key; Save returns it, Esc returns None.

    What is returned is the traverse only: the walkdown saves it as the reading
    (its value at 61.8 %) through the same function `readings add --traverse` uses.
    """

    BINDINGS = entry_bindings("traverse", "the traverse")
    NOTE_ID = "traverse-preview"

    def __init__(
        self, tag: str, tolerance: float, current_probe: str = "", points: str = ""
    ) -> None:
        """Args:
        tag: The electrode's tag, for the title.
        tolerance: The profile's plateau tolerance, for the verdict shown as typed.
        current_probe, points: Text to start with (a traverse typed before).
        """
        super().__init__(f"[b]{tag}: fall-of-potential traverse[/b]")
        self.tolerance = tolerance
        self.start = (current_probe, points)

    def inputs(self) -> ComposeResult:
        yield Label("Current probe C from the electrode (e.g. 50 m)")
        yield Input(self.start[0], placeholder="e.g. 50 m", id="traverse-c")
        yield Label("Readings, P position=reading; position in % of E–C or in m")
        yield Input(
            self.start[1], placeholder="e.g. 52%=10.1; 61.8%=10.3; 72%=10.6",
            id="traverse-points",
        )

    def on_mount(self) -> None:
        self.query_one("#traverse-c" if not self.start[0] else "#traverse-points", Input).focus()
        self.preview()

    def typed(self) -> Traverse:
        """The traverse as typed. Raises UnitError naming the input at fault."""
        return parse_traverse(
            self.query_one("#traverse-points", Input).value,
            self.query_one("#traverse-c", Input).value,
        )

    def preview(self) -> bool:
        """Show the value at 61.8 % and the plateau verdict, or what is wrong; True if usable."""
        box = self.query_one("#traverse-preview", Static)
        try:
            traverse = self.typed()
        except UnitError as exc:
            box.update(Text(f"not yet: {exc}"))
            return False
        line = traverse_line(traverse, self.tolerance)
        box.update(line)
        return "cannot be judged" not in line.plain

    def on_input_changed(self, event: Input.Changed) -> None:
        event.stop()
        self.preview()

    def on_input_submitted(self, event: Input.Submitted) -> None:
        event.stop()
        if event.input.id == "traverse-c":
            self.query_one("#traverse-points", Input).focus()
        else:
            self.action_save()

    def action_save(self) -> None:
        if self.preview():
            self.dismiss(self.typed())
