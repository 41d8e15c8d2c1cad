"""The audit chain's anchor outside the database: a secret key, and the heads signing saw.

The plain chain (`store.audit`) is a hash chain: whoever holds the database and
knows the format can edit a row and compute every later hash again. So each
audit row written here also carries a keyed check (HMAC-SHA256 of its hash, RFC
2104) made with a secret that lives in the user config folder (0600), never in
the database; a row rewritten without the secret no longer matches. And when a
report is signed, the chain's head at that moment is noted beside the secret,
so a log cut short afterwards (the tail deleted, a signed inspection put back
to draft) misses a row it is known to have had.

What it does not prove: someone holding both the database and the secret can
still rewrite everything; and rows written on another computer carry that
computer's key, which cannot be checked here.
"""

from __future__ import annotations

import hashlib
import hmac
import json
import secrets
from collections.abc import Iterator
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING, Any

import sqlite_utils

from inspectkit.model import new_id
from inspectkit.paths import user_config_dir
from inspectkit.store.trust import write_private

if TYPE_CHECKING:
    from inspectkit.store.database import Store

KEY_FILE = "audit.key"
ANCHOR_FILE = "audit-anchors.json"
#: Setting naming a database, in its bundles and in the anchors kept for it.
DATABASE_ID_SETTING = "sync.database_id"
#: Secrets read once per process, by path (tests point the config folder elsewhere).
_KEYS: dict[Path, bytes] = {}


@dataclass(frozen=True)
class KeyProblem:
    """An audit row that the keyed check or an anchor cannot vouch for."""

    seq: int
    message: str


def _key() -> bytes | None:
    """This user's audit secret, made (0600, in a 0700 folder) the first time it is needed.

    None when the config folder cannot hold it (read-only, damaged file): records
    are still saved, and the doctor reports the rows written without a check.
    """
    path = user_config_dir() / KEY_FILE
    if path in _KEYS:
        return _KEYS[path]
    try:
        if not path.exists():
            try:
                write_private(path, secrets.token_hex(32).encode("ascii"), exclusive=True)
            except FileExistsError:
                pass  # made meanwhile by another process: read that one
        key = bytes.fromhex(path.read_text(encoding="ascii").strip())
    except (OSError, ValueError):
        return None
    _KEYS[path] = key
    return key


def _key_id(key: bytes) -> str:
    return hashlib.sha256(key).hexdigest()[:16]


def mac_for(row_hash: str, key: bytes | None = None) -> str | None:
    """`<key id>:<HMAC-SHA256 of the row's hash>`, the keyed check an audit row carries."""
    key = key if key is not None else _key()
    if key is None:
        return None
    return f"{_key_id(key)}:{hmac.new(key, row_hash.encode('ascii'), hashlib.sha256).hexdigest()}"


def keyed(db: sqlite_utils.Database) -> bool:
    """The audit table has the column for keyed checks (schema step `_trust` and later)."""
    return any(row[1] == "mac" for row in db.execute("PRAGMA table_info(audit)"))


def key_problems(db: sqlite_utils.Database) -> list[KeyProblem]:
    """The first audit row the key cannot vouch for, and rows of another computer's key.

    Rows written before keyed checks existed carry none and are not counted; once
    a row carries one, every later row must.
    """
    key = _key()
    if not keyed(db) or key is None:
        return []
    ours = _key_id(key)
    foreign = 0
    seen_keyed = False
    problems: list[KeyProblem] = []
    for seq, row_hash, mac, rest in _rows(db):
        if mac is None:
            if seen_keyed:
                problems.append(KeyProblem(seq, _after(seq, rest, "carries no keyed check, "
                                                   "though earlier rows do: it was written "
                                                   "outside inspectkit")))  # fmt: skip
                break
            continue
        seen_keyed = True
        if not mac.startswith(f"{ours}:"):
            foreign += 1
        elif not hmac.compare_digest(mac, mac_for(row_hash, key)):
            problems.append(KeyProblem(seq, _after(seq, rest, "fails its keyed check: it was "
                                                   "rewritten without this computer's audit "
                                                   "key")))  # fmt: skip
            break
    if foreign:
        problems.append(
            KeyProblem(0, f"{foreign} audit row(s) carry the key of another computer (the "
                          "database was copied here): this computer cannot vouch for them")
        )  # fmt: skip
    return problems + anchor_problems(db)


def _rows(db: sqlite_utils.Database) -> Iterator[tuple[int, str, str | None, int]]:
    """(seq, hash, mac, rows after it) for every audit row, in order."""
    total = db.execute("SELECT COUNT(*) FROM audit").fetchone()[0]
    for n, (seq, row_hash, mac) in enumerate(
        db.execute("SELECT seq, hash, mac FROM audit ORDER BY seq"), start=1
    ):
        yield seq, row_hash, mac, total - n


def _after(seq: int, rest: int, what: str) -> str:
    return (
        f"audit row {seq} {what}; from this row on ({rest + 1} rows) the log can no longer "
        "vouch for the records it names"
    )


def stored_id(db: sqlite_utils.Database) -> str | None:
    """This database's id if it has one yet (see `database_id`)."""
    row = db.execute("SELECT value FROM setting WHERE key = ?", [DATABASE_ID_SETTING]).fetchone()
    return row[0] if row else None


def database_id(store: Store) -> str:
    """This database's id, in the bundles it writes and the anchors kept for it; made once."""
    value = stored_id(store.db)
    if value is None:
        value = new_id()
        store.set_setting(DATABASE_ID_SETTING, value)
    return value


def _anchors() -> dict[str, list[dict[str, Any]]]:
    """The heads noted so far, by database id; entries of another shape are left out."""
    path = user_config_dir() / ANCHOR_FILE
    try:
        content = json.loads(path.read_text(encoding="utf-8"))
    except (OSError, ValueError, RecursionError):
        return {}
    if not isinstance(content, dict):
        return {}
    return {
        ident: [i for i in items if isinstance(i, dict) and isinstance(i.get("seq"), int)]
        for ident, items in content.items()
        if isinstance(items, list)
    }


def anchor(store: Store, why: str) -> None:
    """Note the chain's head now, for this database, beside the secret (at signing).

    Args:
        store: The database; given an id first if it has none yet.
        why: What happened at this head, for the doctor's message.
    """
    ident = database_id(store)
    head = store.db.execute("SELECT seq, hash FROM audit ORDER BY seq DESC LIMIT 1").fetchone()
    if head is None:
        return
    anchors = _anchors()
    anchors.setdefault(ident, []).append({"seq": head[0], "hash": head[1], "why": why})
    write_private(user_config_dir() / ANCHOR_FILE, json.dumps(anchors, indent=1).encode())


def forget_after(store: Store, why: str) -> None:
    """After a backup is put back: drop the heads past its end, note its head instead.

    A restore rolls the log back on purpose; the heads noted after the backup
    was made would otherwise read as a log cut short.
    """
    ident = stored_id(store.db)
    if ident is None:
        return
    anchors = _anchors()
    head = store.db.execute("SELECT MAX(seq) FROM audit").fetchone()[0] or 0
    kept = [item for item in anchors.get(ident, []) if int(item.get("seq") or 0) <= head]
    if kept != anchors.get(ident, []):
        anchors[ident] = kept
        write_private(user_config_dir() / ANCHOR_FILE, json.dumps(anchors, indent=1).encode())
    anchor(store, why)


def anchor_problems(db: sqlite_utils.Database) -> list[KeyProblem]:
    """Heads noted at signing that the log no longer holds as they were."""
    ident = stored_id(db)
    problems = []
    for item in _anchors().get(ident or "", []) if ident else []:
        seq, expected = item.get("seq"), item.get("hash")
        row = db.execute("SELECT hash FROM audit WHERE seq = ?", [seq]).fetchone()
        if row is None or row[0] != expected:
            found = "is missing" if row is None else "is not the row it was"
            problems.append(
                KeyProblem(
                    int(seq or 0),
                    f"audit row {seq}, the head of the log when {item.get('why')}, {found}: "
                    "the log was cut short or rewritten since",
                )
            )
    return problems
