"""Read-only questions the screens and commands ask often, answered in SQL."""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date

from inspectkit.model import (
    Component,
    Finding,
    Inspection,
    Instrument,
    Photo,
    Reading,
    Site,
    SiteRecords,
)
from inspectkit.store.database import Store, StoreError
from inspectkit.store.rows import from_row


@dataclass(frozen=True)
class SiteSummary:
    """A site with the date and kind of its last visit, for lists."""

    site: Site
    last_visit: date | None
    last_kind: str | None
    component_count: int


def site_summaries(store: Store) -> list[SiteSummary]:
    """Every site with its last inspection, in name order."""
    last = {
        site_id: (date.fromisoformat(day), kind)
        for site_id, day, kind in store.db.execute(
            "SELECT site_id, date, kind FROM ("
            " SELECT site_id, date, kind, ROW_NUMBER() OVER ("
            "  PARTITION BY site_id ORDER BY date DESC, created_at DESC) AS n FROM inspection"
            ") WHERE n = 1"
        )
    }
    counts = dict(
        store.db.execute(
            "SELECT site_id, COUNT(*) FROM component WHERE retired_on IS NULL GROUP BY site_id"
        ).fetchall()
    )
    summaries = []
    for row in store.db["site"].rows_where(order_by="name COLLATE NOCASE"):
        site = from_row(Site, row)
        day, kind = last.get(site.id, (None, None))
        summaries.append(SiteSummary(site, day, kind, counts.get(site.id, 0)))
    return summaries


def find_site(store: Store, name_or_id: str) -> Site | None:
    """A site by id, exact name, or the one name that starts with the text (any case)."""
    site = store.get(Site, name_or_id)
    if site is not None:
        return site
    exact = store.select(Site, "lower(name) = lower(?)", [name_or_id])
    if len(exact) == 1:
        return exact[0]
    prefix = store.select(Site, "lower(name) LIKE lower(?) || '%'", [name_or_id])
    return prefix[0] if len(prefix) == 1 else None


def load_site_records(store: Store, site_id: str) -> SiteRecords:
    """All of one site's records, for the engine and the report.

    Raises:
        StoreError: no site has that id.
    """
    site = store.get(Site, site_id)
    if site is None:
        raise StoreError(f"no site with id {site_id}")
    inspections = store.select(Inspection, "site_id = ?", [site_id], order_by="date, created_at")
    in_site = "inspection_id IN (SELECT id FROM inspection WHERE site_id = ?)"
    readings = store.select(Reading, in_site, [site_id], order_by="taken_at")
    instrument_ids = sorted({r.instrument_id for r in readings if r.instrument_id})
    instruments = (
        {
            i.id: i
            for i in store.select(
                Instrument, f"id IN ({','.join('?' * len(instrument_ids))})", instrument_ids
            )
        }
        if instrument_ids
        else {}
    )
    return SiteRecords(
        site=site,
        components=store.select(Component, "site_id = ?", [site_id], order_by="kind, tag"),
        inspections=inspections,
        readings=readings,
        findings=store.select(Finding, in_site, [site_id]),
        photos=store.select(Photo, in_site, [site_id]),
        instruments=instruments,
    )
