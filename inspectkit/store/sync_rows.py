"""Reads for moving records between databases and to other tools: a site's rows, export tables.

The bundle and export code in `inspectkit.sync` decides what to do with rows;
the SQL that finds them lives here with the rest of the store.
"""

from __future__ import annotations

from collections.abc import Iterator, Sequence
from datetime import date
from typing import Any

from inspectkit.model import RECORD_TYPES
from inspectkit.store.database import Store
from inspectkit.store.selects import in_chunks

_IN_SITE = "inspection_id IN (SELECT id FROM inspection WHERE site_id = :site)"
#: How each table's rows of one site are chosen.
_SITE_WHERE = {
    "site": "id = :site",
    "component": "site_id = :site",
    "instrument": f"id IN (SELECT instrument_id FROM reading WHERE {_IN_SITE}) "
    "OR id IN (SELECT instrument_id FROM soil_survey WHERE site_id = :site)",
    "inspector": "id IN (SELECT inspector_id FROM inspection WHERE site_id = :site)",
    "inspection": "site_id = :site",
    "reading": _IN_SITE,
    "finding": _IN_SITE,
    "photo": f"{_IN_SITE} OR component_id IN (SELECT id FROM component WHERE site_id = :site)",
    "not_inspected": _IN_SITE,
    "geometry_item": "site_id = :site",
    "soil_survey": "site_id = :site",
}


def site_rows(
    store: Store, site_id: str, since: date | None = None
) -> dict[str, list[dict[str, Any]]]:
    """A site's rows by table, as stored; with `since`, only those changed from that day on.

    The site's own row is always included, so a bundle always names its site.
    """
    rows: dict[str, list[dict[str, Any]]] = {}
    for model in RECORD_TYPES:
        where, params = _site_filter(model.table, site_id, since)
        cursor = store.db.execute(
            f"SELECT * FROM [{model.table}] WHERE {where} ORDER BY created_at, id", params
        )
        names = [d[0] for d in cursor.description]
        rows[model.table] = [dict(zip(names, values, strict=True)) for values in cursor]
    return rows


def site_photo_hashes(store: Store, site_id: str, since: date | None = None) -> list[str]:
    """The distinct photo files a site's bundle carries (the photo rows `site_rows` picks)."""
    where, params = _site_filter("photo", site_id, since)
    sql = f"SELECT DISTINCT sha256 FROM photo WHERE {where} ORDER BY sha256"
    return [sha for (sha,) in store.db.execute(sql, params)]


def _site_filter(table: str, site_id: str, since: date | None) -> tuple[str, dict[str, Any]]:
    where = f"({_SITE_WHERE[table]})"
    params: dict[str, Any] = {"site": site_id}
    if since is not None and table != "site":
        where += " AND updated_at >= :since"
        params["since"] = since.isoformat()
    return where, params


_READINGS_SQL = """
SELECT s.name AS site, i.date AS inspection_date, i.kind AS inspection_kind,
       c.tag AS component_tag, c.kind AS component_kind, r.quantity, r.value,
       r.over_range, r.method, r.joint_state, r.taken_at, r.soil, r.unreliable,
       m.serial AS instrument_serial, r.note, s.id AS site_id, i.id AS inspection_id,
       c.id AS component_id, r.id AS reading_id, r.traverse
FROM reading r
JOIN inspection i ON i.id = r.inspection_id
JOIN site s ON s.id = i.site_id
JOIN component c ON c.id = r.component_id
LEFT JOIN instrument m ON m.id = r.instrument_id
WHERE :site IS NULL OR s.id = :site
ORDER BY s.name, r.taken_at, c.tag
"""

_FINDINGS_SQL = """
SELECT s.name AS site, i.date AS inspection_date, i.kind AS inspection_kind,
       c.tag AS component_tag, f.grade, f.category, f.text, f.remedial_action, f.due_by,
       f.resolved_by, s.id AS site_id, i.id AS inspection_id, c.id AS component_id,
       f.id AS finding_id
FROM finding f
JOIN inspection i ON i.id = f.inspection_id
JOIN site s ON s.id = i.site_id
LEFT JOIN component c ON c.id = f.component_id
WHERE :site IS NULL OR s.id = :site
ORDER BY s.name, i.date, c.tag
"""

_EXPORT_SQL = {"readings": _READINGS_SQL, "findings": _FINDINGS_SQL}


def export_rows(store: Store, which: str, site_id: str | None) -> list[dict[str, Any]]:
    """Readings or findings of a site (or of all sites) joined with their site, visit and part."""
    cursor = store.db.execute(_EXPORT_SQL[which], {"site": site_id})
    names = [d[0] for d in cursor.description]
    return [dict(zip(names, values, strict=True)) for values in cursor]


def site_positions(store: Store) -> Iterator[tuple[Any, ...]]:
    """(id, name, client, address, town, lat, lon, level, profile, critical, explosive) per site."""
    return iter(
        store.db.execute(
        "SELECT id, name, client, address, town, latitude, longitude, protection_level, "
        "profile, critical, explosive_risk FROM site ORDER BY name COLLATE NOCASE"
        )
    )


def audit_versions(
    store: Store, table: str, ids: Sequence[str]
) -> Iterator[tuple[str, str | None, str | None]]:
    """(row id, before, after) of every audit row that changed one of these records."""
    for chunk, marks in in_chunks(ids):
        yield from store.db.execute(
            "SELECT row_id, before, after FROM audit WHERE table_name = ? "
            f"AND before IS NOT NULL AND row_id IN ({marks})",
            [table, *chunk],
        )


#: Records an inspector may withdraw; a bundle carries their deletions. A discarded
#: draft inspection comes last: what was recorded in it goes before it.
DELETABLE = ("reading", "finding", "photo", "not_inspected", "inspection")
#: Whether a deleted record, by its last row in the audit log, was one of the site's:
#: a discarded inspection of the site, or a part of one of its inspections (kept or
#: discarded), or of one of its components.
_DELETED_IN_SITE = (
    "(json_extract(before, '$.site_id') = :site AND table_name = 'inspection' "
    "OR json_extract(before, '$.inspection_id') IN "
    "(SELECT id FROM inspection WHERE site_id = :site) "
    "OR json_extract(before, '$.inspection_id') IN "
    "(SELECT row_id FROM audit WHERE table_name = 'inspection' AND action = 'delete' "
    "AND json_extract(before, '$.site_id') = :site) "
    "OR json_extract(before, '$.component_id') IN "
    "(SELECT id FROM component WHERE site_id = :site))"
)


def site_deletions(store: Store, site_id: str, since: date | None = None) -> dict[str, list[str]]:
    """Ids of the site's withdrawn records and discarded drafts deleted here, not made again."""
    found: dict[str, list[str]] = {}
    for table in DELETABLE:
        sql = (
            "SELECT DISTINCT row_id FROM audit WHERE table_name = :table AND action = 'delete' "
            f"AND {_DELETED_IN_SITE} AND row_id NOT IN (SELECT id FROM [{table}])"
        )
        params: dict[str, Any] = {"table": table, "site": site_id}
        if since is not None:
            sql += " AND at >= :since"
            params["since"] = since.isoformat()
        found[table] = [row_id for (row_id,) in store.db.execute(sql + " ORDER BY row_id", params)]
    return found


def deleted_here(store: Store, table: str, ids: Sequence[str]) -> set[str]:
    """Those of these ids whose records this database deleted (and has not now)."""
    found: set[str] = set()
    for chunk, marks in in_chunks(ids):
        found.update(
            row_id
            for (row_id,) in store.db.execute(
                "SELECT DISTINCT row_id FROM audit WHERE table_name = ? AND action = 'delete' "
                f"AND row_id IN ({marks}) AND row_id NOT IN (SELECT id FROM [{table}])",
                [table, *chunk],
            )
        )
    return found


def inspection_part_ids(store: Store, table: str, inspection_id: str) -> list[str]:
    """The ids of one inspection's rows in `table` (readings, findings, photos…)."""
    return [
        row_id
        for (row_id,) in store.db.execute(
            f"SELECT id FROM [{table}] WHERE inspection_id = ?", [inspection_id]
        )
    ]
