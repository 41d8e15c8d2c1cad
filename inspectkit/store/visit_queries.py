"""Named questions the walkdown asks about a visit: its drafts, its entries per component,
and the earlier visits a reading is compared with.

The walkdown asks these by name so that SQL text stays in `store/`
(`tests/test_sql_in_store.py`); the questions it shares with other callers, a site's
components and a visit's records of one kind, are in `record_queries.py`.
"""

from __future__ import annotations

from datetime import date
from typing import TypeVar

from inspectkit.model import (
    Finding,
    Inspection,
    InspectionKind,
    InspectionState,
    JointState,
    Quantity,
    Reading,
    Record,
)
from inspectkit.store.database import Store

R = TypeVar("R", bound=Record)


# ------------------------------------------------------------------ the visit's drafts


def unfinished_drafts(store: Store, site_id: str) -> list[Inspection]:
    """A site's visits neither signed nor marked finished, the latest first."""
    return store.select(
        Inspection,
        "site_id = ? AND state = ? AND finished = 0",
        [site_id, InspectionState.DRAFT.value],
        order_by="date DESC, created_at DESC",
    )


def drafts_of_day(store: Store, site_id: str, kind: InspectionKind, day: date) -> list[Inspection]:
    """A site's unsigned visits of one kind on one day, finished or not, the latest first."""
    return store.select(
        Inspection,
        "site_id = ? AND kind = ? AND date = ? AND state = ?",
        [site_id, kind.value, day.isoformat(), InspectionState.DRAFT.value],
        order_by="created_at DESC",
    )


def findings_resolved_by(store: Store, inspection_id: str) -> list[Finding]:
    """The findings of other visits that this visit marked as put right."""
    return store.select(
        Finding, "resolved_by = ? AND inspection_id != ?", [inspection_id, inspection_id]
    )


# ---------------------------------------------------------- the visit's entries


def component_entries(
    store: Store, model: type[R], inspection_id: str, component_id: str
) -> list[R]:
    """A visit's records of one kind (findings, not-inspected marks) for one component."""
    return store.select(
        model, "inspection_id = ? AND component_id = ?", [inspection_id, component_id]
    )


def component_readings(
    store: Store, inspection_id: str, component_id: str, quantity: Quantity
) -> list[Reading]:
    """A visit's readings of one quantity on one component."""
    return store.select(
        Reading,
        "inspection_id = ? AND component_id = ? AND quantity = ?",
        [inspection_id, component_id, quantity.value],
    )


def readings_in_time_order(store: Store, inspection_id: str) -> list[Reading]:
    """A visit's readings, in the order they were taken."""
    return store.select(Reading, "inspection_id = ?", [inspection_id], "taken_at")


def readings_with_joint_open(store: Store, inspection_id: str) -> list[Reading]:
    """A visit's readings taken with a test joint open (isolated earth readings)."""
    return store.select(
        Reading, "inspection_id = ? AND joint_state = ?", [inspection_id, JointState.OPEN.value]
    )


def earlier_series(
    store: Store, site_id: str, component_id: str, quantity: Quantity, inspection_id: str
) -> list[Reading]:
    """A component's readings of one quantity from the site's visits other than this one,
    in the order they were taken."""
    return store.select(
        Reading,
        "component_id = ? AND quantity = ? AND inspection_id != ? AND inspection_id IN "
        "(SELECT id FROM inspection WHERE site_id = ?)",
        [component_id, quantity.value, inspection_id, site_id],
        order_by="taken_at",
    )
