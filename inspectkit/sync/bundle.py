"""The bundle file: one site's records and photos in a zip, written and read back safely.

Layout (format `inspectkit-bundle`, version 1):

- `manifest.json`: format name and version, the exporting database's id, the
  site, when it was exported and from which day (`since`), record counts, and the
  sha256 of every other member.
- `records.json`: `{"tables": {table: [row, ...]}, "history": {table: {id: [sha256,
  ...]}}, "deleted": {table: {id: [sha256, ...]}}}`; rows are in the stored form
  (`store.rows.to_row`), deleted lists the readings, findings and photos the
  exporting database deleted with every version of each it saw, history lists the
  earlier versions of a record the exporting database has seen (see `versions`).
- `photos/<sha256>`: photo files, named by their content hash.

Reading a bundle checks all of it (members, hashes, every record through its
model and against this computer's clock, bar those equal to the importing
database's own rows); a photo file no record names, or more photo bytes than one
import may write, refuses it before anything is staged; the photos are checked
on worker threads while the records are checked and written, and the import
commits nothing before both are done. A signed inspection's row carries its seal
(`store.seal`), checked by the merge (`signers`).
"""

from __future__ import annotations

import hashlib
import json
import os
import re
import tempfile
import zipfile
import zlib
from collections.abc import Iterator
from concurrent.futures import ThreadPoolExecutor
from contextlib import contextmanager
from dataclasses import dataclass, field
from datetime import date, datetime
from pathlib import Path
from typing import Any, NamedTuple

from pydantic import ValidationError

from inspectkit.model import (
    MODEL_FOR_TABLE,
    NAME_MAX,
    RECORD_TYPES,
    Record,
    explain,
    utcnow,
)
from inspectkit.store import Store
from inspectkit.store.audit_key import database_id
from inspectkit.store.photos import photo_path
from inspectkit.store.rows import to_row
from inspectkit.store.sync_rows import DELETABLE, site_deletions, site_photo_hashes, site_rows
from inspectkit.sync.guard import (
    DEFAULT_LIMITS,
    MANIFEST,
    PHOTO_PREFIX,
    RECORDS,
    BundleError,
    Limits,
    bounded_photos,
    check_members,
    limit_for,
    not_ahead,
    read_capped,
    same_hash,
)
from inspectkit.sync.photo_members import PhotoChecks, add_photos
from inspectkit.sync.versions import known_versions, version_hash
from inspectkit.wording import counted

FORMAT = "inspectkit-bundle"
VERSION = 1
_SHA = re.compile(r"^[0-9a-f]{64}$")

#: Fields that name another record, by table: field → table it points into.
REFERENCES: dict[str, dict[str, str]] = {
    "component": {"site_id": "site", "parent_id": "component"},
    "inspection": {"site_id": "site", "inspector_id": "inspector", "amends_id": "inspection"},
    "reading": {
        "inspection_id": "inspection",
        "component_id": "component",
        "instrument_id": "instrument",
    },
    "finding": {
        "inspection_id": "inspection",
        "component_id": "component",
        "resolved_by": "inspection",
    },
    "photo": {"inspection_id": "inspection", "component_id": "component"},
    "not_inspected": {"inspection_id": "inspection", "component_id": "component"},
    "geometry_item": {"site_id": "site", "component_id": "component"},
    "soil_survey": {"site_id": "site", "instrument_id": "instrument"},
}


@dataclass(frozen=True)
class ExportSummary:
    """What a bundle holds, for the command to print."""

    path: Path
    counts: dict[str, int]
    photos: int


@dataclass
class Bundle:
    """A bundle whose records are checked; its photos are checked on worker threads.

    Attributes:
        manifest: The manifest as written.
        rows: Stored-form rows by table, in `RECORD_TYPES` order.
        records: The same rows as checked records, by table and id.
        history: Earlier version hashes by table and record id.
        deleted: Records the exporting database deleted, by table and id → every
            version of each it had seen.
        photo_hashes: Hashes of the photo files in the bundle, in its order.
        same: Ids of rows equal to the importing database's own, by table; they are
            not in `records`, since they are rows that database already holds.
    """

    path: Path
    manifest: dict[str, Any]
    rows: dict[str, list[dict[str, Any]]]
    records: dict[str, dict[str, Record]]
    history: dict[str, dict[str, set[str]]]
    deleted: dict[str, dict[str, set[str]]]
    same: dict[str, set[str]]
    photo_hashes: list[str]
    checks: PhotoChecks = field(repr=False)
    _photos: dict[str, Path | None] | None = field(default=None, repr=False)

    def checked_photos(self) -> dict[str, Path | None]:
        """Wait for the photo checks: hash → the file staged, or None when not staged.

        A file is not staged in a dry run, or when the database holds it already.

        Raises:
            BundleError: the first photo in the bundle's order that was refused.
        """
        if self._photos is None:
            with _refusing_damage(self.path):
                self._photos = self.checks.result()
        return self._photos


def export_bundle(
    store: Store, site_id: str, target: Path, *, since: date | None = None
) -> ExportSummary:
    """Write one site's records and photos to a bundle file.

    All of it is read in one snapshot of the database, so a reading saved while
    the bundle is written is either in it with its inspection or not at all. Photo
    files are copied as stored, not hashed again: they are named by their hash,
    and the importing side checks every one.

    Raises:
        BundleError: the site does not exist, or a photo's file is missing on disk.
    """
    origin = database_id(store)
    target = Path(target)
    target.parent.mkdir(parents=True, exist_ok=True)
    handle, temp = tempfile.mkstemp(dir=target.parent, prefix=f".{target.name}.")
    os.close(handle)
    try:
        with store.snapshot(), zipfile.ZipFile(temp, "w") as archive:
            counts = _fill(store, archive, site_id, since, origin)
        os.replace(temp, target)
    except BaseException:
        Path(temp).unlink(missing_ok=True)
        raise
    return ExportSummary(target, {t: n for t, n in counts.items() if t != "photos"},
                         counts["photos"])  # fmt: skip


def _fill(
    store: Store, archive: zipfile.ZipFile, site_id: str, since: date | None, origin: str
) -> dict[str, int]:
    """Write the members; photos go in on a worker thread while the records are encoded."""
    shas = site_photo_hashes(store, site_id, since)
    missing = [sha for sha in shas if not photo_path(store, sha).is_file()]
    if missing:
        raise BundleError(
            f"{counted(len(missing), 'photo file')} missing on disk (first {missing[0]}); "
            "run `inspectkit doctor` to see how to restore them"
        )
    files = [(photo_path(store, sha), f"{PHOTO_PREFIX}{sha}") for sha in shas]
    with ThreadPoolExecutor(max_workers=1, thread_name_prefix="photo-export") as pool:
        copying = pool.submit(add_photos, archive, files)
        rows = site_rows(store, site_id, since)
        if not rows["site"]:
            raise BundleError(f"no site with id {site_id}")
        records = json.dumps(
            {
                "tables": rows,
                "history": _history(store, rows),
                "deleted": _deleted(store, site_id, since),
            },
            ensure_ascii=False,
            separators=(",", ":"),
        ).encode("utf-8")
        copying.result()
    counts = {table: len(r) for table, r in rows.items()} | {"photos": len(shas)}
    manifest = {
        "format": FORMAT,
        "version": VERSION,
        "schema": store.schema_version(),
        "origin": origin,
        "site_id": site_id,
        "site_name": rows["site"][0]["name"],
        "exported_at": utcnow().isoformat(),
        "since": since.isoformat() if since else None,
        "counts": counts,
        "members": {RECORDS: hashlib.sha256(records).hexdigest()}
        | {name: sha for sha, (_, name) in zip(shas, files, strict=True)},
    }
    # The fastest level: it packs record JSON nearly as small as the default does.
    archive.writestr(RECORDS, records, zipfile.ZIP_DEFLATED, compresslevel=1)
    archive.writestr(
        MANIFEST, json.dumps(manifest, indent=2, ensure_ascii=False), zipfile.ZIP_DEFLATED
    )
    return counts


def _deleted(store: Store, site_id: str, since: date | None) -> dict[str, dict[str, list[str]]]:
    """The site's records deleted here, each with every version of it this database saw."""
    deleted = {}
    for table, ids in site_deletions(store, site_id, since).items():
        known = known_versions(store, table, ids)
        deleted[table] = {row_id: sorted(known.get(row_id, ())) for row_id in ids}
    return deleted


def _history(
    store: Store, rows: dict[str, list[dict[str, Any]]]
) -> dict[str, dict[str, list[str]]]:
    """Earlier versions this database has seen of each record, by table and id."""
    history: dict[str, dict[str, list[str]]] = {}
    for table, table_rows in rows.items():
        # Most records were only ever inserted: they have no earlier versions to hash.
        known = known_versions(store, table, [r["id"] for r in table_rows])
        earlier = {
            r["id"]: sorted(known[r["id"]] - {version_hash(r)})
            for r in table_rows
            if r["id"] in known
        }
        history[table] = {row_id: hashes for row_id, hashes in earlier.items() if hashes}
    return history


@contextmanager
def reading_bundle(
    path: Path,
    limits: Limits = DEFAULT_LIMITS,
    staging: Path | None = None,
    ours: Store | None = None,
) -> Iterator[Bundle]:
    """Open a bundle and check its records; photos are checked and copied to `staging`
    on worker threads meanwhile, until `Bundle.checked_photos()` or the block's end.

    With `ours`, the database the bundle is for, a row equal to that database's own
    is not validated again and a photo file it holds is checked but not staged: on
    a second exchange most of a bundle is what the database holds already.

    Raises:
        BundleError: the file is not a bundle, is damaged, hostile or of an unknown
            version, or a record does not validate.
    """
    path = Path(path)
    if not path.is_file():
        raise BundleError(f"{path}: no such file; give the path of a bundle")
    with _refusing_damage(path), zipfile.ZipFile(path) as archive:
        infos = check_members(archive, limits)
        manifest = _manifest(_read(archive, MANIFEST, limits), {i.filename for i in infos})
        if ours is not None:
            _same_schema(manifest, ours.schema_version())
        records = _read(archive, RECORDS, limits)
        same_hash(RECORDS, hashlib.sha256(records).hexdigest(), manifest["members"])
    content = _json(records, RECORDS)
    pictures = [info for info in infos if info.filename.startswith(PHOTO_PREFIX)]
    hashes = [info.filename.removeprefix(PHOTO_PREFIX) for info in pictures]
    held = {sha for sha in hashes if ours is not None and photo_path(ours, sha).is_file()}
    bounded_photos(content, pictures, held, limits)
    with PhotoChecks(path, pictures, manifest["members"], limits, staging, held) as checks:
        found = _records(content, manifest, ours)
        yield Bundle(path, manifest, *found, photo_hashes=hashes, checks=checks)


@contextmanager
def _refusing_damage(path: Path) -> Iterator[None]:
    """What reading a damaged or unreadable zip raises, as a refusal of the bundle."""
    try:
        yield
    except (zipfile.BadZipFile, zlib.error, EOFError) as exc:
        raise BundleError(f"{path}: not a bundle, or a damaged one ({exc})") from exc
    except OSError as exc:
        raise BundleError(
            f"{path}: cannot be read or unpacked ({exc}); nothing was written"
        ) from exc


def _same_schema(manifest: dict[str, Any], ours: int) -> None:
    """Rows travel in the exporter's schema: both databases must be of the same one."""
    theirs = manifest.get("schema")
    if theirs != ours:
        raise BundleError(
            f"the bundle's records are in schema {theirs}, this database is in schema {ours}: "
            "update inspectkit on both machines to the same version, open both databases "
            "once (which migrates them), and export again"
        )


def _read(archive: zipfile.ZipFile, name: str, limits: Limits) -> bytes:
    with archive.open(name) as handle:
        return b"".join(read_capped(handle, name, limit_for(name, limits)))


def _json(data: bytes, name: str) -> Any:
    try:
        return json.loads(data.decode("utf-8"))
    except UnicodeDecodeError as exc:
        raise BundleError(f"{name} is not UTF-8 text ({exc.reason} at byte {exc.start})") from exc
    except json.JSONDecodeError as exc:
        raise BundleError(
            f"{name} is not valid JSON (line {exc.lineno}, column {exc.colno}: {exc.msg})"
        ) from exc
    except RecursionError:
        raise BundleError(f"{name} is nested too deeply to be a bundle's JSON") from None


def _manifest(data: bytes, names: set[str]) -> dict[str, Any]:
    manifest = _json(data, MANIFEST)
    if not isinstance(manifest, dict) or manifest.get("format") != FORMAT:
        raise BundleError(f"{MANIFEST} does not name the format {FORMAT!r}; not a bundle")
    version = manifest.get("version")
    if version != VERSION:
        raise BundleError(
            f"bundle format version {version!r} is unknown; this inspectkit reads version "
            f"{VERSION}: upgrade inspectkit on this machine, or export with the same version"
        )
    members = manifest.get("members")
    if not isinstance(members, dict) or not all(
        isinstance(k, str) and isinstance(v, str) and _SHA.match(v) for k, v in members.items()
    ):
        raise BundleError(f"{MANIFEST}: 'members' must map each member to its sha256")
    listed, present = set(members), names - {MANIFEST}
    if listed != present:
        odd = sorted(listed ^ present)[0]
        where = "listed in the manifest but missing" if odd in listed else "not in the manifest"
        raise BundleError(f"member {odd!r} is {where}; the bundle is damaged or altered")
    if not isinstance(manifest.get("counts", {}), dict):
        raise BundleError(f"{MANIFEST}: 'counts' must map each table to a number")
    name = manifest.get("site_name")
    cap = NAME_MAX
    if not isinstance(name, str) or len(name) > cap:
        size = f"{len(name):,} characters" if isinstance(name, str) else "not text"
        raise BundleError(f"{MANIFEST}: 'site_name' is {size}; a site's name has at most {cap}")
    return manifest


class _Checked(NamedTuple):
    rows: dict[str, list[dict[str, Any]]]
    records: dict[str, dict[str, Record]]
    history: dict[str, dict[str, set[str]]]
    deleted: dict[str, dict[str, set[str]]]
    same: dict[str, set[str]]


def _records(content: Any, manifest: dict[str, Any], ours: Store | None) -> _Checked:
    """Every row checked through its model and found in the stored form, or equal to ours."""
    tables = content.get("tables") if isinstance(content, dict) else None
    raw_history = content.get("history", {}) if isinstance(content, dict) else None
    raw_deleted = content.get("deleted", {}) if isinstance(content, dict) else None
    if not all(isinstance(part, dict) for part in (tables, raw_history, raw_deleted)):
        raise BundleError(f"{RECORDS} must hold 'tables', 'history' and 'deleted' objects")
    unknown = sorted(set(tables) - set(MODEL_FOR_TABLE))
    if unknown:
        raise BundleError(f"{RECORDS}: unknown table {unknown[0]!r}; the bundle is not for this")
    rows: dict[str, list[dict[str, Any]]] = {}
    checked: dict[str, dict[str, Record]] = {}
    same: dict[str, set[str]] = {}
    now = utcnow()
    for model in RECORD_TYPES:
        table_rows = tables.get(model.table, [])
        if not isinstance(table_rows, list):
            raise BundleError(f"{RECORDS}: table {model.table!r} must be a list of records")
        held = _held_rows(ours, model.table, table_rows)
        seen: dict[str, Record] = {}
        equal: set[str] = set()
        for number, row in enumerate(table_rows, start=1):
            record = None if _same_row(held, row) else _check_row(model, number, row, now)
            row_id = row["id"] if record is None else record.id
            if row_id in seen or row_id in equal:
                raise BundleError(f"{model.table} {row_id} appears twice in the bundle")
            if record is None:
                equal.add(row_id)
            else:
                seen[row_id] = record
        counted = manifest.get("counts", {}).get(model.table, len(table_rows))
        if counted != len(table_rows):
            raise BundleError(
                f"the manifest counts {counted!r} {model.table} records, the bundle holds "
                f"{len(table_rows)}; the bundle is damaged"
            )
        rows[model.table] = table_rows
        checked[model.table] = seen
        same[model.table] = equal
    deleted = _version_lists(raw_deleted, "deleted", DELETABLE)
    for table, by_id in deleted.items():
        both = sorted(set(by_id) & {row["id"] for row in rows[table]})
        if both:
            raise BundleError(f"{RECORDS}: {table} {both[0]} is both in the bundle and deleted")
    history = _version_lists(raw_history, "history", tuple(MODEL_FOR_TABLE))
    return _Checked(rows, checked, history, deleted, same)


def _version_lists(
    raw: dict[str, Any], what: str, tables: tuple[str, ...]
) -> dict[str, dict[str, set[str]]]:
    """`{table: {id: [sha256, ...]}}` as read, checked: known tables, hashes in hex."""
    lists: dict[str, dict[str, set[str]]] = {}
    for table, by_id in raw.items():
        if table not in tables or not isinstance(by_id, dict):
            raise BundleError(f"{RECORDS}: {what} for unknown table {table!r}")
        for row_id, hashes in by_id.items():
            if not isinstance(hashes, list) or not all(
                isinstance(h, str) and _SHA.match(h) for h in hashes
            ):
                raise BundleError(f"{RECORDS}: {what} of {table} {row_id} must list sha256s")
        lists[table] = {row_id: set(hashes) for row_id, hashes in by_id.items()}
    return lists


def _held_rows(ours: Store | None, table: str, rows: list[Any]) -> dict[str, dict[str, Any]]:
    """The rows `ours` holds of those ids, as stored."""
    if ours is None:
        return {}
    ids = [r["id"] for r in rows if isinstance(r, dict) and isinstance(r.get("id"), str)]
    return ours.rows_by_id(table, ids)


def _same_row(held: dict[str, dict[str, Any]], row: Any) -> bool:
    """Whether a bundle row is exactly a stored row: equal, and each value of the same type.

    Equal values of one type are the same value (1 and 1.0, or 1 and true, are
    not), so the merge takes such a row as unchanged, with nothing to check or write.
    """
    if not isinstance(row, dict) or not isinstance(row.get("id"), str):
        return False
    ours = held.get(row["id"])
    return (
        ours is not None
        and ours == row
        and all(type(value) is type(ours[key]) for key, value in row.items())
    )


def _check_row(model: type[Record], number: int, row: Any, now: datetime) -> Record:
    """A bundle row must validate, clock rules included, and be exactly the row the store holds.

    The other laptop's clock may run ahead of this one by `CLOCK_SKEW`, not more:
    a time beyond that would win every later comparison, and show as a visit
    or a reading that has not happened yet.
    """
    where = f"{model.table} record {number}"
    if not isinstance(row, dict):
        raise BundleError(f"{RECORDS}: {where} is not an object")
    where += f" (id {row.get('id')!r})"
    try:
        record = model.model_validate(row, context={"now": now})
    except ValidationError as exc:
        raise BundleError(f"{RECORDS}: {where} is refused:\n{explain(exc)}") from None
    if to_row(record) != row:
        raise BundleError(
            f"{RECORDS}: {where} is not in the stored form (extra, missing or reworded "
            "fields); export it again with inspectkit"
        )
    not_ahead(record, f"{RECORDS}: {where}", now)
    return record
