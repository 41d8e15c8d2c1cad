"""A fall-of-potential traverse drawn in one line of blocks, with its value and verdict."""

from __future__ import annotations

from rich.text import Text
from textual.widgets import Static

from inspectkit.earthing_values import SeriesError, Traverse, read_traverse
from inspectkit.engine.earthing import EarthingError
from inspectkit.engine.electrodes import judge_traverse

_BLOCKS = "▁▂▃▄▅▆▇█"


def traverse_curve(traverse: Traverse) -> Text:
    """The traverse as blocks, nearest the electrode first, scaled from its lowest to highest.

    Unlike a trend, a traverse is read for its shape: the flat middle is the
    plateau, so the blocks span the traverse's own range.
    """
    values = [r for _, r in traverse.points]
    low, high = min(values), max(values)
    steps = [0 if high == low else round((v - low) / (high - low) * 7) for v in values]
    return Text("".join(_BLOCKS[s] for s in steps), style="cyan")


def traverse_line(traverse: Traverse, tolerance: float) -> Text:
    """`▁▃▅▅▅▆█ 3.99 Ω at 61.8 %, PLATEAU` (or `NO PLATEAU: move …`), words beside the blocks."""
    text = traverse_curve(traverse)
    try:
        judged = judge_traverse(traverse, tolerance)
    except EarthingError as exc:
        text.append(f"  cannot be judged: {exc}")
        return text
    text.append(f"  {judged.value_ohm:.4g} Ω at 61.8 %, ")
    if judged.valid:
        text.append("PLATEAU", style="bold green")
    else:
        text.append("NO PLATEAU", style="bold yellow")
        text.append(f": {judged.message.removeprefix('no plateau: ')}")
    return text


class TraverseView(Static):
    """The traverse of the reading in hand, or nothing when it was a single typed value."""

    DEFAULT_CSS = """
    TraverseView { height: auto; padding: 0 1; }
    """

    def show(self, stored: str | None, tolerance: float = 0.05) -> None:
        """Draw a reading's stored traverse (`Reading.traverse`); None clears the view."""
        if stored is None:
            self.update("")
            self.display = False
            return
        try:
            traverse = read_traverse(stored)
        except SeriesError as exc:
            self.update(Text(f"traverse cannot be read: {exc}"))
        else:
            line = Text("traverse ", style="bold")
            line.append_text(traverse_line(traverse, tolerance))
            self.update(line)
        self.display = True
