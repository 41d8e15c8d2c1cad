"""Asks for the tag painted on a component, to jump straight to it on the walk."""

from __future__ import annotations

from collections.abc import Sequence

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.screen import ModalScreen
from textual.widgets import Input, Label, Static


class TagPrompt(ModalScreen[str | None]):
    """Dismisses with a tag that is on the walk, or None when let go with Escape."""

    DEFAULT_CSS = """
    TagPrompt { align: center middle; }
    TagPrompt > Vertical {
        width: 50; max-width: 100%; height: auto; border: thick $accent;
        background: $surface; padding: 0 1;
    }
    TagPrompt #tag-error { color: $error; text-style: bold; height: auto; }
    """

    BINDINGS = [
        Binding("escape", "cancel", "Cancel", id="tag.cancel", tooltip="Stay where you are"),
    ]

    def __init__(self, tags: Sequence[str]) -> None:
        super().__init__()
        self.tags = list(tags)

    def compose(self) -> ComposeResult:
        with Vertical():
            yield Label("Go to the component tagged:")
            yield Input(placeholder="e.g. TJ-03", id="tag")
            yield Static("", id="tag-error")

    def on_input_submitted(self, event: Input.Submitted) -> None:
        event.stop()
        wanted = event.value.strip().upper()
        if wanted in self.tags:
            self.dismiss(wanted)
            return
        near = [t for t in self.tags if t.startswith(wanted)] if wanted else []
        if len(near) == 1:
            self.dismiss(near[0])
            return
        shown = ", ".join((near or self.tags)[:12])
        self.query_one("#tag-error", Static).update(
            f"no component tagged {wanted or '(blank)'}; tags here: {shown}"
        )

    def action_cancel(self) -> None:
        self.dismiss(None)
