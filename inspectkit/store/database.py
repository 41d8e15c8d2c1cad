"""Opening the database, migrating it, and every write with its audit row."""

from __future__ import annotations

import getpass
import sqlite3
from collections.abc import Iterable, Iterator, Sequence
from contextlib import contextmanager
from itertools import groupby
from pathlib import Path
from typing import Any, TypeVar

import sqlite_utils

from inspectkit import __version__
from inspectkit.model import (
    Component,
    Finding,
    Inspection,
    InspectionState,
    NotInspected,
    Photo,
    Reading,
    Record,
    utcnow,
)
from inspectkit.store import audit, audit_key
from inspectkit.store.rows import from_row, to_row
from inspectkit.store.schema import MIGRATIONS, SCHEMA_VERSION

R = TypeVar("R", bound=Record)

#: A second process (the TUI and a command at once) waits this long for the lock.
BUSY_TIMEOUT_MS = 10_000
#: Rows fetched per query when looking up many ids at once (SQLite's variable limit).
_CHUNK = 500
#: Fields every save stamps; a save that changes only these changes nothing.
_STAMP_FIELDS = frozenset({"updated_at", "updated_by"})
#: A component's fields that signed records show, fixed once one of them is signed.
_SIGNED_COMPONENT_FIELDS = frozenset({"tag", "kind"})
#: Fields a later inspection may still set on a finding from a signed inspection.
_RESOLUTION_FIELDS = _STAMP_FIELDS | {"resolved_by"}
#: Records made in an inspection, frozen with it once it is signed.
_PARTS = (Reading, Finding, Photo, NotInspected)


class StoreError(Exception):
    """The database cannot be used as asked; the message says why and what to do."""


class NewerSchemaError(StoreError):
    """The database was made by a newer inspectkit than this one."""


class FrozenRecordError(StoreError):
    """A signed inspection, or something recorded in it, was about to change."""


def _pragmas(conn: sqlite3.Connection) -> None:
    conn.execute(f"PRAGMA busy_timeout = {BUSY_TIMEOUT_MS}")
    conn.execute("PRAGMA foreign_keys = ON")


def photos_dir_of(db_path: Path) -> Path:
    """The photo folder that belongs to a database file, wherever the file is."""
    return db_path.with_name(f"{db_path.stem}-photos")


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
            conn = sqlite3.connect(str(path), timeout=BUSY_TIMEOUT_MS / 1000)
            _pragmas(conn)
            db = sqlite_utils.Database(conn)
            db.enable_wal()
            store = cls(db, path, user if user is not None else _default_user())
            store._migrate()
        except sqlite3.DatabaseError as exc:
            raise StoreError(f"{path}: not an inspectkit database ({exc})") from exc
        return store

    @classmethod
    def memory(cls, *, user: str = "test") -> Store:
        """A throwaway in-memory database, for tests and dry runs."""
        conn = sqlite3.connect(":memory:")
        _pragmas(conn)
        store = cls(sqlite_utils.Database(conn), None, user)
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
        return photos_dir_of(self.path)

    def schema_version(self) -> int:
        if "meta" not in self.db.table_names():
            return 0
        row = self.db.execute("SELECT value FROM meta WHERE key = 'schema_version'").fetchone()
        return int(row[0]) if row else 0

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
        apply_migrations(self.db, upto=SCHEMA_VERSION)

    def backup(self, target: Path) -> Path:
        """A consistent copy through SQLite's online backup API, safe while others write.

        The copy is checked (`quick_check`) before it is called a backup.

        Raises:
            StoreError: the copy failed its check.
        """
        target.parent.mkdir(parents=True, exist_ok=True)
        out = sqlite3.connect(str(target))
        try:
            self.db.conn.backup(out)
            status = out.execute("PRAGMA quick_check").fetchone()[0]
        finally:
            out.close()
        if status != "ok":
            raise StoreError(
                f"the backup {target} failed its check ({status}); run `inspectkit doctor`"
            )
        return target

    def restore(self, source: Path) -> None:
        """Put a backup's content in place of this database's, through the backup API.

        Page by page through this connection, so the database's own journal stays
        right (copying the file over it would not). The caller keeps a backup of
        what is replaced first.

        Raises:
            StoreError: the file is not a sound inspectkit database of a schema this
                version reads.
        """
        if not source.is_file():
            raise StoreError(f"{source}: no such backup; give the path of a NAME.bak file")
        conn = sqlite3.connect(f"file:{source}?mode=ro", uri=True)
        try:
            status = conn.execute("PRAGMA quick_check").fetchone()[0]
            row = conn.execute("SELECT value FROM meta WHERE key = 'schema_version'").fetchone()
            if status != "ok" or row is None:
                raise StoreError(f"{source}: not a sound inspectkit backup ({status})")
            if int(row[0]) > SCHEMA_VERSION:
                raise NewerSchemaError(
                    f"{source}: made by a newer inspectkit (schema {row[0]}); upgrade first"
                )
            conn.backup(self.db.conn)
        except sqlite3.DatabaseError as exc:
            raise StoreError(f"{source}: not an inspectkit backup ({exc})") from exc
        finally:
            conn.close()
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
        row = self._row(model.table, record_id)
        return None if row is None else from_row(model, row)  # type: ignore[return-value]

    def select(
        self,
        model: type[R],
        where: str | None = None,
        params: Sequence[Any] | dict[str, Any] = (),
        order_by: str | None = None,
    ) -> list[R]:
        """Records of one type; `where` is an SQL condition with `?` placeholders.

        Plain SQL rather than sqlite-utils' `rows_where`, which asks for the table's
        columns on every call: the walkdown selects on every reading typed.
        """
        sql = f"SELECT * FROM [{model.table}]"
        if where:
            sql += f" WHERE {where}"
        if order_by:
            sql += f" ORDER BY {order_by}"
        cursor = self.db.execute(sql, params)
        names = [d[0] for d in cursor.description]
        return [
            from_row(model, dict(zip(names, values, strict=True)))  # type: ignore[misc]
            for values in cursor
        ]

    def _row(self, table: str, record_id: str) -> dict[str, Any] | None:
        cursor = self.db.execute(f"SELECT * FROM [{table}] WHERE id = ?", [record_id])
        values = cursor.fetchone()
        if values is None:
            return None
        return dict(zip([d[0] for d in cursor.description], values, strict=True))

    def rows_by_id(self, table: str, ids: Sequence[str]) -> dict[str, dict[str, Any]]:
        """Stored rows of one table by id, exactly as SQLite holds them (what the audit hashes)."""
        return self._rows(table, ids)

    def _rows(self, table: str, ids: Sequence[str]) -> dict[str, dict[str, Any]]:
        found: dict[str, dict[str, Any]] = {}
        for start in range(0, len(ids), _CHUNK):
            chunk = list(ids[start : start + _CHUNK])
            marks = ",".join("?" * len(chunk))
            cursor = self.db.execute(f"SELECT * FROM [{table}] WHERE id IN ({marks})", chunk)
            names = [d[0] for d in cursor.description]
            for values in cursor:
                row = dict(zip(names, values, strict=True))
                found[row["id"]] = row
        return found

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
            self._write(records, now.isoformat(), rows)
        return records

    def _write(
        self, records: list[R], at: str, rows: Sequence[dict[str, Any]] | None = None
    ) -> None:
        by_table: dict[str, list[R]] = {}
        for record in records:
            by_table.setdefault(record.table, []).append(record)
        existing = {
            table: self._rows(table, [r.id for r in group]) for table, group in by_table.items()
        }
        self._refuse_frozen(records, existing)
        changes = []
        inserts: list[tuple[str, dict[str, Any]]] = []
        for n, record in enumerate(records):
            before = existing[record.table].get(record.id)
            after = to_row(record) if rows is None else rows[n]
            if before is not None:
                after = {**after, "created_at": before["created_at"]}
                if after == before:
                    continue
                self._insert_all(inserts)  # first the new rows this one may name
                self.db[record.table].update(record.id, after)
                changes.append((record.table, record.id, "update", before, after))
            else:
                inserts.append((record.table, after))
                changes.append((record.table, record.id, "insert", None, after))
            existing[record.table][record.id] = after
        self._insert_all(inserts)
        self._log(changes, at)

    def _insert_all(self, rows: list[tuple[str, dict[str, Any]]]) -> None:
        """Insert (table, row) pairs in order, inside the caller's transaction; empty `rows`.

        One statement per run of rows of a table: sqlite-utils' `insert` looks the
        table up again on every call, and a bundle import adds thousands of rows at once.
        """
        for (table, names), run in groupby(rows, key=lambda item: (item[0], tuple(item[1]))):
            columns = ",".join(f"[{name}]" for name in names)
            marks = ",".join("?" * len(names))
            sql = f"INSERT INTO [{table}] ({columns}) VALUES ({marks})"
            self.db.conn.executemany(sql, [tuple(row.values()) for _, row in run])
        rows.clear()

    def _log(self, changes: list[Any], at: str) -> None:
        if changes:
            entries = audit.make_entries(audit.last_hash(self.db), changes, at=at, who=self.user)
            if self._keyed is None:
                self._keyed = audit_key.keyed(self.db)
            audit.insert_entries(self.db, entries, with_key=self._keyed)

    def log_conflicts(
        self, conflicts: Sequence[tuple[str, str, dict[str, Any], dict[str, Any]]]
    ) -> None:
        """Keep both versions of records edited on two databases, as `conflict` audit rows.

        Each item is (table, row id, losing row, kept row); the kept row must be the
        one the table now holds, so the audit check still matches the record.
        """
        changes = [(t, row_id, "conflict", lost, kept) for t, row_id, lost, kept in conflicts]
        with self.transaction():
            self._log(changes, utcnow().isoformat())

    def delete(self, model: type[Record], record_id: str) -> None:
        """Remove a record made by mistake; signed records and their parts stay."""
        with self.transaction():
            before = self._row(model.table, record_id)
            if before is None:
                raise StoreError(f"no {model.table} with id {record_id}")
            self._refuse_frozen(
                [from_row(model, before)], {model.table: {record_id: before}}, deleting=True
            )
            self.db.execute(f"DELETE FROM [{model.table}] WHERE id = ?", [record_id])
            self._log([(model.table, record_id, "delete", before, None)], utcnow().isoformat())

    def _refuse_frozen(
        self,
        records: Sequence[Record],
        existing: dict[str, dict[str, dict[str, Any]]],
        *,
        deleting: bool = False,
    ) -> None:
        """A signed inspection and what was recorded in it never change.

        The one exception: a later inspection may mark a finding of a signed
        inspection as resolved, which adds to the record rather than rewriting it.
        """
        stored_of = {r.id: existing.get(r.table, {}).get(r.id) for r in records}
        signed = self._signed_inspections(
            {r.inspection_id for r in records if isinstance(r, _PARTS)}
            | {s["inspection_id"] for s in stored_of.values() if s and s.get("inspection_id")}
        )
        for record in records:
            stored = stored_of[record.id]
            changed = _changed_fields(record, stored) if stored and not deleting else None
            if isinstance(record, Component):
                self._refuse_signed_rename(record, changed)
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
            if (
                isinstance(record, Finding)
                and changed is not None
                and changed <= _RESOLUTION_FIELDS
            ):
                continue
            raise FrozenRecordError(
                f"{record.table} {record.id} belongs to a signed inspection and cannot be "
                "changed; create an amendment inspection that references it"
            )

    def _refuse_signed_rename(self, component: Component, changed: set[str] | None) -> None:
        """A component keeps the tag and kind its signed records were made under.

        A signed report names each reading by its component's tag; renaming the
        component would make the signed records say something else than was signed.
        """
        if not changed or not changed & _SIGNED_COMPONENT_FIELDS:
            return
        row = self.db.execute(
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

    def _signed_inspections(self, ids: set[str | None]) -> set[str]:
        wanted = sorted(i for i in ids if i)
        signed: set[str] = set()
        for start in range(0, len(wanted), _CHUNK):
            chunk = wanted[start : start + _CHUNK]
            marks = ",".join("?" * len(chunk))
            signed.update(
                row[0]
                for row in self.db.execute(
                    f"SELECT id FROM inspection WHERE state = 'signed' AND id IN ({marks})", chunk
                )
            )
        return signed

    # ----------------------------------------------------------------- settings

    def get_setting(self, key: str, default: str | None = None) -> str | None:
        row = self.db.execute("SELECT value FROM setting WHERE key = ?", [key]).fetchone()
        return row[0] if row else default

    def set_setting(self, key: str, value: str) -> None:
        """Keep a setting in the database (cautions acknowledged, default instrument…)."""
        at = utcnow().isoformat()
        with self.transaction():
            before = self.db.execute(
                "SELECT key, value FROM setting WHERE key = ?", [key]
            ).fetchone()
            self.db["setting"].upsert({"key": key, "value": value, "updated_at": at}, pk="key")
            self._log(
                [
                    (
                        "setting",
                        key,
                        "update" if before else "insert",
                        {"key": before[0], "value": before[1]} if before else None,
                        {"key": key, "value": value},
                    )
                ],
                at,
            )

    # ------------------------------------------------------------------- checks

    def verify_audit(self) -> list[audit.AuditProblem]:
        """Records or audit rows changed behind the tool's back, each named."""
        return audit.verify(self.db)


def apply_migrations(db: sqlite_utils.Database, *, upto: int) -> None:
    """Run the migration steps after the database's version, up to `upto`, each in a transaction."""
    current = 0
    if "meta" in db.table_names():
        row = db.execute("SELECT value FROM meta WHERE key = 'schema_version'").fetchone()
        current = int(row[0]) if row else 0
    for version in range(current + 1, upto + 1):
        with db.atomic():
            MIGRATIONS[version - 1](db)
            db["meta"].upsert({"key": "schema_version", "value": str(version)}, pk="key")
            if version == 1:
                db["meta"].upsert({"key": "created_by_version", "value": __version__}, pk="key")


def _changed_fields(record: Record, stored: dict[str, Any]) -> set[str]:
    new = to_row(record)
    return {key for key in new if key != "created_at" and new[key] != stored.get(key)}


def _default_user() -> str:
    try:
        return getpass.getuser()
    except (KeyError, OSError):
        return "unknown"
