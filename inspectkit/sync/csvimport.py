"""Readings exported by a test instrument as CSV, matched to components by tag, all or nothing.

Instruments write CSV in many shapes: a header or none, commas or semicolons,
decimal commas, units in their own column or in the cell, dates the local way.
The caller says which column holds what (`ColumnMap`) and how to read it
(`CsvOptions`); every row is read and checked before any is saved, and one bad
row stops the import with a message naming its row and column.
"""

from __future__ import annotations

import csv
import io
import re
from dataclasses import dataclass, field
from datetime import UTC, datetime, timedelta, tzinfo
from pathlib import Path
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
    InspectionState,
    Instrument,
    Method,
    Quantity,
    Reading,
    explain,
    utcnow,
)
from inspectkit.store import Store

#: What a column can hold, and which of them a file must have.
FIELDS = ("tag", "value", "taken_at", "unit", "quantity", "method", "joint_state", "note",
          "traverse", "current_probe")  # fmt: skip
REQUIRED = ("tag", "value", "taken_at")
_BARE_NUMBER = re.compile(r">?\s*\+?[\d.,]+(?:[eE][+-]?\d+)?")


class CsvImportError(Exception):
    """The file was refused and nothing imported; `problems` holds one line per problem."""

    def __init__(self, problems: list[str]) -> None:
        super().__init__("\n".join(problems))
        self.problems = problems


@dataclass(frozen=True)
class ColumnMap:
    """Which column holds each field: a header name, or a 1-based position."""

    columns: dict[str, str | int]

    @classmethod
    def parse(cls, text: str) -> ColumnMap:
        """Read `tag=Point,value=Reading,taken_at=Date` or `tag=1,value=3,taken_at=2`.

        Raises:
            CsvImportError: an unknown field, a field given twice, a required one missing.
        """
        columns: dict[str, str | int] = {}
        for part in filter(None, (p.strip() for p in text.split(","))):
            name, sep, column = (s.strip() for s in part.partition("="))
            if not sep or not column:
                raise CsvImportError([f"--map: {part!r} must be field=column, e.g. tag=Point"])
            if name not in FIELDS:
                raise CsvImportError(
                    [f"--map: unknown field {name!r}; fields are {', '.join(FIELDS)}"]
                )
            if name in columns:
                raise CsvImportError([f"--map: field {name!r} is given twice"])
            if column.isascii() and column.isdigit():
                if int(column) < 1:
                    raise CsvImportError([f"--map: {name}={column}: positions start at 1"])
                columns[name] = int(column)
            else:
                columns[name] = column
        # A file of traverses may have no value column: each value comes from its traverse.
        optional = {"value"} if "traverse" in columns else set()
        missing = [f for f in REQUIRED if f not in columns and f not in optional]
        if ("traverse" in columns) != ("current_probe" in columns):
            raise CsvImportError(["--map: traverse and current_probe go together; map both"])
        if missing:
            raise CsvImportError(
                [f"--map: say which column holds {', '.join(missing)} (e.g. {missing[0]}=2)"]
            )
        return cls(columns)


@dataclass(frozen=True)
class CsvOptions:
    """How to read the cells.

    Attributes:
        quantity: What every row measures, when no column says.
        method: How every row was measured, when no column says.
        unit: Unit of bare numbers in the value column (e.g. `mΩ`).
        decimal_comma: Commas in values are decimal commas (`1,234` is 1.234).
        dayfirst: `03/04/2026` is 3 April, not March 4.
        tz: Zone of times written without one.
        instrument_id: The instrument every reading was taken with.
        header: The first line names the columns.
        delimiter: Column separator; None: guessed from `,`, `;` or tab.
    """

    quantity: Quantity | None = None
    method: Method | None = None
    unit: str | None = None
    decimal_comma: bool = False
    dayfirst: bool = False
    tz: tzinfo = UTC
    instrument_id: str | None = None
    header: bool = True
    delimiter: str | None = None


@dataclass(frozen=True)
class RowOutcome:
    """What happened to one row."""

    row: int
    line: int
    tag: str
    reading: Reading
    #: "added", or "already recorded" when the inspection holds the same reading.
    action: str

    def describe(self, dry_run: bool = False) -> str:
        r = self.reading
        shown = (
            units.format_value(r.value, r.quantity, r.over_range) if r.value is not None else "OL"
        )
        return (
            f"row {self.row} (line {self.line}): {self.tag} {r.quantity.label} {shown} "
            f"at {r.taken_at.isoformat(timespec='minutes')}: "
            f"{'would be added' if dry_run and self.action == 'added' else self.action}"
        )


@dataclass
class CsvImport:
    """The outcome of an import (or a dry run)."""

    rows: list[RowOutcome] = field(default_factory=list)
    dry_run: bool = False

    @property
    def added(self) -> int:
        return sum(1 for r in self.rows if r.action == "added")


def import_readings_csv(
    store: Store,
    path: Path,
    inspection_id: str,
    mapping: ColumnMap,
    options: CsvOptions = CsvOptions(),  # noqa: B008 - frozen, never changed
    *,
    dry_run: bool = False,
    now: datetime | None = None,
) -> CsvImport:
    """Read every row, check it, and save all the readings together, or none.

    Raises:
        CsvImportError: the file, the mapping, the inspection or a row is wrong;
            each problem names the row and the column, and nothing is saved.
    """
    inspection = store.get(Inspection, inspection_id)
    if inspection is None:
        raise CsvImportError([f"no inspection with id {inspection_id}"])
    if inspection.state is InspectionState.SIGNED:
        raise CsvImportError(
            [
                f"inspection {inspection_id} is signed; readings cannot be added to it, "
                "record them in an amendment inspection"
            ]  # fmt: skip
        )
    closed = intake.visit_refusal(inspection)
    if closed is not None:
        raise CsvImportError([str(closed)])
    if options.quantity is None and "quantity" not in mapping.columns:
        raise CsvImportError(
            ["say what the readings measure: --quantity, or map a quantity column"]
        )
    components = {c.tag: c for c in store.select(Component, "site_id = ?", [inspection.site_id])}
    header, records = _read_table(Path(path), options)
    where = _locate(mapping, header)
    width = len(header) if header else None
    admission = _Admission.of(store, inspection, options.instrument_id)
    reader = _RowReader(where, options, components, inspection, now or utcnow(), width, admission)
    outcomes: list[RowOutcome] = []
    problems: list[str] = []
    for number, (line, cells) in enumerate(records, start=1):
        try:
            outcomes.append(reader.read(number, line, cells))
        except _RowError as exc:
            problems.append(f"row {number} (line {line}), column {exc.column!r}: {exc}")
    problems += intake.clashes(
        intake.Entry(f"row {o.row} (line {o.line}) {o.tag}", o.reading) for o in outcomes
    )
    if problems:
        raise CsvImportError(_capped(problems))
    if not outcomes:
        raise CsvImportError([f"{path}: no rows to import"])
    outcomes = _mark_known(store, inspection_id, outcomes)
    if not dry_run:
        store.save_all([o.reading for o in outcomes if o.action == "added"])
    return CsvImport(outcomes, dry_run)


def _read_table(
    path: Path, options: CsvOptions
) -> tuple[list[str] | None, list[tuple[int, list[str]]]]:
    try:
        raw = path.read_bytes()
    except OSError as exc:
        raise CsvImportError([f"{path}: cannot be read ({exc.strerror})"]) from exc
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError:
        text = raw.decode("cp1252", errors="replace")
    delimiter = options.delimiter or _guess_delimiter(text)
    delimiter = {"\\t": "\t", "tab": "\t"}.get(delimiter, delimiter)
    if len(delimiter) != 1 or delimiter in "\"\r\n":
        raise CsvImportError(
            [f"--delimiter {delimiter!r}: give one character such as ; or , (a tab: \\t)"]
        )
    reader = csv.reader(io.StringIO(text, newline=""), delimiter=delimiter)
    header = None
    records = []
    try:
        for cells in reader:
            if not any(cell.strip() for cell in cells):
                continue
            if options.header and header is None:
                header = [cell.strip() for cell in cells]
                continue
            records.append((reader.line_num, cells))
    except csv.Error as exc:
        raise CsvImportError(
            [f"{path}: line {reader.line_num}: {exc}; a cell that long or that broken is not "
             "an instrument's reading, check the file and --delimiter"]
        ) from None  # fmt: skip
    return header, records


#: At most this many problems are listed, then how many more there were.
MAX_PROBLEMS = 20


def _capped(problems: list[str]) -> list[str]:
    """The first `MAX_PROBLEMS` problems, a count of the rest, and what to do."""
    shown = problems[:MAX_PROBLEMS]
    if len(problems) > MAX_PROBLEMS:
        shown.append(f"… and {len(problems) - MAX_PROBLEMS:,} more rows refused")
    return [*shown, "nothing was imported; fix the rows above and run again"]


def _guess_delimiter(text: str) -> str:
    """Semicolon or tab when every one of the first lines has the same number of them.

    Files with decimal commas separate columns with semicolons, so a comma is the
    last guess, not the first.
    """
    lines = [line for line in text.splitlines()[:10] if line.strip()]
    for candidate in (";", "\t", ","):
        counts = {line.count(candidate) for line in lines}
        if len(counts) == 1 and counts != {0}:
            return candidate
    return ","


def _locate(mapping: ColumnMap, header: list[str] | None) -> dict[str, tuple[int, str]]:
    """Each mapped field's 0-based column and the name to give it in messages."""
    where = {}
    folded = [h.casefold() for h in header] if header else []
    for name, column in mapping.columns.items():
        if isinstance(column, int):
            label = header[column - 1] if header and column <= len(header) else f"#{column}"
            where[name] = (column - 1, label)
        elif header is None:
            raise CsvImportError([f"--map {name}={column}: the file has no header; use positions"])
        elif column.casefold() in folded:
            where[name] = (folded.index(column.casefold()), column)
        else:
            raise CsvImportError(
                [f"--map {name}={column}: no such column; the header has {', '.join(header)}"]
            )
    return where


class _RowError(ValueError):
    def __init__(self, column: str, message: str) -> None:
        super().__init__(message)
        self.column = column


@dataclass
class _RowReader:
    where: dict[str, tuple[int, str]]
    options: CsvOptions
    components: dict[str, Component]
    inspection: Inspection
    now: datetime
    #: Columns in the header; a longer row is refused rather than read askew.
    width: int | None
    #: The checks every reading passes (`inspectkit.intake`).
    admission: _Admission

    def cell(self, cells: list[str], name: str) -> str | None:
        if name not in self.where:
            return None
        index, label = self.where[name]
        if index >= len(cells):
            raise _RowError(label, f"the row has {len(cells)} columns, this is column {index + 1}")
        return cells[index].strip()

    def label(self, name: str, option: str) -> str:
        return self.where[name][1] if name in self.where else option

    def read(self, number: int, line: int, cells: list[str]) -> RowOutcome:
        if self.width is not None and len(cells) > self.width:
            raise _RowError(
                f"#{self.width + 1}",
                f"the row has {len(cells)} columns, the header {self.width}; a decimal comma "
                "in a comma-separated file? quote the value, or use --delimiter",
            )
        tag = (self.cell(cells, "tag") or "").upper()
        component = self.components.get(tag)
        if component is None:
            raise _RowError(
                self.label("tag", "tag"),
                f"no component tagged {tag!r} at this inspection's site"
                if tag
                else "the tag is empty",  # fmt: skip
            )
        if component.retired_on is not None:
            raise _RowError(
                self.label("tag", "tag"), f"{tag} was retired on {component.retired_on}"
            )
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
            raise _RowError(
                self.label("method", "--method"), f"say how it was measured: one of {allowed}"
            )
        try:
            reading = Reading.model_validate(data, context={"now": self.now})
        except ValidationError as exc:
            first = exc.errors()[0]
            name = str(first["loc"][0]) if first["loc"] else "value"
            option = {"method": "--method", "quantity": "--quantity"}.get(name, name)
            raise _RowError(self.label(name, option), explain(exc).replace("\n", "; ")) from None
        self._admit(reading, component)
        return RowOutcome(number, line, tag, reading, "added")

    def _admit(self, reading: Reading, component: Component) -> None:
        """The checks every reading passes, whichever way it comes (`inspectkit.intake`)."""
        refused = self.admission.refusal(reading, component)
        if refused is not None:
            option = {"instrument_id": "--instrument", "quantity": "quantity"}.get(refused.field)
            raise _RowError(self.label(refused.field, option or refused.field), str(refused))

    def _quantity(self, cells: list[str]) -> Quantity:
        text = self.cell(cells, "quantity")
        if not text:
            if self.options.quantity is None:
                raise _RowError(self.label("quantity", "quantity"), "the quantity is empty")
            return self.options.quantity
        try:
            return Quantity(text.lower().replace("-", "_").replace(" ", "_"))
        except ValueError:
            allowed = ", ".join(q.value for q in Quantity)
            raise _RowError(
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
            raise _RowError(self.label("value", "value"), str(exc)) from None

    def _traverse(self, cells: list[str]) -> Traverse | None:
        """The row's traverse (`traverse` and `current_probe` columns), or None."""
        text = self.cell(cells, "traverse")
        if not text:
            return None
        try:
            return parse_traverse(text, self.cell(cells, "current_probe") or "")
        except units.UnitError as exc:
            raise _RowError(self.label("traverse", "traverse"), str(exc)) from None

    def _at_61_8(self, cells: list[str], series: Traverse) -> units.Measured:
        """A traverse row's reading: the traverse at 61.8 %; the value cell stays empty."""
        if self.cell(cells, "value"):
            raise _RowError(
                self.label("value", "value"), "a row with a traverse takes its value from it; "
                "leave the value cell empty",
            )  # fmt: skip
        try:
            return units.Measured(traverse_reading(series))
        except EarthingError as exc:
            raise _RowError(self.label("traverse", "traverse"), str(exc)) from None

    def _taken_at(self, cells: list[str]) -> datetime:
        text = self.cell(cells, "taken_at") or ""
        try:
            when = dateparser.parse(text, dayfirst=self.options.dayfirst)
        except (dateparser.ParserError, OverflowError, ValueError):
            raise _RowError(
                self.label("taken_at", "taken_at"),
                f"{text!r} is not a date and time; e.g. 2026-06-02 10:15 or 02/06/2026 10:15",
            ) from None
        try:
            if when.tzinfo is None:
                when = when.replace(tzinfo=self.options.tz)
            return when.astimezone(UTC)
        except (OverflowError, ValueError):
            # Year 1 or 9999 moved by a zone offset falls off the calendar.
            raise _RowError(
                self.label("taken_at", "taken_at"),
                f"{text!r} is not a time a reading was taken; give a date of these years",
            ) from None


@dataclass(frozen=True)
class _Admission:
    """What `intake.refusal` needs for every row of one import, read once."""

    inspection: Inspection
    instrument: Instrument | None
    window: timedelta

    @classmethod
    def of(cls, store: Store, inspection: Inspection, instrument_id: str | None) -> _Admission:
        instrument = store.get(Instrument, instrument_id) if instrument_id else None
        return cls(inspection, instrument, intake.reading_window(store))

    def refusal(self, reading: Reading, component: Component) -> intake.ReadingRefused | None:
        return intake.refusal(reading, self.inspection, component, self.instrument, self.window)


def _only_method(quantity: Quantity) -> Method | None:
    methods = METHODS_FOR[quantity]
    return next(iter(methods)) if len(methods) == 1 else None


def _key(reading: Reading) -> tuple[Any, ...]:
    return (reading.component_id, reading.quantity, reading.taken_at, reading.value,
            reading.over_range)  # fmt: skip


def _mark_known(store: Store, inspection_id: str, outcomes: list[RowOutcome]) -> list[RowOutcome]:
    """Rows the inspection already holds (an import run twice) are skipped, not doubled."""
    known = {_key(r) for r in store.select(Reading, "inspection_id = ?", [inspection_id])}
    marked = []
    for outcome in outcomes:
        key = _key(outcome.reading)
        if key in known:
            outcome = RowOutcome(outcome.row, outcome.line, outcome.tag, outcome.reading,
                                 "already recorded, skipped")  # fmt: skip
        known.add(key)
        marked.append(outcome)
    return marked
