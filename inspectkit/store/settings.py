"""The `setting` table: small choices kept by key in the database, each change audited.

Kept in the database rather than the user's config so that they travel with the file
(cautions acknowledged, the default instrument, the database's own id); they are not
records, so they have no stamps and do not merge, but the audit chain logs them.
"""

from __future__ import annotations

import sqlite_utils

from inspectkit.store.audit import Change


def read_setting(db: sqlite_utils.Database, key: str, default: str | None = None) -> str | None:
    """The value kept under `key`, or `default`."""
    row = db.execute("SELECT value FROM setting WHERE key = ?", [key]).fetchone()
    return row[0] if row else default


def write_setting(db: sqlite_utils.Database, key: str, value: str, at: str) -> Change:
    """Keep `value` under `key`, inside the caller's transaction; the change to log."""
    before = db.execute("SELECT key, value FROM setting WHERE key = ?", [key]).fetchone()
    db["setting"].upsert({"key": key, "value": value, "updated_at": at}, pk="key")
    return (
        "setting",
        key,
        "update" if before else "insert",
        {"key": before[0], "value": before[1]} if before else None,
        {"key": key, "value": value},
    )
