"""Reading and writing a site's geometry: one row per roof, conductor, rod or rooftop item."""

from __future__ import annotations

from collections.abc import Sequence

from inspectkit.model.geometry import GeometryItem
from inspectkit.store.database import Store
from inspectkit.store.errors import StoreError

#: The order geometry is listed in: roofs first, then the LPS, then what it protects.
_ORDER = (
    "CASE kind WHEN 'roof' THEN 0 WHEN 'air_conductor' THEN 1 WHEN 'air_terminal' THEN 2 "
    "WHEN 'down_conductor' THEN 3 ELSE 4 END, tag"
)


def site_geometry(store: Store, site_id: str) -> list[GeometryItem]:
    """A site's geometry records, roofs first; empty when none is recorded."""
    return store.select(GeometryItem, "site_id = ?", [site_id], order_by=_ORDER)


def replace_site_geometry(store: Store, site_id: str, items: Sequence[GeometryItem]) -> None:
    """Put `items` in place of the site's geometry, in one transaction (an import).

    Records keep their ids when a tag of the same kind is already there, so an
    import of a corrected file is an update in the audit log, not a delete and add.

    Raises:
        StoreError: an item names another site.
    """
    strangers = [i.tag for i in items if i.site_id != site_id]
    if strangers:
        raise StoreError(f"geometry items {', '.join(strangers)} belong to another site")
    with store.transaction():
        old = {(g.kind, g.tag): g for g in site_geometry(store, site_id)}
        kept = []
        for item in items:
            before = old.pop((item.kind, item.tag), None)
            kept.append(item if before is None else item.model_copy(update={"id": before.id}))
        for gone in old.values():
            store.delete(GeometryItem, gone.id)
        store.save_all(kept)


def save_geometry_item(store: Store, item: GeometryItem) -> GeometryItem:
    """Add or change one geometry record (the site screen's form).

    Raises:
        StoreError: another record of the same kind already has the tag.
    """
    clash = store.select(
        GeometryItem,
        "site_id = ? AND kind = ? AND tag = ? AND id != ?",
        [item.site_id, item.kind.value, item.tag, item.id],
    )
    if clash:
        raise StoreError(
            f"tag: {item.tag} is already a {item.kind.label} of this site; pick another tag"
        )
    return store.save(item)


def delete_geometry_item(store: Store, item_id: str) -> None:
    """Remove one geometry record drawn by mistake."""
    store.delete(GeometryItem, item_id)
