"""The separation distance a conductive rooftop item not bonded to the LPS must keep
(IEC 62305-3 6.3), and what its clearance says.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from inspectkit.engine.iec62305 import (
    SEPARATION_KI,
    SEPARATION_KM,
    separation_distance_m,
    separation_kc,
)
from inspectkit.engine.lps_layout import Layout, nearest_conductor
from inspectkit.geometry_model import GeometryItem
from inspectkit.model import ProtectionLevel, Severity

#: A clearance less than this much above the separation distance is to watch (our default).
SEPARATION_MARGIN = 0.20


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


def separation_sentence(item: GeometryItem, sep: Separation | None) -> tuple[Severity, str]:
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
