"""The refusals a bundle meets before anything of it is written: all or nothing.

A bundle whose records point at records nobody holds, whose photos are missing, or
that brings a reading the walkdown would refuse is refused whole, with a message
saying where to mend it; nothing is written.
"""

from __future__ import annotations

from typing import Any

from inspectkit import intake
from inspectkit.model import Component, Inspection, InspectionState, Instrument, Record
from inspectkit.store import Store
from inspectkit.store.photos import photo_path
from inspectkit.sync.bundle import REFERENCES, Bundle
from inspectkit.sync.guard import BundleError
from inspectkit.sync.merge_plan import Write
from inspectkit.wording import counted


def check_references(store: Store, bundle: Bundle) -> None:
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


def check_photo_files(store: Store, bundle: Bundle) -> None:
    """Refuse a bundle whose photo records name files neither it nor the photo folder holds."""
    in_bundle = set(bundle.photo_hashes)
    for row in bundle.rows.get("photo", []):
        sha = row["sha256"]
        if sha not in in_bundle and not photo_path(store, sha).is_file():
            raise BundleError(
                f"photo {row['id']} needs the file {sha}, which is neither in the bundle nor "
                f"in {store.photos_dir}; export the bundle again with its photos"
            )


def check_readings(
    store: Store,
    records: dict[str, dict[str, Record]],
    writes: list[Write],
) -> None:
    """Refuse a bundle bringing a reading the walkdown would refuse (`inspectkit.intake`).

    Only the readings this import writes are judged; rows both sides hold already are
    not judged again. A visit signed on either side is final as signed: the store
    keeps ours (see `merge._apply`). A reading made after its visit was last changed
    (finished) is a reading added to a finished visit.

    Args:
        store: The database the bundle is merged into.
        records: The bundle's checked records, by table and id.
        writes: The (table, row, why) the merge plans to write.
    """
    ours: dict[tuple[str, str], Any] = {}  # each record read once, however many readings

    def held(model: type[Any], record_id: str) -> Any:
        if (model.table, record_id) not in ours:
            ours[model.table, record_id] = store.get(model, record_id)
        return ours[model.table, record_id]

    def record(model: type[Any], record_id: str | None) -> Any:
        if not record_id:
            return None
        return records.get(model.table, {}).get(record_id) or held(model, record_id)

    def signed(inspection_id: str) -> bool:
        theirs = records.get("inspection", {}).get(inspection_id)
        copies = (theirs, held(Inspection, inspection_id))
        return any(c is not None and c.state is InspectionState.SIGNED for c in copies)

    written = [
        records[t][row["id"]]
        for t, row, _ in writes
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
