"""How a component was found on the visit: its grade, or why it could not be inspected.

A grade and a "not inspected" mark exclude each other: making one takes the other back
(the audit log keeps it).
"""

from __future__ import annotations

from datetime import date
from typing import Any

from inspectkit.model import Finding, Grade, NotInspected, NotInspectedReason
from inspectkit.store import FrozenRecordError, Store
from inspectkit.store.visit_queries import component_entries
from inspectkit.walkdown.errors import WalkdownError, save_entry, validated
from inspectkit.walkdown.visit import open_inspection, site_component


def grade_component(
    store: Store,
    inspection_id: str,
    component_id: str,
    grade: Grade | str,
    text: str = "",
    remedial_action: str = "",
    due_by: date | str | None = None,
    category: str = "",
) -> Finding:
    """Record how a component was found; grading it again in the same visit corrects it.

    Raises:
        WalkdownError: not-sound without words, a bad due date, or a signed inspection.
    """
    fields = {
        "grade": grade,
        "text": text.strip(),
        "remedial_action": remedial_action.strip(),
        "due_by": _day(due_by, "due_by") if isinstance(due_by, str) else due_by,
        "category": category.strip(),
    }
    # Graded after all: no longer "not inspected".
    return _component_entry(store, Finding, NotInspected, inspection_id, component_id, fields)


def mark_not_inspected(
    store: Store,
    inspection_id: str,
    component_id: str,
    reason: NotInspectedReason | str,
    text: str = "",
) -> NotInspected:
    """Record that a component could not be inspected on this visit, and why.

    It stands instead of a grade (a grade given for it in this visit is taken back;
    the audit log keeps it), so the visit can be complete without it; the report
    lists it and the next round plans a return. Marking it again corrects the reason.

    Raises:
        WalkdownError: not a reason, `other` without words, or the inspection is signed.
    """
    fields = {"reason": reason, "text": text.strip()}
    return _component_entry(store, NotInspected, Finding, inspection_id, component_id, fields)


def _component_entry(
    store: Store,
    model: type[Any],
    replaces: type[Any],
    inspection_id: str,
    component_id: str,
    fields: dict[str, Any],
) -> Any:
    """This visit's one `model` record for the component, made or corrected, in place of
    its `replaces` record (a grade and a "not inspected" mark exclude each other)."""
    inspection = open_inspection(store, inspection_id)
    site_component(store, inspection, component_id)
    existing = component_entries(store, model, inspection_id, component_id)
    data: dict[str, Any] = {"inspection_id": inspection_id, "component_id": component_id, **fields}
    if existing:
        data["id"] = existing[0].id
        data["created_at"] = existing[0].created_at
    record = validated(model, data, whole="text")
    with store.transaction():
        _drop(store, replaces, inspection_id, component_id)
        return save_entry(store, record)


def clear_not_inspected(store: Store, inspection_id: str, component_id: str) -> None:
    """Take back a "not inspected" mark made by mistake; the component is to grade again.

    Raises:
        WalkdownError: the inspection is signed.
    """
    open_inspection(store, inspection_id)
    _drop(store, NotInspected, inspection_id, component_id)


def _drop(store: Store, model: type[Any], inspection_id: str, component_id: str) -> None:
    """Delete this visit's record of `model` for the component, if there is one."""
    for record in component_entries(store, model, inspection_id, component_id):
        try:
            store.delete(model, record.id)
        except FrozenRecordError as exc:
            raise WalkdownError("inspection", str(exc)) from None


def _day(text: str, field: str) -> date | None:
    """A day typed as YYYY-MM-DD; blank is none."""
    if not text.strip():
        return None
    try:
        return date.fromisoformat(text.strip())
    except ValueError:
        raise WalkdownError(
            field, f"{text.strip()!r} is not a date; type it as YYYY-MM-DD, e.g. 2026-07-31"
        ) from None
