"""The walkdown's list of stops: each component's tag and one word for how far it is."""

from __future__ import annotations

from collections.abc import Callable

from rich.text import Text
from textual.widgets import OptionList
from textual.widgets.option_list import Option

from inspectkit.engine.walking import Stop
from inspectkit.model import Grade, Quantity, Severity
from inspectkit.tui.widgets.held_keys import HeldKeys
from inspectkit.walkdown.continuing import SavedEntries

#: A stop's state in the list: the word carries the meaning, the colour repeats it.
MARK_STYLES = {
    "todo": "dim",
    "part": "yellow",
    "done": "bold green",
    "WATCH": "bold yellow",
    "ATTN": "bold yellow",
    "FAIL": "bold white on red",
    "DEFECT": "bold white on red",
    "SKIP": "bold magenta",
}


def complete(stop: Stop, saved: SavedEntries) -> bool:
    """Graded, and every reading but the optional soil resistivity taken; or marked not
    inspected, with why."""
    cid = stop.component.id
    if cid in saved.not_inspected:
        return True
    required = {q for q in stop.quantities if q is not Quantity.SOIL_RESISTIVITY}
    taken = {q for q in stop.quantities if (cid, q) in saved.readings}
    return cid in saved.findings and required <= taken


def mark(stop: Stop, saved: SavedEntries) -> str:
    """One word for how far a component is: todo, part, done, SKIP (not inspected), or the
    worst found."""
    cid = stop.component.id
    if cid in saved.not_inspected:
        return "SKIP"
    outcomes = [o for q in stop.quantities if (o := saved.readings.get((cid, q))) is not None]
    finding = saved.findings.get(cid)
    if finding is not None and finding.grade is Grade.DEFECT:
        return "DEFECT"
    worst = max((o.severity for o in outcomes), key=lambda s: s.rank, default=Severity.OK)
    if worst.rank >= Severity.FAIL.rank:
        return "FAIL"
    if finding is not None and finding.grade is Grade.NEEDS_ATTENTION:
        return "ATTN"
    if worst is Severity.WATCH:
        return "WATCH"
    if complete(stop, saved):
        return "done"
    return "part" if finding is not None or outcomes else "todo"


def prompt(stop: Stop, saved: SavedEntries, *, wide: bool) -> Text:
    component = stop.component
    word = mark(stop, saved)
    text = Text("  " * stop.depth)
    text.append(component.tag.ljust(12 - 2 * stop.depth), style="bold")
    text.append(f"{word:<6}", style=MARK_STYLES[word])
    if wide:
        text.append(f" {component.kind.label}", style="dim")
    return text


class StopList(HeldKeys, OptionList):
    """The stops in walking order; Enter goes to the one highlighted as the key arrives.

    Attributes:
        on_go: Called with the index of the stop chosen by Enter.
    """

    def __init__(self, *options: Option, id: str | None = None) -> None:
        super().__init__(*options, id=id)
        self.on_go: Callable[[int], object] | None = None

    def key_action(self, key: str) -> Callable[[], object] | None:
        if key == "enter" and (go := self.on_go) is not None and self.highlighted is not None:
            index = self.highlighted
            return lambda: go(index)
        return None
