"""The LPS as a system against its protection level: each roof's largest mesh cell, the
number of down conductors and the largest gap between them.
"""

from __future__ import annotations

from collections.abc import Iterator

import numpy as np

from inspectkit.engine.conformity_verdicts import Verdict
from inspectkit.engine.iec62305 import DOWN_CONDUCTOR_SPACING_M, MESH_SIZE_M
from inspectkit.engine.lps_layout import (
    ON_OUTLINE_M,
    Layout,
    downs_on,
    largest_gap,
    mesh_cells,
    perimeter_positions,
)
from inspectkit.engine.rolling_sphere import polygon_distance
from inspectkit.geometry_model import GeometryItem
from inspectkit.model import ProtectionLevel, Severity

#: Mesh cells and down-conductor gaps up to this much above the table's figure are to watch,
#: beyond it they fail (our default: positions measured on a roof are approximate).
TABLE_TOLERANCE = 0.10
#: Least number of down conductors (IEC 62305-3 clause 5.3, from memory).
MIN_DOWN_CONDUCTORS = 2


def _table_severity(value: float, limit: float) -> Severity:
    if value <= limit:
        return Severity.OK
    return Severity.WATCH if value <= limit * (1 + TABLE_TOLERANCE) else Severity.FAIL


def mesh_verdicts(layout: Layout, level: ProtectionLevel) -> Iterator[Verdict]:
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


def down_verdicts(layout: Layout, level: ProtectionLevel) -> Iterator[Verdict]:
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
