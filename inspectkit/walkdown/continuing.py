"""A walkdown continued where it was left: the entries saved so far, judged again, and
the text typed and not saved, with the component the walk was on.

Text not saved is kept as drafts (`store/drafts.py`), not records: nothing judges,
counts, reports or sends it.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from inspectkit.model import Finding, NotInspected, Photo, Quantity
from inspectkit.store import Store, drafts
from inspectkit.store.record_queries import inspection_records
from inspectkit.store.visit_queries import readings_in_time_order
from inspectkit.walkdown.judging import ReadingOutcome, judge_reading, site_context
from inspectkit.walkdown.visit import known_inspection

#: What the inspector calls each field a draft can be kept for, besides the readings.
DRAFT_FIELDS: dict[str, str] = {
    "finding-text": "note",
    "finding-remedial": "remedial action",
    "finding-due": "due date",
    "photo": "photo path",
}


# ------------------------------------------------------------------ what is saved


@dataclass(frozen=True)
class SavedEntries:
    """What a visit holds so far, for showing a continued walkdown as it was left.

    Attributes:
        readings: The judged reading per (component id, quantity).
        findings: The finding per component id.
        photos: How many photos per component id (None: on the inspection alone).
        not_inspected: The "not inspected" mark per component id.
    """

    readings: dict[tuple[str, Quantity], ReadingOutcome]
    findings: dict[str, Finding]
    photos: dict[str | None, int]
    not_inspected: dict[str, NotInspected] = field(default_factory=dict)


def saved_entries(store: Store, inspection_id: str) -> SavedEntries:
    """Every reading (judged), finding and photo count recorded in a visit so far."""
    inspection = known_inspection(store, inspection_id)
    context = site_context(store, inspection.site_id)
    readings = {}
    for reading in readings_in_time_order(store, inspection_id):
        readings[(reading.component_id, reading.quantity)] = judge_reading(
            store, inspection, reading, context
        )
    photos: dict[str | None, int] = {}
    for photo in inspection_records(store, Photo, inspection_id):
        photos[photo.component_id] = photos.get(photo.component_id, 0) + 1
    return SavedEntries(
        readings=readings,
        findings={
            f.component_id: f
            for f in inspection_records(store, Finding, inspection_id)
            if f.component_id
        },
        photos=photos,
        not_inspected={
            n.component_id: n for n in inspection_records(store, NotInspected, inspection_id)
        },
    )


# ------------------------------------------------------------ what is not saved yet


@dataclass(frozen=True)
class Drafts:
    """Text typed in a walkdown and not saved, and the component the walkdown was on.

    Attributes:
        texts: The text as typed, by (component id, field): `q-<quantity>` for a
            reading, else a key of `DRAFT_FIELDS`.
        place: The component the inspector was on, or None.
    """

    texts: dict[tuple[str, str], str]
    place: str | None


def keep_drafts(
    store: Store, inspection_id: str, texts: dict[tuple[str, str], str], place: str | None
) -> None:
    """Keep what is typed and not saved (blank text is not kept), and where the walk is.

    Drafts are not readings: nothing judges, counts, reports or sends them.
    """
    kept = {key: text for key, text in texts.items() if text.strip()}
    drafts.save_drafts(store, inspection_id, kept, place)


def drafts_for(store: Store, inspection_id: str) -> Drafts:
    """What a walkdown of this inspection left unsaved, and where it was."""
    texts, place = drafts.load_drafts(store, inspection_id)
    return Drafts(texts, place)


def forget_drafts(store: Store, inspection_id: str) -> None:
    """Let go of the inspection's drafts (it was finished; what was saved is what counts)."""
    drafts.drop_drafts(store, inspection_id)


def drafts_told(texts: dict[tuple[str, str], str], tags: dict[str, str]) -> str:
    """`2 entries were not saved: DC-06 continuity '70 mΩ', E-05 note 'clamp loose'`."""
    named = []
    for (component_id, field_key), text in texts.items():
        if field_key.startswith("q-"):
            what = Quantity(field_key.removeprefix("q-")).label
        else:
            what = DRAFT_FIELDS.get(field_key, field_key)
        named.append(f"{tags.get(component_id, component_id)} {what} {text!r}")
    count = len(named)
    entries = "1 entry was" if count == 1 else f"{count} entries were"
    return f"{entries} not saved: " + ", ".join(named)
