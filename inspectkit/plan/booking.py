"""The sites of a round put on days: cut, dated on bookable days, and moved by hand.

A day goes on the first date, from the window's first day and the day's earliest
allowed date (a remedy's due date), on which the office works and every site in it
can be visited; days are placed most urgent first, one crew, one day each.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from datetime import date, timedelta

from inspectkit.plan.access import Access
from inspectkit.plan.calendar import WorkCalendar
from inspectkit.plan.days import (
    ANY_TIME,
    DayRules,
    DaySplit,
    Roads,
    Slot,
    misfits,
    split_cycle,
    split_days,
    time_day,
)
from inspectkit.plan.geo import Point
from inspectkit.plan.roads import build_roads
from inspectkit.plan.round import Candidate, priority_key
from inspectkit.plan.route import plan_route
from inspectkit.plan.settings import PlanSettings

#: How far past the window a day is looked for before it is called unbookable (our default).
HORIZON_DAYS = 366


def book_dates(
    splits: Sequence[DaySplit],
    first: date,
    earliest: Callable[[DaySplit], date | None],
    accesses: Callable[[DaySplit], list[Access]],
    calendar: WorkCalendar,
    taken: set[date] | None = None,
) -> list[date | None]:
    """A date for each day, in the order given (most urgent first); None where none is found.

    Args:
        splits: the cut days, most urgent first.
        first: the window's first day.
        earliest: a day's earliest allowed date, if any.
        accesses: the access rules of a day's sites.
        calendar: working days and holidays.
        taken: dates already used (filled in as days are booked).
    """
    used = set() if taken is None else taken
    out: list[date | None] = []
    for split in splits:
        start = max(first, earliest(split) or first)
        rules = accesses(split)
        found = None
        day = start
        last = first + timedelta(days=HORIZON_DAYS)
        while day <= last:
            if day not in used and calendar.bookable(day, rules):
                found = day
                break
            day += timedelta(days=1)
        if found is not None:
            used.add(found)
        out.append(found)
    return out


def day_masks(
    accesses: Sequence[Access],
    earliest: Sequence[date | None],
    window_first: date,
    window_days: int,
    calendar: WorkCalendar,
) -> list[int]:
    """For each site, a bit mask of the days it can be booked on (bit k: window_first + k).

    The days inside the window are what count; a site with none there gets its days
    up to the horizon, so it is put with others that must wait as well, never with
    sites that could be visited sooner.
    """
    span = HORIZON_DAYS + 1  # the days `book_dates` looks at
    days = [window_first + timedelta(days=k) for k in range(span)]
    office = sum(1 << k for k, d in enumerate(days) if calendar.closed_why(d) is None)
    inside = (1 << window_days) - 1
    masks = []
    for access, first in zip(accesses, earliest, strict=True):
        mask = office
        if access.weekdays is not None or access.not_spans or access.not_periods:
            mask = sum(
                1 << k
                for k, d in enumerate(days)
                if office >> k & 1 and calendar.site_closed_why(d, access) is None
            )
        if first is not None and first > window_first:
            mask &= ~((1 << (first - window_first).days) - 1)
        masks.append(mask & inside or mask)
    return masks


def best_insertion(
    nodes: Sequence[int],
    node: int,
    onsite: Callable[[int], float],
    roads: Roads,
    rules: DayRules,
) -> DaySplit:
    """The day with `node` put where every visit keeps its access window, then the day is shortest.

    Every place in the day's order is tried (a day holds a handful of visits).
    """
    options = [
        time_day([*nodes[:k], node, *nodes[k:]], onsite, roads, rules)
        for k in range(len(nodes) + 1)
    ]
    return min(options, key=lambda d: (d.outside_window, d.minutes))


def moved_days(
    days: dict[date, DaySplit],
    node: int,
    target: date,
    onsite: Callable[[int], float],
    roads: Roads,
    rules: DayRules,
) -> dict[date, DaySplit]:
    """The days after moving the visit at `node` to `target`: both days timed again.

    The day it leaves keeps its order (and is gone if it was its only visit); on
    the day it joins it goes where every visit keeps its window and the day is
    shortest.
    """
    out = dict(days)
    for day, split in days.items():
        rest = [leg.node for leg in split.legs if leg.node != node]
        if len(rest) == len(split.legs):
            continue
        if rest:
            out[day] = time_day(rest, onsite, roads, rules)
        else:
            del out[day]
    joined = out.get(target)
    nodes = [] if joined is None else [leg.node for leg in joined.legs]
    out[target] = best_insertion(nodes, node, onsite, roads, rules)
    return out


def _slot(access: Access, days: int, settings: PlanSettings) -> Slot:
    """The access rule as a slot in minutes after the day's start, on the given days."""
    start = settings.day_start.hour * 60 + settings.day_start.minute
    return Slot(
        access.opens_minute - start if access.opens else -math.inf,
        access.closes_minute - start if access.closes else math.inf,
        days,
    )


class RoutedSites:
    """The sites that go on days, as nodes 1… of one road matrix (the depot is 0)."""

    def __init__(
        self,
        sites: list[Candidate],
        accesses: list[Access],
        first: date,
        days: int,
        depot: Point,
        calendar: WorkCalendar,
    ) -> None:
        """Args:
        sites: the candidates to put on days, with `accesses` their access rules.
        first, days: the window; what can be booked is judged from `first`.
        depot: where each day starts and ends.
        calendar: working days and holidays.
        """
        settings = calendar.settings
        self.sites, self.accesses, self.calendar, self.first = sites, accesses, calendar, first
        points = [depot] + [c.point for c in sites if c.point is not None]
        self.roads, self.notes = build_roads(points, [c.site.name for c in sites], settings)
        masks = day_masks(accesses, [c.earliest for c in sites], first, days, calendar)
        slots = [ANY_TIME] + [_slot(a, m, settings) for a, m in zip(accesses, masks, strict=True)]
        self.rules = DayRules(
            settings.hours_per_day * 60,
            settings.break_minutes,
            settings.break_by_hours * 60,
            slots.__getitem__,
        )

    def onsite(self, node: int) -> float:
        return self.sites[node - 1].onsite_minutes

    def cut(self) -> list[DaySplit]:
        """The days, most urgent first: the tour cut into days, and the sites alone.

        A site too long for a day with nothing else gets a day of its own; routing it
        with the others would only cut the days either side of it short.
        """
        roads, rules, onsite = self.roads, self.rules, self.onsite
        n = len(self.sites) + 1
        alone = misfits(range(1, n), onsite, roads, rules)
        routed = [0] + [k for k in range(1, n) if k not in alone]
        tour = plan_route([[roads.km[i][j] for j in routed] for i in routed])
        splits = split_cycle([routed[i] for i in tour[1:]], onsite, roads, rules)
        splits += [d for k in sorted(alone) for d in split_days([k], onsite, roads, rules)]
        splits.sort(key=lambda s: min(priority_key(self.sites[g.node - 1]) for g in s.legs))
        return splits

    def move(
        self,
        booked: dict[date, DaySplit],
        site_id: str,
        target: date,
        touched: set[date],
        name: str = "",
    ) -> tuple[dict[date, DaySplit], set[date]]:
        """The days after moving a site's visit to `target`, and the days changed so far.

        A site on no day (dropped, unplaced, unbookable) is left alone; a target day
        the site cannot be visited on, before the round or before a remedy it
        re-checks is due, is refused with a note.
        """
        k = next((i for i, c in enumerate(self.sites, start=1) if c.site.id == site_id), None)
        held = {d for d, s in booked.items() if any(g.node == k for g in s.legs)}
        if k is None or not held:
            self.notes.append(f"{name or site_id} is on no day of this round; nothing moved")
            return booked, touched
        earliest = self.sites[k - 1].earliest
        why = self.calendar.site_closed_why(target, self.accesses[k - 1])
        if target < self.first:
            why = f"before the round's first day, {self.first.isoformat()}"
        elif earliest is not None and target < earliest:
            why = f"before the remedy it re-checks is due, {earliest.isoformat()}"
        if why is not None:
            name = self.sites[k - 1].site.name
            self.notes.append(f"{name} not moved to {target.isoformat()}: {why}")
            return booked, touched
        moved = moved_days(booked, k, target, self.onsite, self.roads, self.rules)
        return moved, touched | held | {target}
