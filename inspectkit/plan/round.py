"""What goes in a round: the sites owing a visit inside the window, and which come first.

A site owes a visit when its visual or complete inspection falls due on or before
the window's last day (overdue ones included), when a recorded strike or an
alteration calls for one, when an open defect's remedial action was due by then and
has to be re-checked, or when its last visit left components not inspected. Each
site gets one visit doing every inspection it owes.

A re-check is no use before the remedy is due, so it is booked on or after that day;
when the site's next inspection falls due before then, that visit comes first and
the re-check waits for a later round (the plan says so).
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass
from datetime import date, timedelta

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
#: What a reason is called when it is a return to components not inspected last time.
RETURN = "return"
#: Days after a visit that left components not inspected by which the return is
#: due (our default).
RETURN_WITHIN_DAYS = 90


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
        earliest: the first day the visit may be booked on (a remedy's due date).
        waiting: why re-checks were held back for a later round.
    """

    site: Site
    kinds: tuple[InspectionKind, ...]
    reasons: tuple[Reason, ...]
    rechecks: tuple[str, ...]
    onsite_minutes: float
    pinned: bool = False
    earliest: date | None = None
    waiting: tuple[str, ...] = ()

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
        """E.g. "complete", "visual + post-strike", "re-check + return visit"."""
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


def held_back(
    schedule: SiteSchedule, defects: Iterable[Finding], last_day: date
) -> tuple[list[Finding], list[str]]:
    """The defects to re-check on this visit, and why the others wait.

    A re-check goes on or after its remedy's due date; when the site's next
    inspection falls due before that day, that inspection comes first and the
    re-check is left for the visit after it.
    """
    due = [i.due for i in schedule.due_items if i.due <= last_day]
    deadline = min(due) if due else None
    kept, waiting = [], []
    for f in defects:
        assert f.due_by is not None
        if deadline is not None and f.due_by > deadline:
            waiting.append(
                f"re-check of {_action(f)!r} waits: its remedy is due "
                f"{f.due_by.isoformat()}, after the inspection due {deadline.isoformat()}"
            )
        else:
            kept.append(f)
    return kept, waiting


def _action(f: Finding) -> str:
    return f.remedial_action.strip() or f.text.strip()


def return_visits(records: SiteRecords, first_day: date) -> list[Reason]:
    """The returns owed to what visits could not inspect.

    One for each component marked not inspected that no visit has graded or measured
    since, owed now. A latest visit with no such marks but a note of what it could
    not inspect owes one return for the note, due `RETURN_WITHIN_DAYS` after it (our
    default); a later visit looked at the site again.
    """
    known = as_of(records, first_day)
    tags = {c.id: c.tag for c in records.components}
    marked = [
        Reason(
            RETURN,
            first_day,
            f"return for {tags[mark.component_id]}, not inspected on {day.isoformat()} "
            f"({mark.why})",
            0,
        )
        for mark, day in open_not_inspected(known, first_day)
    ]
    done = [i for i in known.inspections if counts_as_done(i)]
    if marked or not done:
        return marked
    latest = max(done, key=lambda i: (i.date, i.created_at))
    what = latest.not_inspected.strip()
    if not what or any(m.inspection_id == latest.id for m in known.not_inspected):
        return []
    due = latest.date + timedelta(days=RETURN_WITHIN_DAYS)
    return [
        Reason(
            RETURN,
            due,
            f"return: not inspected on {latest.date.isoformat()}: {what}",
            max(0, (first_day - due).days),
        )
    ]


def reasons_for(
    schedule: SiteSchedule,
    defects: Iterable[Finding],
    first_day: date,
    last_day: date,
    returns: Iterable[Reason] = (),
) -> tuple[Reason, ...]:
    """Every item due by `last_day`, every defect to re-check and every return, most urgent first.

    A return is owed as soon as the visit that missed the components is over, so
    it is in every round until it is made.
    """
    reasons = [
        Reason(i.kind.value, i.due, i.reason, max(0, (first_day - i.due).days))
        for i in schedule.due_items
        if i.due <= last_day
    ]
    for f in defects:
        assert f.due_by is not None
        reasons.append(
            Reason(
                RECHECK,
                f.due_by,
                f"re-check on or after {f.due_by.isoformat()} (remedy due): {_action(f)}",
                max(0, (first_day - f.due_by).days),
            )
        )
    reasons += returns
    return tuple(sorted(reasons, key=lambda r: (-r.overdue_days, r.due, r.what)))


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
