"""Draft inspections for the visits of a planned round, so the walkdown starts from them."""

from __future__ import annotations

from inspectkit.model import Inspection, InspectionKind
from inspectkit.plan.planner import RoundPlan
from inspectkit.store import Store
from inspectkit.store.queries import draft_keys

#: The inspection a visit that only re-checks defects is recorded as: the
#: inspector looks at the repaired parts, which is a visual inspection (our default).
RECHECK_KIND = InspectionKind.VISUAL


def create_drafts(store: Store, plan: RoundPlan) -> list[Inspection]:
    """One draft inspection per inspection kind of each planned visit, all in one transaction.

    A draft already on record for the same site, kind and day is not made again, so
    creating drafts twice for the same round does nothing the second time. The drafts
    are dated on the planned day, which is after today: they are checked against that
    day rather than the clock.

    Returns:
        the drafts made now.
    """
    existing = draft_keys(store)
    drafts = []
    for day, visit in plan.visits:
        c = visit.candidate
        notes = "Planned visit. " + "; ".join(r.text for r in c.reasons)
        for kind in c.kinds or (RECHECK_KIND,):
            key = (c.site.id, kind.value, day.day.isoformat())
            if key in existing:
                continue
            existing.add(key)
            drafts.append(
                Inspection.model_validate(
                    {"site_id": c.site.id, "kind": kind, "date": day.day, "notes": notes},
                    context={"now": day.day},
                )
            )
    return store.save_all(drafts)
