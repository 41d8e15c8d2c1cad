"""Cutting an ordered route into working days that start and end at the depot.

Each day is a run of consecutive sites on the route, driven from the depot and
back, no longer than the working day. A visit is never split: not by the day's end,
not by a site's access window (the crew waits for it to open, and the visit must be
over when it closes), not by the break, which is taken between drives and visits. A
site whose round trip alone does not fit a day gets a day of its own and is flagged.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Iterable, Sequence
from dataclasses import dataclass

from inspectkit.plan.route import Matrix

#: Entry points into a closed tour tried when cutting it into days (our default):
#: all of them for rounds up to this size, evenly spread ones above.
ROTATIONS = 64
#: Every day, as a bit mask of days (any number of bits).
ALL_DAYS = -1


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
    """When a site can be visited: a window in minutes after the day's start, and which days.

    Attributes:
        opens, closes: the visit may start no earlier and must end no later.
        days: bit mask of the days it can be visited on (bit k: the k-th day of the
            planning calendar); sites share a day only when their masks meet.
    """

    opens: float = -math.inf
    closes: float = math.inf
    days: int = ALL_DAYS


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
        """Length of the day, depot to depot, break included (also one taken before
        the drive home)."""
        end = self.legs[-1].leave + self.home_drive
        if self.break_at is not None and self.break_at >= self.legs[-1].leave:
            end += self.break_minutes
        return end

    @property
    def km(self) -> float:
        return sum(leg.km for leg in self.legs) + self.home_km


class _Clock:
    """A day's running clock, one stop at a time; shared by the cut and the final timing.

    Each node's minutes on site and slot are looked up once, as the cut steps
    through them many times.
    """

    def __init__(self, onsite: Callable[[int], float], roads: Roads, rules: DayRules) -> None:
        nodes = range(len(roads.minutes))
        self.minutes, self.rules = roads.minutes, rules
        self.onsite = [onsite(k) if k else 0.0 for k in nodes]
        slots = [rules.slot(k) for k in nodes]
        self.opens = [s.opens for s in slots]
        self.closes = [s.closes for s in slots]
        self.days = [s.days for s in slots]
        self.pause = rules.break_minutes if rules.break_minutes > 0 else 0.0
        self.by = rules.break_by

    def step(
        self, t: float, brk: float | None, here: int, node: int
    ) -> tuple[float, float, float, float | None]:
        """Drive from `here` at `t` and visit `node`: arrival, visit start and end, the break.

        The break is taken at the last stop from which going on would pass its
        latest start: before the drive, or on arrival before the visit.
        """
        drive = self.minutes[here][node]
        owed = brk is None and self.pause > 0
        if owed and t <= self.by < t + drive:
            brk, t, owed = t, t + self.pause, False
        arrive = t + drive
        start = arrive if arrive >= self.opens[node] else self.opens[node]
        if owed and arrive <= self.by < start + self.onsite[node]:
            brk = arrive
            start = max(arrive + self.pause, self.opens[node])
        return arrive, start, start + self.onsite[node], brk

    def home(
        self, t: float, brk: float | None, here: int, depot: int
    ) -> tuple[float, float | None]:
        """Back at the depot: the clock then, and the break (taken before the drive if owed)."""
        drive = self.minutes[here][depot]
        if brk is None and self.pause > 0 and t <= self.by < t + drive:
            brk, t = t, t + self.pause
        return t + drive, brk

    def working(self, end: float, brk: float | None) -> float:
        """Working time of a day ending at `end`: its length less the break."""
        return end - (self.pause if brk is not None else 0.0)


def _cut(
    route: Sequence[int], clock: _Clock, day_minutes: float, depot: int
) -> tuple[list[tuple[int, int]], tuple[int, float]]:
    """The cut points of the best split (see `split_days`), and its (days, minutes)."""
    n = len(route)
    # best[j]: (days, minutes) to cover route[:j]; cut[j]: where its last day starts.
    best: list[tuple[int, float] | None] = [(0, 0.0)] + [None] * n
    cut = [0] * (n + 1)
    # Looked up once: the loop below runs some n × (sites per day) times per entry point.
    step, home, working, days, closes = (
        clock.step,
        clock.home,
        clock.working,
        clock.days,
        clock.closes,
    )
    for i in range(n):
        done = best[i]
        if done is None:
            continue
        t, brk, here, mask = 0.0, None, depot, ALL_DAYS
        for j in range(i, n):
            node = route[j]
            _, _, t, brk = step(t, brk, here, node)
            here, mask = node, mask & days[node]
            end, end_brk = home(t, brk, here, depot)
            fits = t <= closes[node] and mask != 0 and working(end, end_brk) <= day_minutes
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
    total = best[n]
    assert total is not None
    return bounds[::-1], total


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
    site's access window, and its sites share a day they can all be visited on.
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
    bounds, _ = _cut(route, clock, rules.day_minutes, depot)
    return [_timed(route[i:j], clock, roads, depot) for i, j in bounds]


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
    return _timed(nodes, _Clock(onsite, roads, rules), roads, depot)


def _timed(nodes: Sequence[int], clock: _Clock, roads: Roads, depot: int) -> DaySplit:
    legs: list[Leg] = []
    t, brk, here = 0.0, None, depot
    for node in nodes:
        arrive, start, t, brk = clock.step(t, brk, here, node)
        legs.append(
            Leg(
                node,
                roads.km[here][node],
                roads.minutes[here][node],
                arrive,
                start,
                t,
                t <= clock.closes[node],
            )
        )
        here = node
    end, brk = clock.home(t, brk, here, depot)
    over = clock.working(end, brk) > clock.rules.day_minutes
    return DaySplit(
        tuple(legs),
        roads.km[here][depot],
        roads.minutes[here][depot],
        brk,
        clock.pause if brk is not None else 0.0,
        over and len(legs) == 1,
        not all(leg.fits for leg in legs),
    )


def misfits(
    nodes: Iterable[int],
    onsite: Callable[[int], float],
    roads: Roads,
    rules: DayRules,
    depot: int = 0,
) -> set[int]:
    """The nodes that do not fit a day even alone: too long, or outside their window."""
    clock = _Clock(onsite, roads, rules)
    out = set()
    for node in nodes:
        day = _timed([node], clock, roads, depot)
        if day.too_long or day.outside_window:
            out.add(node)
    return out


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
    clock = _Clock(onsite, roads, rules)
    best: tuple[list[int], list[tuple[int, int]]] | None = None
    best_key: tuple[int, float] | None = None
    for k in sorted({i * n // min(n, starts) for i in range(min(n, starts))}):
        route = [*cycle[k:], *cycle[:k]]
        bounds, key = _cut(route, clock, rules.day_minutes, depot)
        if best_key is None or key < best_key:
            best, best_key = (route, bounds), key
    assert best is not None
    route, bounds = best
    return [_timed(route[i:j], clock, roads, depot) for i, j in bounds]
