"""Ask for a few words: why a component was not inspected, why a joint was left open."""

from __future__ import annotations

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.screen import ModalScreen
from textual.widgets import Input, Static


class TextPrompt(ModalScreen[str | None]):
    """Dismisses with the text typed (Enter), or None when cancelled (Escape)."""

    DEFAULT_CSS = """
    TextPrompt { align: center middle; }
    TextPrompt > Vertical {
        width: 70; max-width: 100%; height: auto; border: thick $primary;
        background: $surface; padding: 0 1;
    }
    TextPrompt #prompt { text-style: bold; margin-bottom: 1; }
    TextPrompt #hint { color: $text-muted; }
    """

    BINDINGS = [
        Binding("escape", "cancel", "Cancel", id="text_prompt.cancel", tooltip="Leave it"),
    ]

    def __init__(self, prompt: str, placeholder: str = "", *, required: bool = False) -> None:
        """Args:
        prompt: The question.
        placeholder: An example of an answer.
        required: Enter on an empty field says words are needed instead of closing.
        """
        super().__init__()
        self.prompt = prompt
        self.placeholder = placeholder
        self.required = required

    def compose(self) -> ComposeResult:
        with Vertical():
            yield Static(self.prompt, id="prompt")
            yield Input(placeholder=self.placeholder, id="answer")
            yield Static("Enter to save, Escape to cancel", id="hint")

    def on_mount(self) -> None:
        self.query_one("#answer", Input).focus()

    def on_input_submitted(self, event: Input.Submitted) -> None:
        event.stop()
        text = event.value.strip()
        if self.required and not text:
            self.query_one("#hint", Static).update("Type a few words first, or Escape")
            return
        self.dismiss(text)

    def action_cancel(self) -> None:
        self.dismiss(None)
