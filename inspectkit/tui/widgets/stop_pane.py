"""The walkdown's right-hand pane: one component's checklist, readings, grade and photo.

The pane is built once, with one reading entry per quantity, and each move to
another component changes what those widgets show (`StopPane.show`) rather than
removing and mounting new ones. A move is then one synchronous step: no key can
arrive while there is no field in focus, and every field saves on the component it
shows, never on the one the walk moved to.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field
from functools import cache

from rich.text import Text
from textual.app import ComposeResult
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.widget import Widget
from textual.widgets import Static

from inspectkit.checklists import ChecklistError, load_checklist
from inspectkit.engine.walking import Stop
from inspectkit.model import QUANTITIES_FOR, ComponentKind, Finding, Method, Quantity
from inspectkit.tui.widgets.finding_form import FindingForm, FindingSaver
from inspectkit.tui.widgets.reading_entry import ReadingEntry, Recorder
from inspectkit.tui.widgets.saving_field import SavingField
from inspectkit.tui.widgets.traverse_view import TraverseView
from inspectkit.walkdown.judging import ReadingOutcome

#: Reading entries the pane holds: as many as any component has quantities.
SLOTS = max(len(quantities) for quantities in QUANTITIES_FOR.values())

#: Attaches a photo path to a component; returns what to say under the field.
PhotoSaver = Callable[[str, str], Text]

#: The ids of the fields of a stop whose unsaved text is kept, besides `q-<quantity>`.
FINDING_FIELDS = ("finding-text", "finding-remedial", "finding-due")


@dataclass
class StopView:
    """What the pane shows for one stop, as the screen holds it.

    Attributes:
        stop: The component and its quantities.
        parent_tag: The tag of the component it sits on, if any.
        outcomes: The saved readings of this visit, judged, by quantity.
        choices: Method and doubt picked before a value was typed, by quantity.
        finding: The grade and words saved, or None.
        photos: How many photos are attached to it.
        typed: Text typed and not saved, by field id.
    """

    stop: Stop
    parent_tag: str | None
    outcomes: dict[Quantity, ReadingOutcome]
    choices: dict[Quantity, tuple[Method, bool]]
    finding: Finding | None
    photos: int
    typed: dict[str, str] = field(default_factory=dict)


def photo_label(count: int) -> str:
    shown = "none yet" if count == 0 else f"{count} attached"
    return f"photo: a file, or a folder of new photos matched by time ({shown})"


@cache
def checklist_text(kind: ComponentKind) -> Text:
    try:
        items = load_checklist(kind)
    except ChecklistError as exc:
        return Text(str(exc), style="bold red")
    text = Text("Check:\n", style="bold")
    for item in items:
        text.append(f" • {item}\n")
    return text


def heading_text(stop: Stop, parent_tag: str | None) -> Text:
    component = stop.component
    heading = Text(f"{component.tag}", style="bold reverse")
    heading.append(f"  {component.kind.label}", style="bold")
    if component.location:
        heading.append(f", {component.location}")
    if parent_tag is not None:
        heading.append(f"  (on {parent_tag})", style="dim")
    return heading


class StopPane(VerticalScroll):
    """The component in view, shown in widgets that stay mounted for the whole walk.

    Attributes:
        component_id: The component shown, or "" before the first `show`.
    """

    def __init__(
        self, record: Recorder, grade: FindingSaver, photo: PhotoSaver, *, id: str | None = None
    ) -> None:
        super().__init__(id=id)
        self._record = record
        self._grade = grade
        self._photo = photo
        self.component_id = ""
        self._quantities: tuple[Quantity, ...] = ()
        self._texts: dict[str, Text] = {}
        self._entries: list[ReadingEntry] = []
        self._finding: FindingForm | None = None
        self._photo_field: SavingField | None = None

    def compose(self) -> ComposeResult:
        yield Static(id="heading")
        with Horizontal(id="split"):
            yield Static(id="checklist")
            with Vertical(id="work"):
                for slot in range(SLOTS):
                    yield ReadingEntry(Quantity.CONTINUITY, self._record, id=f"entry-{slot}")
                self._traverse = TraverseView(id="traverse")
                yield self._traverse
                yield FindingForm(self._grade)
                yield SavingField(
                    photo_label(0),
                    lambda text: self._photo(self.component_id, text),
                    placeholder="e.g. ~/card/DCIM/IMG_0412.jpg or ~/card/DCIM",
                    id="photo",
                )

    # ------------------------------------------------------------ accessors

    @property
    def entries(self) -> list[ReadingEntry]:
        """The entries of the component in view, in entry order."""
        return self._slots()[: len(self._quantities)]

    def entry(self, quantity: Quantity) -> ReadingEntry:
        """The entry of one quantity of the component in view.

        Raises:
            LookupError: the component in view has no such reading.
        """
        for entry in self.entries:
            if entry.quantity is quantity:
                return entry
        raise LookupError(f"no {quantity.label} on the component in view")

    def _slots(self) -> list[ReadingEntry]:
        if not self._entries:
            self._entries = list(self.query(ReadingEntry))
        return self._entries

    @property
    def finding(self) -> FindingForm:
        if self._finding is None:
            self._finding = self.query_one(FindingForm)
        return self._finding

    @property
    def photo(self) -> SavingField:
        if self._photo_field is None:
            self._photo_field = self.query_one("#photo", SavingField)
        return self._photo_field

    def fields(self) -> list[SavingField]:
        """Every field of the component in view that saves text."""
        return [*self.entries, *self.finding.fields(), self.photo]

    def first_field(self) -> Widget:
        """Where typing starts on arrival: the first reading, or the grade."""
        entries = self.entries
        return entries[0].input if entries else self.query_one("#grade")

    # --------------------------------------------------------------- showing

    def _update(self, selector: str, content: Text) -> None:
        """Change a text in the pane only if it differs: each change costs a new layout."""
        if self._texts.get(selector) != content:
            self._texts[selector] = content
            self.query_one(selector, Static).update(content)

    def show(self, view: StopView) -> None:
        """Show another component's fields in the same widgets, in one step (nothing is
        awaited); `show_around` then shows what frames them."""
        stop = view.stop
        component = stop.component
        self.component_id = component.id
        self._quantities = stop.quantities
        for slot, entry in enumerate(self._slots()):
            used = slot < len(stop.quantities)
            if entry.display != used:
                entry.display = used
            if used:
                quantity = stop.quantities[slot]
                entry.load(
                    component.id,
                    quantity,
                    view.outcomes.get(quantity),
                    view.choices.get(quantity),
                    view.typed.get(f"q-{quantity.value}"),
                )
        typed = {key.removeprefix("finding-"): view.typed[key] for key in FINDING_FIELDS
                 if key in view.typed}  # fmt: skip
        self.finding.load(component.id, view.finding, typed)
        self.photo.load("", typed=view.typed.get("photo"))
        if self.scroll_y:
            self.scroll_home(animate=False, immediate=True)

    def show_around(self, view: StopView) -> None:
        """What frames the fields of `view`: the heading, the checklist, the entries' labels,
        the traverse drawn and the photo count. Nothing here takes a key, so the walkdown
        shows it just after the fields (`WalkdownScreen.move_now`), before any repaint."""
        stop = view.stop
        for entry in self.entries:
            entry.show_label()
        self._update("#heading", heading_text(stop, view.parent_tag))
        self._update("#checklist", checklist_text(stop.component.kind))
        self._traverse.show_outcomes(view.outcomes)
        self.photo.set_label(photo_label(view.photos))
