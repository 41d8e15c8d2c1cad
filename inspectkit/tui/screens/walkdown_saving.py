"""What the walkdown's fields save through: a reading, a grade with its words, a photo.

The stop pane is built with these three callbacks. Each calls one job function of
`inspectkit.walkdown`, keeps the answer in the screen's `saved` (so the list's mark
and the count of done components follow) and returns what the field says under it.
"""

from __future__ import annotations

from rich.text import Text

from inspectkit.earthing_values import Traverse
from inspectkit.model import JOINT_FOR, Finding, Grade, Method, Quantity
from inspectkit.tui.screens.walkdown_parts import WalkdownParts
from inspectkit.tui.widgets.stop_pane import photo_label
from inspectkit.walkdown.grades import grade_component
from inspectkit.walkdown.instruments import chosen_instruments, instrument_for
from inspectkit.walkdown.judging import ReadingOutcome
from inspectkit.walkdown.photos import attach_photos
from inspectkit.walkdown.readings import record_reading
from inspectkit.wording import counted


class WalkdownSaving:
    """The stop pane's savers, mixed into the walkdown screen."""

    def _save_reading(
        self: WalkdownParts,
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
        self: WalkdownParts, component_id: str, grade: Grade, text: str, remedial: str, due: str
    ) -> Finding:
        finding = grade_component(
            self.store, self.inspection_id, component_id, grade, text, remedial,
            due.strip() or None,
        )  # fmt: skip
        self.saved.findings[component_id] = finding
        self.saved.not_inspected.pop(component_id, None)  # graded after all
        self._refresh_mark()
        return finding

    def _save_photo(self: WalkdownParts, here: str, text: str) -> Text:
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

    def _photo_saved(self: WalkdownParts, here: str, count: int) -> None:
        """Empty the path once attached, ready for the next; the label and status stay in view."""
        pane = self.pane
        if pane.component_id != here:
            return
        field = pane.photo
        field.saved_value = ""
        field.input.value = ""
        field.set_label(photo_label(count))
        field.query_one(".status").scroll_visible(animate=False)
