"""The append-only audit log, hash-chained so that edits behind the tool's back show.

Each audit row holds the sha256 of its own content and of the row before it. A
record changed with plain SQL no longer matches its last audit entry; an audit row
changed or removed breaks the chain. `verify` finds both and names them. A chain
recomputed by hand passes `verify`: the keyed check each row also carries
(`audit_key`) is what such a rewrite cannot forge.
"""

from __future__ import annotations

import hashlib
import json
from collections.abc import Iterator
from dataclasses import dataclass
from typing import Any

import sqlite_utils

from inspectkit.model import MODEL_FOR_TABLE, new_ids
from inspectkit.store import audit_key
from inspectkit.store.rows import canonical

GENESIS = "0" * 64

_HASHED = ("id", "at", "who", "table_name", "row_id", "action", "before", "after", "prev_hash")
#: Made once: `json.dumps` with options builds a new encoder on every call.
_ENCODER = json.JSONEncoder(ensure_ascii=False, separators=(",", ":"))
#: One change an audit row records: (table, row id, action, row before, row after).
Change = tuple[str, str, str, dict[str, Any] | None, dict[str, Any] | None]


@dataclass(frozen=True)
class AuditProblem:
    """One thing the audit check found wrong."""

    table: str
    row_id: str
    message: str


def entry_hash(entry: dict[str, Any]) -> str:
    """The hash an audit row must carry: over its content, including the previous hash."""
    content = _ENCODER.encode([entry[k] for k in _HASHED])
    return hashlib.sha256(content.encode("utf-8")).hexdigest()


def last_hash(db: sqlite_utils.Database) -> str:
    row = db.execute("SELECT hash FROM audit ORDER BY seq DESC LIMIT 1").fetchone()
    return row[0] if row else GENESIS


def make_entries(
    prev_hash: str,
    changes: list[Change],
    *,
    at: str,
    who: str,
) -> list[dict[str, Any]]:
    """Chained audit rows for (table, row id, action, before, after) changes, in order."""
    entries = []
    for audit_id, (table, row_id, action, before, after) in zip(
        new_ids(len(changes)), changes, strict=True
    ):
        entry = {
            "id": audit_id,
            "at": at,
            "who": who,
            "table_name": table,
            "row_id": row_id,
            "action": action,
            "before": canonical(before),
            "after": canonical(after),
            "prev_hash": prev_hash,
        }
        entry["hash"] = prev_hash = entry_hash(entry)
        entries.append(entry)
    return entries


def insert_entries(
    db: sqlite_utils.Database, entries: list[dict[str, Any]], *, with_key: bool | None = None
) -> None:
    """Append chained audit rows, each with its keyed check where the schema has the column.

    Args:
        db: The database, inside the caller's transaction.
        entries: Rows from `make_entries`.
        with_key: Whether the audit table has the keyed-check column; looked up if None.
    """
    if not entries:
        return
    if with_key if with_key is not None else audit_key.keyed(db):
        for entry in entries:
            entry["mac"] = audit_key.mac_for(entry["hash"])
    names = list(entries[0])
    sql = f"INSERT INTO audit ({','.join(names)}) VALUES ({','.join('?' * len(names))})"
    db.conn.executemany(sql, ([e[n] for n in names] for e in entries))


def verify(db: sqlite_utils.Database) -> list[AuditProblem]:
    """Check the chain, then that every record matches its last audit entry."""
    problems = list(_chain_problems(db))
    problems.extend(_content_problems(db))
    return problems


def _chain_problems(db: sqlite_utils.Database) -> Iterator[AuditProblem]:
    prev = GENESIS
    cursor = db.execute(
        "SELECT seq, id, at, who, table_name, row_id, action, before, after, prev_hash, hash "
        "FROM audit ORDER BY seq"
    )
    names = [d[0] for d in cursor.description]
    for values in cursor:
        entry = dict(zip(names, values, strict=True))
        where = f"audit row {entry['seq']} ({entry['table_name']} {entry['row_id']})"
        if entry["prev_hash"] != prev:
            yield AuditProblem(
                "audit",
                str(entry["seq"]),
                f"{where}: the chain is broken before it; an audit row was removed or inserted",
            )
        if entry_hash(entry) != entry["hash"]:
            yield AuditProblem(
                "audit", str(entry["seq"]), f"{where} was altered after it was written"
            )
        prev = entry["hash"]


def _content_problems(db: sqlite_utils.Database) -> Iterator[AuditProblem]:
    for table in MODEL_FOR_TABLE:
        last: dict[str, str | None] = {}
        for row_id, after in db.execute(
            "SELECT row_id, after FROM audit WHERE table_name = ? ORDER BY seq", [table]
        ):
            last[row_id] = after
        cursor = db.execute(f"SELECT * FROM [{table}]")
        names = [d[0] for d in cursor.description]
        for values in cursor:
            row = dict(zip(names, values, strict=True))
            row_id = row["id"]
            if row_id not in last:
                yield AuditProblem(
                    table,
                    row_id,
                    f"{table} {row_id} has no audit entry; it was added outside inspectkit",
                )
                continue
            recorded = last.pop(row_id)
            if recorded is None:
                yield AuditProblem(
                    table, row_id, f"{table} {row_id} was deleted in the log but is present"
                )
            elif canonical(row) != recorded:
                fields = _changed_fields(json.loads(recorded), row)
                yield AuditProblem(
                    table, row_id, f"{table} {row_id} was changed outside inspectkit ({fields})"
                )
        for row_id, recorded in last.items():
            if recorded is not None:
                yield AuditProblem(
                    table, row_id, f"{table} {row_id} is missing; it was deleted outside inspectkit"
                )


def _changed_fields(recorded: dict[str, Any], row: dict[str, Any]) -> str:
    changed = [
        f"{key}: {recorded.get(key)!r} → {row.get(key)!r}"
        for key in sorted(set(recorded) | set(row))
        if recorded.get(key) != row.get(key)
    ]
    return "; ".join(changed) or "same fields, different form"
