"""How long planning a round of 500 due sites takes, and how short its route is.

Builds its own data: 500 invented sites scattered over a patch about 100 km across,
each with a few components and a visit long enough ago to be due. In one process it
times

- the floor: the distance matrix and a nearest-neighbour tour, the least any planner
  of this kind does, and
- the real path: `make_candidates` (the schedule of every site) and `plan_round`
  (distances, nearest neighbour, 2-opt over 10-neighbour lists with don't-look bits and
  a cap of 50 improving moves per site, the day split tried from 64 entry points),

and prints their ratio, the route length against nearest neighbour alone, 2-opt
against the exhaustive optimum on 20 random 9-site rounds, and the peak memory.

    python bench/bench_plan.py [--sites N] [--instances N]
"""

from __future__ import annotations

import argparse
import random
import resource
import sys
import time
from datetime import UTC, date, datetime

from inspectkit.model import (
    Component,
    ComponentKind,
    Inspection,
    InspectionKind,
    InspectionState,
    Site,
    SiteRecords,
)
from inspectkit.plan.geo import Point, distance_matrix
from inspectkit.plan.planner import Window, make_candidates, plan_round
from inspectkit.plan.route import brute_force, nearest_neighbour, plan_route, tour_length, two_opt
from inspectkit.plan.settings import load_plan_settings
from inspectkit.profiles import load_profile

FIRST = date(2026, 12, 1)
DEPOT = Point(52.75, -1.25)
CONTEXT = {"now": datetime(2026, 12, 1, 12, tzinfo=UTC)}


def _records(rng: random.Random, n: int) -> SiteRecords:
    """One invented site, due or overdue for its visual or complete inspection."""
    site = Site(
        name=f"Bench site {n:03d}",
        protection_level=rng.choice(["I", "II", "III", "IV"]),
        latitude=DEPOT.lat + rng.uniform(-0.45, 0.45),
        longitude=DEPOT.lon + rng.uniform(-0.75, 0.75),
        critical=rng.random() < 0.2,
        explosive_risk=rng.random() < 0.05,
    )
    components = [
        Component(site_id=site.id, kind=kind, tag=f"{kind.value[:2].upper()}-{i}")
        for kind in (
            ComponentKind.DOWN_CONDUCTOR,
            ComponentKind.TEST_JOINT,
            ComponentKind.EARTH_ELECTRODE,
        )
        for i in range(rng.randint(1, 4))
    ]
    visit = Inspection.model_validate(
        {
            "site_id": site.id,
            "kind": InspectionKind.COMPLETE,
            "date": date(2020 + rng.randint(0, 2), rng.randint(1, 12), 15),
            "state": InspectionState.DRAFT,
            "finished": True,
        },
        context=CONTEXT,
    )
    return SiteRecords(site=site, components=components, inspections=[visit])


def _peak_mb() -> float:
    kb = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
    return kb / 1024 if sys.platform != "darwin" else kb / 1024 / 1024


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sites", type=int, default=500)
    parser.add_argument("--instances", type=int, default=20)
    args = parser.parse_args()
    rng = random.Random(20261201)
    settings = load_plan_settings()
    profile = load_profile("iec-62305-3")
    sites = [(_records(rng, n), profile) for n in range(args.sites)]
    window = Window(FIRST, 30)

    t0 = time.perf_counter()
    candidates = make_candidates(sites, window, settings)
    t1 = time.perf_counter()
    plan = plan_round(candidates, window, DEPOT, settings)
    t2 = time.perf_counter()
    dist = distance_matrix([DEPOT] + [c.point for c in candidates])  # type: ignore[misc]
    greedy = nearest_neighbour(dist)
    t3 = time.perf_counter()
    tour = plan_route(dist)
    floor, real = t3 - t2, (t1 - t0) + (t2 - t1)

    print(
        f"sites due: {len(candidates)} of {args.sites}; "
        f"{len(plan.visits)} visits on {len(plan.days)} days "
        f"({sum(d.too_long for d in plan.days)} flagged too long)"
    )
    print(f"floor (distance matrix + nearest neighbour): {floor * 1000:8.1f} ms")
    print(f"schedule of every site (make_candidates):    {(t1 - t0) * 1000:8.1f} ms")
    print(f"route and days (plan_round):                 {(t2 - t1) * 1000:8.1f} ms")
    print(f"real path / floor:                           {real / floor:8.1f} x")
    print(f"plan_round alone / floor:                    {(t2 - t1) / floor:8.1f} x")
    print(
        f"tour length 2-opt / nearest neighbour:       "
        f"{tour_length(tour, dist) / tour_length(greedy, dist):8.3f}"
    )

    ratios = []
    for _ in range(args.instances):
        small = distance_matrix(
            [DEPOT]
            + [
                Point(DEPOT.lat + rng.uniform(-0.45, 0.45), DEPOT.lon + rng.uniform(-0.75, 0.75))
                for _ in range(9)
            ]
        )
        optimum = tour_length(brute_force(small), small)
        ratios.append(tour_length(two_opt(nearest_neighbour(small), small), small) / optimum)
    exact = sum(r < 1 + 1e-9 for r in ratios)
    print(
        f"9-site rounds, 2-opt / exhaustive optimum:   {sum(ratios) / len(ratios):8.4f} mean, "
        f"{max(ratios):.4f} worst, {exact}/{len(ratios)} optimal"
    )
    print(f"peak memory (ru_maxrss):                     {_peak_mb():8.1f} MB")


if __name__ == "__main__":
    main()
