"""Putting cut days on the calendar, and moving a visit from one day to another by hand.

A day goes on the first date, from the window's first day and the day's earliest
allowed date (a remedy's due date), on which the office works and every site in it
can be visited; days are placed most urgent first, one crew, one day each.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from datetime import date, timedelta

from inspectkit.plan.access import Access
from inspectkit.plan.calendar import WorkCalendar
from inspectkit.plan.days import DayRules, DaySplit, Roads, time_day

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
    span = window_days + HORIZON_DAYS
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
