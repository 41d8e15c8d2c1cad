"""Readings and findings as CSV or JSON tables, and sites as GeoJSON, for other tools.

Values are exported in their SI base unit with the unit in its own column, so a
spreadsheet never has to parse `12 Ω`.
"""

from __future__ import annotations

import csv
import json
from typing import Any, TextIO

from inspectkit.model import Quantity
from inspectkit.store import Store
from inspectkit.store.sync_rows import export_rows, site_positions

READING_FIELDS = (
    "site", "inspection_date", "inspection_kind", "component_tag", "component_kind",
    "quantity", "value", "unit", "over_range", "method", "joint_state", "taken_at", "soil",
    "unreliable", "instrument_serial", "note", "site_id", "inspection_id", "component_id",
    "reading_id", "traverse",
)  # fmt: skip
FINDING_FIELDS = (
    "site", "inspection_date", "inspection_kind", "component_tag", "grade", "category", "text",
    "remedial_action", "due_by", "resolved_by", "site_id", "inspection_id", "component_id",
    "finding_id",
)  # fmt: skip
_BOOLEANS = {"over_range", "unreliable"}

def _query_rows(store: Store, which: str, site_id: str | None) -> list[dict[str, Any]]:
    return [
        {k: bool(v) if k in _BOOLEANS else v for k, v in row.items()}
        for row in export_rows(store, which, site_id)
    ]


def reading_rows(store: Store, site_id: str | None = None) -> list[dict[str, Any]]:
    """Every reading of a site (or of all sites), with its site, visit, component and unit."""
    rows = _query_rows(store, "readings", site_id)
    for row in rows:
        row["unit"] = Quantity(row["quantity"]).unit
    return [{name: row[name] for name in READING_FIELDS} for row in rows]


def finding_rows(store: Store, site_id: str | None = None) -> list[dict[str, Any]]:
    """Every finding of a site (or of all sites), with its site, visit and component tag."""
    return _query_rows(store, "findings", site_id)


def write_csv(rows: list[dict[str, Any]], fields: tuple[str, ...], out: TextIO) -> None:
    """RFC 4180 CSV with a header row; empty cells for missing values."""
    writer = csv.DictWriter(out, fieldnames=fields, lineterminator="\r\n")
    writer.writeheader()
    for row in rows:
        writer.writerow({k: "" if v is None else str(v).lower() if isinstance(v, bool) else v
                         for k, v in row.items()})  # fmt: skip


def write_json(rows: list[dict[str, Any]], out: TextIO) -> None:
    json.dump(rows, out, indent=2, ensure_ascii=False)
    out.write("\n")


def sites_geojson(store: Store) -> tuple[dict[str, Any], list[str]]:
    """All sites as a GeoJSON FeatureCollection, and the names of sites with no position.

    Positions are [longitude, latitude] (RFC 7946 §3.1.1). A site without
    coordinates is kept as a Feature with a null geometry (RFC 7946 §3.2 allows it
    for unlocated features), so the collection lists every site; its name is
    returned so the command can say which ones to locate.
    """
    features = []
    unlocated = []
    cursor = site_positions(store)
    for (site_id, name, client, address, town, lat, lon, level, profile, critical,
         explosive) in cursor:  # fmt: skip
        geometry = None
        if lat is not None and lon is not None:
            geometry = {"type": "Point", "coordinates": [lon, lat]}
        else:
            unlocated.append(name)
        features.append(
            {
                "type": "Feature",
                "id": site_id,
                "geometry": geometry,
                "properties": {
                    "name": name,
                    "client": client,
                    "address": address,
                    "town": town,
                    "protection_level": level,
                    "profile": profile,
                    "critical": bool(critical),
                    "explosive_risk": bool(explosive),
                },
            }
        )
    return {"type": "FeatureCollection", "features": features}, unlocated
