"""Cutting an ordered route into working days that start and end at the depot.

Each day is a run of consecutive sites on the route, driven from the depot and
back, no longer than the working day. A visit is never split: a site whose round
trip alone is longer than a day gets a day of its own and is flagged.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass

from inspectkit.plan.route import Matrix

#: Entry points into a closed tour tried when cutting it into days (our default):
#: all of them for rounds up to this size, evenly spread ones above.
ROTATIONS = 64


@dataclass(frozen=True)
class Leg:
    """The drive to one site and the visit there, in minutes after the day's start.

    Attributes:
        node: the site's index in the distance matrix.
        km: great-circle distance from the previous stop (or the depot).
        drive: driving minutes for it.
        arrive, leave: minutes after the day's start.
    """

    node: int
    km: float
    drive: float
    arrive: float
    leave: float


@dataclass(frozen=True)
class DaySplit:
    """One working day's legs and the drive home.

    Attributes:
        legs: the visits in order.
        home_km, home_drive: the last site back to the depot.
        too_long: the day holds one site whose round trip exceeds the day's length.
    """

    legs: tuple[Leg, ...]
    home_km: float
    home_drive: float
    too_long: bool

    @property
    def minutes(self) -> float:
        """Length of the day, depot to depot."""
        return self.legs[-1].leave + self.home_drive

    @property
    def km(self) -> float:
        return sum(leg.km for leg in self.legs) + self.home_km


def split_days(
    route: Sequence[int],
    onsite: Callable[[int], float],
    dist: Matrix,
    day_minutes: float,
    drive: Callable[[float], float],
    depot: int = 0,
) -> list[DaySplit]:
    """Working days for a route, keeping its order: the fewest days, then the least time.

    Every way of cutting the route into runs that fit a day is weighed (dynamic
    programming over the cut points, as in route-first cluster-second planning).
    Filling each day as full as it goes already gives the fewest days; among the
    cuts with that many, this one drives least, since where a day ends decides
    which two sites are joined by a drive home and out again. A run only grows
    longer as it takes the next site (the drive home from a site is never longer
    than going on to the next one and home from there), so each run is extended
    only until it no longer fits.

    Args:
        route: the sites' nodes in visiting order (the depot left out).
        onsite: minutes on site for a node.
        dist: km between nodes.
        day_minutes: the longest a day may be, driving included.
        drive: driving minutes for a distance in km.
        depot: the depot's node.
    """
    n = len(route)
    # best[j]: (days, minutes) to cover route[:j]; cut[j]: where its last day starts.
    best: list[tuple[int, float] | None] = [(0, 0.0)] + [None] * n
    cut = [0] * (n + 1)
    for i in range(n):
        done = best[i]
        if done is None:
            continue
        clock = drive(dist[depot][route[i]]) + onsite(route[i])
        for j in range(i, n):
            if j > i:
                clock += drive(dist[route[j - 1]][route[j]]) + onsite(route[j])
            total = clock + drive(dist[route[j]][depot])
            if total > day_minutes and j > i:
                break
            option = (done[0] + 1, done[1] + total)
            known = best[j + 1]
            if known is None or option < known:
                best[j + 1], cut[j + 1] = option, i
            if total > day_minutes:
                break
    bounds = []
    j = n
    while j > 0:
        bounds.append((cut[j], j))
        j = cut[j]
    return [_day(route[i:j], onsite, dist, day_minutes, drive, depot) for i, j in reversed(bounds)]


def _day(
    nodes: Sequence[int],
    onsite: Callable[[int], float],
    dist: Matrix,
    day_minutes: float,
    drive: Callable[[float], float],
    depot: int,
) -> DaySplit:
    """One day's legs with the running clock, from the depot and back."""
    legs: list[Leg] = []
    here, clock = depot, 0.0
    for node in nodes:
        km = dist[here][node]
        arrive = clock + drive(km)
        clock = arrive + onsite(node)
        legs.append(Leg(node, km, drive(km), arrive, clock))
        here = node
    km = dist[here][depot]
    home = drive(km)
    return DaySplit(tuple(legs), km, home, clock + home > day_minutes)


def split_cycle(
    cycle: Sequence[int],
    onsite: Callable[[int], float],
    dist: Matrix,
    day_minutes: float,
    drive: Callable[[float], float],
    depot: int = 0,
    starts: int = ROTATIONS,
) -> list[DaySplit]:
    """Working days for a closed tour, cut where it gives the fewest days, then the least time.

    Every day starts from the depot, so the tour may be entered at any site: up to
    `starts` entry points, spread evenly round it, are each split with `split_days`
    and the best is kept. Going round the other way gives the same days reversed, as
    distances are the same both ways.
    """
    n = len(cycle)
    if n == 0:
        return []
    best: list[DaySplit] | None = None
    best_key: tuple[int, float] | None = None
    for k in sorted({i * n // min(n, starts) for i in range(min(n, starts))}):
        days = split_days([*cycle[k:], *cycle[:k]], onsite, dist, day_minutes, drive, depot)
        key = (len(days), sum(d.minutes for d in days))
        if best_key is None or key < best_key:
            best, best_key = days, key
    assert best is not None
    return best
