"""Visiting order: 2-opt never worse than nearest neighbour, small rounds exactly optimal."""

from __future__ import annotations

import math
import random

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from inspectkit.plan.geo import Point, distance_matrix
from inspectkit.plan.route import (
    EXACT_SITES,
    brute_force,
    nearest_neighbour,
    plan_route,
    tour_length,
    two_opt,
)

#: Points within about 100 km of one another, as a contractor's patch would be.
points = st.builds(
    Point, st.floats(51.0, 52.0, allow_nan=False), st.floats(-1.5, 0.5, allow_nan=False)
)


def _is_tour(tour: list[int], n: int) -> bool:
    return tour[0] == 0 and sorted(tour) == list(range(n))


@given(st.lists(points, min_size=1, max_size=40))
@settings(max_examples=150, deadline=None)
def test_two_opt_is_never_longer_than_nearest_neighbour(sites: list[Point]) -> None:
    dist = distance_matrix(sites)
    greedy = nearest_neighbour(dist)
    improved = two_opt(greedy, dist)
    assert _is_tour(improved, len(sites))
    assert tour_length(improved, dist) <= tour_length(greedy, dist) + 1e-9


@given(st.lists(points, min_size=2, max_size=EXACT_SITES + 1))
@settings(max_examples=60, deadline=None)
def test_small_rounds_get_the_brute_force_optimum(sites: list[Point]) -> None:
    # Depot plus up to EXACT_SITES sites: the route planned equals the exhaustive search's.
    dist = distance_matrix(sites)
    assert tour_length(plan_route(dist), dist) == pytest.approx(
        tour_length(brute_force(dist), dist), abs=1e-9
    )


def test_two_opt_finds_the_optimum_on_most_small_random_rounds() -> None:
    # 2-opt is a local search: on seeded random rounds of 4 to 8 sites it finds the
    # exhaustive search's optimum on most and is never shorter than it.
    rng = random.Random(20261201)
    found = 0
    for _ in range(100):
        n = rng.randint(5, EXACT_SITES + 1)
        dist = distance_matrix([Point(rng.uniform(51, 52), rng.uniform(-1, 1)) for _ in range(n)])
        optimum = tour_length(brute_force(dist), dist)
        heuristic = tour_length(two_opt(nearest_neighbour(dist), dist), dist)
        assert heuristic >= optimum - 1e-9
        found += math.isclose(heuristic, optimum, abs_tol=1e-9)
    assert found >= 85


def test_two_opt_uncrosses_a_crossed_square() -> None:
    # Corners of a unit square visited crosswise: 2 + 2√2; round the edge: 4.
    corners = [(0, 0), (1, 0), (1, 1), (0, 1)]
    dist = [[math.dist(a, b) for b in corners] for a in corners]
    crossed = [0, 2, 1, 3]
    assert tour_length(crossed, dist) == pytest.approx(2 + 2 * math.sqrt(2))
    assert tour_length(two_opt(crossed, dist), dist) == pytest.approx(4)
    assert tour_length(brute_force(dist), dist) == pytest.approx(4)


def test_nearest_neighbour_goes_to_the_closest_first() -> None:
    line = [0.0, 5.0, 1.0, 3.0]
    dist = [[abs(a - b) for b in line] for a in line]
    assert nearest_neighbour(dist) == [0, 2, 3, 1]


def test_two_opt_keeps_the_depot_first_on_a_large_round() -> None:
    rng = random.Random(7)
    dist = distance_matrix([Point(rng.uniform(50, 53), rng.uniform(-3, 1)) for _ in range(300)])
    greedy = nearest_neighbour(dist)
    improved = plan_route(dist)
    assert _is_tour(improved, 300)
    assert tour_length(improved, dist) < tour_length(greedy, dist)


def test_brute_force_refuses_large_instances() -> None:
    with pytest.raises(ValueError, match="at most"):
        brute_force([[0.0] * 11 for _ in range(11)])
