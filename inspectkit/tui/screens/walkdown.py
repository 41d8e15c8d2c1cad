"""The walkdown: component by component in walking order, every field saved as it is left."""

from __future__ import annotations

import asyncio
from typing import Any

from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal
from textual.screen import Screen
from textual.widgets import Header, OptionList, Static
from textual.widgets.option_list import Option

from inspectkit.earthing_values import Traverse
from inspectkit.engine.walking import Stop
from inspectkit.model import (
    JOINT_FOR,
    Finding,
    Grade,
    Inspection,
    Method,
    NotInspectedReason,
    Quantity,
)
from inspectkit.printable import printable
from inspectkit.store import Store
from inspectkit.tui.dialogs.choice import ChoiceDialog
from inspectkit.tui.dialogs.confirm import ConfirmDialog
from inspectkit.tui.dialogs.geometry import edit_geometry, geometry_for
from inspectkit.tui.dialogs.text_prompt import TextPrompt
from inspectkit.tui.dialogs.visit_details import VisitDetailsDialog
from inspectkit.tui.widgets.held_paint import HeldPaint
from inspectkit.tui.widgets.reading_entry import ReadingEntry
from inspectkit.tui.widgets.steady_footer import SteadyFooter
from inspectkit.tui.widgets.stop_list import StopList, complete, prompt
from inspectkit.tui.widgets.stop_pane import StopPane, StopView, photo_label
from inspectkit.tui.widgets.tag_prompt import TagPrompt
from inspectkit.tui.widgets.walk_bar import WalkBar
from inspectkit.tui.widgets.walkdown_earthing import EARTHING_BINDINGS, WalkdownEarthing
from inspectkit.units import format_value
from inspectkit.walkdown.completion import (
    Missing,
    finish_inspection,
    joints_not_retested,
    missing_for_completion,
    opened_joints,
)
from inspectkit.walkdown.continuing import (
    SavedEntries,
    drafts_for,
    drafts_told,
    forget_drafts,
    keep_drafts,
    saved_entries,
)
from inspectkit.walkdown.errors import WalkdownError
from inspectkit.walkdown.grades import clear_not_inspected, grade_component, mark_not_inspected
from inspectkit.walkdown.instruments import chosen_instruments, instrument_for
from inspectkit.walkdown.judging import ReadingOutcome, site_context
from inspectkit.walkdown.photos import attach_photos
from inspectkit.walkdown.readings import record_reading, withdraw_reading
from inspectkit.walkdown.visit import set_details, walk_for
from inspectkit.wording import counted

#: How many ungraded tags the finish question names before "and N more".
_UNGRADED_SHOWN = 20

#: How long a move waits at most for keys sent to the field being left (seconds).
_SETTLE_TIMEOUT = 0.5
#: How often what is typed and not saved is kept in the database (seconds).
_DRAFT_EVERY = 0.5


class WalkdownScreen(WalkdownEarthing, Screen[None]):
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
            "ctrl+n",
            "not_inspected",
            "Not inspected",
            id="walkdown.not_inspected",
            priority=True,
            show=False,
            tooltip="Mark this component not inspected, and say why (no access, unsafe, …)",
        ),
        Binding(
            "ctrl+b",
            "rooftop_item",
            "Rooftop item",
            id="walkdown.rooftop_item",
            priority=True,
            show=False,
            tooltip="Add a rooftop item to the roof plan, or edit this part's; judged at once",
        ),
        Binding(
            "escape",
            "leave",
            "Back",
            id="walkdown.back",
            tooltip="Save and leave the walkdown; it can be continued later",
        ),
        *EARTHING_BINDINGS,
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
        self._by_id: dict[str, Stop] = {}
        self._done: int | None = None
        self._place: str | None = None
        self._finished = False
        #: What `keep_typing` last kept: the unsaved texts and the component in view.
        self._kept: tuple[dict[tuple[str, str], str], str] = ({}, "")
        #: Repaints held from a move until what frames its fields is shown (`_frame_later`).
        self._framing = HeldPaint()

    # ------------------------------------------------------------ accessors

    @property
    def store(self) -> Store:
        return self.app.store  # type: ignore[attr-defined, no-any-return]

    @property
    def stop(self) -> Stop:
        return self.stops[self.index]

    @property
    def stop_list(self) -> StopList:
        return self._stop_list

    @property
    def pane(self) -> StopPane:
        return self._pane

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
        self._by_id = {s.component.id: s for s in self.stops}
        self.saved = saved_entries(self.store, self.inspection_id)
        kept = drafts_for(self.store, self.inspection_id)
        self.drafts = {key: text for key, text in kept.texts.items() if key[0] in self._by_id}
        self._place = kept.place
        self.title = printable(site.name)
        self.sub_title = f"{inspection.kind.value.replace('_', '-')} inspection, {inspection.date}"
        yield Header()
        self.bar = WalkBar(self.store, self.inspection_id, inspection.soil,
                           getattr(self.app, "today", None))  # fmt: skip
        yield self.bar
        with Horizontal(id="body"):
            self._stop_list = StopList(*self._options(), id="stops")
            self._stop_list.on_go = self.move_now
            yield self._stop_list
            self._pane = StopPane(self._save_reading, self._save_finding, self._save_photo,
                                  id="detail")  # fmt: skip
            if self.stops:
                yield self._pane
            else:
                yield Static("This site has no components in service to inspect.", id="detail")
        yield SteadyFooter()

    def on_screen_resume(self) -> None:
        """Back from another screen: components, instruments or the choice may have changed."""
        self.context = site_context(self.store, self.context.site.id)
        self.bar.refresh_instruments()

    def on_mount(self) -> None:
        if not self.stops:
            return
        where = next((i for i, s in enumerate(self.stops) if s.component.id == self._place), 0)
        self.move_now(where)
        self._kept = self._unsaved()
        if self.drafts:
            tags = {cid: stop.component.tag for cid, stop in self._by_id.items()}
            self.notify(
                drafts_told(self.drafts, tags) + ". Save them with Enter, or clear the field.",
                title="Typed before the walkdown closed",
                severity="warning",
                timeout=30,
            )
        self.set_interval(_DRAFT_EVERY, self.keep_typing)

    # ---------------------------------------------------- what is not saved

    def _unsaved(self) -> tuple[dict[tuple[str, str], str], str]:
        """Everything typed and not saved (on every component), and the component in view."""
        pane = self.pane
        cid = pane.component_id
        texts = {key: text for key, text in self.drafts.items() if key[0] != cid}
        for field in pane.fields():
            if field.dirty and field.value.strip():
                texts[(cid, field.draft_key)] = field.value
        return texts, cid

    def keep_typing(self) -> None:
        """Keep in the database what is typed and not saved, if it changed since last time."""
        if not self.stops or not self.pane.component_id or self._finished:
            return
        unsaved = self._unsaved()
        if unsaved != self._kept:
            keep_drafts(self.store, self.inspection_id, *unsaved)
            self._kept = unsaved

    # ---------------------------------------------------------- the stop list

    def _options(self) -> list[Option]:
        return [Option(self._prompt(i), id=f"stop-{i}") for i in range(len(self.stops))]

    def _prompt(self, index: int) -> Text:
        return prompt(self.stops[index], self.saved, wide=self.has_class("-wide"))

    def _complete(self, stop: Stop) -> bool:
        return complete(stop, self.saved)

    def _refresh_mark(self) -> None:
        self.stop_list.replace_option_prompt_at_index(self.index, self._prompt(self.index))
        self._show_where(count=True)

    def on_resize(self) -> None:
        if self.stops:
            for index in range(len(self.stops)):
                self.stop_list.replace_option_prompt_at_index(index, self._prompt(index))

    @on(OptionList.OptionSelected, "#stops")
    def _picked(self, event: OptionList.OptionSelected) -> None:
        if event.option_index != self.index:
            self.move_now(event.option_index)

    # ------------------------------------------------------------- one stop

    async def show_stop(self, index: int, *, focus_entry: bool = True) -> None:
        """Leave the current component (saving what can be saved) and show another.

        Keys already handed to the field being left are let in first, so they are
        saved on the component they were typed for; keys arriving meanwhile wait in
        the app's queue and reach the next component's first field.
        """
        await self._settle()
        self.move_now(index, focus_entry=focus_entry)

    async def _settle(self) -> None:
        """Wait until the widget in focus has handled every key already sent to it."""
        loop = asyncio.get_running_loop()
        for _ in range(8):
            widget = self.focused
            if widget is None or not getattr(widget, "keys_waiting", 0):
                return
            handled = loop.create_future()
            widget.call_later(handled.set_result, None)
            try:
                await asyncio.wait_for(handled, _SETTLE_TIMEOUT)
            except TimeoutError:
                return
            if self.focused is widget:
                return

    def move_now(self, index: int, *, focus_entry: bool = True) -> None:
        """Leave the current component and show another, in one step with nothing awaited."""
        if not self.stops:
            return
        if self.pane.component_id:
            self.keep_unsaved()
        self.index = max(0, min(index, len(self.stops) - 1))
        self.pane.show(self._view(self.stop))
        if focus_entry:
            self.set_focus(self.pane.first_field(), scroll_visible=False)
        self._frame_later()

    def _frame_later(self) -> None:
        """Show what frames the fields (heading, list highlight, position) once the keys
        already sent have reached the field in focus, and paint nothing until then.

        Those keys wait in the app's queue: a callback queued there behind them, which
        queues another behind them at the field they went to, runs after the field took
        them. Repaints are held (`App.batch_update`) so the screen never shows one
        component's fields under another's heading; `on_unmount` lets go if it must.
        """
        if self._framing.is_pending:
            return
        self._framing.hold(self.app.batch_update())

        def behind_the_keys() -> None:
            # Only a field of this screen: a dialog's may close before it runs the callback.
            focused = self.app.focused
            if focused is None or focused.screen is not self or not focused.call_later(self._frame):
                self._frame()

        if not self.app.call_later(behind_the_keys):
            self._frame()

    def _frame(self) -> None:
        try:
            if self.is_attached and self.stops:
                self.stop_list.highlighted = self.index
                self.pane.show_around(self._view(self.stop))
                self._show_where()
        finally:
            self._framing.release()

    def on_unmount(self) -> None:
        self._framing.release()

    def _view(self, stop: Stop) -> StopView:
        cid = stop.component.id
        parent = self._by_id.get(stop.component.parent_id or "")
        return StopView(
            stop=stop,
            parent_tag=parent.component.tag if parent else None,
            outcomes={q: o for q in stop.quantities
                      if (o := self.saved.readings.get((cid, q))) is not None},
            choices={q: c for q in stop.quantities if (c := self.choices.get((cid, q)))},
            finding=self.saved.findings.get(cid),
            photos=self.saved.photos.get(cid, 0),
            typed={field: text for (c, field), text in self.drafts.items() if c == cid},
        )  # fmt: skip

    def _show_where(self, *, count: bool = False) -> None:
        """The position on the walk, and how many components are done (counted after a save)."""
        if count or self._done is None:
            self._done = sum(1 for s in self.stops if self._complete(s))
        self.bar.show_where(self.index, len(self.stops), self._done)

    def keep_unsaved(self) -> None:
        """Save every changed field of the stop in view; keep refused text as typed."""
        pane = self.pane
        cid = pane.component_id
        refused = 0
        for field in pane.fields():
            key = (cid, field.draft_key)
            if field.dirty and not field.commit():
                self.drafts[key] = field.value
                refused += 1
            else:
                self.drafts.pop(key, None)
        for entry in pane.entries:
            key = (cid, entry.quantity)
            if (choices := entry.pending_choices) is not None:
                self.choices[key] = choices
            else:
                self.choices.pop(key, None)
        if refused:
            tag = self._by_id[cid].component.tag
            self.notify(
                f"{tag}: {counted(refused, 'field')} not saved, kept as typed", severity="warning"
            )

    # -------------------------------------------------------------- saving

    def _save_reading(
        self,
        component_id: str,
        quantity: Quantity,
        text: str,
        method: Method,
        doubtful: bool,
        traverse: Traverse | None = None,
    ) -> ReadingOutcome:
        soil = self.bar.soil
        # The instrument chosen for the kind that measures this quantity by this method.
        instrument = instrument_for(chosen_instruments(self.store), quantity, method)
        outcome = record_reading(
            self.store,
            self.inspection_id,
            component_id,
            quantity,
            text,
            method=method,
            instrument_id=instrument.id if instrument else None,
            soil=soil if quantity in JOINT_FOR else None,
            unreliable=doubtful,
            # The app's clock (on its fixed day in tests); a bare harness: the walkdown's.
            taken_at=self.app.now() if hasattr(self.app, "now") else None,
            context=self.context,
            traverse=traverse,
        )
        self.saved.readings[(component_id, quantity)] = outcome
        self._refresh_mark()
        return outcome

    def _save_finding(
        self, component_id: str, grade: Grade, text: str, remedial: str, due: str
    ) -> Finding:
        finding = grade_component(
            self.store, self.inspection_id, component_id, grade, text, remedial,
            due.strip() or None,
        )  # fmt: skip
        self.saved.findings[component_id] = finding
        self.saved.not_inspected.pop(component_id, None)  # graded after all
        self._refresh_mark()
        return finding

    def _save_photo(self, here: str, text: str) -> Text:
        if not text.strip():
            return Text("")
        matches = attach_photos(self.store, self.inspection_id, text.strip(), here)
        counts = self.saved.photos
        for match in matches:
            counts[match.component_id] = counts.get(match.component_id, 0) + 1
        tag = self._by_id[here].component.tag
        if len(matches) == 1 and matches[0].component_id == here:
            status = f"✓ saved photo {matches[0].photo.original_name}"
        else:
            matched = sum(1 for m in matches if m.component_id == here)
            saved = counted(len(matches), "new photo")
            status = f"✓ saved {saved}, {matched} matched by time to {tag}"
        count = counts.get(here, 0)
        self.call_after_refresh(self._photo_saved, here, count)
        return Text(f"{status} ({count} attached here)", style="bold green")

    def _photo_saved(self, here: str, count: int) -> None:
        """Empty the path once attached, ready for the next; the label and status stay in view."""
        pane = self.pane
        if pane.component_id != here:
            return
        field = pane.photo
        field.saved_value = ""
        field.input.value = ""
        field.set_label(photo_label(count))
        field.query_one(".status").scroll_visible(animate=False)

    # ------------------------------------------------------------- actions

    async def action_step(self, delta: int) -> None:
        """Go to the next (or previous) component on the walk."""
        if self.stops:
            await self.show_stop(self.index + delta)

    def action_focus_list(self) -> None:
        self.stop_list.focus()

    def action_go_to_tag(self) -> None:
        """Ask for a tag; the walk moves as Enter arrives, before the prompt closes."""
        tags = [s.component.tag for s in self.stops]
        self.app.push_screen(TagPrompt(tags, lambda tag: self.move_now(tags.index(tag))))

    def action_finish(self) -> None:
        if self.stops:
            self.keep_unsaved()
        missing = missing_for_completion(self.store, self.inspection_id)
        opened = [c.tag for c in opened_joints(self.store, self.inspection_id)]
        untested = joints_not_retested(self.store, self.inspection_id)

        def finish(**answer: Any) -> None:
            try:
                finish_inspection(self.store, self.inspection_id, **answer)
            except WalkdownError as exc:
                self.notify(str(exc), severity="error")
                return
            forget_drafts(self.store, self.inspection_id)
            self._finished = True
            self.notify("Inspection marked complete")
            self.dismiss()

        def why_not(words: str | None) -> None:
            if words:
                finish(not_reconnected=words)

        def joints(answer: str | None) -> None:
            if answer == "yes":
                finish(reconnected=True)
            elif answer == "no":
                self.app.push_screen(
                    TextPrompt("Why were they not all reconnected and re-tested?",
                               "e.g. TJ-03 bolt seized, left for the fitter", required=True),
                    why_not,
                )  # fmt: skip

        def done(confirmed: bool | None) -> None:
            if not confirmed:
                return
            if not opened:
                finish()
                return
            self.app.push_screen(
                ChoiceDialog(
                    f"Test joints opened for isolated readings: {', '.join(opened)}.\n"
                    + (
                        f"No reading across {', '.join(untested)} since it was opened.\n"
                        if untested
                        else ""
                    )
                    + "Was every one reconnected and re-tested?",
                    [("yes", "Yes: all reconnected and re-tested"), ("no", "No: say why")],
                ),
                joints,
            )

        self.app.push_screen(
            ConfirmDialog(_finish_question(missing), yes_label="Mark complete"), done
        )

    def action_not_inspected(self) -> None:
        """Mark the component in view not inspected, with a reason and words; or take it back."""
        if not self.stops:
            return
        component = self.stop.component
        marked = component.id in self.saved.not_inspected
        reasons = [(r.value, r.label) for r in NotInspectedReason]
        if marked:
            reasons.append(("clear", "It was inspected after all: take the mark back"))

        def words(reason: str, text: str | None) -> None:
            if text is None:
                return
            try:
                mark = mark_not_inspected(
                    self.store, self.inspection_id, component.id, reason, text
                )
            except WalkdownError as exc:
                self.notify(str(exc), severity="error")
                return
            self.saved.not_inspected[component.id] = mark
            self.saved.findings.pop(component.id, None)  # it stands instead of a grade
            self.move_now(self.index)
            self._refresh_mark()
            self.notify(f"{component.tag}: not inspected ({mark.why})")

        def picked(reason: str | None) -> None:
            if reason is None:
                return
            if reason == "clear":
                clear_not_inspected(self.store, self.inspection_id, component.id)
                self.saved.not_inspected.pop(component.id, None)
                self._refresh_mark()
                self.notify(f"{component.tag}: mark taken back; grade it")
                return
            self.app.push_screen(
                TextPrompt(
                    f"{component.tag}: what stopped the inspection?",
                    "e.g. locked plant room, scaffold down",
                    required=reason == NotInspectedReason.OTHER.value,
                ),
                lambda text: words(reason, text),
            )

        self.app.push_screen(
            ChoiceDialog(f"Why was {component.tag} not inspected?", reasons), picked
        )

    def action_details(self) -> None:
        """Open the visit's details; each saves through `set_details` when the form is saved."""

        def save(**details: str) -> Inspection:
            return set_details(self.store, self.inspection_id, **details)

        def done(saved: Inspection | None) -> None:
            if saved is not None:
                self.notify("Visit details saved")

        self.app.push_screen(VisitDetailsDialog(self.inspection, save), done)

    def action_rooftop_item(self) -> None:
        """The geometry form for what is drawn for this part (a new rooftop item if none);
        once saved, its protection verdict is said at once."""
        site_id = self.inspection.site_id
        edit_geometry(self, site_id, geometry_for(self.store, site_id, self.stop.component))

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
            self.keep_typing()
        self.dismiss()


def _finish_question(missing: list[Missing]) -> Text:
    """The question before marking complete, with what is still missing listed first."""
    if not missing:
        return Text(
            "Every component is graded and every test taken.\nMark the inspection complete?"
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
    text.append("\nMark the inspection complete anyway?", style="bold")
    return text
