"""Repeat defects: a finding that is the same fault as an earlier open one, still present.

Without the link the earlier finding stays open beside the new one, and nobody can
see how long the fault has really been there. With it, the earlier finding is
closed by the visit that found the fault still present, and the new one carries
the fault's age from the day it was first found.
"""

from __future__ import annotations

from inspectkit.model import Finding, Grade, Inspection
from inspectkit.store import Store, StoreError


class RepeatError(StoreError):
    """A finding cannot repeat the one named; the message says why and what to do."""


def mark_repeat(store: Store, finding_id: str, earlier_id: str) -> Finding:
    """Say that a finding is the same fault as an earlier open one, and close that one.

    Both writes are one transaction: the link on the new finding, and the earlier
    finding resolved by the new one's visit (it is still present, see the new one).

    Raises:
        RepeatError: either finding is unknown, they are on other components or sites,
            the earlier one is sound, already closed or not from an earlier visit.
    """
    finding = store.get(Finding, finding_id)
    earlier = store.get(Finding, earlier_id)
    if finding is None or earlier is None:
        missing = finding_id if finding is None else earlier_id
        raise RepeatError(f"no finding with id {missing}; see `inspectkit findings` for the ids")
    visit = store.get(Inspection, finding.inspection_id)
    before = store.get(Inspection, earlier.inspection_id)
    if visit is None or before is None or visit.site_id != before.site_id:
        raise RepeatError("the earlier finding is on another site; name one of this site")
    if earlier.component_id != finding.component_id:
        raise RepeatError("the earlier finding is on another component; name its own")
    if earlier.grade is Grade.SOUND or finding.grade is Grade.SOUND:
        raise RepeatError("a sound grade is no fault to repeat; grade the fault first")
    if earlier.resolved_by is not None and earlier.resolved_by != finding.inspection_id:
        raise RepeatError("the earlier finding is closed already; it cannot be repeated")
    if (before.date, before.created_at) >= (visit.date, visit.created_at):
        raise RepeatError("name a finding of an earlier visit than this one")
    with store.transaction():
        store.save(earlier.model_copy(update={"resolved_by": finding.inspection_id}))
        return store.save(finding.model_copy(update={"same_as_id": earlier.id}))
