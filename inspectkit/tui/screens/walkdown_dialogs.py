"""The walkdown's keys that ask in a dialog before they save, besides finishing.

Not inspected (a reason and words, or the mark taken back), withdrawing a saved
reading, the visit's details, and a rooftop item for the roof plan. Each answer
goes to one job function; finishing, which asks in turn, is `walkdown_finish.py`.
The keys are kept out of the footer, which is full at 80 columns; the command
palette lists them.
"""

from __future__ import annotations

from textual.binding import Binding

from inspectkit.model import Inspection, NotInspectedReason
from inspectkit.tui.dialogs.choice import ChoiceDialog
from inspectkit.tui.dialogs.confirm import ConfirmDialog
from inspectkit.tui.dialogs.geometry import edit_geometry, geometry_for
from inspectkit.tui.dialogs.text_prompt import TextPrompt
from inspectkit.tui.dialogs.visit_details import VisitDetailsDialog
from inspectkit.tui.screens.walkdown_parts import WalkdownParts
from inspectkit.tui.widgets.reading_entry import ReadingEntry
from inspectkit.units import format_value
from inspectkit.walkdown.errors import WalkdownError
from inspectkit.walkdown.grades import clear_not_inspected, mark_not_inspected
from inspectkit.walkdown.readings import withdraw_reading
from inspectkit.walkdown.visit import set_details

DIALOG_BINDINGS = [
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
]


class WalkdownDialogs:
    """Not inspected, withdraw, visit details and rooftop item, mixed into the screen."""

    def action_not_inspected(self: WalkdownParts) -> None:
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

    def action_details(self: WalkdownParts) -> None:
        """Open the visit's details; each saves through `set_details` when the form is saved."""

        def save(**details: str) -> Inspection:
            return set_details(self.store, self.inspection_id, **details)

        def done(saved: Inspection | None) -> None:
            if saved is not None:
                self.notify("Visit details saved")

        self.app.push_screen(VisitDetailsDialog(self.inspection, save), done)

    def action_rooftop_item(self: WalkdownParts) -> None:
        """The geometry form for what is drawn for this part (a new rooftop item if none);
        once saved, its protection verdict is said at once."""
        site_id = self.inspection.site_id
        edit_geometry(self, site_id, geometry_for(self.store, site_id, self.stop.component))

    def action_withdraw(self: WalkdownParts) -> None:
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
