"""Deciding a bundle's merge: for each record, add, update, keep ours, or a conflict.

The rules themselves are in `merge`'s docstring. Deciding only reads; the plan is
written by `merge` in the same transaction, so what was read of ours stays so.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from datetime import datetime
from typing import Any

from inspectkit.model import Record
from inspectkit.store import Store
from inspectkit.store.rows import canonical
from inspectkit.store.sync_rows import DELETABLE, deleted_here, inspection_part_ids
from inspectkit.sync.bundle import Bundle
from inspectkit.sync.merge_report import Conflict, Side
from inspectkit.sync.versions import known_versions, version_hash

#: A row to write: table, stored-form row, and "added" or "updated".
Write = tuple[str, dict[str, Any], str]
#: Records made in an inspection, frozen with it once it is signed.
_PARTS = frozenset({"reading", "finding", "photo", "not_inspected"})


@dataclass
class MergePlan:
    """What the merge will do: rows to write (with why), conflicts, and what it leaves."""

    writes: list[Write] = field(default_factory=list)
    conflicts: list[tuple[Conflict, dict[str, Any], dict[str, Any]]] = field(default_factory=list)
    unchanged: int = 0
    kept_newer: int = 0
    #: The bundle's checked records, by table and id.
    records: dict[str, dict[str, Record]] = field(default_factory=dict)
    #: Our rows to delete, as withdrawn in the bundle's database: (table, row).
    removals: list[tuple[str, dict[str, Any]]] = field(default_factory=list)
    kept_deleted: int = 0
    kept_edited: list[str] = field(default_factory=list)
    #: Sentences for the report: untrusted signers, records no signature covers.
    notices: list[str] = field(default_factory=list)


def plan_merge(store: Store, bundle: Bundle, prefer: Side | None, notices: list[str]) -> MergePlan:
    """Decide every record of a checked bundle against ours, and what to remove here.

    Args:
        store: The database merged into, inside the import's write transaction.
        bundle: The bundle, its references and signatures checked.
        prefer: Which side wins a conflict; None: the newer.
        notices: What checking the bundle's signatures found, for the report.
    """
    plan = MergePlan(records=bundle.records, notices=notices)
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
            if (
                ours is None
                and not final
                and version_hash(theirs) in withdrawn.get(theirs["id"], ())
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
    return plan


def _withdrawn_versions(
    store: Store, table: str, ids: list[str], ours_by_id: dict[str, dict[str, Any]]
) -> dict[str, set[str]]:
    """Of the ids we do not hold, those we deleted, with every version of each we saw."""
    if table not in DELETABLE:
        return {}
    gone = deleted_here(store, table, [i for i in ids if i not in ours_by_id])
    known = known_versions(store, table, sorted(gone))
    return {row_id: known.get(row_id, set()) for row_id in gone}


def _plan_removals(store: Store, bundle: Bundle, plan: MergePlan) -> None:
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
