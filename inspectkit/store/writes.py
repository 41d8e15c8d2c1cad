"""Records turned into the inserts, updates and deletes that store them.

Each function runs inside the caller's transaction and returns the changes made,
for `Store` to log as audit rows in the same transaction. A row that would come out
as stored already is left alone, so it logs nothing.
"""

from __future__ import annotations

from collections.abc import Sequence
from itertools import groupby
from typing import Any

import sqlite_utils

from inspectkit.model import Record
from inspectkit.store.audit import Change
from inspectkit.store.errors import StoreError
from inspectkit.store.frozen import refuse_frozen
from inspectkit.store.rows import from_row, to_row
from inspectkit.store.selects import row_by_id, rows_by_ids


def write_records(
    db: sqlite_utils.Database,
    records: Sequence[Record],
    rows: Sequence[dict[str, Any]] | None = None,
) -> list[Change]:
    """Insert or update each record (its `to_row`, or the `rows` given, one per record)."""
    by_table: dict[str, list[Record]] = {}
    for record in records:
        by_table.setdefault(record.table, []).append(record)
    existing = {
        table: rows_by_ids(db, table, [r.id for r in group]) for table, group in by_table.items()
    }
    refuse_frozen(db, records, existing)
    changes: list[Change] = []
    inserts: list[tuple[str, dict[str, Any]]] = []
    for n, record in enumerate(records):
        before = existing[record.table].get(record.id)
        after = to_row(record) if rows is None else rows[n]
        if before is not None:
            after = {**after, "created_at": before["created_at"]}
            if after == before:
                continue
            _insert_all(db, inserts)  # first the new rows this one may name
            db[record.table].update(record.id, after)
            changes.append((record.table, record.id, "update", before, after))
        else:
            inserts.append((record.table, after))
            changes.append((record.table, record.id, "insert", None, after))
        existing[record.table][record.id] = after
    _insert_all(db, inserts)
    return changes


def delete_record(db: sqlite_utils.Database, model: type[Record], record_id: str) -> Change:
    """Remove one record, unless it is signed or part of something signed.

    Raises:
        StoreError: there is no such record.
        FrozenRecordError: it is signed, or recorded in a signed inspection.
    """
    before = row_by_id(db, model.table, record_id)
    if before is None:
        raise StoreError(f"no {model.table} with id {record_id}")
    refuse_frozen(db, [from_row(model, before)], {model.table: {record_id: before}}, deleting=True)
    db.execute(f"DELETE FROM [{model.table}] WHERE id = ?", [record_id])
    return (model.table, record_id, "delete", before, None)


def _insert_all(db: sqlite_utils.Database, rows: list[tuple[str, dict[str, Any]]]) -> None:
    """Insert (table, row) pairs in order, then empty `rows`.

    One statement per run of rows of a table: sqlite-utils' `insert` looks the
    table up again on every call, and a bundle import adds thousands of rows at once.
    """
    for (table, names), run in groupby(rows, key=lambda item: (item[0], tuple(item[1]))):
        columns = ",".join(f"[{name}]" for name in names)
        marks = ",".join("?" * len(names))
        sql = f"INSERT INTO [{table}] ({columns}) VALUES ({marks})"
        db.conn.executemany(sql, [tuple(row.values()) for _, row in run])
    rows.clear()
