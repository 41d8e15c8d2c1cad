"""The geometry of an installed LPS worked out from its records: what the rolling sphere
rolls over, the mesh cells of the roof conductors, the down conductors' gaps round the
outline, and the length of conductor from any point down to earth.

Conductors are taken as drawn: air terminals and down conductors vertical, each
air-termination conductor horizontal at its height. Where two of them pass within
`JOIN_M` of each other they count as joined (a clamp), as on a real roof.
"""

from __future__ import annotations

import heapq
import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from inspectkit.engine.rolling_sphere import (
    Obstacles,
    inside_polygon,
    polygon_distance,
    segment_distances,
)
from inspectkit.model import GeometryKind
from inspectkit.model.geometry import GeometryItem

#: Conductors this close count as joined at a clamp (our default).
JOIN_M = 0.3
#: ... and this close in height (a rod's foot on the roof, the conductor on its clips).
JOIN_HEIGHT_M = 1.0
#: A down conductor this close to a roof's outline stands on it (our default).
ON_OUTLINE_M = 1.5
#: Grid step for finding mesh cells (our default): cell sizes come out within ±0.25 m.
MESH_GRID_M = 0.25
#: Gaps between an edge conductor and the roof edge narrower than this are no mesh cell
#: (our default).
SLIVER_M = 0.75

Point = tuple[float, float]
Point3 = tuple[float, float, float]


@dataclass(frozen=True)
class Layout:
    """A site's geometry sorted by kind, with the heights each part stands at."""

    roofs: tuple[GeometryItem, ...]
    terminals: tuple[GeometryItem, ...]
    conductors: tuple[GeometryItem, ...]
    downs: tuple[GeometryItem, ...]
    items: tuple[GeometryItem, ...]

    @classmethod
    def of(cls, geometry: Sequence[GeometryItem]) -> Layout:
        def kind(k: GeometryKind) -> tuple[GeometryItem, ...]:
            return tuple(g for g in geometry if g.kind is k)

        return cls(
            roofs=kind(GeometryKind.ROOF),
            terminals=kind(GeometryKind.AIR_TERMINAL),
            conductors=kind(GeometryKind.AIR_CONDUCTOR),
            downs=kind(GeometryKind.DOWN_CONDUCTOR),
            items=kind(GeometryKind.ROOFTOP_ITEM),
        )

    def roof_height_at(self, point: Point) -> float:
        """Height of the highest roof under a point; 0 (the ground) where there is none."""
        at = np.array([point], dtype=float)
        heights = [r.z_m for r in self.roofs if inside_polygon(at, np.array(r.points))[0]]
        return max(heights, default=0.0)

    def elements(self) -> list[tuple[str, Point, Point, float]]:
        """(tag, start, end, top) of every LPS conductor: what the sphere rests on."""
        out = [(t.tag, t.points[0], t.points[0], t.z_m) for t in self.terminals]
        for c in self.conductors:
            out += [(c.tag, a, b, c.z_m) for a, b in zip(c.points, c.points[1:], strict=False)]
        out += [(d.tag, d.points[0], d.points[0], d.z_m) for d in self.downs]
        return out

    def obstacles(self) -> tuple[Obstacles, list[str]]:
        """The obstacles for the rolling sphere, and each element's tag by index."""
        elements = self.elements()
        obstacles = Obstacles.build(
            [(a, b, z) for _, a, b, z in elements], [(r.points, r.z_m) for r in self.roofs]
        )
        return obstacles, [tag for tag, *_ in elements]


# ---------------------------------------------------------------- mesh cells


def mesh_cells(roof: GeometryItem, conductors: Sequence[GeometryItem]) -> list[tuple[float, float]]:
    """Sides (short, long) of each cell the conductors divide the roof into, in m.

    The roof is laid on a grid of MESH_GRID_M, the conductors drawn on it, and the
    free parts counted; each part's sides are measured along the roof's longest
    edge and across it, so an oblique roof is measured square to itself.
    """
    outline = np.array(roof.points, dtype=float)
    angle = _longest_edge_angle(outline)
    turn = np.array([[math.cos(-angle), -math.sin(-angle)], [math.sin(-angle), math.cos(-angle)]])
    local = outline @ turn.T
    low, high = local.min(axis=0), local.max(axis=0)
    step = MESH_GRID_M
    xs = np.arange(low[0] + step / 2, high[0], step)
    ys = np.arange(low[1] + step / 2, high[1], step)
    gx, gy = np.meshgrid(xs, ys)
    centres = np.column_stack([gx.ravel(), gy.ravel()])
    free = inside_polygon(centres, local)
    segments = [
        (*(np.array(a) @ turn.T), *(np.array(b) @ turn.T))
        for c in conductors
        for a, b in zip(c.points, c.points[1:], strict=False)
    ]
    if segments:
        near = segment_distances(centres, np.array(segments)).min(axis=1) <= step * 0.75
        free &= ~near
    labels = _label(free.reshape(gy.shape))
    cells = []
    for label in np.unique(labels[labels >= 0]):
        rows, cols = np.nonzero(labels == label)
        # Free cells' extent, plus the grid step each conductor's band hides either side.
        sides = sorted((float(np.ptp(cols) + 3) * step, float(np.ptp(rows) + 3) * step))
        if sides[0] >= SLIVER_M:
            cells.append((sides[0], sides[1]))
    return sorted(cells, key=lambda s: -s[1])


def _longest_edge_angle(outline: np.ndarray) -> float:
    edges = np.roll(outline, -1, axis=0) - outline
    longest = edges[np.argmax(np.hypot(edges[:, 0], edges[:, 1]))]
    return math.atan2(longest[1], longest[0])


def _label(free: np.ndarray) -> np.ndarray:
    """Connected parts (4-neighbour) of a boolean grid: a part number per free cell, −1
    elsewhere; by spreading the least index until nothing changes."""
    big = free.size
    labels = np.where(free, np.arange(big).reshape(free.shape), big)
    while True:
        spread = labels.copy()
        spread[1:, :] = np.minimum(spread[1:, :], labels[:-1, :])
        spread[:-1, :] = np.minimum(spread[:-1, :], labels[1:, :])
        spread[:, 1:] = np.minimum(spread[:, 1:], labels[:, :-1])
        spread[:, :-1] = np.minimum(spread[:, :-1], labels[:, 1:])
        spread = np.where(free, spread, big)
        if np.array_equal(spread, labels):
            return np.where(free, labels, -1)
        labels = spread


# ---------------------------------------------------------------- down conductors


def perimeter_positions(
    outline: Sequence[Point], points: Sequence[Point]
) -> tuple[float, list[float]]:
    """The outline's perimeter and each point's distance along it from the first corner."""
    corners = np.array(outline, dtype=float)
    edges = np.hstack([corners, np.roll(corners, -1, axis=0)])
    lengths = np.hypot(edges[:, 2] - edges[:, 0], edges[:, 3] - edges[:, 1])
    starts = np.concatenate([[0.0], np.cumsum(lengths)[:-1]])
    positions = []
    for p in points:
        d = segment_distances(np.array([p], dtype=float), edges)[0]
        k = int(np.argmin(d))
        a, b = edges[k, :2], edges[k, 2:]
        t = float(np.clip(np.dot(np.array(p) - a, b - a) / max(lengths[k] ** 2, 1e-12), 0, 1))
        positions.append(float(starts[k] + t * lengths[k]))
    return float(lengths.sum()), positions


def largest_gap(perimeter: float, positions: Sequence[float]) -> float:
    """Longest stretch of outline between neighbouring down conductors (round the corner
    of the first one too); the whole perimeter for one, and for none."""
    if len(positions) < 2:
        return perimeter
    ordered = sorted(positions)
    gaps = [b - a for a, b in zip(ordered, ordered[1:], strict=False)]
    return max([*gaps, perimeter - ordered[-1] + ordered[0]])


def downs_on(roof: GeometryItem, downs: Sequence[GeometryItem]) -> list[GeometryItem]:
    """The down conductors standing on a roof's outline."""
    return [d for d in downs if on_outline(roof, d.points[0])]


def on_outline(roof: GeometryItem, point: Point) -> bool:
    """Whether a point lies on (within ON_OUTLINE_M of) a roof's outline."""
    outline = np.array(roof.points, dtype=float)
    edges = np.hstack([outline, np.roll(outline, -1, axis=0)])
    return bool(segment_distances(np.array([point], dtype=float), edges).min() <= ON_OUTLINE_M)


# ---------------------------------------------------------------- distances to items


@dataclass(frozen=True)
class Nearest:
    """The LPS conductor nearest a rooftop item."""

    tag: str
    distance: float
    point: Point3
    to_earth: float
    #: The down conductor that way to earth runs down.
    down: str = ""


def item_span(layout: Layout, item: GeometryItem) -> tuple[float, float]:
    """(base, top) heights of a rooftop item: from the roof under its centre to its top."""
    xs, ys = zip(*item.points, strict=True)
    base = layout.roof_height_at((sum(xs) / len(xs), sum(ys) / len(ys)))
    return min(base, item.z_m), item.z_m


def nearest_conductor(layout: Layout, item: GeometryItem) -> Nearest | None:
    """The nearest LPS conductor to an item (3D), and the conductor length from that point
    down to earth along the network; None when the site records no conductor at all."""
    network = Network.of(layout)
    if not network.edges:
        return None
    base, top = item_span(layout, item)
    footprint = np.array(item.points, dtype=float)
    best: Nearest | None = None
    for (u, v), tag in network.edges.items():
        point, gap = _nearest_on(network.nodes[u], network.nodes[v], footprint, base, top)
        if best is None or gap < best.distance - 1e-9:
            to_earth, end = min(
                (network.to_earth[u] + _dist3(point, network.nodes[u]), u),
                (network.to_earth[v] + _dist3(point, network.nodes[v]), v),
            )
            best = Nearest(tag, gap, point, to_earth, network.down_of.get(end, ""))
    return best


def _nearest_on(
    a: Point3, b: Point3, footprint: np.ndarray, base: float, top: float
) -> tuple[Point3, float]:
    """Point of a horizontal or vertical conductor nearest a prism, and the distance."""
    if a[:2] == b[:2]:  # vertical: the height nearest the item's span
        # The highest point level with the item: the longest way down, the larger s.
        z = float(np.clip(top, min(a[2], b[2]), max(a[2], b[2])))
        h = float(polygon_distance(np.array([a[:2]]), footprint)[0])
        return (a[0], a[1], z), math.hypot(h, _interval_gap(z, base, top))
    ax, ay, bx, by = a[0], a[1], b[0], b[1]
    ab = np.array([bx - ax, by - ay])
    length2 = float(ab @ ab)
    ts = [0.0, 1.0]
    ts += [float(np.clip((np.array(c) - (ax, ay)) @ ab / length2, 0, 1)) for c in footprint]
    ts += list(np.linspace(0, 1, 9)[1:-1])
    candidates = np.array([(ax + t * ab[0], ay + t * ab[1]) for t in ts])
    h = polygon_distance(candidates, footprint)
    k = int(np.argmin(h))
    z = a[2]
    return (float(candidates[k, 0]), float(candidates[k, 1]), z), math.hypot(
        float(h[k]), _interval_gap(z, base, top)
    )


def _interval_gap(z: float, low: float, high: float) -> float:
    return max(0.0, low - z, z - high)


def _dist3(p: Point3, q: Point3) -> float:
    return math.dist(p, q)


@dataclass(frozen=True)
class Network:
    """The LPS as a graph of conductor pieces, with each node's length to earth."""

    nodes: dict[int, Point3]
    edges: dict[tuple[int, int], str]
    to_earth: dict[int, float]
    #: The down conductor each node's shortest way to earth runs down.
    down_of: dict[int, str]

    @classmethod
    def of(cls, layout: Layout) -> Network:
        builder = _Builder(layout)
        return cls(builder.nodes, builder.edges, *builder.lengths_to_earth())


class _Builder:
    """Splits conductors where others join them, then runs Dijkstra from earth."""

    def __init__(self, layout: Layout) -> None:
        self.nodes: dict[int, Point3] = {}
        self.edges: dict[tuple[int, int], str] = {}
        self.links: list[tuple[int, int, float, str]] = []
        self.earth = self._node((math.nan, math.nan, 0.0))
        joints: list[tuple[Point3, int]] = []
        for d in layout.downs:
            x, y = d.points[0]
            top, foot = self._node((x, y, d.z_m)), self._node((x, y, 0.0))
            self._edge(top, foot, d.tag, down=True)
            self.links.append((foot, self.earth, 0.0, ""))
            joints.append((self.nodes[top], top))
        for t in layout.terminals:
            x, y = t.points[0]
            base_z = min(layout.roof_height_at((x, y)), t.z_m)
            tip, base = self._node((x, y, t.z_m)), self._node((x, y, base_z))
            self._edge(tip, base, t.tag)
            joints.append((self.nodes[base], base))
        ends = [
            ((*p, c.z_m), self._node((*p, c.z_m)))
            for c in layout.conductors
            for p in (c.points[0], c.points[-1])
        ]
        joints += ends
        for c in layout.conductors:
            for a, b in zip(c.points, c.points[1:], strict=False):
                self._split_run((*a, c.z_m), (*b, c.z_m), c.tag, joints)

    def _node(self, point: Point3) -> int:
        key = len(self.nodes)
        self.nodes[key] = point
        return key

    def _edge(self, u: int, v: int, tag: str, down: bool = False) -> None:
        self.edges[(u, v)] = tag
        self.links.append((u, v, _dist3(self.nodes[u], self.nodes[v]), tag if down else ""))

    def _split_run(self, a: Point3, b: Point3, tag: str, joints: list[tuple[Point3, int]]) -> None:
        """One horizontal run, cut at every joint within JOIN_M of it."""
        ab = np.array(b[:2]) - a[:2]
        length2 = float(ab @ ab) or 1e-12
        stops: list[tuple[float, int | None]] = [(0.0, None), (1.0, None)]
        for point, node in joints:
            t = float(np.clip((np.array(point[:2]) - a[:2]) @ ab / length2, 0, 1))
            on = (a[0] + t * ab[0], a[1] + t * ab[1], a[2])
            if math.dist(on[:2], point[:2]) <= JOIN_M and abs(point[2] - a[2]) <= JOIN_HEIGHT_M:
                stops.append((t, node))
        stops.sort(key=lambda s: s[0])
        previous = None
        for t, joint in stops:
            here = self._node((a[0] + t * ab[0], a[1] + t * ab[1], a[2]))
            if joint is not None:
                self.links.append((here, joint, _dist3(self.nodes[here], self.nodes[joint]), ""))
            if previous is not None:
                self._edge(previous, here, tag)
            previous = here

    def lengths_to_earth(self) -> tuple[dict[int, float], dict[int, str]]:
        """Dijkstra from earth: each node's conductor length to earth, and the down
        conductor that shortest way runs down."""
        adjacent: dict[int, list[tuple[int, float, str]]] = {n: [] for n in self.nodes}
        for u, v, w, down in self.links:
            adjacent[u].append((v, w, down))
            adjacent[v].append((u, w, down))
        best = {n: math.inf for n in self.nodes}
        best[self.earth] = 0.0
        down_of: dict[int, str] = {}
        queue = [(0.0, self.earth)]
        while queue:
            d, n = heapq.heappop(queue)
            if d > best[n]:
                continue
            for m, w, down in adjacent[n]:
                if d + w < best[m]:
                    best[m] = d + w
                    down_of[m] = down or down_of.get(n, "")
                    heapq.heappush(queue, (d + w, m))
        return best, down_of
