"""Cutting a route into days: never longer than the day, never splitting a visit."""

from __future__ import annotations

from collections.abc import Callable

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from inspectkit.plan.days import DayRules, Roads, split_cycle, split_days
from inspectkit.plan.geo import Point, distance_matrix
from inspectkit.plan.route import plan_route

points = st.builds(
    Point, st.floats(51.0, 52.5, allow_nan=False), st.floats(-2.0, 1.0, allow_nan=False)
)


def _drive(km: float) -> float:
    return km * 1.3 / 50 * 60


def _roads(dist: list[list[float]], drive: Callable[[float], float] = float) -> Roads:
    """Roads whose minutes are `drive` of each distance."""
    return Roads(dist, [[drive(km) for km in row] for row in dist])


@given(
    st.lists(st.tuples(points, st.floats(10, 600)), min_size=1, max_size=25),
    st.floats(4, 10),
)
@settings(max_examples=200, deadline=None)
def test_days_never_exceed_the_day_length(sites: list[tuple[Point, float]], hours: float) -> None:
    depot = Point(51.75, -0.5)
    dist = distance_matrix([depot] + [p for p, _ in sites])
    route = plan_route(dist)[1:]
    onsite = [0.0] + [m for _, m in sites]
    day_minutes = hours * 60
    days = split_days(route, onsite.__getitem__, _roads(dist, _drive), DayRules(day_minutes))
    # Every site once, in route order, and no visit split across days.
    assert [leg.node for d in days for leg in d.legs] == route
    entered = split_cycle(route, onsite.__getitem__, _roads(dist, _drive), DayRules(day_minutes))
    assert sorted(leg.node for d in entered for leg in d.legs) == sorted(route)
    assert len(entered) <= len(days)
    for d in days + entered:
        if d.too_long:
            assert len(d.legs) == 1
            assert d.minutes > day_minutes
        else:
            assert d.minutes <= day_minutes + 1e-9
        # The clock runs: drive, visit, drive, visit, drive home.
        clock = 0.0
        for leg in d.legs:
            assert leg.arrive == pytest.approx(clock + _drive(leg.km))
            assert leg.leave == pytest.approx(leg.arrive + onsite[leg.node])
            clock = leg.leave
        assert d.minutes == pytest.approx(clock + _drive(d.home_km))


def test_a_site_too_long_for_a_day_is_alone_and_flagged() -> None:
    dist = [[0, 10, 10, 10], [10, 0, 1, 1], [10, 1, 0, 1], [10, 1, 1, 0]]
    onsite = {1: 60.0, 2: 600.0, 3: 60.0}
    days = split_days([1, 2, 3], onsite.__getitem__, _roads(dist), DayRules(480))
    assert [[leg.node for leg in d.legs] for d in days] == [[1], [2], [3]]
    assert [d.too_long for d in days] == [False, True, False]


def _greedy_days(
    route: list[int], onsite: list[float], dist: list[list[float]], day_minutes: float
) -> tuple[int, float]:
    """Reference cut: fill each day as far as it goes (fewest days, any time)."""
    days, minutes, here, clock = 0, 0.0, None, 0.0
    for node in route:
        if here is not None:
            leave = clock + dist[here][node] + onsite[node]
            if leave + dist[node][0] <= day_minutes:
                here, clock = node, leave
                continue
            days, minutes = days + 1, minutes + clock + dist[here][0]
        here, clock = node, dist[0][node] + onsite[node]
    if here is not None:
        days, minutes = days + 1, minutes + clock + dist[here][0]
    return days, minutes


@given(st.lists(st.tuples(points, st.floats(10, 400)), min_size=1, max_size=20))
@settings(max_examples=150, deadline=None)
def test_as_few_days_as_filling_each_day_and_no_more_time(
    sites: list[tuple[Point, float]],
) -> None:
    depot = Point(51.75, -0.5)
    dist = distance_matrix([depot] + [p for p, _ in sites])
    route = plan_route(dist)[1:]
    onsite = [0.0] + [m for _, m in sites]
    days = split_days(route, onsite.__getitem__, _roads(dist), DayRules(480))
    greedy_count, greedy_minutes = _greedy_days(route, onsite, dist, 480)
    assert len(days) == greedy_count
    assert sum(d.minutes for d in days) <= greedy_minutes + 1e-6


def test_the_cut_that_drives_least_among_the_fewest_days() -> None:
    # Site 1 is near the depot (5), sites 2 and 3 far out together (50, 1 apart). Filling
    # day one takes [1, 2] (5+250+46+100+50 = 451) and leaves [3] (200): 651 minutes.
    # [1] (260) then [2, 3] (50+100+1+100+50 = 301) is two days as well, in 561.
    dist = [[0, 5, 50, 50], [5, 0, 46, 46], [50, 46, 0, 1], [50, 46, 1, 0]]
    onsite = {1: 250.0, 2: 100.0, 3: 100.0}
    days = split_days([1, 2, 3], onsite.__getitem__, _roads(dist), DayRules(480))
    assert [[leg.node for leg in d.legs] for d in days] == [[1], [2, 3]]
    assert [d.minutes for d in days] == [260, 301]
    assert _greedy_days([1, 2, 3], [0, *onsite.values()], dist, 480) == (2, 651)


def test_empty_route_has_no_days() -> None:
    assert split_days([], lambda n: 0.0, _roads([[0.0]]), DayRules(480)) == []


def test_a_closed_tour_is_entered_where_it_gives_fewest_days() -> None:
    # Tour 1-2-3-4 round the depot; 4 and 1 are close together, as are 2 and 3. Entered
    # at 1, days are [1], [2, 3], [4]; entered at 4, [4, 1], [2, 3]: one day fewer.
    dist = [
        [0, 10, 10, 10, 10],
        [10, 0, 15, 15, 1],
        [10, 15, 0, 1, 15],
        [10, 15, 1, 0, 15],
        [10, 1, 15, 15, 0],
    ]
    onsite = {1: 100.0, 2: 100.0, 3: 100.0, 4: 100.0}
    assert len(split_days([1, 2, 3, 4], onsite.__getitem__, _roads(dist), DayRules(230))) == 3
    days = split_cycle([1, 2, 3, 4], onsite.__getitem__, _roads(dist), DayRules(230))
    assert sorted(sorted(leg.node for leg in d.legs) for d in days) == [[1, 4], [2, 3]]


def test_a_break_before_the_drive_home_makes_the_day_longer() -> None:
    # Depot, one site 60 minutes away; 120 minutes on site. Leaving at 180, the drive
    # home would pass the break's latest start (200), so the break comes first.
    dist = [[0.0, 60.0], [60.0, 0.0]]
    rules = DayRules(480, break_minutes=30, break_by=200)
    (day,) = split_days([1], {1: 120.0}.__getitem__, _roads(dist), rules)
    assert day.break_at == 180
    assert day.minutes == 180 + 30 + 60
    (on_arrival,) = split_days([1], {1: 150.0}.__getitem__, _roads(dist), rules)
    # Arriving at 60 the visit would run past 200: the break is taken on arrival.
    assert on_arrival.break_at == 60 and on_arrival.legs[0].start == 90
    assert on_arrival.minutes == 90 + 150 + 60
