"""Pick one item from a short list, e.g. the inspection that fixed a finding."""

from __future__ import annotations

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.screen import ModalScreen
from textual.widgets import OptionList, Static
from textual.widgets.option_list import Option


class ChoiceDialog(ModalScreen[str | None]):
    """Dismisses with the id of the chosen item, or None when cancelled."""

    DEFAULT_CSS = """
    ChoiceDialog { align: center middle; }
    ChoiceDialog > Vertical {
        width: 70; max-width: 100%; height: auto; max-height: 100%;
        border: thick $primary; background: $surface; padding: 0 1;
    }
    ChoiceDialog #prompt { text-style: bold; margin-bottom: 1; }
    ChoiceDialog OptionList { height: auto; max-height: 16; }
    """

    BINDINGS = [
        Binding("escape", "cancel", "Cancel", id="choice.cancel", tooltip="Choose nothing"),
    ]

    def __init__(self, prompt: str, items: list[tuple[str, str]]) -> None:
        """Args:
        prompt: The question, naming what is chosen for.
        items: (id, label) pairs in the order shown.
        """
        super().__init__()
        self.prompt = prompt
        self.items = items

    def compose(self) -> ComposeResult:
        with Vertical():
            yield Static(self.prompt, id="prompt")
            yield OptionList(*(Option(label, id=key) for key, label in self.items))

    def on_option_list_option_selected(self, event: OptionList.OptionSelected) -> None:
        event.stop()
        self.dismiss(event.option.id)

    def action_cancel(self) -> None:
        self.dismiss(None)
