"""A fall-of-potential traverse drawn in one line of blocks, with its value and verdict."""

from __future__ import annotations

from collections.abc import Mapping

from rich.text import Text
from textual.widgets import Static

from inspectkit.earthing_values import SeriesError, Traverse, read_traverse
from inspectkit.engine.electrodes import judge_traverse
from inspectkit.engine.formula_inputs import EarthingError
from inspectkit.model import Quantity
from inspectkit.walkdown.judging import ReadingOutcome

#: Earth readings a traverse can give, in the order the walkdown asks for them.
EARTH = (Quantity.EARTH_ISOLATED, Quantity.EARTH_COMBINED)

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
    """The traverse of the earth reading in view, or nothing for a single typed value.

    Only the curve and its figures: the reading's entry above it says the
    engine's verdict (on the plateau, or where to move the current probe).
    """

    DEFAULT_CSS = """
    TraverseView { height: auto; padding: 0 1; display: none; }
    """

    #: The reading drawn (id and stored traverse), so a move to a part without one is free.
    _drawn: tuple[str, str] | None = None

    def show_outcomes(self, outcomes: Mapping[Quantity, ReadingOutcome]) -> None:
        """Draw the first earth reading's traverse among a component's saved readings."""
        reading = next(
            (o.reading for q in EARTH if (o := outcomes.get(q)) and o.reading.traverse), None
        )
        key = None if reading is None else (reading.id, reading.traverse or "")
        if key == self._drawn:
            return
        self._drawn = key
        if reading is None:
            self.display = False
            return
        stored = key[1]
        line = Text("traverse ", style="bold")
        try:
            traverse = read_traverse(stored)
        except SeriesError as exc:
            line.append(f"cannot be read: {exc}")
        else:
            line.append_text(traverse_curve(traverse))
            line.append(
                f"  {reading.value or 0:.4g} Ω at 61.8 %, C at {traverse.current_probe_m:g} m"
            )
        self.update(line)
        self.display = True
