"""When each site's next inspections fall due, and why.

Planning, reports and the check command all read `SiteSchedule`: its `due_items`
(one per inspection the site owes: kind, due date, reason, status), its `status`
(the worst of them) and `overdue_days`. These names are kept stable.

Rules applied (figures come from the site's profile):

- intervals by protection level; a critical site takes the critical complete
  interval; an explosive-risk site takes the explosive intervals where shorter;
- a complete or initial inspection also counts as a visual one; a post-strike
  visit settles a strike but does not restart the routine intervals; only
  signed or finished visits dated up to `today` count;
- a strike counter that rose since the reading before calls for a post-strike
  (or complete) inspection within `post_strike_days` of the visit that found it;
  a complete or post-strike visit on or after that day settles it;
- `Site.altered_on` later than the last complete inspection calls for one within
  `alteration_days` of the alteration;
- a site with no visit on record is due today.

Months are added with dateutil's relativedelta, so 31 Jan + 1 month is 28/29 Feb
and 29 Feb + 12 months is 28 Feb.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date, timedelta
from enum import StrEnum

from dateutil.relativedelta import relativedelta

from inspectkit.engine.history import (
    COMPLETE_KINDS,
    STRIKE_SETTLING_KINDS,
    VISUAL_KINDS,
    History,
    as_of,
    counts_as_done,
    series,
)
from inspectkit.model import InspectionKind, Quantity, SiteRecords
from inspectkit.profiles import Profile


class DueStatus(StrEnum):
    """How close an inspection is to its due date."""

    OK = "ok"
    DUE_SOON = "due_soon"
    DUE = "due"
    OVERDUE = "overdue"

    @property
    def rank(self) -> int:
        """Bigger is more urgent."""
        return _STATUS_RANK[self]


_STATUS_RANK = {status: rank for rank, status in enumerate(DueStatus)}


class DueKind(StrEnum):
    """Which inspection is owed."""

    VISUAL = "visual"
    COMPLETE = "complete"
    POST_STRIKE = "post_strike"
    ALTERATION = "alteration"


@dataclass(frozen=True)
class DueItem:
    """One inspection a site owes.

    Attributes:
        kind: which inspection.
        due: the last day it may be done on.
        reason: why, in words, e.g. "last complete inspection 2024-03-01 + 24 months".
        status: ok, due soon, due (today) or overdue.
        overdue_days: days past `due` (0 unless overdue).
        component_id: the strike counter, for post-strike items.
    """

    kind: DueKind
    due: date
    reason: str
    status: DueStatus
    overdue_days: int = 0
    component_id: str | None = None


@dataclass(frozen=True)
class CounterRise:
    """A strike counter that showed more than at the reading before, or less."""

    component_id: str
    found_on: date
    inspection_id: str
    before: int
    after: int

    @property
    def rose(self) -> bool:
        return self.after > self.before


@dataclass(frozen=True)
class SiteSchedule:
    """A site's inspection schedule as of `today`.

    Attributes:
        site_id, site_name: the site.
        today: the day it was worked out for.
        visual_months, complete_months: intervals in force.
        interval_basis: why those intervals, e.g. "level II, critical, explosive risk".
        last_visual, last_complete, last_post_strike: latest counted visits, if any.
        next_visual, next_complete: due dates of the routine inspections.
        due_items: every inspection owed, most urgent first.
        status: the most urgent item's status.
        overdue_days: the largest number of days overdue (0 if none).
        counter_changes: every rise or fall of a strike counter, oldest first.
    """

    site_id: str
    site_name: str
    today: date
    visual_months: int
    complete_months: int
    interval_basis: str
    last_visual: date | None
    last_complete: date | None
    last_post_strike: date | None
    next_visual: date
    next_complete: date
    due_items: tuple[DueItem, ...]
    status: DueStatus
    overdue_days: int
    counter_changes: tuple[CounterRise, ...] = ()

    @property
    def next_due(self) -> DueItem:
        """The most urgent item (there is always a visual and a complete one)."""
        return self.due_items[0]


def intervals_for(records: SiteRecords, profile: Profile) -> tuple[int, int, str]:
    """Visual and complete intervals in months for the site, with the reason in words."""
    site = records.site
    level = profile.intervals_for(site.protection_level)
    visual, complete = level.visual_months, level.complete_months
    basis = [profile.interval_basis(site.protection_level)]
    if site.critical:
        complete = min(complete, level.critical_complete_months)
        basis.append("critical")
    if site.explosive_risk:
        visual = min(visual, profile.explosive.visual_months)
        complete = min(complete, profile.explosive.complete_months)
        basis.append("explosive risk")
    return visual, complete, ", ".join(basis)


def counter_changes(records: SiteRecords, history: History | None = None) -> list[CounterRise]:
    """Every change of a strike counter between one reading and the next, oldest first.

    Args:
        records: the site's records.
        history: `records.readings` already grouped by `history.series`, if at hand.
    """
    changes = []
    grouped = series(records.readings) if history is None else history
    for (component_id, quantity), readings in grouped.items():
        if quantity is not Quantity.STRIKE_COUNT:
            continue
        counted = [r for r in readings if r.value is not None]
        for before, after in zip(counted, counted[1:], strict=False):
            if after.value != before.value:
                changes.append(
                    CounterRise(
                        component_id,
                        after.taken_at.date(),
                        after.inspection_id,
                        int(before.value),  # type: ignore[arg-type]
                        int(after.value),  # type: ignore[arg-type]
                    )
                )
    return sorted(changes, key=lambda c: c.found_on)


def status_of(due: date, today: date, due_soon_days: int) -> tuple[DueStatus, int]:
    """Status of an item due on `due`, and the days it is overdue."""
    if due < today:
        return DueStatus.OVERDUE, (today - due).days
    if due == today:
        return DueStatus.DUE, 0
    if (due - today).days <= due_soon_days:
        return DueStatus.DUE_SOON, 0
    return DueStatus.OK, 0


def schedule_site(
    records: SiteRecords,
    profile: Profile,
    today: date,
    due_soon_days: int | None = None,
    history: History | None = None,
) -> SiteSchedule:
    """Work out which inspections a site owes and by when.

    Args:
        records: everything on record for the site; later visits than `today` are ignored.
        profile: the rule set the site is held to.
        today: the day to judge by.
        due_soon_days: window for "due soon"; the profile's `due_soon_days` by default.
        history: the readings grouped by `history.series`, for records already cut to
            `today` with `as_of` (check_site passes it so the grouping is done once).
    """
    records = as_of(records, today)
    changes = counter_changes(records, history)
    window = profile.triggers.due_soon_days if due_soon_days is None else due_soon_days
    visual_months, complete_months, basis = intervals_for(records, profile)
    last = _last_by_kind(records)
    last_visual = _latest(last, VISUAL_KINDS)
    last_complete = _latest(last, COMPLETE_KINDS)
    last_post_strike = last.get(InspectionKind.POST_STRIKE)

    judge = _Judge(today, window)
    items = [
        _routine(judge, DueKind.VISUAL, last_visual, visual_months),
        _routine(judge, DueKind.COMPLETE, last_complete, complete_months),
    ]
    next_visual, next_complete = items[0].due, items[1].due
    items += _strike_items(judge, records, profile, changes, _latest(last, STRIKE_SETTLING_KINDS))
    altered = records.site.altered_on
    if (
        altered is not None
        and altered <= today
        and (last_complete is None or altered > last_complete)
    ):
        days = profile.triggers.alteration_days
        items.append(
            judge.item(
                DueKind.ALTERATION,
                altered + timedelta(days=days),
                f"structure altered on {altered.isoformat()} + {days} days",
            )
        )
    items.sort(key=lambda i: (-i.status.rank, i.due, i.kind.value))
    return SiteSchedule(
        site_id=records.site.id,
        site_name=records.site.name,
        today=today,
        visual_months=visual_months,
        complete_months=complete_months,
        interval_basis=basis,
        last_visual=last_visual,
        last_complete=last_complete,
        last_post_strike=last_post_strike,
        next_visual=next_visual,
        next_complete=next_complete,
        due_items=tuple(items),
        status=items[0].status,
        overdue_days=max(i.overdue_days for i in items),
        counter_changes=tuple(changes),
    )


@dataclass(frozen=True)
class _Judge:
    """Turns a due date into an item with its status, for one `today` and window."""

    today: date
    window: int

    def item(
        self, kind: DueKind, due: date, reason: str, component_id: str | None = None
    ) -> DueItem:
        status, late = status_of(due, self.today, self.window)
        return DueItem(kind, due, reason, status, late, component_id)


def _routine(judge: _Judge, kind: DueKind, last: date | None, months: int) -> DueItem:
    """The routine visual or complete inspection: last one + interval, or now if none."""
    if last is None:
        return judge.item(kind, judge.today, f"no {kind.value} inspection on record: due now")
    return judge.item(
        kind,
        last + relativedelta(months=months),
        f"last {kind.value} inspection {last.isoformat()} + {months} months",
    )


def _last_by_kind(records: SiteRecords) -> dict[InspectionKind, date]:
    """The date of the latest counted visit of each kind, from one pass over the visits."""
    last: dict[InspectionKind, date] = {}
    for inspection in records.inspections:
        if counts_as_done(inspection):
            day = last.get(inspection.kind)
            if day is None or inspection.date > day:
                last[inspection.kind] = inspection.date
    return last


def _latest(last: dict[InspectionKind, date], kinds: frozenset[InspectionKind]) -> date | None:
    return max((last[kind] for kind in kinds if kind in last), default=None)


def _strike_items(
    judge: _Judge,
    records: SiteRecords,
    profile: Profile,
    changes: list[CounterRise],
    last_settled: date | None,
) -> list[DueItem]:
    """A post-strike item for each counter rise not yet followed by a settling visit.

    Args:
        last_settled: the latest counted visit that settles a strike (see `STRIKE_SETTLING_KINDS`).
    """
    owed = [c for c in changes if c.rose and (last_settled is None or last_settled < c.found_on)]
    if not owed:
        return []
    tags = {c.id: c.tag for c in records.components}
    days = profile.triggers.post_strike_days
    return [
        judge.item(
            DueKind.POST_STRIKE,
            change.found_on + timedelta(days=days),
            f"{tags.get(change.component_id, 'strike counter')} rose from {change.before} to "
            f"{change.after} on {change.found_on.isoformat()} + {days} days",
            change.component_id,
        )
        for change in owed
    ]
