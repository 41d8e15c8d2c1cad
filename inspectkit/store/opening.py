"""The database file itself: its connection, its schema brought up to date, its copies.

What is done to the file as a whole, below the records: the pragmas each connection
needs, the migration steps run in order, and SQLite's online backup API both ways.
`Store.open` and `Store.restore` use these; a test building a database of an older
schema calls `apply_migrations` with a lower `upto`.
"""

from __future__ import annotations

import getpass
import sqlite3
from pathlib import Path

import sqlite_utils

from inspectkit import __version__
from inspectkit.store.errors import NewerSchemaError, StoreError
from inspectkit.store.schema import MIGRATIONS, SCHEMA_VERSION

#: A second process (the TUI and a command at once) waits this long for the lock.
BUSY_TIMEOUT_MS = 10_000
_VERSION_SQL = "SELECT value FROM meta WHERE key = 'schema_version'"


def connect(path: Path | None) -> sqlite_utils.Database:
    """A connection with the store's pragmas: to a file in WAL mode, or (None) in memory."""
    if path is None:
        conn = sqlite3.connect(":memory:")
    else:
        conn = sqlite3.connect(str(path), timeout=BUSY_TIMEOUT_MS / 1000)
    conn.execute(f"PRAGMA busy_timeout = {BUSY_TIMEOUT_MS}")
    conn.execute("PRAGMA foreign_keys = ON")
    db = sqlite_utils.Database(conn)
    if path is not None:
        db.enable_wal()
    return db


def photos_dir_of(db_path: Path) -> Path:
    """The photo folder that belongs to a database file, wherever the file is."""
    return db_path.with_name(f"{db_path.stem}-photos")


def default_user() -> str:
    """The account's name, written as `updated_by` when the caller names no one."""
    try:
        return getpass.getuser()
    except (KeyError, OSError):
        return "unknown"


def schema_version(db: sqlite_utils.Database) -> int:
    """The last migration step the database has had; 0 for a new file."""
    if "meta" not in db.table_names():
        return 0
    row = db.execute(_VERSION_SQL).fetchone()
    return int(row[0]) if row else 0


def apply_migrations(db: sqlite_utils.Database, *, upto: int) -> None:
    """Run the migration steps after the database's version, up to `upto`, each in a transaction."""
    for version in range(schema_version(db) + 1, upto + 1):
        with db.atomic():
            MIGRATIONS[version - 1](db)
            db["meta"].upsert({"key": "schema_version", "value": str(version)}, pk="key")
            if version == 1:
                db["meta"].upsert({"key": "created_by_version", "value": __version__}, pk="key")


def copy_to(conn: sqlite3.Connection, target: Path) -> Path:
    """A consistent copy through SQLite's online backup API, safe while others write.

    The copy is checked (`quick_check`) before it is called a backup.

    Raises:
        StoreError: the copy failed its check.
    """
    target.parent.mkdir(parents=True, exist_ok=True)
    out = sqlite3.connect(str(target))
    try:
        conn.backup(out)
        status = out.execute("PRAGMA quick_check").fetchone()[0]
    finally:
        out.close()
    if status != "ok":
        raise StoreError(
            f"the backup {target} failed its check ({status}); run `inspectkit doctor`"
        )
    return target


def copy_from(source: Path, conn: sqlite3.Connection) -> None:
    """Put a backup's content in place of the database behind `conn`, page by page.

    Through the connection, so the database's own journal stays right (copying the
    file over it would not).

    Raises:
        StoreError: the file is not a sound inspectkit database of a schema this
            version reads.
    """
    if not source.is_file():
        raise StoreError(f"{source}: no such backup; give the path of a NAME.bak file")
    backup = sqlite3.connect(f"file:{source}?mode=ro", uri=True)
    try:
        status = backup.execute("PRAGMA quick_check").fetchone()[0]
        row = backup.execute(_VERSION_SQL).fetchone()
        if status != "ok" or row is None:
            raise StoreError(f"{source}: not a sound inspectkit backup ({status})")
        if int(row[0]) > SCHEMA_VERSION:
            raise NewerSchemaError(
                f"{source}: made by a newer inspectkit (schema {row[0]}); upgrade first"
            )
        backup.backup(conn)
    except sqlite3.DatabaseError as exc:
        raise StoreError(f"{source}: not an inspectkit backup ({exc})") from exc
    finally:
        backup.close()
