"""Readings exported by a test instrument as CSV, matched to components by tag, all or nothing.

Instruments write CSV in many shapes: a header or none, commas or semicolons,
decimal commas, units in their own column or in the cell, dates the local way.
The caller says which column holds what (`ColumnMap`) and how to read it
(`CsvOptions`); every row is read and checked before any is saved, and one bad
row stops the import with a message naming its row and column.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from datetime import datetime
from pathlib import Path
from typing import Any

from inspectkit import intake, units
from inspectkit.model import Inspection, InspectionState, Reading, utcnow
from inspectkit.store import Store
from inspectkit.store.record_queries import inspection_records, site_components
from inspectkit.sync.csv_options import ColumnMap, CsvImportError, CsvOptions, locate
from inspectkit.sync.csv_rows import Admission, RowError, RowReader
from inspectkit.sync.csv_table import read_table

#: At most this many problems are listed, then how many more there were.
MAX_PROBLEMS = 20


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
    inspection = _open_inspection(store, inspection_id)
    if options.quantity is None and "quantity" not in mapping.columns:
        raise CsvImportError(
            ["say what the readings measure: --quantity, or map a quantity column"]
        )
    components = {c.tag: c for c in site_components(store, inspection.site_id)}
    header, records = read_table(Path(path), options)
    where = locate(mapping, header)
    width = len(header) if header else None
    admission = Admission.of(store, inspection, options.instrument_id)
    reader = RowReader(where, options, components, inspection, now or utcnow(), width, admission)
    outcomes: list[RowOutcome] = []
    problems: list[str] = []
    for number, (line, cells) in enumerate(records, start=1):
        try:
            tag, reading = reader.read(cells)
        except RowError as exc:
            problems.append(f"row {number} (line {line}), column {exc.column!r}: {exc}")
        else:
            outcomes.append(RowOutcome(number, line, tag, reading, "added"))
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


def _open_inspection(store: Store, inspection_id: str) -> Inspection:
    """The inspection the readings go to, refused if it is signed or its visit is closed."""
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
    return inspection


def _capped(problems: list[str]) -> list[str]:
    """The first `MAX_PROBLEMS` problems, a count of the rest, and what to do."""
    shown = problems[:MAX_PROBLEMS]
    if len(problems) > MAX_PROBLEMS:
        shown.append(f"… and {len(problems) - MAX_PROBLEMS:,} more rows refused")
    return [*shown, "nothing was imported; fix the rows above and run again"]


def _key(reading: Reading) -> tuple[Any, ...]:
    return (reading.component_id, reading.quantity, reading.taken_at, reading.value,
            reading.over_range)  # fmt: skip


def _mark_known(store: Store, inspection_id: str, outcomes: list[RowOutcome]) -> list[RowOutcome]:
    """Rows the inspection already holds (an import run twice) are skipped, not doubled."""
    known = {_key(r) for r in inspection_records(store, Reading, inspection_id)}
    marked = []
    for outcome in outcomes:
        key = _key(outcome.reading)
        if key in known:
            outcome = RowOutcome(outcome.row, outcome.line, outcome.tag, outcome.reading,
                                 "already recorded, skipped")  # fmt: skip
        known.add(key)
        marked.append(outcome)
    return marked
