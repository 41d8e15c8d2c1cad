"""Electrode trends drawn as a line of block characters, small enough for a table cell."""

from __future__ import annotations

from collections.abc import Sequence

from rich.text import Text

_BLOCKS = "▁▂▃▄▅▆▇█"


def sparkline(values: Sequence[float], limit: float | None = None) -> Text:
    """Readings as blocks scaled between zero and the larger of the top reading and the limit.

    Scaling from zero, not from the lowest reading, keeps a small wobble from looking
    like a climb; a block at or above the limit is drawn red so a crossing shows.
    """
    text = Text()
    if not values:
        return text
    top = max([*values, limit or 0.0]) or 1.0
    for value in values:
        step = min(len(_BLOCKS) - 1, int(value / top * (len(_BLOCKS) - 1) + 0.5))
        failing = limit is not None and value > limit
        text.append(_BLOCKS[step], style="red" if failing else "green")
    return text
