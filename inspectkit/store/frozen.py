"""Signed records never change: the check every save and delete passes before it writes.

A signed report vouches for what its inspection recorded, so the inspection, its
readings, findings, photos and components marked not inspected stay as signed, and
so do the tag and kind of a component they name. Corrections are amendment
inspections that reference the signed one.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

import sqlite_utils

from inspectkit.model import (
    Component,
    Finding,
    Inspection,
    InspectionState,
    NotInspected,
    Photo,
    Reading,
    Record,
)
from inspectkit.store.errors import FrozenRecordError
from inspectkit.store.rows import to_row
from inspectkit.store.selects import in_chunks

#: Fields every save stamps; a save that changes only these changes nothing.
_STAMP_FIELDS = frozenset({"updated_at", "updated_by"})
#: A component's fields that signed records show, fixed once one of them is signed.
_SIGNED_COMPONENT_FIELDS = frozenset({"tag", "kind"})
#: Fields a later inspection may still set on a finding from a signed inspection.
_RESOLUTION_FIELDS = _STAMP_FIELDS | {"resolved_by"}
#: Records made in an inspection, frozen with it once it is signed.
_PARTS = (Reading, Finding, Photo, NotInspected)


def refuse_frozen(
    db: sqlite_utils.Database,
    records: Sequence[Record],
    existing: dict[str, dict[str, dict[str, Any]]],
    *,
    deleting: bool = False,
) -> None:
    """Raise `FrozenRecordError` for the first record that would change something signed.

    `existing` holds the stored rows of the records, by table and id. The one
    exception: a later inspection may mark a finding of a signed inspection as
    resolved, which adds to the record rather than rewriting it.
    """
    stored_of = {r.id: existing.get(r.table, {}).get(r.id) for r in records}
    signed = _signed_inspections(
        db,
        {r.inspection_id for r in records if isinstance(r, _PARTS)}
        | {s["inspection_id"] for s in stored_of.values() if s and s.get("inspection_id")},
    )
    for record in records:
        stored = stored_of[record.id]
        changed = _changed_fields(record, stored) if stored and not deleting else None
        if isinstance(record, Component):
            _refuse_signed_rename(db, record, changed)
            continue
        if isinstance(record, Inspection):
            if stored is None or stored["state"] != InspectionState.SIGNED.value:
                continue
            if changed is not None and changed <= _STAMP_FIELDS:
                continue
            raise FrozenRecordError(
                f"inspection {record.id} of {stored['date']} is signed and cannot be "
                "changed; create an amendment inspection that references it"
            )
        if not isinstance(record, _PARTS):
            continue
        if record.inspection_id not in signed and (
            stored is None or stored.get("inspection_id") not in signed
        ):
            continue
        if isinstance(record, Finding) and changed is not None and changed <= _RESOLUTION_FIELDS:
            continue
        raise FrozenRecordError(
            f"{record.table} {record.id} belongs to a signed inspection and cannot be "
            "changed; create an amendment inspection that references it"
        )


def _refuse_signed_rename(
    db: sqlite_utils.Database, component: Component, changed: set[str] | None
) -> None:
    """A component keeps the tag and kind its signed records were made under.

    A signed report names each reading by its component's tag; renaming the
    component would make the signed records say something else than was signed.
    """
    if not changed or not changed & _SIGNED_COMPONENT_FIELDS:
        return
    row = db.execute(
        " UNION ALL ".join(
            f"SELECT i.id, i.date FROM [{table}] t JOIN inspection i ON i.id = t.inspection_id "
            "WHERE t.component_id = :c AND i.state = 'signed'"
            for table in ("reading", "finding", "photo")
        )
        + " LIMIT 1",
        {"c": component.id},
    ).fetchone()
    if row is not None:
        raise FrozenRecordError(
            f"component {component.tag} ({component.id}) has records in the inspection of "
            f"{row[1]} that is signed ({row[0]}): its tag and kind stay as signed; retire "
            "it and add a new component instead"
        )


def _signed_inspections(db: sqlite_utils.Database, ids: set[str | None]) -> set[str]:
    signed: set[str] = set()
    for chunk, marks in in_chunks(sorted(i for i in ids if i)):
        signed.update(
            row[0]
            for row in db.execute(
                f"SELECT id FROM inspection WHERE state = 'signed' AND id IN ({marks})", chunk
            )
        )
    return signed


def _changed_fields(record: Record, stored: dict[str, Any]) -> set[str]:
    new = to_row(record)
    return {key for key in new if key != "created_at" and new[key] != stored.get(key)}
