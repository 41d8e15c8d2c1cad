"""Health checks for `inspectkit doctor`: the database file, the audit chain, the photo folder.

Every check only reads. Each problem comes with the way to fix it, because the
person who runs the doctor is an inspector, not a database administrator.
"""

from __future__ import annotations

import sqlite3
from dataclasses import dataclass
from pathlib import Path

from inspectkit.store.audit_key import key_problems
from inspectkit.store.database import Store
from inspectkit.store.photos import file_sha256, photo_path
from inspectkit.store.seal import SealError, check_signed, stored_parts


@dataclass(frozen=True)
class HealthProblem:
    """One thing found wrong, and how to put it right.

    Attributes:
        check: Which check found it: integrity, audit, photo missing, photo damaged,
            file not referenced.
        subject: The table and row, or the file, it concerns.
        message: What is wrong.
        fix: What to do about it.
    """

    check: str
    subject: str
    message: str
    fix: str


def check_health(store: Store, *, hash_photos: bool = True) -> list[HealthProblem]:
    """Every problem the doctor finds; an empty list means all is well.

    Args:
        store: The database to check.
        hash_photos: Also read every photo file to check it against its hash (slow
            for large folders).
    """
    problems = integrity_problems(store)
    if problems:
        # A damaged file makes the later checks fail half-way or say nonsense.
        return problems
    problems += audit_problems(store)
    problems += seal_problems(store)
    if store.path is not None:
        problems += photo_problems(store, hash_photos=hash_photos)
    return problems


def integrity_problems(store: Store) -> list[HealthProblem]:
    """SQLite's own check of the file's pages, indexes and constraints."""
    try:
        rows = [row[0] for row in store.db.execute("PRAGMA integrity_check")]
        rows += [
            f"{table} row {rowid} refers to a missing {parent} row"
            for table, rowid, parent, _ in store.db.execute("PRAGMA foreign_key_check")
        ]
    except sqlite3.DatabaseError as exc:
        rows = [f"the check itself failed: {exc}"]
    if rows == ["ok"]:
        return []
    return [
        HealthProblem(
            "integrity",
            str(store.path or "database"),
            message,
            "the database file is damaged: stop writing to it, keep a copy, and put the "
            "latest backup back with `inspectkit restore NAME.bak` (a file `inspectkit backup` "
            "made, or a .before-schema-N.bak beside it); then import the bundles made since",
        )
        for message in rows
        if message != "ok"
    ]


#: What to do when the log shows a change made outside inspectkit.
_OUTSIDE = (
    "someone changed the database outside inspectkit: compare the record with a "
    "backup, put the old content back from it, and make the change through inspectkit"
)


def audit_problems(store: Store) -> list[HealthProblem]:
    """Records or audit rows changed behind inspectkit's back, the chain rewritten included."""
    problems = [
        HealthProblem("audit", f"{p.table} {p.row_id}", p.message, _OUTSIDE)
        for p in store.verify_audit()
    ]
    problems += [
        HealthProblem("audit key", f"audit {p.seq}" if p.seq else "audit", p.message, _OUTSIDE)
        for p in key_problems(store.db)
    ]
    return problems


def seal_problems(store: Store) -> list[HealthProblem]:
    """Signed inspections whose records are no longer those their seal signed.

    The seal is signed with the inspector's key, which the database does not
    hold, so an edit made with the audit log rewritten to match still shows here.
    Inspections signed before seals existed carry none and are not checked.
    """
    problems = []
    for (inspection_id,) in store.db.execute(
        "SELECT id FROM inspection WHERE state = 'signed' AND seal != '' ORDER BY date, id"
    ):
        parts = stored_parts(store, inspection_id)
        try:
            check_signed(parts[0][1], parts[1:], require_trust=False)
        except SealError as exc:
            problems.append(
                HealthProblem(
                    "signature",
                    f"inspection {inspection_id}",
                    f"signed inspection {inspection_id}: {exc}",
                    "the signed records were changed outside inspectkit: put the signed "
                    "content back from a backup or from the other laptop's bundle; the signed "
                    "report the client holds is the reference (`inspectkit verify FILE --db`)",
                )
            )
    return problems


def photo_problems(store: Store, *, hash_photos: bool = True) -> list[HealthProblem]:
    """Photo records without their file, damaged files, and files no record names."""
    folder = store.photos_dir
    problems = []
    expected: dict[Path, str] = {}
    for photo_id, sha in store.db.execute("SELECT id, sha256 FROM photo ORDER BY id"):
        expected.setdefault(photo_path(store, sha), photo_id)
    for path, photo_id in expected.items():
        restore = (
            f"import a bundle that holds this photo (`inspectkit import BUNDLE` puts back missing "
            f"files), or `inspectkit restore NAME.bak` (it brings back photos from the "
            f"NAME-photos folder beside it), or copy {path.name} to {path} from a copy of {folder}"
        )
        if not path.is_file():
            problems.append(
                HealthProblem("photo missing", f"photo {photo_id}", f"{path} is missing", restore)
            )
        elif hash_photos and file_sha256(path) != path.name:
            problems.append(
                HealthProblem(
                    "photo damaged",
                    f"photo {photo_id}",
                    f"{path} no longer matches its hash",
                    f"delete the damaged file, then {restore}",
                )
            )
    if folder.is_dir():
        for path in sorted(p for p in folder.rglob("*") if p.is_file()):
            if path not in expected:
                problems.append(
                    HealthProblem(
                        "file not referenced",
                        str(path),
                        "no photo record names this file",
                        "nothing needs it: delete it to free the space, or attach it again "
                        "if it was meant to be a photo of an inspection",
                    )
                )
    return problems
