"""How long the rolling sphere takes per rooftop item, against bare numpy distances.

Builds a 200 × 100 m roof (level III, r = 45 m) with 200 air-termination elements
(150 mesh conductor pieces and 50 air terminals) and 50 rooftop items of random
size and height scattered over it, then in one process times

- the real path: `rooftop_protection.protection_of` for every item (the coarse
  pass over each item's top, the fine brackets of its worst points, the fix for
  exposed items), as `check`, the site screen and the report run it; and
- the floor: one numpy computation of the horizontal distances from the *same*
  candidate sphere centres the search evaluated to the same 200 elements, with
  nothing else (no bounds, no pruning, no Python loop per point),

best of `--repeat` runs each, and prints the time per item, their ratio, the
resolution the search worked to, and peak memory (Python's traced allocations,
numpy's included, over one real run, and the process's maximum resident size).

    python bench/bench_rolling_sphere.py [--items N] [--repeat N] [--seed S]
"""

from __future__ import annotations

import argparse
import random
import resource
import time
import tracemalloc

import numpy as np

import inspectkit.engine.rooftop_protection as rooftop_protection
from inspectkit.engine.iec62305 import ROLLING_SPHERE_RADIUS_M
from inspectkit.engine.lps_layout import Layout
from inspectkit.engine.rolling_sphere import (
    COARSE_MAX_CELLS,
    COARSE_TOLERANCE_M,
    ENVELOPE_TOLERANCE_M,
    MAX_CELLS,
    envelope_height,
    segment_distances,
)
from inspectkit.geometry_model import GeometryItem, box_footprint
from inspectkit.model import ProtectionLevel, Site

LEVEL = ProtectionLevel.III
ROOF_Z = 12.0


def build(items: int, seed: int) -> tuple[Site, list[GeometryItem]]:
    """The roof, 150 conductor pieces on a 10 m mesh, 50 rods, and the items."""
    rng = random.Random(seed)
    site = Site(name="Bench hall", protection_level=LEVEL)

    def g(kind: str, tag: str, points: list[tuple[float, float]], z: float, **more) -> GeometryItem:
        return GeometryItem(site_id=site.id, kind=kind, tag=tag, points=points, z_m=z, **more)

    parts = [g("roof", "R1", [(0, 0), (200, 0), (200, 100), (0, 100)], ROOF_Z)]
    pieces = [((x, y), (x + 10, y)) for y in range(0, 101, 20) for x in range(0, 200, 10)]
    pieces += [((x, y), (x, y + 10)) for x in range(0, 201, 40) for y in range(0, 100, 10)]
    pieces = pieces[:150]
    parts += [g("air_conductor", f"AC-{n:03d}", [a, b], ROOF_Z) for n, (a, b) in enumerate(pieces)]
    parts += [
        g(
            "air_terminal",
            f"AT-{n:02d}",
            [(rng.uniform(5, 195), rng.uniform(5, 95))],
            ROOF_Z + rng.uniform(1.0, 3.0),
        )
        for n in range(50)
    ]
    for n in range(items):
        centre = (rng.uniform(5, 195), rng.uniform(5, 95))
        size = (rng.uniform(0.5, 3.0), rng.uniform(0.5, 2.0))
        parts.append(
            g(
                "rooftop_item",
                f"IT-{n:02d}",
                box_footprint(centre, size, rng.uniform(0, 90)),
                ROOF_Z + rng.uniform(0.3, 2.5),
            )
        )
    return site, parts


def real(layout: Layout, obstacles, tags, r: float) -> list:  # noqa: ANN001
    judge = rooftop_protection.protection_of
    return [judge(layout, item, obstacles, tags, r) for item in layout.items]


def centres_used(layout: Layout, obstacles, tags, r: float) -> np.ndarray:  # noqa: ANN001
    """Every candidate centre the real path evaluates, gathered by running it once more."""
    kept: list[np.ndarray] = []

    def keeping(*args, **kwargs):  # noqa: ANN002, ANN003, ANN202
        found = envelope_height(*args, **{**kwargs, "keep_centres": True})
        kept.append(found.evaluated)
        return found

    rooftop_protection.envelope_height = keeping
    try:
        real(layout, obstacles, tags, r)
    finally:
        rooftop_protection.envelope_height = envelope_height
    return np.vstack(kept)


def floor(centres: np.ndarray, segments: np.ndarray) -> float:
    """Bare numpy: every centre's distance to every element, in blocks, summed (kept)."""
    total = 0.0
    for start in range(0, len(centres), 20_000):
        total += float(segment_distances(centres[start : start + 20_000], segments).sum())
    return total


def best(run, repeat: int) -> float:  # noqa: ANN001
    times = []
    for _ in range(repeat):
        start = time.perf_counter()
        run()
        times.append(time.perf_counter() - start)
    return min(times)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--items", type=int, default=50)
    parser.add_argument("--repeat", type=int, default=3)
    parser.add_argument("--seed", type=int, default=17)
    args = parser.parse_args()
    site, parts = build(args.items, args.seed)
    layout = Layout.of(parts)
    obstacles, tags = layout.obstacles()
    r = ROLLING_SPHERE_RADIUS_M[LEVEL]
    elements = len(obstacles.tops)
    centres = centres_used(layout, obstacles, tags, r)
    real_s = best(lambda: real(layout, obstacles, tags, r), args.repeat)
    floor_s = best(lambda: floor(centres, obstacles.segments), args.repeat)
    tracemalloc.start()
    verdicts = real(layout, obstacles, tags, r)
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    exposed = sum(p.exposed for p in verdicts)
    points = sum(p.samples for p in verdicts)
    print(
        f"{len(layout.items)} items against {elements} air-termination elements, level "
        f"{LEVEL.value} (r = {r:g} m); {exposed} items exposed; {points} points of their tops"
    )
    print(
        f"resolution: tops sampled up to {rooftop_protection.TOP_SPACING_M:g} m apart; envelope "
        f"bracketed within {COARSE_TOLERANCE_M * 100:g} cm (coarse pass, ≤ {COARSE_MAX_CELLS} "
        f"cells) then {ENVELOPE_TOLERANCE_M * 100:g} cm at the worst points (≤ {MAX_CELLS} "
        "cells); every bracket is proven, verdicts use its low side"
    )
    print(
        f"candidate centres evaluated: {len(centres)} ({len(centres) / len(layout.items):.0f} "
        "per item)"
    )
    print(f"real path: {real_s / len(layout.items) * 1000:.1f} ms per item ({real_s:.2f} s in all)")
    print(
        f"floor (bare numpy distances, same centres): "
        f"{floor_s / len(layout.items) * 1000:.1f} ms per item ({floor_s:.2f} s in all)"
    )
    print(f"ratio real/floor: {real_s / floor_s:.1f}")
    rss = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    print(f"peak memory: {peak / 1e6:.1f} MB traced in one real run; {rss:.0f} MB resident")


if __name__ == "__main__":
    main()
