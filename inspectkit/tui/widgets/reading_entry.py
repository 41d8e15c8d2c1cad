"""A reading typed with its unit, judged against the site's profile the moment it is saved."""

from __future__ import annotations

from collections.abc import Callable

from rich.text import Text

from inspectkit.model import JointState, Quantity, Severity
from inspectkit.tui.widgets.saving_field import SAVED, SavingField
from inspectkit.units import format_value
from inspectkit.walkdown import JOINT_FOR, ReadingOutcome

#: Style of the verdict word; the word (PASS, FAIL, WATCH) always carries the meaning.
VERDICT_STYLES: dict[Severity, str] = {
    Severity.OK: "bold green",
    Severity.WATCH: "bold yellow",
    Severity.INCOMPLETE: "bold magenta",
    Severity.FAIL: "bold white on red",
    Severity.OVERDUE: "bold white on red",
}

#: The example shown in an empty field, so the unit expected is never a guess.
PLACEHOLDERS: dict[Quantity, str] = {
    Quantity.EARTH_ISOLATED: "e.g. 12.5 Ω, or OL",
    Quantity.EARTH_COMBINED: "e.g. 3.9 Ω",
    Quantity.CONTINUITY: "e.g. 0.18 Ω or 180 mΩ",
    Quantity.BONDING: "e.g. 50 mΩ",
    Quantity.SOIL_RESISTIVITY: "optional, e.g. 85 Ω·m",
    Quantity.STRIKE_COUNT: "the number shown, e.g. 42",
}


def outcome_text(outcome: ReadingOutcome) -> Text:
    """`PASS 3.9 Ω ≤ 10 Ω · +12 % on 2025-06-03 · ✓ saved`, coloured but readable without."""
    text = Text()
    style = VERDICT_STYLES[outcome.severity] if outcome.limit is not None else "bold"
    verdict = outcome.verdict
    if outcome.severity is Severity.WATCH and outcome.limit is not None:
        verdict = "WATCH " + verdict.split(" ", 1)[1]
    text.append(f" {verdict} ", style=style)
    if outcome.comparison:
        text.append(f"  {outcome.comparison}")
    text.append("  ")
    text.append_text(SAVED)
    if outcome.messages and outcome.severity is not Severity.OK:
        text.append(f"\n{outcome.messages[0]}", style="italic")
    return text


def entry_label(quantity: Quantity) -> str:
    """The field's label, with the joint state an earth reading implies."""
    joint = JOINT_FOR.get(quantity)
    label = quantity.label
    if joint is JointState.OPEN:
        label += " (test joint open)"
    elif joint is JointState.CLOSED:
        label += " (test joint closed)"
    return f"{label}, {format_unit(quantity)}"


def format_unit(quantity: Quantity) -> str:
    return "count" if quantity is Quantity.STRIKE_COUNT else quantity.unit


class ReadingEntry(SavingField):
    """One quantity of the component in view: type what the instrument shows, then leave.

    Attributes:
        quantity: What this entry measures.
        outcome: The verdict on what was last saved, or None before the first save.
    """

    def __init__(
        self,
        quantity: Quantity,
        record: Callable[[str], ReadingOutcome],
        *,
        outcome: ReadingOutcome | None = None,
        id: str | None = None,
    ) -> None:
        self.quantity = quantity
        self.outcome = outcome
        self._record = record
        typed = ""
        if outcome is not None:
            reading = outcome.reading
            typed = format_value(reading.value, quantity, reading.over_range)
        super().__init__(
            entry_label(quantity),
            self._save,
            value=typed,
            saved_status=outcome_text(outcome) if outcome else None,
            placeholder=PLACEHOLDERS[quantity],
            allow_blank=False,
            id=id,
        )

    def _save(self, text: str) -> Text:
        self.outcome = self._record(text)
        return outcome_text(self.outcome)
