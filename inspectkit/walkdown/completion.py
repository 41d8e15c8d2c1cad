"""Finishing a visit: what it still lacks, the test joints opened and not yet re-tested,
and the visit marked finished with the inspector's word on those joints.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import datetime
from typing import Any

from inspectkit.engine.check import check_site
from inspectkit.engine.history import COMPLETE_KINDS
from inspectkit.engine.walking import tag_key, walking_order
from inspectkit.model import (
    Component,
    ComponentKind,
    Finding,
    NotInspected,
    Quantity,
    Reading,
    SiteRecords,
)
from inspectkit.store import Store
from inspectkit.store.record_queries import inspection_records, site_components
from inspectkit.store.visit_queries import readings_with_joint_open
from inspectkit.walkdown.errors import WalkdownError
from inspectkit.walkdown.judging import site_context
from inspectkit.walkdown.visit import known_inspection, open_inspection, update_inspection


@dataclass(frozen=True)
class Missing:
    """One thing a complete walkdown still lacks.

    Attributes:
        component: The component concerned, or None for the inspection as a whole.
        what: One sentence saying what to do.
    """

    component: Component | None
    what: str


def missing_for_completion(store: Store, inspection_id: str) -> list[Missing]:
    """What the visit still lacks before it is complete, in walking order.

    For a complete (or initial) inspection: the readings the engine's
    completeness rule asks for. For every kind: components not yet graded.
    """
    inspection = known_inspection(store, inspection_id)
    context = site_context(store, inspection.site_id)
    stops = walking_order(context.components, on=inspection.date)
    items: list[Missing] = []
    if inspection.kind in COMPLETE_KINDS:
        # The engine judges unfinished drafts; judge this one as such even if finished.
        judged = inspection.model_copy(update={"finished": False})
        readings = inspection_records(store, Reading, inspection_id)
        records = SiteRecords(
            site=context.site,
            components=[s.component for s in stops],
            inspections=[judged],
            readings=readings,
        )
        # Judged as of the last reading, so that none is cut off as "later than the visit".
        day = max([judged.date, *(r.taken_at.date() for r in readings)])
        check = check_site(records, context.profile, day)
        items.extend(Missing(None, r.message) for r in check.results if r.rule == "incomplete")
    graded = {
        record.component_id
        for model in (Finding, NotInspected)  # a component not inspected needs no grade
        for record in inspection_records(store, model, inspection_id)
    }
    items.extend(
        Missing(s.component, f"{s.component.tag}: not graded yet")
        for s in stops
        if s.component.id not in graded
    )
    return items


def opened_joints(store: Store, inspection_id: str) -> list[Component]:
    """The test joints opened in this visit for an isolated earth reading, by tag.

    A reading with the joint open was taken on the joint itself or on an electrode
    below it; each such joint must be closed again and re-tested before leaving.
    """
    return sorted(_opened(store, inspection_id)[0].values(), key=lambda c: tag_key(c.tag))


def joints_not_retested(store: Store, inspection_id: str) -> list[str]:
    """Tags of opened joints with no reading across them since: neither a combined reading
    on the joint nor its down conductor's continuity, taken after it was last opened.

    The finishing question names them, so the re-test is not forgotten.
    """
    opened, last_open = _opened(store, inspection_id)
    readings = inspection_records(store, Reading, inspection_id)
    left = []
    for joint in opened.values():
        across = {(joint.id, Quantity.EARTH_COMBINED), (joint.parent_id, Quantity.CONTINUITY)}
        if not any(
            (r.component_id, r.quantity) in across and r.taken_at >= last_open[joint.id]
            for r in readings
        ):
            left.append(joint.tag)
    return sorted(left, key=tag_key)


def _opened(store: Store, inspection_id: str) -> tuple[dict[str, Component], dict[str, datetime]]:
    """The joints opened in the visit by id, and when each was last read open."""
    inspection = known_inspection(store, inspection_id)
    parts = {c.id: c for c in site_components(store, inspection.site_id)}
    opened: dict[str, Component] = {}
    last: dict[str, datetime] = {}
    for reading in readings_with_joint_open(store, inspection_id):
        part = parts.get(reading.component_id)
        if part is not None and part.kind is ComponentKind.EARTH_ELECTRODE:
            part = parts.get(part.parent_id or "", part)
        if part is not None:
            opened[part.id] = part
            last[part.id] = max(reading.taken_at, last.get(part.id, reading.taken_at))
    return opened, last


def finish_inspection(
    store: Store,
    inspection_id: str,
    *,
    reconnected: bool = False,
    not_reconnected: str = "",
) -> list[Missing]:
    """Mark the visit finished and return what it still lacked, for the record.

    The screen lists `missing_for_completion` and asks before calling this; a
    finished visit counts towards the schedule and is no longer the open draft.
    A visit that opened test joints (`opened_joints`) is finished only once the
    inspector confirms each was reconnected and re-tested, or says why not; the
    answer is kept with the visit and printed in the report.

    Args:
        reconnected: The inspector confirms every opened test joint was reconnected
            and re-tested (combined reading, or continuity across the joint).
        not_reconnected: Why they were not, when they were not.

    Raises:
        WalkdownError: the inspection is signed already, or it opened test joints
            and neither a confirmation nor a reason is given (`field` is
            `reconnected`); nothing is saved.
    """
    inspection = open_inspection(store, inspection_id)
    missing = missing_for_completion(store, inspection_id)
    changes: dict[str, Any] = {"finished": True}
    opened = opened_joints(store, inspection_id)
    if opened:
        reason = not_reconnected.strip()
        if not reconnected and not reason:
            tags = ", ".join(c.tag for c in opened)
            untested = joints_not_retested(store, inspection_id)
            since = f" (no reading across {', '.join(untested)} since)" if untested else ""
            raise WalkdownError(
                "reconnected",
                f"test joints opened for isolated readings ({tags}){since}: confirm each "
                "was reconnected and re-tested, or say why not",
            )
        changes["joints_reconnected"] = reconnected
        changes["reconnection_note"] = "" if reconnected else reason
    update_inspection(store, inspection.id, changes)
    return missing
