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

This module runs the import (check, decide, write) in that one transaction; the
refusals are in `merge_checks`, the decisions in `merge_plan`, and what the person is
told in `merge_report`. A bundle says nothing about whom to trust: see `signers`.
"""

from __future__ import annotations

import tempfile
from pathlib import Path

from inspectkit.model import MODEL_FOR_TABLE
from inspectkit.store import FrozenRecordError, Store
from inspectkit.store.photos import adopt_staged, photo_path, remove_unreferenced
from inspectkit.sync.bundle import Bundle, reading_bundle
from inspectkit.sync.guard import DEFAULT_LIMITS, Limits, site_label
from inspectkit.sync.merge_checks import check_photo_files, check_readings, check_references
from inspectkit.sync.merge_plan import MergePlan, Write, plan_merge
from inspectkit.sync.merge_report import Conflict, ImportReport, Side
from inspectkit.sync.signers import check_signed_inspections, untrusted_signers

#: Fields that point at a record of the same table; parents are written first.
_SELF_REFERENCES = {"component": "parent_id", "inspection": "amends_id"}


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
        plan = MergePlan()
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


def _plan(store: Store, bundle: Bundle, prefer: Side | None) -> MergePlan:
    """Decide every record, after checking what it references and what it says of signing.

    Runs inside the import's write transaction: what it reads of ours stays so
    until the plan is written.
    """
    check_references(store, bundle)
    check_photo_files(store, bundle)
    notices = check_signed_inspections(store, bundle) + untrusted_signers(store, bundle)
    plan = plan_merge(store, bundle, prefer, notices)
    check_readings(store, plan.records, plan.writes)
    return plan


def _ordered(writes: list[Write]) -> list[Write]:
    """Tables in reference order; within a table, a parent before the records naming it."""
    order = {table: n for n, table in enumerate(MODEL_FOR_TABLE)}
    by_table: dict[str, list[Write]] = {}
    for item in writes:
        by_table.setdefault(item[0], []).append(item)
    result: list[Write] = []
    for table in sorted(by_table, key=order.__getitem__):
        ref = _SELF_REFERENCES.get(table)
        result.extend(_parents_first(by_table[table], ref) if ref else by_table[table])
    return result


def _parents_first(items: list[Write], ref: str) -> list[Write]:
    """Rows of one table ordered so that the row `ref` names comes first (loops left as met)."""
    pending = {item[1]["id"]: item for item in items}
    result: list[Write] = []
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


def _phase(write: Write) -> int:
    table, _, what = write
    return 0 if what == "added" else 2 if table == "inspection" else 1


def _apply(store: Store, plan: MergePlan, report: ImportReport) -> None:
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
