"""The installed LPS against its protection level: rooftop items in the protected volume,
separation distances, mesh size and down-conductor spacing.

`assess` judges a site's geometry (see `geometry_model`) and returns a verdict per
rooftop item and per system check, for the site screen and the report; the rule
`conformity` turns the ones that need acting on into results for `check`. A site
with no geometry recorded is not judged at all.
"""

from __future__ import annotations

import math
from collections.abc import Iterator, Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from inspectkit.engine.earthing import (
    DOWN_CONDUCTOR_SPACING_M,
    MESH_SIZE_M,
    ROLLING_SPHERE_RADIUS_M,
    SEPARATION_KI,
    SEPARATION_KM,
    separation_distance_m,
    separation_kc,
)
from inspectkit.engine.lps_layout import (
    ON_OUTLINE_M,
    Layout,
    downs_on,
    item_span,
    largest_gap,
    mesh_cells,
    nearest_conductor,
    perimeter_positions,
)
from inspectkit.engine.results import Result
from inspectkit.engine.rolling_sphere import (
    COARSE_MAX_CELLS,
    COARSE_TOLERANCE_M,
    ENVELOPE_TOLERANCE_M,
    Obstacles,
    envelope_height,
    inside_polygon,
    polygon_distance,
    rod_height_to_cover,
)
from inspectkit.model import ProtectionLevel, Severity, Site
from inspectkit.model.geometry import GeometryItem

if TYPE_CHECKING:
    from inspectkit.engine.rules import SiteFacts

#: An item whose top is within this of the protected volume's edge is to watch (our default):
#: a measuring slip of that size, or a taller replacement, would leave it exposed.
PROTECTION_MARGIN_M = 0.25
#: A clearance less than this much above the separation distance is to watch (our default).
SEPARATION_MARGIN = 0.20
#: Mesh cells and down-conductor gaps up to this much above the table's figure are to watch,
#: beyond it they fail (our default: positions measured on a roof are approximate).
TABLE_TOLERANCE = 0.10
#: Points on an item's top are tried along its edges and across it this far apart, or
#: closer on a small item (our default).
TOP_SPACING_M = 0.5
#: The rod height of a fix is found to within this (our default).
FIX_RESOLUTION_M = 0.05
#: Least number of down conductors (IEC 62305-3 clause 5.3, from memory).
MIN_DOWN_CONDUCTORS = 2

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


@dataclass(frozen=True)
class Separation:
    """Separation distance of a conductive item not bonded to the LPS (IEC 62305-3 6.3)."""

    required_m: float
    clearance_m: float
    measured: bool
    length_m: float
    nearest_tag: str
    down_tag: str
    ki: float
    kc: float
    km: float


@dataclass(frozen=True)
class Verdict:
    """One judged thing: a rooftop item, or a system check (mesh, down conductors).

    Attributes:
        tag: the item's or roof's tag, or "DC" for the down-conductor count.
        severity: ok, watch or fail.
        message: what was found and what to do, in one or two sentences.
        value, limit, unit: the figure judged and what it was judged against.
    """

    tag: str
    severity: Severity
    message: str
    value: float | None = None
    limit: float | None = None
    unit: str | None = None
    item: GeometryItem | None = None
    protection: Protection | None = None
    separation: Separation | None = None


@dataclass(frozen=True)
class Conformity:
    """A site's geometry judged against its protection level."""

    level: ProtectionLevel
    radius_m: float
    items: tuple[Verdict, ...]
    system: tuple[Verdict, ...]
    recorded: bool

    @property
    def resolution(self) -> str:
        """How exact the numerical test is, for the screen and the report."""
        return (
            f"rolling sphere r = {self.radius_m:g} m (IEC 62305-3 Table 2); protected volume's "
            f"edge bracketed within {ENVELOPE_TOLERANCE_M * 100:g} cm at points of each item's "
            f"top up to {TOP_SPACING_M:g} m apart, judged on the low side"
        )


def assess(site: Site, geometry: Sequence[GeometryItem]) -> Conformity:
    """Judge a site's recorded geometry against its protection level.

    The same geometry is judged once per process: the screens ask again on every
    refresh, and the rolling sphere takes a second or so per item.
    """
    key = (site.protection_level, site.design_standard, *(g.model_dump_json() for g in geometry))
    if key not in _JUDGED:
        if len(_JUDGED) >= _JUDGED_KEPT:
            _JUDGED.pop(next(iter(_JUDGED)))
        _JUDGED[key] = _assess(site.protection_level, site.design_standard, geometry)
    return _JUDGED[key]


#: Sites judged in this process, by their level, standard and geometry (oldest first).
_JUDGED: dict[tuple[str, ...], Conformity] = {}
_JUDGED_KEPT = 64


def _assess(
    level: ProtectionLevel, design_standard: str, geometry: Sequence[GeometryItem]
) -> Conformity:
    r = ROLLING_SPHERE_RADIUS_M[level]
    layout = Layout.of(geometry)
    if not geometry:
        return Conformity(level, r, (), (), recorded=False)
    obstacles, tags = layout.obstacles()
    edition = "2006" if "2006" in design_standard else "2010"
    items = tuple(
        _judge_item(layout, item, obstacles, tags, level, edition) for item in layout.items
    )
    system = (*_mesh_verdicts(layout, level), *_down_verdicts(layout, level))
    return Conformity(level, r, items, system, recorded=True)


def conformity(facts: SiteFacts) -> Iterator[Result]:
    """Rule: rooftop items exposed or too close, and mesh or down conductors off the level."""
    if not facts.records.geometry:
        return
    site = facts.records.site
    judged = assess(site, facts.records.geometry)
    for verdict in (*judged.items, *judged.system):
        if verdict.severity is not Severity.OK:
            yield Result(
                severity=verdict.severity,
                rule="conformity",
                site_id=site.id,
                site_name=site.name,
                message=verdict.message,
                component_id=verdict.item.component_id if verdict.item else None,
                component_tag=verdict.tag,
                value=verdict.value,
                limit=verdict.limit,
                unit=verdict.unit,
            )


# ---------------------------------------------------------------- rooftop items


def _judge_item(
    layout: Layout,
    item: GeometryItem,
    obstacles: Obstacles,
    tags: list[str],
    level: ProtectionLevel,
    edition: str,
) -> Verdict:
    r = ROLLING_SPHERE_RADIUS_M[level]
    protection = protection_of(layout, item, obstacles, tags, r)
    separation = separation_of(layout, item, level, edition)
    what = f"{item.tag} ({item.what})" if item.what else item.tag
    parts, severity = [], Severity.OK
    if protection.exposed:
        severity = Severity.FAIL
        parts.append(
            f"{what} is outside the protected volume: its top is {protection.exposure_m:.2f} m "
            f"above it at ({protection.worst[0]:.1f}, {protection.worst[1]:.1f}); "
            f"{protection.fix}"
        )
    elif -protection.exposure_m < PROTECTION_MARGIN_M:
        severity = Severity.WATCH
        parts.append(
            f"{what} is protected by only {-protection.exposure_m:.2f} m (watch below "
            f"{PROTECTION_MARGIN_M:g} m): re-measure its height and the nearest air terminals"
        )
    else:
        parts.append(
            f"{what} is protected ({-protection.exposure_m:.2f} m inside the protected volume"
            + (f", under {', '.join(protection.resting_on)})" if protection.resting_on else ")")
        )
    sep_severity, sentence = _separation_sentence(item, separation)
    if sentence:
        parts.append(sentence)
    if sep_severity.rank > severity.rank:
        severity = sep_severity
    value, limit, unit = protection.exposure_m, 0.0, "m"
    if separation is not None and sep_severity is not Severity.OK and not protection.exposed:
        value, limit = separation.clearance_m, separation.required_m
    return Verdict(
        tag=item.tag,
        severity=severity,
        message="; ".join(parts) + ".",
        value=value,
        limit=limit,
        unit=unit,
        item=item,
        protection=protection,
        separation=separation,
    )


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


def separation_of(
    layout: Layout, item: GeometryItem, level: ProtectionLevel, edition: str
) -> Separation | None:
    """s = ki·(kc/km)·l for a conductive item not bonded to the LPS (IEC 62305-3 6.3,
    simplified), with l the conductor length from its nearest point down to earth."""
    if not item.conductive or item.bonded:
        return None
    nearest = nearest_conductor(layout, item)
    if nearest is None or not math.isfinite(nearest.to_earth) or not layout.downs:
        return None
    material = item.separated_by.value
    kc = separation_kc(len(layout.downs), edition)  # type: ignore[arg-type]
    required = separation_distance_m(
        level,
        len(layout.downs),
        nearest.to_earth,
        material,
        edition,  # type: ignore[arg-type]
    )
    measured = item.clearance_m is not None
    clearance = item.clearance_m if item.clearance_m is not None else nearest.distance
    return Separation(
        required_m=required,
        clearance_m=clearance,
        measured=measured,
        length_m=nearest.to_earth,
        nearest_tag=nearest.tag,
        down_tag=nearest.down,
        ki=SEPARATION_KI[level],
        kc=kc,
        km=SEPARATION_KM[material],
    )


def _separation_sentence(item: GeometryItem, sep: Separation | None) -> tuple[Severity, str]:
    if not item.conductive:
        return Severity.OK, ""
    if item.bonded:
        return Severity.OK, "bonded to the LPS, so no separation distance applies"
    if sep is None:
        return Severity.WATCH, (
            "conductive and not bonded, but no conductor path to earth is recorded to work "
            "out its separation distance; record the down conductors"
        )
    how = "measured" if sep.measured else "from the drawn positions"
    where = sep.nearest_tag
    if sep.down_tag and sep.down_tag != sep.nearest_tag:
        where += f" (l runs down {sep.down_tag})"
    figures = (
        f"s = {sep.ki:g} × {sep.kc:g}/{sep.km:g} × {sep.length_m:.1f} m = {sep.required_m:.2f} m "
        f"from {where}, clearance {sep.clearance_m:.2f} m ({how})"
    )
    if sep.clearance_m < sep.required_m:
        return Severity.FAIL, (
            f"too close to the LPS for an unbonded metal part: {figures}; bond it to "
            f"{sep.nearest_tag} or move it {sep.required_m - sep.clearance_m:.2f} m further away"
        )
    if sep.clearance_m < sep.required_m * (1 + SEPARATION_MARGIN):
        return Severity.WATCH, (
            f"clearance within {SEPARATION_MARGIN:.0%} of the separation distance: {figures}"
        )
    return Severity.OK, f"separation kept: {figures}"


# ---------------------------------------------------------------- the system


def _table_severity(value: float, limit: float) -> Severity:
    if value <= limit:
        return Severity.OK
    return Severity.WATCH if value <= limit * (1 + TABLE_TOLERANCE) else Severity.FAIL


def _mesh_verdicts(layout: Layout, level: ProtectionLevel) -> Iterator[Verdict]:
    """Each roof with conductors: its largest mesh cell against the level's mesh size."""
    limit = MESH_SIZE_M[level]
    for roof in layout.roofs:
        conductors = [c for c in layout.conductors if _on_roof(c, roof)]
        if not conductors:
            continue
        cells = mesh_cells(roof, conductors)
        if not cells:
            continue
        short, long = cells[0]
        severity = _table_severity(long, limit)
        if severity is not Severity.OK and any(_on_roof(t, roof) for t in layout.terminals):
            severity = Severity.WATCH  # air terminals share the work: the sphere decides
        said = (
            f"roof {roof.tag}: largest mesh cell about {short:.1f} × {long:.1f} m against "
            f"{limit:g} × {limit:g} m for level {level.value} (IEC 62305-3 Table 2)"
        )
        if severity is not Severity.OK:
            said += "; add conductors to divide it"
        yield Verdict(roof.tag, severity, said + ".", long, limit, "m")


def _down_verdicts(layout: Layout, level: ProtectionLevel) -> Iterator[Verdict]:
    """The number of down conductors, and the largest gap between them round each roof."""
    count = len(layout.downs)
    if count < MIN_DOWN_CONDUCTORS:
        yield Verdict(
            "DC",
            Severity.FAIL,
            f"{count} down conductor(s) recorded; an LPS needs at least {MIN_DOWN_CONDUCTORS} "
            "(IEC 62305-3 clause 5.3, from memory): add them or record the missing ones.",
            float(count),
            float(MIN_DOWN_CONDUCTORS),
            "count",
        )
    spacing = DOWN_CONDUCTOR_SPACING_M[level]
    for roof in layout.roofs:
        on = downs_on(roof, layout.downs)
        if not on:
            continue
        perimeter, positions = perimeter_positions(roof.points, [d.points[0] for d in on])
        gap = largest_gap(perimeter, positions)
        severity = _table_severity(gap, spacing)
        said = (
            f"roof {roof.tag}: {len(on)} down conductor(s) round a {perimeter:.0f} m outline, "
            f"largest gap {gap:.1f} m against the typical {spacing:g} m for level "
            f"{level.value} (IEC 62305-3 Table 4)"
        )
        if severity is not Severity.OK:
            said += "; add a down conductor in the longest gap"
        yield Verdict(roof.tag, severity, said + ".", gap, spacing, "m")


def _on_roof(part: GeometryItem, roof: GeometryItem) -> bool:
    """A conductor or rod belongs to a roof when its middle lies over it or on its edge,
    a little above it."""
    middle = np.array(part.points, dtype=float).mean(axis=0)[None, :]
    near = polygon_distance(middle, np.array(roof.points, dtype=float))[0] <= ON_OUTLINE_M
    return bool(near) and roof.z_m - 0.5 <= part.z_m <= roof.z_m + 2.0
