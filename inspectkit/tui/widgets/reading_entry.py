"""A reading typed with its unit, judged against the site's profile the moment it is saved."""

from __future__ import annotations

from collections.abc import Callable
from functools import cache

from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.containers import Horizontal
from textual.widgets import Checkbox, Label, Select, Static

from inspectkit.model import (
    DEFAULT_METHOD,
    JOINT_FOR,
    METHODS_FOR,
    JointState,
    Method,
    Quantity,
    Severity,
)
from inspectkit.tui.widgets.held_keys import PickList, ShownCheckbox
from inspectkit.tui.widgets.saving_field import SAVED, SavingField
from inspectkit.units import format_value
from inspectkit.walkdown.errors import WalkdownError
from inspectkit.walkdown.judging import ReadingOutcome

#: Saves, for a component and quantity, the text typed with the method chosen and whether
#: it is doubtful, and judges it.
Recorder = Callable[[str, Quantity, str, Method, bool], ReadingOutcome]

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


@cache
def method_options(quantity: Quantity) -> tuple[tuple[str, str], ...]:
    """The pick list's choices for a quantity's methods, in the order of `Method`."""
    return tuple((METHOD_NAMES[m], m.value) for m in Method if m in METHODS_FOR[quantity])


#: Each different list of methods, in the order of `Quantity`: an entry holds a pick
#: list for each and shows the one its quantity needs, so a move never rebuilds one.
METHOD_LISTS: tuple[tuple[tuple[str, str], ...], ...] = tuple(
    dict.fromkeys(method_options(q) for q in Quantity if len(method_options(q)) > 1)
)


class ReadingEntry(SavingField):
    """One reading of the component in view: type what the instrument shows, then leave.

    Beside the value: the measuring method, where the quantity allows more than one,
    and a box to mark the reading doubtful. Changing either saves at once, with the
    value already saved, and the verdict says so; Enter on the value skips them.
    The walkdown keeps a few entries for the whole walk and `load`s each component's
    readings into them, so an entry always saves on the component and quantity it shows.

    Attributes:
        quantity: What this entry measures now.
        component_id: The component whose reading the entry shows and saves.
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

    def __init__(self, quantity: Quantity, record: Recorder, *, id: str | None = None) -> None:
        self.quantity = quantity
        self.component_id = ""
        self.outcome: ReadingOutcome | None = None
        self._record = record
        self.method, self.doubtful = DEFAULT_METHOD[quantity], False
        self._box: Checkbox | None = None
        self._lists: dict[tuple[tuple[str, str], ...], Select[str]] = {}
        super().__init__(
            entry_label(quantity),
            self._save,
            placeholder=PLACEHOLDERS[quantity],
            allow_blank=False,
            id=id,
        )

    @property
    def methods(self) -> list[Method]:
        """The methods the quantity can be measured by."""
        return [m for m in Method if m in METHODS_FOR[self.quantity]]

    @property
    def draft_key(self) -> str:
        return f"q-{self.quantity.value}"

    def compose(self) -> ComposeResult:
        yield Label(self.label)
        with Horizontal(classes="reading-row"):
            yield self.make_input()
            for options in METHOD_LISTS:
                select = PickList(
                    options,
                    value=options[0][1],
                    allow_blank=False,
                    classes="method",
                    tooltip="How the reading was taken (Enter to choose)",
                )
                select.display = options == method_options(self.quantity)
                self._lists[options] = select
                yield select
            box = ShownCheckbox(
                "doubtful",
                self.doubtful,
                classes="doubtful",
                tooltip="Keep the reading, but not as a pass: re-test next visit",
            )
            box.on_toggle = self._doubt_changed
            yield box
        yield Static("", classes="status")

    def load(  # type: ignore[override]
        self,
        component_id: str,
        quantity: Quantity,
        outcome: ReadingOutcome | None,
        choices: tuple[Method, bool] | None = None,
        typed: str | None = None,
    ) -> None:
        """Show one component's reading of a quantity, in place of the last one shown.

        Args:
            outcome: The saved reading judged, or None when there is none yet.
            choices: Method and doubt picked earlier for a value not yet typed.
            typed: Text typed earlier and not saved (kept as typed).
        """
        if quantity is not self.quantity:
            self._measure(quantity)
        self.component_id = component_id
        self.outcome = outcome
        self.method, self.doubtful = choices or (DEFAULT_METHOD[quantity], False)
        saved = ""
        if outcome is not None:
            reading = outcome.reading
            saved = format_value(reading.value, quantity, reading.over_range)
            self.method, self.doubtful = reading.method, reading.unreliable
        self._show_choices()
        status = outcome_text(outcome) if outcome else KEPT_FOR_VALUE if choices else None
        super().load(saved, status, typed=typed)

    def _measure(self, quantity: Quantity) -> None:
        """Make the entry one for another quantity: example and methods (`show_label` then
        says which, once the keys sent have come in: the label takes none)."""
        before = self._lists.get(method_options(self.quantity))
        self.quantity = quantity
        self.input.placeholder = PLACEHOLDERS[quantity]
        after = self._lists.get(method_options(quantity))
        if after is not before:
            if before is not None:
                before.display = False
            if after is not None:
                after.display = True

    def show_label(self) -> None:
        self.set_label(entry_label(self.quantity))

    def _show_choices(self) -> None:
        select = self.method_select
        if select is not None and select.value != self.method.value:
            with select.prevent(Select.Changed):
                select.value = self.method.value
        box = self.doubt_box
        if box.value != self.doubtful:
            with box.prevent(Checkbox.Changed):
                box.value = self.doubtful

    @property
    def method_select(self) -> Select[str] | None:
        """The method pick list, or None where the quantity has only one method."""
        return self._lists.get(method_options(self.quantity))

    @property
    def doubt_box(self) -> Checkbox:
        if self._box is None:
            self._box = self.query_one(".doubtful", Checkbox)
        return self._box

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
        self.load(self.component_id, self.quantity, None)
        self.show_status(Text("withdrawn: nothing recorded", style="dim"))

    def _save(self, text: str) -> Text:
        self.outcome = self._record(
            self.component_id, self.quantity, text, self.method, self.doubtful
        )
        return outcome_text(self.outcome)

    def submit(self) -> None:
        """Enter saves and goes on to the next entry, past this one's method and doubt."""
        if self.commit():
            self.screen.set_focus(self.doubt_box, scroll_visible=False)
            self.screen.focus_next()

    @on(Select.Changed, ".method")
    def _method_chosen(self, event: Select.Changed) -> None:
        event.stop()
        if event.value is Select.NULL or event.value == self.method.value:
            return
        if event.select is not self.method_select or event.select.value != event.value:
            return  # an old choice, made before this entry showed another component
        self.method = Method(str(event.value))
        self.save_choices()

    @on(Checkbox.Changed, ".doubtful")
    def _doubt_heard(self, event: Checkbox.Changed) -> None:
        """A change made by the program; a key or a click was handled as it happened."""
        event.stop()
        if event.value == event.checkbox.value:  # not an old change, before a `load`
            self._doubt_changed(event.value)

    def _doubt_changed(self, value: bool) -> None:
        if value == self.doubtful:
            return
        self.doubtful = value
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
