"""`Store`: one open database, and every read and write the rest of inspectkit makes.

The one entry to the database. Its methods say what can be done, each in a few
lines; the work lies in small modules beside it, functions over the connection that
hold no state of their own: `opening` (the file, its migrations and copies),
`selects` (rows by condition or id), `writes` and `frozen` (saving, and what signing
forbids), `settings`. What the methods add is what the whole needs: one transaction
around each write, its audit rows, and the user who made it.
"""

from __future__ import annotations

import sqlite3
from collections.abc import Iterable, Iterator, Sequence
from contextlib import contextmanager
from pathlib import Path
from typing import Any, TypeVar

import sqlite_utils

from inspectkit.model import Record, utcnow
from inspectkit.store import audit, audit_key, opening, settings
from inspectkit.store.audit import Change
from inspectkit.store.errors import NewerSchemaError, StoreError
from inspectkit.store.rows import from_row
from inspectkit.store.schema import SCHEMA_VERSION
from inspectkit.store.selects import row_by_id, rows_by_ids, select_rows
from inspectkit.store.writes import delete_record, write_records

R = TypeVar("R", bound=Record)


class Store:
    """One open database and the folder of photos beside it."""

    def __init__(self, db: sqlite_utils.Database, path: Path | None, user: str) -> None:
        self.db = db
        self.path = path
        self.user = user
        #: The audit table takes keyed checks; looked up on the first write.
        self._keyed: bool | None = None

    # ----------------------------------------------------------------- opening

    @classmethod
    def open(cls, path: Path | str, *, user: str | None = None, create: bool = True) -> Store:
        """Open (or create) a database file and bring its schema up to date.

        Raises:
            StoreError: the file is missing (and `create` is off) or is not a database.
            NewerSchemaError: the file was made by a newer inspectkit.
        """
        path = Path(path)
        if not create and not path.exists():
            raise StoreError(f"{path}: no such database; check --db or create one first")
        path.parent.mkdir(parents=True, exist_ok=True)
        try:
            db = opening.connect(path)
            store = cls(db, path, user if user is not None else opening.default_user())
            store._migrate()
        except sqlite3.DatabaseError as exc:
            raise StoreError(f"{path}: not an inspectkit database ({exc})") from exc
        return store

    @classmethod
    def memory(cls, *, user: str = "test") -> Store:
        """A throwaway in-memory database, for tests and dry runs."""
        store = cls(opening.connect(None), None, user)
        store._migrate()
        return store

    def close(self) -> None:
        self.db.close()

    def __enter__(self) -> Store:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()

    @property
    def photos_dir(self) -> Path:
        """Content-addressed photo folder beside the database (`demo.sqlite` → `demo-photos/`)."""
        if self.path is None:
            raise StoreError("an in-memory database has no photo folder")
        return opening.photos_dir_of(self.path)

    def schema_version(self) -> int:
        return opening.schema_version(self.db)

    def _migrate(self) -> None:
        version = self.schema_version()
        if version > SCHEMA_VERSION:
            raise NewerSchemaError(
                f"{self.path}: made by a newer inspectkit (schema {version}, this one reads up "
                f"to {SCHEMA_VERSION}); upgrade inspectkit to open it"
            )
        if version == SCHEMA_VERSION:
            return
        if version > 0 and self.path is not None:
            self.backup(self.path.with_name(f"{self.path.name}.before-schema-{version + 1}.bak"))
        opening.apply_migrations(self.db, upto=SCHEMA_VERSION)

    def backup(self, target: Path) -> Path:
        """A checked copy of the database, safe while others write (`opening.copy_to`)."""
        return opening.copy_to(self.db.conn, target)

    def restore(self, source: Path) -> None:
        """Put a backup's content in place of this database's (`opening.copy_from`).

        The caller keeps a backup of what is replaced first. The chain heads noted
        after the backup was made are dropped: the log was rolled back on purpose,
        not cut short.
        """
        opening.copy_from(source, self.db.conn)
        self._keyed = None
        self._migrate()
        audit_key.forget_after(self, f"{source.name} was restored")

    # ------------------------------------------------------------ transactions

    @contextmanager
    def transaction(self) -> Iterator[Store]:
        """All writes inside happen together or not at all.

        The outermost block takes the write lock at once (BEGIN IMMEDIATE), so the
        audit chain's last hash cannot change under it; inner blocks are savepoints.
        """
        if self.db.conn.in_transaction:
            with self.db.atomic():
                yield self
            return
        with self._outermost("BEGIN IMMEDIATE"):
            yield self

    @contextmanager
    def snapshot(self) -> Iterator[Store]:
        """Every read inside sees one state of the database, while others go on writing.

        A bundle is read table by table; without one read transaction a reading
        saved meanwhile could arrive without the inspection it belongs to.
        """
        if self.db.conn.in_transaction:
            yield self
            return
        with self._outermost("BEGIN DEFERRED"):
            yield self

    @contextmanager
    def _outermost(self, begin: str) -> Iterator[Store]:
        conn = self.db.conn
        conn.execute(begin)
        try:
            yield self
        except BaseException:
            if conn.in_transaction:
                conn.execute("ROLLBACK")
            raise
        else:
            conn.execute("COMMIT")

    # ------------------------------------------------------------------ reading

    def get(self, model: type[R], record_id: str) -> R | None:
        row = row_by_id(self.db, model.table, record_id)
        return None if row is None else from_row(model, row)  # type: ignore[return-value]

    def select(
        self,
        model: type[R],
        where: str | None = None,
        params: Sequence[Any] | dict[str, Any] = (),
        order_by: str | None = None,
    ) -> list[R]:
        """Records of one type; `where` is an SQL condition with `?` placeholders."""
        return [
            from_row(model, row)  # type: ignore[misc]
            for row in select_rows(self.db, model.table, where, params, order_by)
        ]

    def rows_by_id(self, table: str, ids: Sequence[str]) -> dict[str, dict[str, Any]]:
        """Stored rows of one table by id, exactly as SQLite holds them (what the audit hashes)."""
        return rows_by_ids(self.db, table, ids)

    # ------------------------------------------------------------------ writing

    def save(self, record: R, *, touch: bool = True) -> R:
        """Insert or update one record, with its audit row, in one transaction."""
        return self.save_all([record], touch=touch)[0]

    def save_all(
        self,
        records: Iterable[R],
        *,
        touch: bool = True,
        rows: Sequence[dict[str, Any]] | None = None,
    ) -> list[R]:
        """Insert or update many records in one transaction; all or none are written.

        Args:
            records: records of any types, references before the records that use them.
            touch: stamp `updated_at`/`updated_by` now; off when merging records that
                keep the time and author they were made with elsewhere.
            rows: each record's `to_row`, when the caller has made it already (a
                checked bundle); only with `touch` off, since stamping changes the row.

        Raises:
            FrozenRecordError: a record would change something signed; nothing is written.
        """
        records = list(records)
        if not records:
            return []
        if rows is not None and (touch or len(rows) != len(records)):
            raise ValueError("rows must be given one per record, and only with touch=False")
        now = utcnow()
        if touch:
            records = [
                r.model_copy(update={"updated_at": now, "updated_by": self.user}) for r in records
            ]
        with self.transaction():
            self._log(write_records(self.db, records, rows), now.isoformat())
        return records

    def delete(self, model: type[Record], record_id: str) -> None:
        """Remove a record made by mistake; signed records and their parts stay."""
        with self.transaction():
            self._log([delete_record(self.db, model, record_id)], utcnow().isoformat())

    def log_conflicts(
        self, conflicts: Sequence[tuple[str, str, dict[str, Any], dict[str, Any]]]
    ) -> None:
        """Keep both versions of records edited on two databases, as `conflict` audit rows.

        Each item is (table, row id, losing row, kept row); the kept row must be the
        one the table now holds, so the audit check still matches the record.
        """
        changes: list[Change] = [
            (t, row_id, "conflict", lost, kept) for t, row_id, lost, kept in conflicts
        ]
        with self.transaction():
            self._log(changes, utcnow().isoformat())

    def _log(self, changes: list[Change], at: str) -> None:
        """Append the audit rows of changes made in the current transaction."""
        if changes:
            entries = audit.make_entries(audit.last_hash(self.db), changes, at=at, who=self.user)
            if self._keyed is None:
                self._keyed = audit_key.keyed(self.db)
            audit.insert_entries(self.db, entries, with_key=self._keyed)

    # ----------------------------------------------------------------- settings

    def get_setting(self, key: str, default: str | None = None) -> str | None:
        return settings.read_setting(self.db, key, default)

    def set_setting(self, key: str, value: str) -> None:
        """Keep a setting in the database (cautions acknowledged, default instrument…)."""
        at = utcnow().isoformat()
        with self.transaction():
            self._log([settings.write_setting(self.db, key, value, at)], at)

    # ------------------------------------------------------------------- checks

    def verify_audit(self) -> list[audit.AuditProblem]:
        """Records or audit rows changed behind the tool's back, each named."""
        return audit.verify(self.db)
