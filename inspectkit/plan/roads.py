"""The one road distance a plan uses: known roads from the settings, else an estimate.

The estimate is the great-circle distance stretched by the road factor; the plan
shows that distance, labelled as an estimate, and times the drive from it, so the
km on the page and the minutes beside them always agree.
"""

from __future__ import annotations

from collections.abc import Sequence

from inspectkit.plan.days import Roads
from inspectkit.plan.geo import Point, distance_matrix
from inspectkit.plan.settings import DEPOT_PLACE, PlanSettings
from inspectkit.plan.timing import travel_minutes


def build_roads(
    points: Sequence[Point], names: Sequence[str], settings: PlanSettings
) -> tuple[Roads, list[str]]:
    """Road km and driving minutes between every two places, node 0 being the depot.

    Args:
        points: the depot, then each site.
        names: the sites' names, in the same order as `points[1:]`.
        settings: road factor, speed and the table of known roads.

    Returns:
        the roads, and a note for each known road naming a place not in the round.
    """
    km = distance_matrix(list(points))  # great-circle, stretched in place below
    per_km = travel_minutes(1.0, settings)  # minutes per great-circle km
    minutes = [[d * per_km for d in row] for row in km]
    factor = settings.road_factor
    for row in km:
        row[:] = [d * factor for d in row]
    node = {DEPOT_PLACE: 0} | {n.strip().lower(): i for i, n in enumerate(names, start=1)}
    known: set[tuple[int, int]] = set()
    notes = []
    for road in settings.roads:
        ends = [node.get(p.strip().lower()) for p in (road.a, road.b)]
        if None in ends:
            missing = [p for p, e in zip((road.a, road.b), ends, strict=True) if e is None]
            notes.append(f"known road {road.a} – {road.b}: {', '.join(missing)} not in this round")
            continue
        a, b = ends
        assert a is not None and b is not None
        drive = road.minutes if road.minutes is not None else road.km / settings.speed_kmh * 60
        for i, j in ((a, b), (b, a)):
            km[i][j], minutes[i][j] = road.km, drive
            known.add((i, j))
    return Roads(km, minutes, frozenset(known)), notes


def estimate_label(settings: PlanSettings) -> str:
    """How an estimated road distance is made, for the plan's heading."""
    return f"road km estimated as great-circle × {settings.road_factor:g}"
