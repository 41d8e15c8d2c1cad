"""Cutting an ordered route into working days that start and end at the depot.

Each day is a run of consecutive sites on the route, driven from the depot and
back, no longer than the working day. A visit is never split: not by the day's end,
not by a site's access window (the crew waits for it to open, and the visit must be
over when it closes), not by the break, which is taken between drives and visits. A
site whose round trip alone does not fit a day gets a day of its own and is flagged.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass

from inspectkit.plan.route import Matrix

#: Entry points into a closed tour tried when cutting it into days (our default):
#: all of them for rounds up to this size, evenly spread ones above.
ROTATIONS = 64
#: Every weekday, as a bit mask (Monday is bit 0).
ALL_DAYS = 0b1111111


@dataclass(frozen=True)
class Roads:
    """The road between every two nodes: the distance used, and its driving time.

    Attributes:
        km: road km, estimated (great-circle × road factor) or known.
        minutes: driving minutes for each.
        known: node pairs whose figures come from the user's table of roads.
    """

    km: Matrix
    minutes: Matrix
    known: frozenset[tuple[int, int]] = frozenset()


@dataclass(frozen=True)
class Slot:
    """When a site can be visited: a window in minutes after the day's start, and weekdays.

    Attributes:
        opens, closes: the visit may start no earlier and must end no later.
        weekdays: bit mask of the weekdays it allows (Monday bit 0).
    """

    opens: float = -math.inf
    closes: float = math.inf
    weekdays: int = ALL_DAYS


ANY_TIME = Slot()


@dataclass(frozen=True)
class DayRules:
    """The working day: its length, its break, and each site's slot.

    Attributes:
        day_minutes: the longest working time, driving and waiting included, break not.
        break_minutes: the break's length (0: none).
        break_by: the latest start of the break, minutes after the day's start; a day
            that runs no longer than this has none.
        slot: when each node can be visited.
    """

    day_minutes: float
    break_minutes: float = 0.0
    break_by: float = math.inf
    slot: Callable[[int], Slot] = lambda node: ANY_TIME


@dataclass(frozen=True)
class Leg:
    """The drive to one site and the visit there, in minutes after the day's start.

    Attributes:
        node: the site's index in the distance matrix.
        km: road distance from the previous stop (or the depot), the one timed.
        drive: driving minutes for it.
        arrive: when the crew gets there.
        start, leave: the visit itself (later than `arrive` when waiting for the site
            to open, or when the break is taken on arrival).
        fits: the visit lies inside the site's access window.
    """

    node: int
    km: float
    drive: float
    arrive: float
    start: float
    leave: float
    fits: bool = True


@dataclass(frozen=True)
class DaySplit:
    """One working day's legs, its break and the drive home.

    Attributes:
        legs: the visits in order.
        home_km, home_drive: the last site back to the depot.
        break_at: when the break starts, minutes after the day's start (None: none):
            at a leg's `leave` it is taken before the next drive, at a leg's `arrive`
            before that visit starts.
        break_minutes: its length.
        too_long: the day holds one site whose round trip exceeds the day's length.
        outside_window: the day holds one site whose visit cannot fit its access window.
    """

    legs: tuple[Leg, ...]
    home_km: float
    home_drive: float
    break_at: float | None
    break_minutes: float
    too_long: bool
    outside_window: bool = False

    @property
    def minutes(self) -> float:
        """Length of the day, depot to depot, break included."""
        return self.legs[-1].leave + self.home_drive

    @property
    def km(self) -> float:
        return sum(leg.km for leg in self.legs) + self.home_km


class _Clock:
    """A day's running clock, one stop at a time; shared by the cut and the final timing."""

    def __init__(self, onsite: Callable[[int], float], roads: Roads, rules: DayRules) -> None:
        self.onsite, self.roads, self.rules = onsite, roads, rules

    def _due(self, t: float, brk: float | None, until: float) -> bool:
        """A break is owed before time runs from `t` to `until`."""
        rules = self.rules
        return brk is None and rules.break_minutes > 0 and t <= rules.break_by < until

    def step(
        self, t: float, brk: float | None, here: int, node: int
    ) -> tuple[float, float | None, Leg]:
        """Drive from `here` at `t` and visit `node`: the clock after, the break, the leg."""
        rules, slot = self.rules, self.rules.slot(node)
        drive = self.roads.minutes[here][node]
        if self._due(t, brk, t + drive):
            brk, t = t, t + rules.break_minutes
        arrive = t + drive
        start = max(arrive, slot.opens)
        if self._due(arrive, brk, start + self.onsite(node)):
            brk = arrive
            start = max(arrive + rules.break_minutes, slot.opens)
        leave = start + self.onsite(node)
        leg = Leg(
            node, self.roads.km[here][node], drive, arrive, start, leave, leave <= slot.closes
        )
        return leave, brk, leg

    def home(
        self, t: float, brk: float | None, here: int, depot: int
    ) -> tuple[float, float | None]:
        """Back at the depot: the clock then, and the break (taken before the drive if owed)."""
        drive = self.roads.minutes[here][depot]
        if self._due(t, brk, t + drive):
            brk, t = t, t + self.rules.break_minutes
        return t + drive, brk

    def working(self, end: float, brk: float | None) -> float:
        """Working time of a day ending at `end`: its length less the break."""
        return end - (self.rules.break_minutes if brk is not None else 0.0)


def split_days(
    route: Sequence[int],
    onsite: Callable[[int], float],
    roads: Roads,
    rules: DayRules,
    depot: int = 0,
) -> list[DaySplit]:
    """Working days for a route, keeping its order: the fewest days, then the least time.

    Every way of cutting the route into runs that fit a day is weighed (dynamic
    programming over the cut points, as in route-first cluster-second planning).
    A run fits when its working time is within the day, every visit lies inside its
    site's access window, and its sites share a weekday they can all be visited on.
    A run only grows longer as it takes the next site, and a site that does not fit
    stays in every longer run, so each run is extended only until it no longer fits.

    Args:
        route: the sites' nodes in visiting order (the depot left out).
        onsite: minutes on site for a node.
        roads: road km and driving minutes between nodes.
        rules: the day's length, break and the sites' slots.
        depot: the depot's node.
    """
    clock = _Clock(onsite, roads, rules)
    n = len(route)
    # best[j]: (days, minutes) to cover route[:j]; cut[j]: where its last day starts.
    best: list[tuple[int, float] | None] = [(0, 0.0)] + [None] * n
    cut = [0] * (n + 1)
    for i in range(n):
        done = best[i]
        if done is None:
            continue
        t, brk, here, mask = 0.0, None, depot, ALL_DAYS
        for j in range(i, n):
            t, brk, leg = clock.step(t, brk, here, route[j])
            here, mask = route[j], mask & rules.slot(route[j]).weekdays
            end, end_brk = clock.home(t, brk, here, depot)
            fits = leg.fits and mask != 0 and clock.working(end, end_brk) <= rules.day_minutes
            if not fits and j > i:
                break
            option = (done[0] + 1, done[1] + end)
            known = best[j + 1]
            if known is None or option < known:
                best[j + 1], cut[j + 1] = option, i
            if not fits:
                break
    bounds = []
    j = n
    while j > 0:
        bounds.append((cut[j], j))
        j = cut[j]
    return [time_day(route[i:j], onsite, roads, rules, depot) for i, j in reversed(bounds)]


def time_day(
    nodes: Sequence[int],
    onsite: Callable[[int], float],
    roads: Roads,
    rules: DayRules,
    depot: int = 0,
) -> DaySplit:
    """One day's legs with the running clock, from the depot and back, in the order given.

    Used for the cut and again when a visit is moved to another day by hand.
    """
    clock = _Clock(onsite, roads, rules)
    legs: list[Leg] = []
    t, brk, here = 0.0, None, depot
    for node in nodes:
        t, brk, leg = clock.step(t, brk, here, node)
        legs.append(leg)
        here = node
    end, brk = clock.home(t, brk, here, depot)
    over = clock.working(end, brk) > rules.day_minutes
    return DaySplit(
        tuple(legs),
        roads.km[here][depot],
        roads.minutes[here][depot],
        brk,
        rules.break_minutes if brk is not None else 0.0,
        over and len(legs) == 1,
        not all(leg.fits for leg in legs),
    )


def split_cycle(
    cycle: Sequence[int],
    onsite: Callable[[int], float],
    roads: Roads,
    rules: DayRules,
    depot: int = 0,
    starts: int = ROTATIONS,
) -> list[DaySplit]:
    """Working days for a closed tour, cut where it gives the fewest days, then the least time.

    Every day starts from the depot, so the tour may be entered at any site: up to
    `starts` entry points, spread evenly round it, are each split with `split_days`
    and the best is kept.
    """
    n = len(cycle)
    if n == 0:
        return []
    best: list[DaySplit] | None = None
    best_key: tuple[int, float] | None = None
    for k in sorted({i * n // min(n, starts) for i in range(min(n, starts))}):
        days = split_days([*cycle[k:], *cycle[:k]], onsite, roads, rules, depot)
        key = (len(days), sum(d.minutes for d in days))
        if best_key is None or key < best_key:
            best, best_key = days, key
    assert best is not None
    return best
