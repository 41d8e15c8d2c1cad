"""Asks for the tag painted on a component, to jump straight to it on the walk."""

from __future__ import annotations

from collections.abc import Callable, Sequence

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.screen import ModalScreen
from textual.widgets import Label, Static

from inspectkit.tui.widgets.held_keys import FieldInput


class TagPrompt(ModalScreen[str | None]):
    """Dismisses with a tag that is on the walk, or None when let go with Escape.

    `on_pick` hears the tag as Enter arrives, before the prompt closes, so the walk is
    at that component before any key typed after Enter reaches it.
    """

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

    def __init__(
        self, tags: Sequence[str], on_pick: Callable[[str], object] | None = None
    ) -> None:
        super().__init__()
        self.tags = list(tags)
        self.on_pick = on_pick

    def compose(self) -> ComposeResult:
        with Vertical():
            yield Label("Go to the component tagged:")
            field = FieldInput(placeholder="e.g. TJ-03", id="tag")
            field.on_enter = lambda: self.submit(field.value)
            yield field
            yield Static("", id="tag-error")

    def _pick(self, tag: str) -> None:
        if self.on_pick is not None:
            self.on_pick(tag)
        self.dismiss(tag)

    def submit(self, text: str) -> None:
        """Go to the tag typed, or the one tag it starts; else say which tags there are."""
        wanted = text.strip().upper()
        if wanted in self.tags:
            self._pick(wanted)
            return
        near = [t for t in self.tags if t.startswith(wanted)] if wanted else []
        if len(near) == 1:
            self._pick(near[0])
            return
        shown = ", ".join((near or self.tags)[:12])
        self.query_one("#tag-error", Static).update(
            f"no component tagged {wanted or '(blank)'}; tags here: {shown}"
        )

    def action_cancel(self) -> None:
        self.dismiss(None)
