"""A reading typed with its unit, judged against the site's profile the moment it is saved."""

from __future__ import annotations

from collections.abc import Callable

from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.containers import Horizontal
from textual.widgets import Checkbox, Input, Label, Select, Static

from inspectkit.model import METHODS_FOR, JointState, Method, Quantity, Severity
from inspectkit.tui.widgets.saving_field import SAVED, SavingField
from inspectkit.units import format_value
from inspectkit.walkdown import DEFAULT_METHOD, JOINT_FOR, ReadingOutcome, WalkdownError

#: Saves the text typed with the method chosen and whether it is doubtful, and judges it.
Recorder = Callable[[str, Method, bool], ReadingOutcome]

#: Short names for the method pick list, narrow enough to sit beside the value at 80 columns.
METHOD_NAMES: dict[Method, str] = {
    Method.FALL_OF_POTENTIAL_3P: "3-pole",
    Method.FOUR_POLE: "4-pole",
    Method.CLAMP_ON: "clamp-on",
    Method.LOW_OHM_2W: "2-wire",
    Method.LOW_OHM_4W: "4-wire",
    Method.WENNER: "Wenner",
    Method.COUNTER_READ: "read",
}

#: Said under a field whose method or doubt was set before any value was typed.
KEPT_FOR_VALUE = Text("saved with the value, once it is typed", style="dim")

#: Style of the verdict word; the word (PASS, FAIL, WATCH) always carries the meaning.
VERDICT_STYLES: dict[Severity, str] = {
    Severity.OK: "bold green",
    Severity.WATCH: "bold yellow",
    Severity.INCOMPLETE: "bold magenta",
    Severity.RETAKE: "bold black on yellow",
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

    Beside the value: the measuring method, where the quantity allows more than one,
    and a box to mark the reading doubtful. Changing either saves at once, with the
    value already saved, and the verdict says so; Enter on the value skips them.

    Args:
        choices: Method and doubt picked earlier for a value not yet typed.

    Attributes:
        quantity: What this entry measures.
        outcome: The verdict on what was last saved, or None before the first save.
        method: How the reading is (or will be) taken.
        doubtful: Whether the inspector doubts it (`Reading.unreliable`).
    """

    blank_refusal = "type the right value, or press ctrl+t to withdraw the reading"

    DEFAULT_CSS = """
    ReadingEntry > .reading-row { height: auto; }
    ReadingEntry > .reading-row > Input { width: 1fr; }
    ReadingEntry > .reading-row > Select { width: 16; }
    ReadingEntry > .reading-row > Checkbox { width: auto; }
    ReadingEntry.-error > .reading-row > Input { border: tall $error; }
    """

    def __init__(
        self,
        quantity: Quantity,
        record: Recorder,
        *,
        outcome: ReadingOutcome | None = None,
        choices: tuple[Method, bool] | None = None,
        id: str | None = None,
    ) -> None:
        self.quantity = quantity
        self.outcome = outcome
        self._record = record
        self.methods = [m for m in Method if m in METHODS_FOR[quantity]]
        self.method, self.doubtful = choices or (DEFAULT_METHOD[quantity], False)
        typed = ""
        if outcome is not None:
            reading = outcome.reading
            typed = format_value(reading.value, quantity, reading.over_range)
            self.method, self.doubtful = reading.method, reading.unreliable
        super().__init__(
            entry_label(quantity),
            self._save,
            value=typed,
            saved_status=outcome_text(outcome) if outcome else KEPT_FOR_VALUE if choices else None,
            placeholder=PLACEHOLDERS[quantity],
            allow_blank=False,
            id=id,
        )

    def compose(self) -> ComposeResult:
        yield Label(self.label)
        with Horizontal(classes="reading-row"):
            yield Input(self._initial, placeholder=self._placeholder)
            if len(self.methods) > 1:
                yield Select(
                    [(METHOD_NAMES[m], m.value) for m in self.methods],
                    value=self.method.value,
                    allow_blank=False,
                    classes="method",
                    tooltip="How the reading was taken",
                )
            yield Checkbox(
                "doubtful",
                self.doubtful,
                classes="doubtful",
                tooltip="Keep the reading, but not as a pass: re-test next visit",
            )
        yield Static(self._initial_status or "", classes="status")

    @property
    def method_select(self) -> Select[str] | None:
        """The method pick list, or None where the quantity has only one method."""
        found = self.query(".method").results(Select)
        return next(iter(found), None)

    @property
    def doubt_box(self) -> Checkbox:
        return self.query_one(".doubtful", Checkbox)

    @property
    def pending_choices(self) -> tuple[Method, bool] | None:
        """Method and doubt picked with no value saved yet, to keep when the stop is left."""
        if self.outcome is None and (self.method, self.doubtful) != (
            DEFAULT_METHOD[self.quantity],
            False,
        ):
            return self.method, self.doubtful
        return None

    def withdrawn(self) -> None:
        """The saved reading was taken back: the field is empty, the choices the usual."""
        self.outcome = None
        self.saved_value = ""
        self.input.value = ""
        self.method, self.doubtful = DEFAULT_METHOD[self.quantity], False
        if (select := self.method_select) is not None:
            select.value = self.method.value
        self.doubt_box.value = False
        self.show_status(Text("withdrawn: nothing recorded", style="dim"))

    def _save(self, text: str) -> Text:
        self.outcome = self._record(text, self.method, self.doubtful)
        return outcome_text(self.outcome)

    def on_input_submitted(self, event: Input.Submitted) -> None:
        """Enter saves and goes on to the next entry, past this one's method and doubt."""
        event.stop()
        event.prevent_default()
        if self.commit():
            self.screen.set_focus(self.doubt_box, scroll_visible=False)
            self.screen.focus_next()

    @on(Select.Changed, ".method")
    def _method_chosen(self, event: Select.Changed) -> None:
        event.stop()
        if event.value is Select.NULL or event.value == self.method.value:
            return
        self.method = Method(str(event.value))
        self.save_choices()

    @on(Checkbox.Changed, ".doubtful")
    def _doubt_changed(self, event: Checkbox.Changed) -> None:
        event.stop()
        if event.value == self.doubtful:
            return
        self.doubtful = event.value
        self.save_choices()

    def save_choices(self) -> None:
        """Save a new method or doubt at once with the value; before any value, keep it for it."""
        if self.dirty:
            self.commit()  # the text typed is saved with the new choice, or refused with it
            return
        if self.outcome is None:
            self.show_status(KEPT_FOR_VALUE)
            return
        try:
            status = self._save(self.saved_value)
        except WalkdownError as exc:
            self.show_error(str(exc))
            return
        self.show_status(status)
        self.post_message(self.Saved(self, self.saved_value))
