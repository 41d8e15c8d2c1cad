"""Turning records into SQLite rows and back, in one canonical form.

The audit chain hashes a record's row exactly as SQLite returns it, so the row form
must be the stored form: enums and dates as text, booleans as 0/1, floats as floats.
"""

from __future__ import annotations

import json
from typing import Any

from inspectkit.model import Record

#: Records read back from the database were checked when written; skip clock checks.
STORED = {"stored": True}


def to_row(record: Record) -> dict[str, Any]:
    """The row SQLite will hold for this record."""
    row = record.model_dump(mode="json")
    return {key: int(value) if isinstance(value, bool) else value for key, value in row.items()}


def from_row(model: type[Record], row: dict[str, Any]) -> Record:
    """A record from its stored row."""
    return model.model_validate(row, context=STORED)


def canonical(row: dict[str, Any] | None) -> str | None:
    """The text the audit chain stores and hashes for a row."""
    if row is None:
        return None
    return json.dumps(row, sort_keys=True, ensure_ascii=False, separators=(",", ":"))
