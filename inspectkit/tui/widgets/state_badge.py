"""A site's or a reading's state in words and colour, so colour is never the only cue."""

from __future__ import annotations

from rich.text import Text
from textual.widgets import Static

#: Style for each state word; the word itself always carries the meaning.
STATE_STYLES: dict[str, str] = {
    "ok": "bold green",
    "pass": "bold green",
    "watch": "bold yellow",
    "due soon": "bold cyan",
    "incomplete": "bold magenta",
    "retake": "bold black on yellow",
    "fail": "bold red",
    "overdue": "bold white on red",
    "no profile": "bold magenta",
    "error": "bold white on magenta",
}

#: What an unknown or not yet computed state shows.
PENDING = "…"


def state_text(word: str | None) -> Text:
    """A state word styled for a table cell."""
    if not word:
        return Text(PENDING, style="dim")
    return Text(word, style=STATE_STYLES.get(word, ""))


class StateBadge(Static):
    """One state word with its colour, e.g. at the top of a site."""

    DEFAULT_CSS = """
    StateBadge { width: auto; padding: 0 1; }
    """

    def __init__(self, word: str | None = None, **kwargs: object) -> None:
        super().__init__(state_text(word), **kwargs)  # type: ignore[arg-type]

    def show(self, word: str | None) -> None:
        """Change the state shown."""
        self.update(state_text(word))
