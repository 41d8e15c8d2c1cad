"""What goes in a round: the sites owing a visit inside the window, and which come first.

A site owes a visit when its visual or complete inspection falls due on or before
the window's last day (overdue ones included), when a recorded strike or an
alteration calls for one, or when an open defect's remedial action was due by then
and has to be re-checked. Each site gets one visit doing every inspection it owes.
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass
from datetime import date

from inspectkit.engine.history import as_of, counts_as_done, open_not_inspected
from inspectkit.engine.schedule import DueKind, SiteSchedule
from inspectkit.model import Finding, Grade, InspectionKind, Site, SiteRecords
from inspectkit.plan.geo import Point

#: The inspection each owed item is settled by; an alteration calls for a complete one.
_KIND_FOR_DUE = {
    DueKind.VISUAL: InspectionKind.VISUAL,
    DueKind.COMPLETE: InspectionKind.COMPLETE,
    DueKind.ALTERATION: InspectionKind.COMPLETE,
    DueKind.POST_STRIKE: InspectionKind.POST_STRIKE,
}
#: What a reason is called when it is a defect to re-check rather than an inspection.
RECHECK = "recheck"
#: What a reason is called when it is a component a visit could not inspect.
RETURN = "return"


@dataclass(frozen=True)
class Reason:
    """One thing that brings the site into the round.

    Attributes:
        what: "visual", "complete", "post_strike", "alteration" or "recheck".
        due: the last day it may be done on.
        text: why, in words.
        overdue_days: days past `due` on the window's first day (0 if not overdue).
    """

    what: str
    due: date
    text: str
    overdue_days: int


@dataclass(frozen=True)
class Candidate:
    """A site that owes a visit in the window, with what the visit does.

    Attributes:
        site: the site.
        kinds: inspections done on the visit; empty when only defects are re-checked.
        reasons: everything owed, most urgent first.
        rechecks: ids of the open defects looked at.
        onsite_minutes: set-up plus the inspections plus the re-checks.
        pinned: the office put it first, whatever its priority.
    """

    site: Site
    kinds: tuple[InspectionKind, ...]
    reasons: tuple[Reason, ...]
    rechecks: tuple[str, ...]
    onsite_minutes: float
    pinned: bool = False

    @property
    def due(self) -> date:
        """The earliest due date among the reasons."""
        return min(r.due for r in self.reasons)

    @property
    def overdue_days(self) -> int:
        return max(r.overdue_days for r in self.reasons)

    @property
    def point(self) -> Point | None:
        if self.site.latitude is None or self.site.longitude is None:
            return None
        return Point(self.site.latitude, self.site.longitude)

    @property
    def kind_label(self) -> str:
        """E.g. "complete", "visual + post-strike", "re-check"."""
        words = [k.value.replace("_", "-") for k in self.kinds]
        if self.rechecks:
            words.append("re-check")
        if any(r.what == RETURN for r in self.reasons):
            words.append("return visit")
        return " + ".join(words)

    @property
    def reason_text(self) -> str:
        return "; ".join(r.text for r in self.reasons)


def visit_kinds(schedule: SiteSchedule, last_day: date) -> tuple[InspectionKind, ...]:
    """The inspections to do on one visit for every item due by `last_day`.

    A complete inspection includes the visual one and settles a strike, so it
    absorbs both; a post-strike visit looks at the struck path only, so a routine
    visual inspection owed as well is still done.
    """
    kinds = {_KIND_FOR_DUE[i.kind] for i in schedule.due_items if i.due <= last_day}
    if InspectionKind.COMPLETE in kinds:
        return (InspectionKind.COMPLETE,)
    return tuple(k for k in (InspectionKind.VISUAL, InspectionKind.POST_STRIKE) if k in kinds)


def defects_to_recheck(records: SiteRecords, first_day: date, last_day: date) -> list[Finding]:
    """Open defects (and items needing attention) whose remedial action is due by `last_day`.

    Only findings of visits that count (signed or finished) by `first_day` are taken,
    as the schedule does.
    """
    known = as_of(records, first_day)
    done = {i.id for i in known.inspections if counts_as_done(i)}
    return [
        f
        for f in known.findings
        if f.inspection_id in done
        and f.grade is not Grade.SOUND
        and f.resolved_by is None
        and f.due_by is not None
        and f.due_by <= last_day
    ]


def reasons_for(
    schedule: SiteSchedule, defects: Iterable[Finding], first_day: date, last_day: date
) -> tuple[Reason, ...]:
    """Every item due by `last_day` and every defect to re-check, most urgent first."""
    reasons = [
        Reason(i.kind.value, i.due, i.reason, max(0, (first_day - i.due).days))
        for i in schedule.due_items
        if i.due <= last_day
    ]
    for f in defects:
        assert f.due_by is not None
        action = f.remedial_action.strip() or f.text.strip()
        reasons.append(
            Reason(
                RECHECK,
                f.due_by,
                f"re-check remedial action due {f.due_by.isoformat()}: {action}",
                max(0, (first_day - f.due_by).days),
            )
        )
    return tuple(sorted(reasons, key=lambda r: (-r.overdue_days, r.due, r.what)))


def return_visits(records: SiteRecords, first_day: date) -> list[Reason]:
    """A return for each component a visit could not inspect and none has since, owed now."""
    tags = {c.id: c.tag for c in records.components}
    return [
        Reason(
            RETURN,
            first_day,
            f"return for {tags[mark.component_id]}, not inspected on {day.isoformat()} "
            f"({mark.why})",
            0,
        )
        for mark, day in open_not_inspected(as_of(records, first_day), first_day)
    ]


def priority_key(candidate: Candidate) -> tuple[object, ...]:
    """Sort key, most urgent first.

    Pinned sites first; then overdue ones, most days overdue first; then sites with
    a risk of explosion, then critical ones (the graver the consequence of a failed
    system, the sooner; our default); then the earliest due date; then the name.
    """
    site = candidate.site
    tier = 0 if site.explosive_risk else 1 if site.critical else 2
    overdue = candidate.overdue_days
    return (not candidate.pinned, overdue == 0, -overdue, tier, candidate.due, site.name.lower())


def by_priority(candidates: Iterable[Candidate]) -> list[Candidate]:
    return sorted(candidates, key=priority_key)
