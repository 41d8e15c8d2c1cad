"""Merging a bundle into a database: who wins when two laptops changed the same record.

The rules, per record of the bundle (theirs) against the database (ours):

- not here yet: added;
- the same: nothing;
- ours is a version they have seen: theirs is later, ours is updated;
- theirs is a version we have seen: ours is later, kept;
- neither: both were edited since they last met, a conflict. A signed inspection
  beats a draft, and so does what was recorded in it; otherwise `prefer`
  decides, and without it the newer `updated_at` wins. Both versions go to the
  audit log, so the losing one is never lost, and the conflict is reported once
  (the next exchange sees that both sides know both versions).

A reading, finding or photo withdrawn on one side travels as a deletion:

- withdrawn there, ours is a version they saw: deleted here too (the audit log
  keeps it);
- withdrawn here, theirs is a version we saw: it stays withdrawn;
- withdrawn on one side after an edit on the other, or in an inspection signed
  there: it is kept, and comes back on the side that withdrew it; nothing edited
  or signed is ever lost.

A signed inspection and what was recorded in it are never overwritten or deleted:
the store refuses, and the record is reported as kept ours.

Nothing is committed before everything is checked: the plan is made and written in
one transaction, which holds the write lock from the first read of our rows (so a
reading saved meanwhile on this laptop cannot be overwritten by a plan made before
it), and the photos, checked on other threads meanwhile, are waited for inside it.

A bundle says nothing about whom to trust: see `signers`.
"""

from __future__ import annotations

import tempfile
from collections import Counter
from dataclasses import dataclass, field
from datetime import datetime
from pathlib import Path
from typing import Any, Literal

from inspectkit import intake
from inspectkit.model import (
    MODEL_FOR_TABLE,
    Component,
    Inspection,
    InspectionState,
    Instrument,
    Record,
)
from inspectkit.store import FrozenRecordError, Store
from inspectkit.store.photos import adopt_staged, photo_path, remove_unreferenced
from inspectkit.store.rows import canonical
from inspectkit.store.sync_rows import DELETABLE, deleted_here, inspection_part_ids
from inspectkit.sync.bundle import REFERENCES, Bundle, reading_bundle
from inspectkit.sync.guard import DEFAULT_LIMITS, BundleError, Limits, site_label
from inspectkit.sync.signers import check_signed_inspections, untrusted_signers
from inspectkit.sync.versions import known_versions, version_hash
from inspectkit.wording import counted, was_were

Side = Literal["ours", "theirs"]
#: A row to write: table, stored-form row, and "added" or "updated".
_Write = tuple[str, dict[str, Any], str]
_CHUNK = 500
#: Records made in an inspection, frozen with it once it is signed.
_PARTS = frozenset({"reading", "finding", "photo", "not_inspected"})
#: Fields that point at a record of the same table; parents are written first.
_SELF_REFERENCES = {"component": "parent_id", "inspection": "amends_id"}


@dataclass(frozen=True)
class Conflict:
    """A record edited on both sides since the two databases last exchanged it."""

    table: str
    record_id: str
    label: str
    kept: Side
    ours_updated_at: str
    theirs_updated_at: str


@dataclass
class ImportReport:
    """What an import did (or, in a dry run, would do)."""

    site_name: str
    dry_run: bool = False
    added: Counter[str] = field(default_factory=Counter)
    updated: Counter[str] = field(default_factory=Counter)
    unchanged: int = 0
    #: Records whose copy here is later than the bundle's.
    kept_newer: int = 0
    kept_signed: list[str] = field(default_factory=list)
    conflicts: list[Conflict] = field(default_factory=list)
    photos_added: int = 0
    #: Records deleted here because they were deleted there, by table.
    removed: Counter[str] = field(default_factory=Counter)
    #: Records deleted here that the bundle still holds, as deleted: left deleted.
    kept_deleted: int = 0
    #: Records withdrawn on one side, edited or signed on the other: they are kept.
    kept_edited: list[str] = field(default_factory=list)
    #: Inspectors who came with a certificate not trusted here, and records no
    #: signature covers, as sentences.
    notices: list[str] = field(default_factory=list)

    @property
    def changed(self) -> bool:
        return bool(
            self.added or self.updated or self.conflicts or self.photos_added or self.removed
        )

    def lines(self) -> list[str]:
        """The report as sentences, one per line."""
        def done(count: int, noun: str) -> str:
            """ "1 record was", "3 records would be"."""
            verb = "would be" if self.dry_run else was_were(count)
            return f"{counted(count, noun)} {verb}"

        lines = [f"Bundle for site {self.site_name}:"]
        for what, counts in (("added", self.added), ("updated", self.updated)):
            if counts:
                parts = ", ".join(f"{table} {n}" for table, n in sorted(counts.items()))
                lines.append(f"  {done(sum(counts.values()), 'record')} {what} ({parts})")
        lines.append(f"  {counted(self.unchanged, 'record')} already the same")
        if self.kept_newer:
            lines.append(
                f"  {counted(self.kept_newer, 'record')} kept ours: ours is the later version"
            )
        if self.removed:
            parts = ", ".join(f"{table} {n}" for table, n in sorted(self.removed.items()))
            lines.append(
                f"  {done(sum(self.removed.values()), 'record')} removed, as withdrawn on the "
                f"other side ({parts}); they are in the audit log"
            )
        if self.kept_deleted:
            stay = "stays" if self.kept_deleted == 1 else "stay"
            lines.append(f"  {counted(self.kept_deleted, 'record')} {stay} withdrawn here")
        lines.extend(
            f"  kept: {label} was withdrawn on one side, edited or signed on the other"
            for label in self.kept_edited
        )
        if self.photos_added:
            lines.append(f"  {done(self.photos_added, 'photo file')} added")
        lines.extend(f"  kept ours: signed — {message}" for message in self.kept_signed)
        lines.extend(f"  {message}" for message in self.notices)
        for c in self.conflicts:
            lines.append(
                f"  conflict: {c.table} {c.label} was edited on both sides "
                f"(ours {c.ours_updated_at}, theirs {c.theirs_updated_at}); kept {c.kept}, "
                "the other version is in the audit log"
            )
        return lines


@dataclass
class _Plan:
    """What the merge will do: rows to write (with why), conflicts, and what it leaves."""

    writes: list[_Write] = field(default_factory=list)
    conflicts: list[tuple[Conflict, dict[str, Any], dict[str, Any]]] = field(default_factory=list)
    unchanged: int = 0
    kept_newer: int = 0
    #: The bundle's checked records, by table and id.
    records: dict[str, dict[str, Record]] = field(default_factory=dict)
    #: Our rows to delete, as withdrawn in the bundle's database: (table, row).
    removals: list[tuple[str, dict[str, Any]]] = field(default_factory=list)
    kept_deleted: int = 0
    kept_edited: list[str] = field(default_factory=list)
    notices: list[str] = field(default_factory=list)


class _DryRun(Exception):
    """Raised inside the transaction to roll a dry run back."""


def import_bundle(
    store: Store,
    path: Path,
    *,
    prefer: Side | None = None,
    dry_run: bool = False,
    limits: Limits = DEFAULT_LIMITS,
) -> ImportReport:
    """Merge a bundle into the database, all or nothing.

    Args:
        store: The database to merge into (a file database when the bundle has photos).
        path: The bundle file.
        prefer: Which side wins a conflict; None: the newer.
        dry_run: Check and report, write nothing.
        limits: Size limits against zip bombs.

    Raises:
        BundleError: the bundle is refused; nothing was written.
    """
    staging_root = store.path.parent if store.path is not None else None
    placed: list[str] = []
    with (
        tempfile.TemporaryDirectory(dir=staging_root, prefix=".bundle-") as staging,
        # A folder of its own: the staging folder itself is private (mode 0700), and
        # its photo tree may become the photo folder.
        reading_bundle(path, limits, _stage(staging, dry_run), store) as bundle,
    ):
        report = ImportReport(site_label(bundle.manifest), dry_run=dry_run)
        plan = _Plan()
        try:
            with store.transaction():
                plan = _plan(store, bundle, prefer)
                report.unchanged, report.kept_newer = plan.unchanged, plan.kept_newer
                report.kept_deleted, report.kept_edited = plan.kept_deleted, plan.kept_edited
                report.notices = plan.notices
                _apply(store, plan, report)
                # Checked meanwhile on other threads: a photo refused undoes the rows.
                photos = bundle.checked_photos()
                if dry_run:
                    report.photos_added = sum(
                        1 for sha in photos if not photo_path(store, sha).exists()
                    )
                    raise _DryRun
                placed = adopt_staged(store, photos)
        except _DryRun:
            pass
        finally:
            # Files of photo records that were refused (signed), or of a write that
            # failed, or withdrawn, are taken out: the folder holds what the records name.
            dropped = remove_unreferenced(store, placed)
            remove_unreferenced(store, [row["sha256"] for t, row in plan.removals if t == "photo"])
        if not dry_run:
            report.photos_added = len(placed) - len(dropped)
    return report


def _stage(staging: str, dry_run: bool) -> Path | None:
    return None if dry_run else Path(staging) / "photos"


def _plan(store: Store, bundle: Bundle, prefer: Side | None) -> _Plan:
    """Decide every record, after checking what it references and what it says of signing.

    Runs inside the import's write transaction: what it reads of ours stays so
    until the plan is written.
    """
    _check_references(store, bundle)
    _check_photo_files(store, bundle)
    notices = check_signed_inspections(store, bundle) + untrusted_signers(store, bundle)
    plan = _Plan(records=bundle.records, notices=notices)
    signed_there = {r["id"] for r in bundle.rows["inspection"] if r["state"] == "signed"}
    for table, table_rows in bundle.rows.items():
        same = bundle.same.get(table, set())
        plan.unchanged += len(same)
        rows = [r for r in table_rows if r["id"] not in same]
        ours_by_id = store.rows_by_id(table, [r["id"] for r in rows])
        withdrawn = _withdrawn_versions(store, table, [r["id"] for r in rows], ours_by_id)
        differing = []
        for theirs in rows:
            ours = ours_by_id.get(theirs["id"])
            # What a signed inspection recorded is final: the signed copy wins here too.
            final = table in _PARTS and theirs.get("inspection_id") in signed_there
            if ours is None and not final and version_hash(theirs) in withdrawn.get(
                theirs["id"], ()
            ):
                plan.kept_deleted += 1  # a version we withdrew: it stays withdrawn
            elif ours is None:
                if theirs["id"] in withdrawn:
                    plan.kept_edited.append(_label(table, theirs))
                plan.writes.append((table, theirs, "added"))
            elif canonical(ours) == canonical(theirs):
                plan.unchanged += 1
            elif version_hash(ours) in bundle.history.get(table, {}).get(theirs["id"], set()):
                plan.writes.append((table, theirs, "updated"))
            else:
                differing.append((ours, theirs, final))
        seen = known_versions(store, table, [theirs["id"] for _, theirs, _ in differing])
        for ours, theirs, final in differing:
            if not final and version_hash(theirs) in seen.get(theirs["id"], set()):
                plan.kept_newer += 1
                continue
            kept = "theirs" if final else _winner(table, ours, theirs, prefer)
            conflict = Conflict(
                table,
                theirs["id"],
                _label(table, ours),
                kept,
                ours["updated_at"],
                theirs["updated_at"],
            )
            plan.conflicts.append((conflict, ours, theirs))
            if kept == "theirs":
                plan.writes.append((table, theirs, "updated"))
    _plan_removals(store, bundle, plan)
    _check_readings(store, plan)
    return plan


def _check_readings(store: Store, plan: _Plan) -> None:
    """Refuse a bundle bringing a reading the walkdown would refuse (`inspectkit.intake`).

    Only the readings this import writes are judged; rows both sides hold already are
    not judged again. A visit signed on either side is final as signed: the store
    keeps ours (see `_apply`). A reading made after its visit was last changed
    (finished) is a reading added to a finished visit.
    """
    ours: dict[tuple[str, str], Any] = {}  # each record read once, however many readings

    def held(model: type[Any], record_id: str) -> Any:
        if (model.table, record_id) not in ours:
            ours[model.table, record_id] = store.get(model, record_id)
        return ours[model.table, record_id]

    def record(model: type[Any], record_id: str | None) -> Any:
        if not record_id:
            return None
        return plan.records.get(model.table, {}).get(record_id) or held(model, record_id)

    def signed(inspection_id: str) -> bool:
        theirs = plan.records.get("inspection", {}).get(inspection_id)
        copies = (theirs, held(Inspection, inspection_id))
        return any(c is not None and c.state is InspectionState.SIGNED for c in copies)

    written = [
        plan.records[t][row["id"]]
        for t, row, _ in plan.writes
        if t == "reading" and not signed(row["inspection_id"])
    ]
    window = intake.reading_window(store)
    problems = []
    for reading in written:
        inspection = record(Inspection, reading.inspection_id)
        if inspection.finished and reading.created_at <= inspection.updated_at:
            # Made before the visit was finished: judged as the open visit it was made in.
            inspection = inspection.model_copy(update={"finished": False})
        refused = intake.refusal(
            reading,
            inspection,
            record(Component, reading.component_id),
            record(Instrument, reading.instrument_id),
            window,
        )
        if refused is not None:
            problems.append(f"reading {reading.id}: {refused}")
    problems += intake.clashes(intake.Entry(f"reading {r.id}", r) for r in written)
    if problems:
        more = f" (and {len(problems) - 3} more)" if len(problems) > 3 else ""
        raise BundleError(
            "; ".join(problems[:3]) + more + "; nothing was imported: fix them where the "
            "bundle was made (withdraw or correct the readings), then export again"
        )


def _withdrawn_versions(
    store: Store, table: str, ids: list[str], ours_by_id: dict[str, dict[str, Any]]
) -> dict[str, set[str]]:
    """Of the ids we do not hold, those we deleted, with every version of each we saw."""
    if table not in DELETABLE:
        return {}
    gone = deleted_here(store, table, [i for i in ids if i not in ours_by_id])
    known = known_versions(store, table, sorted(gone))
    return {row_id: known.get(row_id, set()) for row_id in gone}


def _plan_removals(store: Store, bundle: Bundle, plan: _Plan) -> None:
    """Ours to delete where the bundle's database withdrew the very version we hold.

    A record withdrawn there after we edited it is kept: the edit is newer than
    what was withdrawn, and the next exchange takes it back there. A discarded
    inspection is deleted here only with everything recorded in it, so one that
    holds a part the other side did not discard with it is kept.
    """
    for table in sorted(bundle.deleted, key=DELETABLE.index):
        by_id = bundle.deleted[table]
        for row_id, ours in store.rows_by_id(table, sorted(by_id)).items():
            if version_hash(ours) not in by_id[row_id]:
                plan.kept_edited.append(_label(table, ours))
            elif table == "inspection" and _holds_more(store, row_id, plan.removals):
                plan.kept_edited.append(_label(table, ours))
            else:
                plan.removals.append((table, ours))
    # Parts the bundle brings for an inspection it discards are not written either.
    discarded = {row["id"] for table, row in plan.removals if table == "inspection"}
    kept = [w for w in plan.writes if w[1].get("inspection_id") not in discarded]
    plan.kept_deleted += len(plan.writes) - len(kept)
    plan.writes = kept


def _holds_more(
    store: Store, inspection_id: str, removals: list[tuple[str, dict[str, Any]]]
) -> bool:
    """Whether we hold a part of this inspection that the removals do not take."""
    going = {(table, row["id"]) for table, row in removals}
    return any(
        (table, row_id) not in going
        for table in _PARTS
        for row_id in inspection_part_ids(store, table, inspection_id)
    )


def _winner(table: str, ours: dict[str, Any], theirs: dict[str, Any], prefer: Side | None) -> Side:
    """A signed inspection beats a draft; then `prefer`; then the newer; a tie by content.

    The tie-break by content makes both databases pick the same version when each
    imports the other's bundle.
    """
    if table == "inspection" and ours["state"] != theirs["state"]:
        return "ours" if ours["state"] == "signed" else "theirs"
    if prefer is not None:
        return prefer
    ours_at = datetime.fromisoformat(ours["updated_at"])
    theirs_at = datetime.fromisoformat(theirs["updated_at"])
    if ours_at != theirs_at:
        return "theirs" if theirs_at > ours_at else "ours"
    return "theirs" if (canonical(theirs) or "") > (canonical(ours) or "") else "ours"


def _label(table: str, row: dict[str, Any]) -> str:
    """How a person recognises the record in a report line."""
    for key in ("name", "tag", "date"):
        if row.get(key):
            return f"{row[key]} ({row['id']})"
    return row["id"]


def _check_references(store: Store, bundle: Bundle) -> None:
    """Refuse a bundle whose records point at records neither it nor the database holds."""
    in_bundle = {table: {r["id"] for r in rows} for table, rows in bundle.rows.items()}
    wanted: dict[str, dict[str, tuple[str, str, str]]] = {}
    for table, fields in REFERENCES.items():
        for row in bundle.rows.get(table, []):
            for name, target in fields.items():
                ref = row.get(name)
                if ref and ref not in in_bundle[target]:
                    wanted.setdefault(target, {}).setdefault(ref, (table, row["id"], name))
    for target, refs in wanted.items():
        missing = sorted(set(refs) - set(store.rows_by_id(target, sorted(refs))))
        if missing:
            table, row_id, name = refs[missing[0]]
            raise BundleError(
                f"{table} {row_id} refers to {target} {missing[0]} ({name}), which is neither "
                f"in the bundle nor in this database ({counted(len(missing), 'such reference')}); "
                "import the bundle it came with first, or export without --since"
            )


def _check_photo_files(store: Store, bundle: Bundle) -> None:
    in_bundle = set(bundle.photo_hashes)
    for row in bundle.rows.get("photo", []):
        sha = row["sha256"]
        if sha not in in_bundle and not photo_path(store, sha).is_file():
            raise BundleError(
                f"photo {row['id']} needs the file {sha}, which is neither in the bundle nor "
                f"in {store.photos_dir}; export the bundle again with its photos"
            )


def _ordered(writes: list[_Write]) -> list[_Write]:
    """Tables in reference order; within a table, a parent before the records naming it."""
    order = {table: n for n, table in enumerate(MODEL_FOR_TABLE)}
    by_table: dict[str, list[_Write]] = {}
    for item in writes:
        by_table.setdefault(item[0], []).append(item)
    result: list[_Write] = []
    for table in sorted(by_table, key=order.__getitem__):
        ref = _SELF_REFERENCES.get(table)
        result.extend(_parents_first(by_table[table], ref) if ref else by_table[table])
    return result


def _parents_first(items: list[_Write], ref: str) -> list[_Write]:
    """Rows of one table ordered so that the row `ref` names comes first (loops left as met)."""
    pending = {item[1]["id"]: item for item in items}
    result: list[_Write] = []
    done: set[str] = set()
    for item in items:
        chain = []
        row_id: str | None = item[1]["id"]
        while row_id in pending and row_id not in done and row_id not in chain:
            chain.append(row_id)
            row_id = pending[row_id][1].get(ref)
        for row_id in reversed(chain):
            done.add(row_id)
            result.append(pending[row_id])
    return result


def _phase(write: _Write) -> int:
    table, _, what = write
    return 0 if what == "added" else 2 if table == "inspection" else 1


def _apply(store: Store, plan: _Plan, report: ImportReport) -> None:
    """Write the plan; records the store refuses as frozen are kept ours, one by one."""
    writes = _ordered(plan.writes)
    records = [plan.records[table][row["id"]] for table, row, _ in writes]
    # Each row was checked to be its record's stored form: the store need not make it again.
    rows = [row for _, row, _ in writes]
    refused: set[str] = set()
    try:
        with store.transaction():
            store.save_all(records, touch=False, rows=rows)
    except FrozenRecordError:
        # One by one, in an order that checks each record against the signatures the
        # database held before the import, as the batch did: new records first, then
        # changed ones, and inspections last (one signed by this bundle must not
        # refuse the readings it brings along).
        for table, row, _ in sorted(writes, key=_phase):
            record = plan.records[table][row["id"]]
            try:
                with store.transaction():
                    store.save_all([record], touch=False, rows=[row])
            except FrozenRecordError as exc:
                refused.add(record.id)
                report.kept_signed.append(str(exc))
    for table, row, what in writes:
        if row["id"] not in refused:
            (report.added if what == "added" else report.updated)[table] += 1
    # Parts withdrawn there: a signed inspection's stay, the store refuses to delete them.
    for table, ours in plan.removals:
        try:
            store.delete(MODEL_FOR_TABLE[table], ours["id"])
        except FrozenRecordError as exc:
            report.kept_signed.append(str(exc))
        else:
            report.removed[table] += 1
    logged = []
    for conflict, ours, theirs in plan.conflicts:
        if conflict.kept == "theirs" and conflict.record_id in refused:
            conflict = Conflict(**{**conflict.__dict__, "kept": "ours"})
        lost, kept = (ours, theirs) if conflict.kept == "theirs" else (theirs, ours)
        logged.append((conflict.table, conflict.record_id, lost, kept))
        report.conflicts.append(conflict)
    store.log_conflicts(logged)
