"""Rows read with plain SQL: by a condition, by one id, by many ids.

Plain SQL rather than sqlite-utils' `rows_where`, which asks for the table's columns
on every call: the walkdown selects on every reading typed. Rows come back exactly as
SQLite holds them, which is what the audit hashes and the freeze checks compare.
"""

from __future__ import annotations

import sqlite3
from collections.abc import Iterator, Sequence
from typing import Any

import sqlite_utils

#: Ids bound per query when looking up many at once (SQLite's variable limit).
_CHUNK = 500


def select_rows(
    db: sqlite_utils.Database,
    table: str,
    where: str | None = None,
    params: Sequence[Any] | dict[str, Any] = (),
    order_by: str | None = None,
) -> Iterator[dict[str, Any]]:
    """The rows of one table; `where` is an SQL condition with `?` placeholders."""
    sql = f"SELECT * FROM [{table}]"
    if where:
        sql += f" WHERE {where}"
    if order_by:
        sql += f" ORDER BY {order_by}"
    return _dicts(db.execute(sql, params))


def row_by_id(db: sqlite_utils.Database, table: str, record_id: str) -> dict[str, Any] | None:
    """One row of a table, or None."""
    return next(_dicts(db.execute(f"SELECT * FROM [{table}] WHERE id = ?", [record_id])), None)


def rows_by_ids(
    db: sqlite_utils.Database, table: str, ids: Sequence[str]
) -> dict[str, dict[str, Any]]:
    """The rows of one table that these ids name, by id; ids not held are left out."""
    found: dict[str, dict[str, Any]] = {}
    for chunk, marks in in_chunks(ids):
        for row in _dicts(db.execute(f"SELECT * FROM [{table}] WHERE id IN ({marks})", chunk)):
            found[row["id"]] = row
    return found


def in_chunks(ids: Sequence[str]) -> Iterator[tuple[list[str], str]]:
    """Ids in runs SQLite can bind, each with its `?,?,…` placeholders."""
    for start in range(0, len(ids), _CHUNK):
        chunk = list(ids[start : start + _CHUNK])
        yield chunk, ",".join("?" * len(chunk))


def _dicts(cursor: sqlite3.Cursor) -> Iterator[dict[str, Any]]:
    names = [d[0] for d in cursor.description]
    return (dict(zip(names, values, strict=True)) for values in cursor)
