"""Read-only questions the screens and commands ask often, answered in SQL."""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date

from inspectkit.model import Site
from inspectkit.store.database import Store
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
