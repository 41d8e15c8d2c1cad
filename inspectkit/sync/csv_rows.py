"""One row of cells read into a reading, and the checks every reading passes.

Each cell is read the way the options say (decimal commas, units in the cell or in
their own column, local dates), and a problem names the column it is in, by the
header's name or by the option that stood in for a missing column.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from datetime import UTC, datetime, timedelta
from typing import Any

from dateutil import parser as dateparser
from pydantic import ValidationError

from inspectkit import intake, units
from inspectkit.earthing_input import parse_traverse
from inspectkit.earthing_values import Traverse
from inspectkit.engine.electrodes import traverse_reading
from inspectkit.engine.formula_inputs import EarthingError
from inspectkit.model import (
    JOINT_FOR,
    METHODS_FOR,
    Component,
    Inspection,
    Instrument,
    Method,
    Quantity,
    Reading,
    explain,
)
from inspectkit.store import Store
from inspectkit.sync.csv_options import CsvOptions

_BARE_NUMBER = re.compile(r">?\s*\+?[\d.,]+(?:[eE][+-]?\d+)?")


class RowError(ValueError):
    """A row refused; `column` names where, as the header or the option names it."""

    def __init__(self, column: str, message: str) -> None:
        super().__init__(message)
        self.column = column


@dataclass
class RowReader:
    """Reads the rows of one file for one inspection, each into a checked reading."""

    where: dict[str, tuple[int, str]]
    options: CsvOptions
    components: dict[str, Component]
    inspection: Inspection
    now: datetime
    #: Columns in the header; a longer row is refused rather than read askew.
    width: int | None
    #: The checks every reading passes (`inspectkit.intake`).
    admission: Admission

    def cell(self, cells: list[str], name: str) -> str | None:
        if name not in self.where:
            return None
        index, label = self.where[name]
        if index >= len(cells):
            raise RowError(label, f"the row has {len(cells)} columns, this is column {index + 1}")
        return cells[index].strip()

    def label(self, name: str, option: str) -> str:
        return self.where[name][1] if name in self.where else option

    def read(self, cells: list[str]) -> tuple[str, Reading]:
        """The row's tag and its reading, checked as every reading is.

        Raises:
            RowError: the first problem found in the row.
        """
        if self.width is not None and len(cells) > self.width:
            raise RowError(
                f"#{self.width + 1}",
                f"the row has {len(cells)} columns, the header {self.width}; a decimal comma "
                "in a comma-separated file? quote the value, or use --delimiter",
            )
        tag, component = self._component(cells)
        quantity = self._quantity(cells)
        series = self._traverse(cells)
        measured = self._value(cells, quantity) if series is None else self._at_61_8(cells, series)
        data: dict[str, Any] = {
            "inspection_id": self.inspection.id,
            "component_id": component.id,
            "quantity": quantity,
            "value": measured.value,
            "over_range": measured.over_range,
            "method": self.cell(cells, "method") or self.options.method or _only_method(quantity),
            "joint_state": self.cell(cells, "joint_state") or JOINT_FOR.get(quantity),
            "taken_at": self._taken_at(cells),
            "instrument_id": self.options.instrument_id,
            "soil": self.inspection.soil,
            "note": self.cell(cells, "note") or "",
            "traverse": series.to_text() if series else None,
        }
        if series is not None and not self.cell(cells, "method") and not self.options.method:
            data["method"] = Method.FALL_OF_POTENTIAL_3P
        if data["method"] is None:
            allowed = ", ".join(sorted(m.value for m in METHODS_FOR[quantity]))
            raise RowError(
                self.label("method", "--method"), f"say how it was measured: one of {allowed}"
            )
        try:
            reading = Reading.model_validate(data, context={"now": self.now})
        except ValidationError as exc:
            first = exc.errors()[0]
            name = str(first["loc"][0]) if first["loc"] else "value"
            option = {"method": "--method", "quantity": "--quantity"}.get(name, name)
            raise RowError(self.label(name, option), explain(exc).replace("\n", "; ")) from None
        self._admit(reading, component)
        return tag, reading

    def _component(self, cells: list[str]) -> tuple[str, Component]:
        """The row's tag, upper case, and the site's component in service that has it."""
        tag = (self.cell(cells, "tag") or "").upper()
        component = self.components.get(tag)
        if component is None:
            raise RowError(
                self.label("tag", "tag"),
                f"no component tagged {tag!r} at this inspection's site"
                if tag
                else "the tag is empty",  # fmt: skip
            )
        if component.retired_on is not None:
            raise RowError(self.label("tag", "tag"), f"{tag} was retired on {component.retired_on}")
        return tag, component

    def _admit(self, reading: Reading, component: Component) -> None:
        """The checks every reading passes, whichever way it comes (`inspectkit.intake`)."""
        refused = self.admission.refusal(reading, component)
        if refused is not None:
            option = {"instrument_id": "--instrument", "quantity": "quantity"}.get(refused.field)
            raise RowError(self.label(refused.field, option or refused.field), str(refused))

    def _quantity(self, cells: list[str]) -> Quantity:
        text = self.cell(cells, "quantity")
        if not text:
            if self.options.quantity is None:
                raise RowError(self.label("quantity", "quantity"), "the quantity is empty")
            return self.options.quantity
        try:
            return Quantity(text.lower().replace("-", "_").replace(" ", "_"))
        except ValueError:
            allowed = ", ".join(q.value for q in Quantity)
            raise RowError(
                self.label("quantity", "quantity"), f"{text!r} is not a quantity; use {allowed}"
            ) from None

    def _value(self, cells: list[str], quantity: Quantity) -> units.Measured:
        text = self.cell(cells, "value") or ""
        if self.options.decimal_comma and "." not in text:
            text = text.replace(",", ".")
        unit = self.cell(cells, "unit") or self.options.unit
        if unit and _BARE_NUMBER.fullmatch(text):
            text = f"{text} {unit}"
        try:
            return units.parse(text, quantity)
        except units.UnitError as exc:
            raise RowError(self.label("value", "value"), str(exc)) from None

    def _traverse(self, cells: list[str]) -> Traverse | None:
        """The row's traverse (`traverse` and `current_probe` columns), or None."""
        text = self.cell(cells, "traverse")
        if not text:
            return None
        try:
            return parse_traverse(text, self.cell(cells, "current_probe") or "")
        except units.UnitError as exc:
            raise RowError(self.label("traverse", "traverse"), str(exc)) from None

    def _at_61_8(self, cells: list[str], series: Traverse) -> units.Measured:
        """A traverse row's reading: the traverse at 61.8 %; the value cell stays empty."""
        if self.cell(cells, "value"):
            raise RowError(
                self.label("value", "value"), "a row with a traverse takes its value from it; "
                "leave the value cell empty",
            )  # fmt: skip
        try:
            return units.Measured(traverse_reading(series))
        except EarthingError as exc:
            raise RowError(self.label("traverse", "traverse"), str(exc)) from None

    def _taken_at(self, cells: list[str]) -> datetime:
        text = self.cell(cells, "taken_at") or ""
        try:
            when = dateparser.parse(text, dayfirst=self.options.dayfirst)
        except (dateparser.ParserError, OverflowError, ValueError):
            raise RowError(
                self.label("taken_at", "taken_at"),
                f"{text!r} is not a date and time; e.g. 2026-06-02 10:15 or 02/06/2026 10:15",
            ) from None
        try:
            if when.tzinfo is None:
                when = when.replace(tzinfo=self.options.tz)
            return when.astimezone(UTC)
        except (OverflowError, ValueError):
            # Year 1 or 9999 moved by a zone offset falls off the calendar.
            raise RowError(
                self.label("taken_at", "taken_at"),
                f"{text!r} is not a time a reading was taken; give a date of these years",
            ) from None


@dataclass(frozen=True)
class Admission:
    """What `intake.refusal` needs for every row of one import, read once."""

    inspection: Inspection
    instrument: Instrument | None
    window: timedelta

    @classmethod
    def of(cls, store: Store, inspection: Inspection, instrument_id: str | None) -> Admission:
        instrument = store.get(Instrument, instrument_id) if instrument_id else None
        return cls(inspection, instrument, intake.reading_window(store))

    def refusal(self, reading: Reading, component: Component) -> intake.ReadingRefused | None:
        return intake.refusal(reading, self.inspection, component, self.instrument, self.window)


def _only_method(quantity: Quantity) -> Method | None:
    methods = METHODS_FOR[quantity]
    return next(iter(methods)) if len(methods) == 1 else None
