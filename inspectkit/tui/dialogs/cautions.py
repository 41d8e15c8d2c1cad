"""The safety cautions, shown on first start and one key away after that."""

from __future__ import annotations

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, VerticalScroll
from textual.screen import ModalScreen
from textual.widgets import Button, Static

from inspectkit.cautions import CAUTIONS, TITLE


class CautionsDialog(ModalScreen[bool]):
    """Shows the cautions; dismisses with True only when "I have read these" is chosen.

    Escape closes the dialog without acknowledging, so that at first start the
    cautions come back at the next start until someone says they read them.
    """

    DEFAULT_CSS = """
    CautionsDialog { align: center middle; }
    CautionsDialog > VerticalScroll {
        width: 76; max-width: 100%; height: auto; max-height: 100%;
        border: thick $warning; background: $surface; padding: 0 1;
    }
    CautionsDialog #title { text-style: bold; color: $warning; margin-bottom: 1; }
    CautionsDialog .caution { margin-bottom: 1; }
    CautionsDialog #title { margin-top: 0; }
    CautionsDialog Horizontal { height: auto; align-horizontal: right; }
    """

    BINDINGS = [
        Binding(
            "escape", "close", "Close", id="cautions.close",
            tooltip="Close without acknowledging: they show again at the next start",
        ),
    ]

    def compose(self) -> ComposeResult:
        with VerticalScroll():
            yield Static(TITLE, id="title")
            for caution in CAUTIONS:
                yield Static(f"• {caution}", classes="caution")
            with Horizontal():
                yield Button("I have read these", id="ok", variant="warning", compact=True)

    def on_mount(self) -> None:
        self.query_one("#ok", Button).focus()

    def on_button_pressed(self, event: Button.Pressed) -> None:
        event.stop()
        self.dismiss(True)

    def action_close(self) -> None:
        self.dismiss(False)
