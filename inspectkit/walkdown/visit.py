"""The visit itself: started or continued, discarded, its inspector and its details.

Also the look-ups every other walkdown module starts from (`known_inspection`,
`open_inspection`, `site_component`) and the one way the visit's record changes
(`update_inspection`).
"""

from __future__ import annotations

from datetime import date
from typing import Any

from inspectkit.engine.walking import Stop, walking_order
from inspectkit.model import (
    Component,
    Finding,
    Inspection,
    InspectionKind,
    InspectionState,
    Inspector,
    NotInspected,
    Photo,
    Reading,
    Site,
    SoilCondition,
)
from inspectkit.store import FrozenRecordError, Store, drafts
from inspectkit.store.photos import remove_unreferenced
from inspectkit.store.record_queries import inspection_records, site_components
from inspectkit.store.visit_queries import drafts_of_day, findings_resolved_by, unfinished_drafts
from inspectkit.walkdown.errors import WalkdownError, save_entry, validated

#: The visit's free-text details, by field, with what a form or a listing calls each.
#: The report prints them; the inspector types them once per visit.
DETAIL_LABELS: dict[str, str] = {
    "weather": "Weather",
    "not_inspected": "Not inspected",
    "accompanied_by": "Accompanied by",
    "changes_since_last": "Alterations",
    "notes": "Notes",
}


# ------------------------------------------------------------------- look-ups


def known_inspection(store: Store, inspection_id: str) -> Inspection:
    """The inspection with this id.

    Raises:
        WalkdownError: there is none.
    """
    inspection = store.get(Inspection, inspection_id)
    if inspection is None:
        raise WalkdownError("inspection", f"no inspection with id {inspection_id}")
    return inspection


def open_inspection(store: Store, inspection_id: str) -> Inspection:
    """The inspection with this id, still open to entries.

    Raises:
        WalkdownError: there is none, or it is signed.
    """
    inspection = known_inspection(store, inspection_id)
    if inspection.state is InspectionState.SIGNED:
        raise WalkdownError(
            "inspection",
            f"the inspection of {inspection.date.isoformat()} is signed; "
            "start an amendment to change it",
        )
    return inspection


def site_component(store: Store, inspection: Inspection, component_id: str) -> Component:
    """A component of the inspected site.

    Raises:
        WalkdownError: no component of that site has this id.
    """
    component = store.get(Component, component_id)
    if component is None or component.site_id != inspection.site_id:
        raise WalkdownError("component", f"no component {component_id} on this site")
    return component


def walk_for(store: Store, inspection_id: str) -> list[Stop]:
    """The walking order of the site an inspection belongs to, as of the visit's day."""
    inspection = known_inspection(store, inspection_id)
    return walking_order(site_components(store, inspection.site_id), on=inspection.date)


# ----------------------------------------------------------------- the inspection


def start_inspection(
    store: Store,
    site_id: str,
    kind: InspectionKind | str,
    inspector_id: str | None,
    today: date,
    *,
    continue_draft: bool = True,
) -> Inspection:
    """The site's open draft, the same day's draft of this kind, or a new draft visit.

    An open draft is one not yet signed nor marked finished: a walkdown left half
    done is continued, never started twice. A draft of the same kind on the same
    day that was marked finished is opened again (`same_day_draft`), so that one
    visit makes one inspection and one report. Either way the inspector given is
    put on a draft that has none.

    Args:
        continue_draft: False to start a second visit of that kind on that day even
            though one is finished (the person was asked and said so).

    Raises:
        WalkdownError: no such site, or the kind or date is not valid.
    """
    if store.get(Site, site_id) is None:
        raise WalkdownError("site", f"no site with id {site_id}; pick a site from the list")
    unfinished = unfinished_drafts(store, site_id)
    candidate = validated(
        Inspection,
        {"site_id": site_id, "kind": kind, "date": today, "inspector_id": inspector_id},
    )
    earlier = same_day_draft(store, site_id, candidate.kind, today) if continue_draft else None
    draft = unfinished[0] if unfinished else earlier
    if draft is not None:
        changes: dict[str, Any] = {}
        if draft.finished:  # opened again: the joints are confirmed afresh when it is finished
            changes = {"finished": False, "joints_reconnected": None, "reconnection_note": ""}
        if inspector_id and not draft.inspector_id:
            changes["inspector_id"] = _known_inspector(store, inspector_id)
        return update_inspection(store, draft.id, changes) if changes else draft
    return store.save(candidate)


def same_day_draft(
    store: Store, site_id: str, kind: InspectionKind | str, day: date
) -> Inspection | None:
    """The unsigned visit of this kind to the site on that day, finished or not, if any.

    Starting another would make two inspections of one visit, whose report would
    mix them; the screen offers to continue this one instead.
    """
    found = drafts_of_day(store, site_id, InspectionKind(kind), day)
    return found[0] if found else None


def discard_inspection(store: Store, inspection_id: str) -> Inspection:
    """Take a draft visit out of the records: started twice, on the wrong site, a test.

    Its readings, findings, photos and not-inspected marks go with it, in one
    transaction; the audit log keeps them all, and a bundle carries the discard to
    the other laptops as it carries a withdrawn reading. Findings of earlier visits
    it had marked as put right are open again. A signed inspection is never
    discarded: amend it.

    Raises:
        WalkdownError: no such inspection, or it is signed.
    """
    inspection = open_inspection(store, inspection_id)
    parts: list[tuple[type[Any], Any]] = [
        (model, record)
        for model in (Reading, Finding, Photo, NotInspected)
        for record in inspection_records(store, model, inspection_id)
    ]
    reopened = [
        f.model_copy(update={"resolved_by": None})
        for f in findings_resolved_by(store, inspection_id)
    ]
    try:
        with store.transaction():
            store.save_all(reopened)
            for model, record in parts:
                store.delete(model, record.id)
            drafts.drop_drafts(store, inspection_id)  # text typed and not saved goes too
            store.delete(Inspection, inspection_id)
    except FrozenRecordError as exc:
        raise WalkdownError("inspection", str(exc)) from None
    remove_unreferenced(store, sorted({r.sha256 for m, r in parts if m is Photo}))
    return inspection


def update_inspection(store: Store, inspection_id: str, changes: dict[str, Any]) -> Inspection:
    """The open inspection with `changes` checked by its model and saved; unchanged, not saved.

    Saving nothing new keeps the audit log free of rows that change nothing.
    """
    inspection = open_inspection(store, inspection_id)
    if all(getattr(inspection, name) == value for name, value in changes.items()):
        return inspection
    data = {**inspection.model_dump(), **changes}
    return save_entry(store, validated(Inspection, data, now=inspection.date))


# ------------------------------------------------------------ its people and details


def set_inspector(store: Store, inspection_id: str, inspector_id: str) -> Inspection:
    """Put the inspector on a draft visit, or change who it is, until it is signed.

    Raises:
        WalkdownError: no such inspector, or the inspection is signed.
    """
    return update_inspection(
        store, inspection_id, {"inspector_id": _known_inspector(store, inspector_id)}
    )


def _known_inspector(store: Store, inspector_id: str) -> str:
    if store.get(Inspector, inspector_id) is None:
        raise WalkdownError(
            "inspector_id", f"no inspector with id {inspector_id}; add the inspector first"
        )
    return inspector_id


def set_soil(store: Store, inspection_id: str, soil: SoilCondition | str | None) -> Inspection:
    """Record the ground's state for the visit; earth readings rise in dry or frozen ground.

    Raises:
        WalkdownError: not a soil condition, or the inspection is signed.
    """
    return update_inspection(store, inspection_id, {"soil": soil or None})


def set_details(
    store: Store,
    inspection_id: str,
    *,
    weather: str | None = None,
    not_inspected: str | None = None,
    accompanied_by: str | None = None,
    changes_since_last: str | None = None,
    notes: str | None = None,
) -> Inspection:
    """Record the circumstances of the visit that the report prints beside the readings.

    Each field left as None keeps what is recorded, so a command can change one
    without retyping the rest; an empty text clears it. Text is stored stripped.

    Args:
        weather: The weather during the visit (earth readings depend on it).
        not_inspected: What could not be inspected, and why.
        accompanied_by: Who went round with the inspector.
        changes_since_last: Changes to the structure since the last visit.
        notes: Anything else about the visit.

    Raises:
        WalkdownError: a text is too long (`field` names it), or the inspection is
            signed; nothing is saved.
    """
    given = {
        "weather": weather,
        "not_inspected": not_inspected,
        "accompanied_by": accompanied_by,
        "changes_since_last": changes_since_last,
        "notes": notes,
    }
    return update_inspection(
        store, inspection_id, {k: v.strip() for k, v in given.items() if v is not None}
    )
