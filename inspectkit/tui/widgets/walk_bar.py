"""The walkdown's top bar: where the walk is, the instrument in use and the ground's state.

The pickers save as they change: the instrument is remembered for the next readings
(the setting Settings shows too), the ground's state on the inspection.
"""

from __future__ import annotations

from datetime import date

from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.containers import Horizontal
from textual.widgets import Select, Static

from inspectkit.model import Instrument, SoilCondition
from inspectkit.retiring import in_service
from inspectkit.store import Store
from inspectkit.store.preferences import INSTRUMENT_SETTING
from inspectkit.tui.widgets.held_keys import PickList
from inspectkit.walkdown.errors import WalkdownError
from inspectkit.walkdown.instruments import choose_instrument
from inspectkit.walkdown.visit import set_soil


class WalkBar(Horizontal):
    """Position, instrument and ground for one inspection's walk."""

    def __init__(
        self, store: Store, inspection_id: str, soil: SoilCondition | None, today: date | None
    ) -> None:
        super().__init__(id="bar")
        self.store = store
        self.inspection_id = inspection_id
        self.today = today
        self._soil = soil.value if soil else None

    def compose(self) -> ComposeResult:
        yield Static(id="where")
        yield PickList(
            self._instrument_options(),
            prompt="instrument…",
            value=self._instrument_in_use() or Select.NULL,
            id="instrument",
        )
        yield PickList(
            [(f"ground {s.value}", s.value) for s in SoilCondition],
            prompt="ground…",
            value=self._soil or Select.NULL,
            id="soil",
        )

    @property
    def instrument_id(self) -> str | None:
        value = self.query_one("#instrument", Select).value
        return None if value is Select.NULL else str(value)

    @property
    def soil(self) -> str | None:
        value = self.query_one("#soil", Select).value
        return None if value is Select.NULL else str(value)

    def show_where(self, index: int, total: int, done: int) -> None:
        self.query_one("#where", Static).update(
            Text.assemble((f" {index + 1} of {total} ", "bold reverse"), f"  {done} done")
        )

    def _instrument_options(self) -> list[tuple[str, str]]:
        options = []
        for instrument in in_service(self.store, Instrument, "description, serial"):
            kind = f"{instrument.kind.label}: " if instrument.kind else ""
            label = f"{kind}{instrument.description} {instrument.serial}"
            due = instrument.calibration_due
            if due is not None and self.today is not None and due < self.today:
                label += " (calibration lapsed)"
            options.append((label, instrument.id))
        return options

    def _instrument_in_use(self) -> str | None:
        chosen = self.store.get_setting(INSTRUMENT_SETTING)
        known = {value for _, value in self._instrument_options()}
        return chosen if chosen in known else None

    def refresh_instruments(self) -> None:
        """Offer the instruments in service now, the one chosen in Settings selected."""
        select = self.query_one("#instrument", Select)
        options = self._instrument_options()
        chosen = self._instrument_in_use()
        with select.prevent(Select.Changed):
            select.set_options(options)
            select.value = chosen or Select.NULL

    @on(Select.Changed, "#instrument")
    def _instrument_changed(self, event: Select.Changed) -> None:
        event.stop()
        if event.value is not Select.NULL and event.value != self._instrument_in_use():
            # The one of its kind from now on; each reading takes the one whose kind fits.
            instrument = choose_instrument(self.store, str(event.value))
            self.store.set_setting(INSTRUMENT_SETTING, instrument.id)
            kind = instrument.kind.label if instrument.kind else "instrument"
            self.notify(f"{instrument.serial} is the {kind} for the next readings it can take")

    @on(Select.Changed, "#soil")
    def _soil_changed(self, event: Select.Changed) -> None:
        event.stop()
        value = None if event.value is Select.NULL else str(event.value)
        if value == self._soil:
            return
        try:
            set_soil(self.store, self.inspection_id, value)
        except WalkdownError as exc:
            self.notify(str(exc), severity="error")
            return
        self._soil = value
