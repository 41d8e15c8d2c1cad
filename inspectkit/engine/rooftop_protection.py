"""Whether a rooftop item's top lies inside the protected volume, and what rod would cover it.

The rolling sphere (`rolling_sphere`) is asked at points along the item's edges and
across its top: coarsely everywhere, then finely at the worst points until the worst
is a fine one, since a coarse bracket is cheap and a fine one is not.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from inspectkit.engine.lps_layout import Layout, item_span
from inspectkit.engine.rolling_sphere import (
    COARSE_MAX_CELLS,
    COARSE_TOLERANCE_M,
    Obstacles,
    envelope_height,
    inside_polygon,
    rod_height_to_cover,
)
from inspectkit.geometry_model import GeometryItem

#: An item whose top is within this of the protected volume's edge is to watch (our default):
#: a measuring slip of that size, or a taller replacement, would leave it exposed.
PROTECTION_MARGIN_M = 0.25
#: Points on an item's top are tried along its edges and across it this far apart, or
#: closer on a small item (our default).
TOP_SPACING_M = 0.5
#: The rod height of a fix is found to within this (our default).
FIX_RESOLUTION_M = 0.05

Point = tuple[float, float]


@dataclass(frozen=True)
class Protection:
    """Whether an item's top lies inside the protected volume.

    Attributes:
        exposure_m: height of the item's top above the protected volume's edge at its
            worst point; ≥ 0 means the sphere can touch it, < 0 is the margin.
        worst: the worst point (x, y) of its top.
        resting_on: tags of the LPS parts the sphere rests on over the item.
        samples: points of the top tried.
        spacing_m: their spacing.
        fix: what would cover an exposed item, computed; empty when protected.
    """

    exposure_m: float
    worst: Point
    resting_on: tuple[str, ...]
    samples: int
    spacing_m: float
    fix: str = ""

    @property
    def exposed(self) -> bool:
        return self.exposure_m >= 0


def top_points(item: GeometryItem) -> tuple[np.ndarray, float]:
    """Points of an item's top to try: its corners, along its edges and across it."""
    corners = np.array(item.points, dtype=float)
    span = float(np.ptp(corners, axis=0).max())
    spacing = min(TOP_SPACING_M, max(span / 2, 0.1))
    points = [corners]
    for a, b in zip(corners, np.roll(corners, -1, axis=0), strict=True):
        n = max(int(math.ceil(np.linalg.norm(b - a) / spacing)), 1)
        points.append(a + (b - a) * (np.arange(1, n) / n)[:, None])
    low, high = corners.min(axis=0), corners.max(axis=0)
    gx, gy = np.meshgrid(
        np.arange(low[0] + spacing / 2, high[0], spacing),
        np.arange(low[1] + spacing / 2, high[1], spacing),
    )
    grid = np.column_stack([gx.ravel(), gy.ravel()])
    points.append(grid[inside_polygon(grid, corners)])
    return np.vstack(points), spacing


def protection_of(
    layout: Layout, item: GeometryItem, obstacles: Obstacles, tags: list[str], r: float
) -> Protection:
    """How far an item's top lies inside (or above) the protected volume, and a fix."""
    points, spacing = top_points(item)
    exposure, worst, resting = _exposure(obstacles, points, item.z_m, r)
    names = tuple(dict.fromkeys(tags[k] for k in resting if k < len(tags)))
    protection = Protection(exposure, worst, names, len(points), spacing)
    if not protection.exposed:
        return protection
    return Protection(
        exposure, worst, names, len(points), spacing, _fix(layout, item, obstacles, points, r)
    )


def _exposure(
    obstacles: Obstacles, points: np.ndarray, top: float, r: float
) -> tuple[float, Point, tuple[int, ...]]:
    """The worst point's height above the protected volume, and what the sphere rests on
    there: every point bracketed coarsely, then the worst ones finely until the worst
    is a fine one."""
    lows, fine, resting = [], set(), ()
    for x, y in points:
        lows.append(_coarse_low(obstacles, x, y, r, top + PROTECTION_MARGIN_M))
    while True:
        k = int(np.argmin(lows))
        if k in fine:
            return top - lows[k], (float(points[k, 0]), float(points[k, 1])), resting
        envelope = envelope_height(obstacles, float(points[k, 0]), float(points[k, 1]), r)
        lows[k], resting = envelope.lo, envelope.resting
        fine.add(k)


def _coarse_low(
    obstacles: Obstacles, x: float, y: float, r: float, enough: float, below: float = -math.inf
) -> float:
    """The low side of a coarse bracket, cut short once it is known to be above `enough`
    or below `below`."""
    return envelope_height(
        obstacles,
        float(x),
        float(y),
        r,
        COARSE_TOLERANCE_M,
        max_cells=COARSE_MAX_CELLS,
        enough=enough,
        below=below,
    ).lo


def _fix(
    layout: Layout, item: GeometryItem, obstacles: Obstacles, points: np.ndarray, r: float
) -> str:
    """A rod at the item's centre that would cover it: the closed form for one rod on a
    flat roof first, then raised in steps until the numerical test agrees."""
    base, top = item_span(layout, item)
    cx, cy = np.array(item.points, dtype=float).mean(axis=0)
    centre = (float(cx), float(cy))
    reach = float(np.max(np.linalg.norm(points - centre, axis=1)))
    closed = rod_height_to_cover(r, reach, top - base)
    if closed is None:
        return (
            "no single rod at its centre covers it; add air terminals round it or "
            "extend the mesh over it"
        )
    corners = np.array(item.points, dtype=float)

    def covers(height: float) -> bool:
        """Every corner surely inside once the rod is there (undecided counts as not)."""
        trial = obstacles.with_element(centre, centre, base + height)
        return all(_coarse_low(trial, x, y, r, top + 1e-9, below=top) > top for x, y in corners)

    low, high, step = closed, closed, 0.1
    while not covers(high):  # up from the closed form in doubling steps, then halve back
        if high >= r:
            return (
                "no single rod at its centre covers it (it stands where the sphere comes in "
                "from the side); add air terminals round it or extend the mesh over it"
            )
        low, high, step = high, min(high + step, r), step * 2
    while high - low > FIX_RESOLUTION_M:
        middle = (low + high) / 2
        low, high = (low, middle) if covers(middle) else (middle, high)
    low = high
    return (
        f"a rod at its centre ({centre[0]:.1f}, {centre[1]:.1f}) reaching {low:.2f} m "
        f"above the roof (z = {base + low:.2f} m) would cover it (single-rod closed form "
        f"{closed:.2f} m, checked numerically at its corners)"
    )
