"""What a walkdown holds that is not a record yet: text typed and not saved, and where it was.

Kept so that a walkdown killed part-way (a flat battery, a closed terminal) can offer
back what the inspector typed, on the component they were on. Drafts are not records:
no audit rows, never judged or counted, never in a report or a bundle.
"""

from __future__ import annotations

from collections.abc import Mapping

from inspectkit.model import utcnow
from inspectkit.store.database import Store

#: (component id, field) → the text as typed.
DraftTexts = Mapping[tuple[str, str], str]


def save_drafts(store: Store, inspection_id: str, texts: DraftTexts, place: str | None) -> None:
    """Replace the inspection's drafts and place with these, in one transaction."""
    at = utcnow().isoformat()
    with store.transaction():
        store.db.execute("DELETE FROM entry_draft WHERE inspection_id = ?", [inspection_id])
        store.db.conn.executemany(
            "INSERT INTO entry_draft (inspection_id, component_id, field, text, updated_at) "
            "VALUES (?, ?, ?, ?, ?)",
            [(inspection_id, cid, name, text, at) for (cid, name), text in texts.items()],
        )
        if place is None:
            store.db.execute("DELETE FROM walkdown_place WHERE inspection_id = ?", [inspection_id])
        else:
            store.db.execute(
                "INSERT INTO walkdown_place (inspection_id, component_id, updated_at) "
                "VALUES (?, ?, ?) ON CONFLICT (inspection_id) DO UPDATE SET "
                "component_id = excluded.component_id, updated_at = excluded.updated_at",
                [inspection_id, place, at],
            )


def load_drafts(store: Store, inspection_id: str) -> tuple[dict[tuple[str, str], str], str | None]:
    """The inspection's drafts, and the component the walkdown was last on (None: none kept)."""
    texts = {
        (cid, name): text
        for cid, name, text in store.db.execute(
            "SELECT component_id, field, text FROM entry_draft WHERE inspection_id = ? "
            "ORDER BY updated_at, component_id, field",
            [inspection_id],
        )
    }
    row = store.db.execute(
        "SELECT component_id FROM walkdown_place WHERE inspection_id = ?", [inspection_id]
    ).fetchone()
    return texts, row[0] if row else None


def drop_drafts(store: Store, inspection_id: str) -> None:
    """Forget the inspection's drafts and place (it was finished, or they were let go)."""
    save_drafts(store, inspection_id, {}, None)
