"""Turning records into SQLite rows and back, in one canonical form.

The audit chain hashes a record's row exactly as SQLite returns it, so the row form
must be the stored form: enums and dates as text, booleans as 0/1, floats as floats.
"""

from __future__ import annotations

import json
from functools import cache
from typing import Any, get_args

from inspectkit.model import Record

#: Records read back from the database were checked when written; skip clock checks.
STORED = {"stored": True}
#: Made once: `json.dumps` with options builds a new encoder on every call.
_CANONICAL = json.JSONEncoder(sort_keys=True, ensure_ascii=False, separators=(",", ":"))


def to_row(record: Record) -> dict[str, Any]:
    """The row SQLite will hold for this record."""
    row = record.model_dump(mode="json")
    for name in _bool_fields(type(record)):
        if isinstance(row[name], bool):
            row[name] = int(row[name])
    return row


@cache
def _bool_fields(model: type[Record]) -> tuple[str, ...]:
    """Fields that may hold a boolean, which SQLite stores as 0/1 (looked up once per model)."""
    return tuple(
        name
        for name, info in model.model_fields.items()
        if info.annotation is bool or bool in get_args(info.annotation)
    )


def from_row(model: type[Record], row: dict[str, Any]) -> Record:
    """A record from its stored row."""
    return model.model_validate(row, context=STORED)


def canonical(row: dict[str, Any] | None) -> str | None:
    """The text the audit chain stores and hashes for a row."""
    if row is None:
        return None
    return _CANONICAL.encode(row)
