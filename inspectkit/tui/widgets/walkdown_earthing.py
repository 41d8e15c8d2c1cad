"""Earthing in the walkdown: a traverse as the earth reading (ctrl+r), the calculators (ctrl+o).

Kept out of the walkdown screen's own module: the screen mixes `WalkdownEarthing`
in and adds `EARTHING_BINDINGS` to its keys; its stop pane holds a
`TraverseView`. The traverse is saved through the screen's own `_save_reading`,
so it is judged and marked on the walk like any typed reading.
"""

from __future__ import annotations

from datetime import date

from textual.binding import Binding

from inspectkit.earthing_input import traverse_as_typed
from inspectkit.earthing_values import SeriesError, Traverse, read_traverse
from inspectkit.model import Method, Quantity
from inspectkit.store.queries import load_site_records
from inspectkit.tui.dialogs.traverse_entry import TraverseDialog
from inspectkit.tui.screens.calculator import calculator_for
from inspectkit.tui.screens.walkdown_parts import WalkdownParts
from inspectkit.tui.widgets.traverse_view import EARTH
from inspectkit.walkdown.errors import WalkdownError

EARTHING_BINDINGS = [
    Binding(
        "ctrl+r", "traverse", "Traverse", id="walkdown.traverse", priority=True, show=False,
        tooltip="Type a fall-of-potential traverse; its value at 61.8 % is the earth reading",
    ),
    Binding(
        "ctrl+o", "calculators", "Calculators", id="walkdown.calculators", priority=True,
        show=False, tooltip="Earthing calculators, filled in from this component",
    ),
]


class WalkdownEarthing:
    """The walkdown's earthing actions, mixed into the walkdown screen."""

    def action_traverse(self: WalkdownParts) -> None:
        stop = self.stop
        quantity = next((q for q in EARTH if q in stop.quantities), None)
        if quantity is None:
            self.notify(
                f"{stop.component.tag}: no earth reading is taken on a "
                f"{stop.component.kind.label}", severity="warning",
            )  # fmt: skip
            return
        before = self.saved.readings.get((stop.component.id, quantity))
        start = ("", "")
        if before is not None and before.reading.traverse:
            try:
                series = read_traverse(before.reading.traverse)
                start = (f"{series.current_probe_m:g} m", traverse_as_typed(series))
            except SeriesError:
                pass
        tolerance = self.context.profile.earthing.plateau_tolerance
        dialog = TraverseDialog(stop.component.tag, tolerance, *start)
        self.app.push_screen(dialog, lambda traverse: self._save_traverse(quantity, traverse))

    def _save_traverse(self: WalkdownParts, quantity: Quantity, traverse: Traverse | None) -> None:
        if traverse is None:
            return
        tag = self.stop.component.tag
        try:
            outcome = self._save_reading(
                self.stop.component.id, quantity, "", Method.FALL_OF_POTENTIAL_3P, False,
                traverse=traverse,
            )  # fmt: skip
        except WalkdownError as exc:
            self.notify(f"{tag}: {exc}", severity="error")
            return
        self.notify(f"{tag}: {outcome.verdict}, saved")
        self.move_now(self.index)

    def action_calculators(self: WalkdownParts) -> None:
        records = load_site_records(self.store, self.context.site.id)
        today: date = self.app.today
        self.app.push_screen(calculator_for(records, self.stop.component, today))
