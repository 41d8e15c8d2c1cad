"""The walkdown: component by component in walking order, every field saved as it is left."""

from __future__ import annotations

from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.screen import Screen
from textual.widgets import Footer, Header, OptionList, Select, Static
from textual.widgets.option_list import Option

from inspectkit.checklists import ChecklistError, load_checklist
from inspectkit.model import (
    Finding,
    Grade,
    Inspection,
    Instrument,
    Method,
    Quantity,
    Severity,
    SoilCondition,
)
from inspectkit.store import Store
from inspectkit.tui.dialogs.confirm import ConfirmDialog
from inspectkit.tui.dialogs.visit_details import VisitDetailsDialog
from inspectkit.tui.widgets.finding_form import FindingForm
from inspectkit.tui.widgets.reading_entry import ReadingEntry
from inspectkit.tui.widgets.saving_field import SavingField
from inspectkit.tui.widgets.tag_prompt import TagPrompt
from inspectkit.units import format_value
from inspectkit.walkdown import (
    JOINT_FOR,
    Missing,
    ReadingOutcome,
    SavedEntries,
    Stop,
    WalkdownError,
    attach_photos,
    finish_inspection,
    grade_component,
    missing_for_completion,
    opened_joints,
    record_reading,
    saved_entries,
    set_details,
    set_soil,
    site_context,
    walk_for,
    withdraw_reading,
)

#: Setting that remembers the instrument in use, shared with the settings screen.
INSTRUMENT_SETTING = "instrument_id"
#: How many ungraded tags the finish question names before "and N more".
_UNGRADED_SHOWN = 20

#: A stop's state in the list: the word carries the meaning, the colour repeats it.
_MARK_STYLES = {
    "todo": "dim",
    "part": "yellow",
    "done": "bold green",
    "WATCH": "bold yellow",
    "ATTN": "bold yellow",
    "FAIL": "bold white on red",
    "DEFECT": "bold white on red",
}


class WalkdownScreen(Screen[None]):
    """One visit, walked component by component; nothing typed here waits for a Save key.

    A field saves when it is left (Tab, Enter, a click elsewhere, or moving to
    another component) and only then says "saved". A field that cannot be saved
    says what it expects and keeps what was typed; moving on keeps it too, unsaved.
    """

    CSS_PATH = "walkdown.tcss"
    HORIZONTAL_BREAKPOINTS = [(0, "-narrow"), (120, "-wide")]

    BINDINGS = [
        Binding(
            "pagedown",
            "step(1)",
            "Next",
            id="walkdown.next",
            priority=True,
            tooltip="Save this component and go to the next one on the walk",
        ),
        Binding(
            "pageup",
            "step(-1)",
            "Prev",
            id="walkdown.previous",
            priority=True,
            tooltip="Save this component and go back to the one before",
        ),
        Binding(
            "ctrl+g",
            "go_to_tag",
            "Tag",
            id="walkdown.tag",
            priority=True,
            tooltip="Jump to a component by the tag painted on it",
        ),
        Binding(
            "ctrl+l",
            "focus_list",
            "List",
            id="walkdown.list",
            tooltip="Move to the list of components",
        ),
        Binding(
            "ctrl+f",
            "finish",
            "Finish",
            id="walkdown.finish",
            priority=True,
            tooltip="Mark the inspection complete, after listing what is missing",
        ),
        # Kept out of the footer, which is full at 80 columns; the command palette lists it.
        Binding(
            "ctrl+d",
            "details",
            "Visit details",
            id="walkdown.details",
            priority=True,
            show=False,
            tooltip="Weather, what could not be inspected, who came along, alterations, notes",
        ),
        Binding(
            "ctrl+t",
            "withdraw",
            "Withdraw reading",
            id="walkdown.withdraw",
            priority=True,
            show=False,
            tooltip="Take back the saved reading the cursor is on (typed on the wrong joint)",
        ),
        Binding(
            "escape",
            "leave",
            "Back",
            id="walkdown.back",
            tooltip="Save and leave the walkdown; it can be continued later",
        ),
    ]

    def __init__(self, inspection_id: str) -> None:
        super().__init__()
        self.inspection_id = inspection_id
        self.stops: list[Stop] = []
        self.index = 0
        self.saved = SavedEntries({}, {}, {})
        #: Text that could not be saved, by (component id, field id), kept as typed.
        self.drafts: dict[tuple[str, str], str] = {}
        #: Method and doubt picked before a value was typed, by (component id, quantity).
        self.choices: dict[tuple[str, Quantity], tuple[Method, bool]] = {}

    # ------------------------------------------------------------ accessors

    @property
    def store(self) -> Store:
        return self.app.store  # type: ignore[attr-defined, no-any-return]

    @property
    def stop(self) -> Stop:
        return self.stops[self.index]

    @property
    def stop_list(self) -> OptionList:
        return self.query_one("#stops", OptionList)

    @property
    def detail(self) -> VerticalScroll:
        return self.query_one("#detail", VerticalScroll)

    @property
    def inspection(self) -> Inspection:
        inspection = self.store.get(Inspection, self.inspection_id)
        assert inspection is not None
        return inspection

    # ------------------------------------------------------------- building

    def compose(self) -> ComposeResult:
        inspection = self.inspection
        self.context = site_context(self.store, inspection.site_id)
        site = self.context.site
        self.stops = walk_for(self.store, self.inspection_id)
        self.saved = saved_entries(self.store, self.inspection_id)
        self.title = site.name
        self.sub_title = f"{inspection.kind.value.replace('_', '-')} inspection, {inspection.date}"
        yield Header()
        with Horizontal(id="bar"):
            yield Static(id="where")
            yield Select(
                self._instrument_options(),
                prompt="instrument…",
                value=self._instrument_in_use() or Select.NULL,
                id="instrument",
            )
            yield Select(
                [(f"ground {s.value}", s.value) for s in SoilCondition],
                prompt="ground…",
                value=inspection.soil.value if inspection.soil else Select.NULL,
                id="soil",
            )
        with Horizontal(id="body"):
            yield OptionList(*self._options(), id="stops")
            yield VerticalScroll(id="detail")
        yield Footer()

    def _instrument_options(self) -> list[tuple[str, str]]:
        today = self.app.today if hasattr(self.app, "today") else None
        options = []
        for instrument in self.store.select(Instrument, order_by="description, serial"):
            label = f"{instrument.description} {instrument.serial}"
            due = instrument.calibration_due
            if due is not None and today is not None and due < today:
                label += " (calibration lapsed)"
            options.append((label, instrument.id))
        return options

    def _instrument_in_use(self) -> str | None:
        chosen = self.store.get_setting(INSTRUMENT_SETTING)
        known = {value for _, value in self._instrument_options()}
        return chosen if chosen in known else None

    def on_screen_resume(self) -> None:
        # Components may have been edited on another screen meanwhile.
        self.context = site_context(self.store, self.context.site.id)

    async def on_mount(self) -> None:
        if not self.stops:
            self.detail.mount(Static("This site has no components in service to inspect."))
            return
        await self.show_stop(0)

    # ---------------------------------------------------------- the stop list

    def _options(self) -> list[Option]:
        return [Option(self._prompt(i), id=f"stop-{i}") for i in range(len(self.stops))]

    def _prompt(self, index: int) -> Text:
        stop = self.stops[index]
        component = stop.component
        mark = self._mark(stop)
        text = Text("  " * stop.depth)
        text.append(component.tag.ljust(12 - 2 * stop.depth), style="bold")
        text.append(f"{mark:<6}", style=_MARK_STYLES[mark])
        if self.has_class("-wide"):
            text.append(f" {component.kind.label}", style="dim")
        return text

    def _mark(self, stop: Stop) -> str:
        """One word for how far a component is: todo, part, done, or the worst found."""
        cid = stop.component.id
        outcomes = [o for (c, _), o in self.saved.readings.items() if c == cid]
        finding = self.saved.findings.get(cid)
        if finding is not None and finding.grade is Grade.DEFECT:
            return "DEFECT"
        worst = max((o.severity for o in outcomes), key=lambda s: s.rank, default=Severity.OK)
        if worst.rank >= Severity.FAIL.rank:
            return "FAIL"
        if finding is not None and finding.grade is Grade.NEEDS_ATTENTION:
            return "ATTN"
        if worst is Severity.WATCH:
            return "WATCH"
        if self._complete(stop):
            return "done"
        return "part" if finding is not None or outcomes else "todo"

    def _complete(self, stop: Stop) -> bool:
        """Graded, and every reading but the optional soil resistivity taken."""
        cid = stop.component.id
        required = {q for q in stop.quantities if q is not Quantity.SOIL_RESISTIVITY}
        taken = {q for (c, q) in self.saved.readings if c == cid}
        return cid in self.saved.findings and required <= taken

    def _refresh_mark(self) -> None:
        self.stop_list.replace_option_prompt_at_index(self.index, self._prompt(self.index))
        self._show_where()

    def on_resize(self) -> None:
        if self.stops:
            for index in range(len(self.stops)):
                self.stop_list.replace_option_prompt_at_index(index, self._prompt(index))

    @on(OptionList.OptionSelected, "#stops")
    async def _picked(self, event: OptionList.OptionSelected) -> None:
        await self.show_stop(event.option_index)

    # ------------------------------------------------------------- one stop

    async def show_stop(self, index: int, *, focus_entry: bool = True) -> None:
        """Leave the current component (saving what can be saved) and show another."""
        if self.detail.children:
            self.keep_unsaved()
        self.index = max(0, min(index, len(self.stops) - 1))
        stop = self.stop
        self.stop_list.highlighted = self.index
        await self.detail.remove_children()
        await self.detail.mount_all(self._stop_widgets(stop))
        for (cid, field_id), text in self.drafts.items():
            if cid == stop.component.id:
                field = self.detail.query_one(f"#{field_id}", SavingField)
                field.input.value = text
        self._show_where()
        self.detail.scroll_home(animate=False)
        if focus_entry:
            entries = self.detail.query(ReadingEntry)
            target = entries.first().input if entries else self.query_one("#grade")
            target.focus()

    def _stop_widgets(self, stop: Stop) -> list[Static | Vertical | SavingField]:
        component = stop.component
        heading = Text(f"{component.tag}", style="bold reverse")
        heading.append(f"  {component.kind.label}", style="bold")
        if component.location:
            heading.append(f", {component.location}")
        parent = next(
            (s.component for s in self.stops if s.component.id == component.parent_id), None
        )
        if parent is not None:
            heading.append(f"  (on {parent.tag})", style="dim")
        widgets: list[Static | Vertical | SavingField] = [Static(heading, id="heading")]
        entries = [
            ReadingEntry(
                quantity,
                lambda text, method, doubtful, q=quantity: self._save_reading(
                    q, text, method, doubtful
                ),
                outcome=self.saved.readings.get((component.id, quantity)),
                choices=self.choices.get((component.id, quantity)),
                id=f"q-{quantity.value}",
            )
            for quantity in stop.quantities
        ]
        finding = FindingForm(self._save_finding, self.saved.findings.get(component.id))
        photo = SavingField(
            f"photo: a file, or a folder of new photos matched by time ({self._photo_count()})",
            self._save_photo,
            placeholder="e.g. ~/card/DCIM/IMG_0412.jpg or ~/card/DCIM",
            id="photo",
        )
        work = Vertical(*entries, finding, photo, id="work")
        widgets.append(Horizontal(Static(self._checklist(stop), id="checklist"), work, id="split"))
        return widgets

    def _checklist(self, stop: Stop) -> Text:
        try:
            items = load_checklist(stop.component.kind)
        except ChecklistError as exc:
            return Text(str(exc), style="bold red")
        text = Text("Check:\n", style="bold")
        for item in items:
            text.append(f" • {item}\n")
        return text

    def _photo_count(self) -> str:
        count = self.saved.photos.get(self.stop.component.id, 0)
        return "none yet" if count == 0 else f"{count} attached"

    def _show_where(self) -> None:
        done = sum(1 for s in self.stops if self._complete(s))
        self.query_one("#where", Static).update(
            Text.assemble(
                (f" {self.index + 1} of {len(self.stops)} ", "bold reverse"),
                f"  {done} done",
            )
        )

    def keep_unsaved(self) -> None:
        """Save every changed field of the stop in view; keep refused text as typed."""
        cid = self.stop.component.id
        refused = 0
        for field in self.detail.query(SavingField):
            key = (cid, field.id or "")
            if field.dirty and not field.commit():
                self.drafts[key] = field.value
                refused += 1
            else:
                self.drafts.pop(key, None)
        for entry in self.detail.query(ReadingEntry):
            key = (cid, entry.quantity)
            if (choices := entry.pending_choices) is not None:
                self.choices[key] = choices
            else:
                self.choices.pop(key, None)
        if refused:
            self.notify(
                f"{self.stop.component.tag}: {refused} field(s) not saved, kept as typed",
                severity="warning",
            )

    # -------------------------------------------------------------- saving

    def _save_reading(
        self, quantity: Quantity, text: str, method: Method, doubtful: bool
    ) -> ReadingOutcome:
        soil = self.query_one("#soil", Select).value
        instrument = self.query_one("#instrument", Select).value
        outcome = record_reading(
            self.store,
            self.inspection_id,
            self.stop.component.id,
            quantity,
            text,
            method=method,
            instrument_id=None if instrument is Select.NULL else str(instrument),
            soil=None if soil is Select.NULL or quantity not in JOINT_FOR else str(soil),
            unreliable=doubtful,
            # The app's clock (on its fixed day in tests); a bare harness: the walkdown's.
            taken_at=self.app.now() if hasattr(self.app, "now") else None,
            context=self.context,
        )
        self.saved.readings[(self.stop.component.id, quantity)] = outcome
        self._refresh_mark()
        return outcome

    def _save_finding(self, grade: Grade, text: str, remedial: str, due: str) -> Finding:
        finding = grade_component(
            self.store,
            self.inspection_id,
            self.stop.component.id,
            grade,
            text,
            remedial,
            due.strip() or None,
        )
        self.saved.findings[self.stop.component.id] = finding
        self._refresh_mark()
        return finding

    def _save_photo(self, text: str) -> Text:
        if not text.strip():
            return Text("")
        here = self.stop.component.id
        matches = attach_photos(self.store, self.inspection_id, text.strip(), here)
        counts = self.saved.photos
        for match in matches:
            counts[match.component_id] = counts.get(match.component_id, 0) + 1
        if len(matches) == 1 and matches[0].component_id == here:
            status = f"✓ saved photo {matches[0].photo.original_name}"
        else:
            matched = sum(1 for m in matches if m.component_id == here)
            status = (
                f"✓ saved {len(matches)} new photo(s), {matched} matched by time to "
                f"{self.stop.component.tag}"
            )
        self.call_after_refresh(self._clear_photo_field)
        return Text(f"{status} ({self._photo_count()} here)", style="bold green")

    def _clear_photo_field(self) -> None:
        """Empty the path once attached, ready for the next photo; the status stays."""
        for field in self.detail.query("#photo").results(SavingField):
            field.saved_value = ""
            field.input.value = ""

    @on(Select.Changed, "#instrument")
    def _instrument_changed(self, event: Select.Changed) -> None:
        if event.value is not Select.NULL and event.value != self._instrument_in_use():
            self.store.set_setting(INSTRUMENT_SETTING, str(event.value))
            self.notify("Instrument remembered for the next readings")

    @on(Select.Changed, "#soil")
    def _soil_changed(self, event: Select.Changed) -> None:
        value = None if event.value is Select.NULL else str(event.value)
        current = self.inspection.soil
        if value == (current.value if current else None):
            return
        try:
            set_soil(self.store, self.inspection_id, value)
        except WalkdownError as exc:
            self.notify(str(exc), severity="error")

    # ------------------------------------------------------------- actions

    async def action_step(self, delta: int) -> None:
        """Go to the next (or previous) component on the walk."""
        if self.stops:
            await self.show_stop(self.index + delta)

    def action_focus_list(self) -> None:
        self.stop_list.focus()

    def action_go_to_tag(self) -> None:
        async def go(tag: str | None) -> None:
            if tag is None:
                return
            index = next(i for i, s in enumerate(self.stops) if s.component.tag == tag)
            await self.show_stop(index)

        self.app.push_screen(TagPrompt([s.component.tag for s in self.stops]), go)

    def action_finish(self) -> None:
        if self.stops:
            self.keep_unsaved()
        missing = missing_for_completion(self.store, self.inspection_id)
        opened = [c.tag for c in opened_joints(self.store, self.inspection_id)]

        def done(confirmed: bool | None) -> None:
            if not confirmed:
                return
            try:
                # Yes to the question is yes to the joints being reconnected as well.
                finish_inspection(self.store, self.inspection_id, reconnected=bool(opened))
            except WalkdownError as exc:
                self.notify(str(exc), severity="error")
                return
            self.notify("Inspection marked complete")
            self.dismiss()

        self.app.push_screen(
            ConfirmDialog(_finish_question(missing, opened), yes_label="Mark complete"), done
        )

    def action_details(self) -> None:
        """Open the visit's details; each saves through `set_details` when the form is saved."""

        def save(**details: str) -> Inspection:
            return set_details(self.store, self.inspection_id, **details)

        def done(saved: Inspection | None) -> None:
            if saved is not None:
                self.notify("Visit details saved")

        self.app.push_screen(VisitDetailsDialog(self.inspection, save), done)

    def action_withdraw(self) -> None:
        """Take back the reading of the entry in focus, after asking."""
        entry = next(
            (w for w in (self.focused, *(self.focused.ancestors if self.focused else ()))
             if isinstance(w, ReadingEntry)),
            None,
        )  # fmt: skip
        if entry is None or entry.outcome is None:
            self.notify("Put the cursor in a saved reading to withdraw it", severity="warning")
            return
        tag, reading = self.stop.component.tag, entry.outcome.reading
        shown = format_value(reading.value, entry.quantity, reading.over_range)

        def done(confirmed: bool | None) -> None:
            if not confirmed:
                return
            try:
                withdraw_reading(self.store, self.inspection_id, reading.component_id,
                                 entry.quantity)  # fmt: skip
            except WalkdownError as exc:
                self.notify(str(exc), severity="error")
                return
            self.saved.readings.pop((reading.component_id, entry.quantity), None)
            entry.withdrawn()
            self._refresh_mark()
            self.notify(f"{tag}: {shown} ({entry.quantity.label}) withdrawn")

        question = (
            f"Withdraw {shown} ({entry.quantity.label}) saved for {tag}?\n"
            "It leaves this visit; the audit log keeps it."
        )
        self.app.push_screen(ConfirmDialog(question, yes_label="Withdraw"), done)

    def action_leave(self) -> None:
        if self.stops:
            self.keep_unsaved()
        self.dismiss()


def _finish_question(missing: list[Missing], opened: list[str]) -> Text:
    """The question before marking complete, with what is still missing listed first.

    Args:
        opened: Tags of the test joints opened for isolated readings; marking the
            visit complete confirms they were reconnected and re-tested.
    """
    joints = (
        f"Test joints opened: {', '.join(opened)}. Every one reconnected and re-tested?\n"
        if opened
        else ""
    )
    if not missing:
        return Text(
            "Every component is graded and every test taken.\n"
            f"{joints}Mark the inspection complete?"
        )
    text = Text("Still missing:\n", style="bold")
    for item in missing:
        if item.component is None:
            text.append(f" • {item.what}\n")
    ungraded = [item.component.tag for item in missing if item.component is not None]
    if ungraded:
        shown = ", ".join(ungraded[:_UNGRADED_SHOWN])
        more = len(ungraded) - _UNGRADED_SHOWN
        text.append(f" • not graded yet: {shown}{f' and {more} more' if more > 0 else ''}\n")
    if joints:
        text.append(f"\n{joints}")
    text.append("\nMark the inspection complete anyway?", style="bold")
    return text
