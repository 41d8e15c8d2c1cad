"""Corrections to a signed inspection: an amendment that copies it as a new draft, and what changed.

A signed inspection never changes. To correct it, the inspector makes an
amendment: a new draft inspection naming the original, holding copies of its
readings, findings and photo records, which can be edited and then signed as
the next revision. Copies keep their `created_at`, so the amended report can
pair each copy with its original and say what was changed, added or removed.
"""

from __future__ import annotations

from collections.abc import Iterable
from datetime import date

from inspectkit.model import (
    Component,
    Finding,
    Inspection,
    InspectionKind,
    InspectionState,
    NotInspected,
    Photo,
    Reading,
    Record,
    new_id,
)
from inspectkit.store import Store, StoreError
from inspectkit.store.record_queries import inspection_records
from inspectkit.units import format_value
from inspectkit.wording import counted


class AmendError(StoreError):
    """An amendment cannot be made as asked; the message says why."""


def create_amendment(store: Store, inspection_id: str, today: date) -> Inspection:
    """Make a draft amendment of a signed inspection, with copies of everything recorded in it.

    Args:
        store: The database.
        inspection_id: The signed inspection to correct.
        today: The amendment's date.

    Raises:
        AmendError: no such inspection, or it is not signed (edit a draft directly).
    """
    original = store.get(Inspection, inspection_id)
    if original is None:
        raise AmendError(f"no inspection with id {inspection_id}; check the id")
    if original.state is not InspectionState.SIGNED:
        raise AmendError(
            f"inspection {inspection_id} is a draft; edit it directly, amendments are for "
            "signed inspections"
        )
    amendment = Inspection(
        site_id=original.site_id,
        kind=InspectionKind.AMENDMENT,
        date=max(today, original.date),
        inspector_id=original.inspector_id,
        weather=original.weather,
        soil=original.soil,
        amends_id=original.id,
        report_revision=max(original.report_revision, 1) + 1,
        not_inspected=original.not_inspected,
        joints_reconnected=original.joints_reconnected,
        reconnection_note=original.reconnection_note,
        notes=original.notes,
    )
    copies: list[Record] = [amendment]
    for model in (Reading, Finding, Photo, NotInspected):
        for record in inspection_records(store, model, original.id):
            copies.append(record.model_copy(update={"id": new_id(), "inspection_id": amendment.id}))
    store.save_all(copies)
    return amendment


def chain_of(store: Store, inspection: Inspection) -> list[Inspection]:
    """The inspections an amendment corrects, nearest first (empty for an original)."""
    found: list[Inspection] = []
    current = inspection
    while current.amends_id:
        earlier = store.get(Inspection, current.amends_id)
        if earlier is None or any(e.id == earlier.id for e in found):
            break
        found.append(earlier)
        current = earlier
    return found


def _reading_text(reading: Reading) -> str:
    shown = format_value(reading.value, reading.quantity, reading.over_range)
    doubtful = ", marked doubtful" if reading.unreliable else ""
    return f"{shown}{doubtful}"


def describe_changes(
    original: tuple[Iterable[Reading], Iterable[Finding], Iterable[Photo]],
    amended: tuple[Iterable[Reading], Iterable[Finding], Iterable[Photo]],
    components: dict[str, Component],
) -> list[str]:
    """What an amendment changed against the inspection it corrects, one sentence each.

    Args:
        original: the original inspection's readings, findings and photos.
        amended: the amendment's.
        components: components by id, for their tags.
    """

    def tag(component_id: str | None) -> str:
        component = components.get(component_id or "")
        return component.tag if component else "site"

    lines: list[str] = []
    before_r = {(r.component_id, r.quantity, r.created_at): r for r in original[0]}
    after_r = {(r.component_id, r.quantity, r.created_at): r for r in amended[0]}
    for key, old in before_r.items():
        new = after_r.get(key)
        label = f"{tag(old.component_id)} {old.quantity.label}"
        if new is None:
            lines.append(f"{label} {_reading_text(old)}: removed.")
        elif _reading_text(new) != _reading_text(old) or new.note != old.note:
            lines.append(f"{label}: {_reading_text(old)} changed to {_reading_text(new)}.")
    for key, new in after_r.items():
        if key not in before_r:
            lines.append(
                f"{tag(new.component_id)} {new.quantity.label} {_reading_text(new)}: added."
            )
    before_f = {(f.component_id, f.created_at): f for f in original[1]}
    after_f = {(f.component_id, f.created_at): f for f in amended[1]}
    fields = ("grade", "category", "text", "remedial_action", "due_by")
    for key, old in before_f.items():
        new = after_f.get(key)
        if new is None:
            lines.append(f'{tag(old.component_id)} finding "{old.text}": removed.')
            continue
        changed = [
            name.replace("_", " ") for name in fields if getattr(new, name) != getattr(old, name)
        ]
        if changed:
            lines.append(
                f"{tag(old.component_id)} finding: {', '.join(changed)} changed "
                f'(now {new.grade.value.replace("_", " ")}: "{new.text}").'
            )
    for key, new in after_f.items():
        if key not in before_f:
            lines.append(
                f"{tag(new.component_id)} finding added: {new.grade.value.replace('_', ' ')} "
                f'"{new.text}".'
            )
    before_p = {p.sha256 for p in original[2]}
    after_p = {p.sha256: p for p in amended[2]}
    added = [p for sha, p in after_p.items() if sha not in before_p]
    removed = len(before_p - set(after_p))
    if added:
        lines.append(f"{counted(len(added), 'photo')} added.")
    if removed:
        lines.append(f"{counted(removed, 'photo')} removed.")
    return lines
