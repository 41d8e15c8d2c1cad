"""The rolling sphere method: where a sphere of the level's radius can touch a roof.

IEC 62305-3 Annex A (as quoted): a point is protected when a sphere of
radius r, rolled over the ground, the structure and the air-termination system,
cannot touch it. Here the sphere rolls over the ground (z = 0), the roofs (prisms
standing on the ground) and the LPS conductors (air terminals and down conductors
as vertical segments, air-termination conductors as horizontal segments).

The lowest surface the sphere reaches above a place (x, y) is the *envelope*:
everything below it is the protected volume. It is the minimum, over the
horizontal positions Q of the sphere's centre within r of (x, y), of

    g(Q) = z_c(Q) − √(r² − |Q − (x, y)|²),

where z_c(Q) is the lowest height the centre can be lowered to at Q before the
sphere touches anything: the largest of r (the ground) and, for every element
within r of Q, its height plus √(r² − d²) (d: horizontal distance from Q).
Searching Q is the search over centres on the hemisphere above the point.

The search is a branch and bound over square cells of Q: g at a cell's centre is
an upper bound of the minimum, and since every distance is 1-Lipschitz, a lower
bound of g over the whole cell follows from the distances at its centre widened
by the cell's half-diagonal. Cells whose lower bound lies above the best value
found are dropped, the rest halved, until the envelope is bracketed within the
stated tolerance. The result is a proven bracket [lo, hi] around the exact
envelope height, not an estimate; verdicts use lo, so a point called protected
is protected whatever the search's resolution.

The closed forms of the issue's simple cases are here too: they are the test
oracle for the numerical method and give the fix (a rod height) directly.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np

#: Envelope heights are bracketed to within this many metres (our default).
ENVELOPE_TOLERANCE_M = 0.02
#: The search stops refining when more cells than this stay in play (our default): a
#: place whose nearest sphere positions form a long curve (right beside a rod) then
#: gets a wider bracket, still proven, rather than a slow answer.
MAX_CELLS = 6_000
#: ... and in the first, coarse pass over an item's points (our default).
COARSE_MAX_CELLS = 1_000
#: A first pass over an item's points brackets each within this (our default); only
#: the worst points are then bracketed within ENVELOPE_TOLERANCE_M.
COARSE_TOLERANCE_M = 0.25
#: First cells of the search are r/8 wide (our default; halved at each round).
FIRST_CELLS_PER_RADIUS = 8
#: Rounds of halving at most; r/8/2**18 is well below a millimetre for any level.
MAX_ROUNDS = 18

Point = tuple[float, float]


class GeometryError(ValueError):
    """A geometry outside what the method handles; the message names the argument."""


# ---------------------------------------------------------------- closed forms


def protected_radius(r: float, rod_height: float, height: float) -> float:
    """Radius protected by one vertical rod at a given height above its flat base.

    IEC 62305-3 Annex A (as quoted), for a rod of height h_t ≤ r on
    flat ground: d(h) = √(h_t(2r − h_t)) − √(h(2r − h)) at height h ≤ h_t.
    """
    if not 0 < rod_height <= r:
        raise GeometryError(f"rod_height must be above 0 and at most r = {r} m (got {rod_height})")
    if not 0 <= height <= rod_height:
        raise GeometryError(f"height must be from 0 to the rod's height (got {height})")
    return math.sqrt(rod_height * (2 * r - rod_height)) - math.sqrt(height * (2 * r - height))


def rod_height_to_cover(r: float, distance: float, height: float) -> float | None:
    """Least rod height (above the same flat base) whose protected radius at `height`
    reaches `distance`: the inverse of `protected_radius`.

    None when no rod of height ≤ r does (the sphere would pass under any taller one's
    shoulder; the closed form stops at h_t = r).
    """
    if distance < 0 or not 0 <= height <= r:
        raise GeometryError("distance must be ≥ 0 and height from 0 to r")
    reach = distance + math.sqrt(height * (2 * r - height))
    if reach > r:
        return None
    return r - math.sqrt(r * r - reach * reach)


def sag(r: float, width: float) -> float:
    """Depth the sphere sinks below the line joining two conductors or rod tips `width`
    apart: p = r − √(r² − (w/2)²) (IEC 62305-3 Annex A, as quoted)."""
    if not 0 < width <= 2 * r:
        raise GeometryError(f"width must be above 0 and at most 2r = {2 * r} m (got {width})")
    return r - math.sqrt(r * r - (width / 2) ** 2)


# ---------------------------------------------------------------- the obstacles


@dataclass(frozen=True)
class Obstacles:
    """What the sphere rolls over, as arrays for the search.

    Attributes:
        segments: (M, 4) horizontal footprints x0, y0, x1, y1 of the LPS elements (a
            vertical rod or down conductor is a segment of zero length).
        tops: (M,) each element's highest point above ground, in m.
        roofs: roof outlines, each an (K, 2) array of corners.
        roof_heights: each roof's height above ground, in m.
    """

    segments: np.ndarray
    tops: np.ndarray
    roofs: tuple[np.ndarray, ...] = ()
    roof_heights: tuple[float, ...] = ()

    @classmethod
    def build(
        cls,
        elements: Sequence[tuple[Point, Point, float]],
        roofs: Sequence[tuple[Sequence[Point], float]] = (),
    ) -> Obstacles:
        """From (start, end, top height) per element and (outline, height) per roof."""
        segments = np.array([(*a, *b) for a, b, _ in elements], dtype=float).reshape(-1, 4)
        tops = np.array([z for _, _, z in elements], dtype=float)
        return cls(
            segments=segments,
            tops=tops,
            roofs=tuple(np.asarray(outline, dtype=float) for outline, _ in roofs),
            roof_heights=tuple(float(z) for _, z in roofs),
        )

    def near(self, place: np.ndarray, reach: float) -> tuple[Obstacles, list[int]]:
        """Only what lies within `reach` of a place (horizontally), since nothing farther
        can touch a sphere touching the place; and each kept part's index in `self`
        (elements, then roofs numbered on from them)."""
        keep = np.nonzero(segment_distances(place[None, :], self.segments)[0] <= reach)[0]
        roofs = [
            k
            for k, outline in enumerate(self.roofs)
            if polygon_distance(place[None, :], outline)[0] <= reach
        ]
        near = Obstacles(
            segments=self.segments[keep],
            tops=self.tops[keep],
            roofs=tuple(self.roofs[k] for k in roofs),
            roof_heights=tuple(self.roof_heights[k] for k in roofs),
        )
        return near, [*map(int, keep), *(len(self.tops) + k for k in roofs)]

    def with_element(self, start: Point, end: Point, top: float) -> Obstacles:
        """The same obstacles and one more element (a proposed rod)."""
        return Obstacles(
            segments=np.vstack([self.segments, [(*start, *end)]]),
            tops=np.append(self.tops, top),
            roofs=self.roofs,
            roof_heights=self.roof_heights,
        )


def segment_distances(points: np.ndarray, segments: np.ndarray) -> np.ndarray:
    """(N, M) horizontal distances from N points to M segments (zero-length allowed)."""
    ax, ay = segments[:, 0], segments[:, 1]
    abx, aby = segments[:, 2] - ax, segments[:, 3] - ay
    length2 = abx * abx + aby * aby
    scale = np.where(length2 > 0, 1.0 / np.where(length2 > 0, length2, 1.0), 0.0)
    apx = points[:, 0:1] - ax
    apy = points[:, 1:2] - ay
    t = np.clip((apx * abx + apy * aby) * scale, 0.0, 1.0)
    dx = apx - t * abx
    dy = apy - t * aby
    return np.sqrt(dx * dx + dy * dy)


def polygon_distance(points: np.ndarray, outline: np.ndarray) -> np.ndarray:
    """(N,) horizontal distance from each point to a polygon: 0 inside it."""
    edges = np.hstack([outline, np.roll(outline, -1, axis=0)])
    d = segment_distances(points, edges).min(axis=1)
    return np.where(inside_polygon(points, outline), 0.0, d)


def inside_polygon(points: np.ndarray, outline: np.ndarray) -> np.ndarray:
    """(N,) whether each point lies inside a polygon (even-odd crossing rule)."""
    x, y = points[:, 0:1], points[:, 1:2]
    x0, y0 = outline[:, 0], outline[:, 1]
    x1, y1 = np.roll(x0, -1), np.roll(y0, -1)
    straddles = (y0 > y) != (y1 > y)
    with np.errstate(divide="ignore", invalid="ignore"):
        cross_x = x0 + (y - y0) * (x1 - x0) / (y1 - y0)
    return (straddles & (x < cross_x)).sum(axis=1) % 2 == 1


def _distances(obstacles: Obstacles, centres: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(N, M+R) horizontal distances from centres to every element and roof, and the
    (M+R,) heights of those."""
    d = segment_distances(centres, obstacles.segments)
    if obstacles.roofs:
        roofs = np.stack([polygon_distance(centres, o) for o in obstacles.roofs], axis=1)
        d = np.hstack([d, roofs])
    return d, np.concatenate([obstacles.tops, np.asarray(obstacles.roof_heights, dtype=float)])


def _lowest_centres(distances: np.ndarray, tops: np.ndarray, r: float) -> np.ndarray:
    """Lowest height of the sphere's centre above each centre position, from its
    distances to everything."""
    lowest = np.full(len(distances), r)
    if distances.shape[1]:
        rise = np.sqrt(np.maximum(r * r - distances * distances, 0.0))
        heights = np.where(distances < r, tops[None, :] + rise, -np.inf)
        lowest = np.maximum(lowest, heights.max(axis=1))
    return lowest


def _lower_bounds(
    distances: np.ndarray,
    tops: np.ndarray,
    from_place: np.ndarray,
    reach: np.ndarray,
    widen: float,
    r: float,
) -> np.ndarray:
    """A lower bound of g over each cell (centre distances given, half-diagonal `widen`).

    g is the largest of its terms (the ground, each element), each less the same
    √(r² − t²). Each term is bounded with its own distance u to the element and the
    distance t to the place *together*: over the cell u ≤ u₀ + w and t ≥ t₀ − w, and
    also t ≥ u − δ, δ being the element's distance from the place (the triangle
    inequality). The last keeps the bound tight right beside a rod or a conductor,
    where the two square roots nearly cancel.
    """
    t_low = np.maximum(reach - widen, 0.0)
    bound = r - np.sqrt(np.maximum(r * r - np.minimum(t_low, r) ** 2, 0.0))
    if distances.shape[1]:
        u_high = distances + widen
        t_joint = np.minimum(np.maximum(t_low[:, None], u_high - from_place[None, :]), r)
        terms = (
            tops[None, :]
            + np.sqrt(np.maximum(r * r - u_high * u_high, 0.0))
            - np.sqrt(np.maximum(r * r - t_joint * t_joint, 0.0))
        )
        terms = np.where(u_high < r, terms, -np.inf)
        bound = np.maximum(bound, terms.max(axis=1))
    return bound


@dataclass(frozen=True)
class Envelope:
    """The envelope's height above one place, bracketed.

    Attributes:
        lo, hi: the exact envelope height lies in [lo, hi] (m above ground).
        resting: indices of what the lowest sphere found rests on: elements 0..M−1,
            then roofs M..; empty when it rests on the ground alone.
        centres: sphere-centre positions evaluated (for the benchmark's floor).
        rounds: rounds of halving done.
        cell: width of the last cells searched, m (the resolution reached).
    """

    lo: float
    hi: float
    resting: tuple[int, ...]
    centres: int
    rounds: int
    cell: float
    evaluated: np.ndarray | None = field(default=None, repr=False, compare=False)


def envelope_height(
    obstacles: Obstacles,
    x: float,
    y: float,
    r: float,
    tolerance: float = ENVELOPE_TOLERANCE_M,
    keep_centres: bool = False,
    max_cells: int = MAX_CELLS,
    enough: float = math.inf,
    below: float = -math.inf,
) -> Envelope:
    """Lowest point the sphere reaches above (x, y): the top of the protected volume there.

    Args:
        tolerance: stop once the bracket is this narrow.
        keep_centres: also return every centre evaluated (the benchmark recomputes
            their distances as its floor).
        max_cells: stop refining once more cells than this stay in play (the bracket
            is then wider than `tolerance`, still proven).
        enough: stop as soon as the envelope is known to lie at least this high (the
            caller only needs to know that a point is well inside).
        below: stop as soon as it is known to lie below this (the point is exposed).
    """
    if not r > 0:
        raise GeometryError(f"r must be above zero (got {r})")
    place = np.array([x, y], dtype=float)
    obstacles, index = obstacles.near(place, 2 * r)
    from_place = _distances(obstacles, place[None, :])[0][0]
    cell = r / FIRST_CELLS_PER_RADIUS
    steps = (np.arange(2 * FIRST_CELLS_PER_RADIUS) + 0.5) * cell - r
    gx, gy = np.meshgrid(steps, steps)
    cells = place + np.column_stack([gx.ravel(), gy.ravel()])
    best, lo, evaluated, kept = math.inf, -math.inf, 0, []
    best_at = place
    rounds = 0
    for rounds in range(MAX_ROUNDS + 1):  # noqa: B007 - rounds is reported
        half_diagonal = cell / math.sqrt(2)
        reach = np.linalg.norm(cells - place, axis=1)
        cells, reach = cells[reach - half_diagonal <= r], reach[reach - half_diagonal <= r]
        evaluated += len(cells)
        if keep_centres:
            kept.append(cells)
        distances, tops = _distances(obstacles, cells)
        exact = _lowest_centres(distances, tops, r)
        inside = reach <= r
        if inside.any():
            g = exact[inside] - np.sqrt(r * r - reach[inside] ** 2)
            if float(g.min()) < best:
                best, best_at = float(g.min()), cells[inside][int(np.argmin(g))]
        bound = _lower_bounds(distances, tops, from_place, reach, half_diagonal, r)
        alive = bound <= best
        lo = float(bound[alive].min()) if alive.any() else best
        if lo >= enough or best < below or best - lo <= tolerance:
            break
        if rounds == MAX_ROUNDS or alive.sum() > max_cells:
            break
        cells, cell = _split(cells[alive], cell), cell / 2
    return Envelope(
        lo=max(lo, 0.0) if lo > -math.inf else 0.0,
        hi=best,
        resting=tuple(
            index[k] for k in _resting(obstacles, best_at, r, max(best - lo, 0.0) + cell)
        ),
        centres=evaluated,
        rounds=rounds,
        cell=cell,
        evaluated=np.vstack(kept) if keep_centres else None,
    )


def _resting(obstacles: Obstacles, centre: np.ndarray, r: float, slack: float) -> tuple[int, ...]:
    """What a sphere lowered at `centre` comes to rest on: everything within `slack`
    (the search's resolution) of touching it."""
    at = centre[None, :]
    tops = [*obstacles.tops, *obstacles.roof_heights]
    distances = [*segment_distances(at, obstacles.segments)[0]]
    distances += [float(polygon_distance(at, o)[0]) for o in obstacles.roofs]
    heights = [
        z + math.sqrt(r * r - d * d) if d < r else -math.inf
        for z, d in zip(tops, distances, strict=True)
    ]
    lowest = max([r, *heights])
    return tuple(k for k, h in enumerate(heights) if h >= lowest - slack)


def _split(cells: np.ndarray, width: float) -> np.ndarray:
    """Each square cell (by its centre) as its four quarters."""
    q = width / 4
    offsets = np.array([(-q, -q), (-q, q), (q, -q), (q, q)])
    return (cells[:, None, :] + offsets[None, :, :]).reshape(-1, 2)
