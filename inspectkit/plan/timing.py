"""How long a visit takes on site and how long the drive between two sites takes."""

from __future__ import annotations

from collections import Counter
from collections.abc import Iterable, Mapping
from datetime import date

from inspectkit.engine.history import in_service
from inspectkit.model import Component, ComponentKind, InspectionKind
from inspectkit.plan.settings import PlanSettings


def component_counts(components: Iterable[Component], on: date) -> Counter[ComponentKind]:
    """Components in service on the day, by kind: what the inspector has to walk."""
    return Counter(c.kind for c in components if in_service(c, on))


def onsite_minutes(
    counts: Mapping[ComponentKind, int],
    kinds: Iterable[InspectionKind],
    settings: PlanSettings,
    rechecks: int = 0,
) -> float:
    """Set-up, then each component for each inspection done, then each defect re-checked.

    Args:
        counts: components by kind.
        kinds: the inspections done on the visit (visual, complete, post-strike).
        settings: minutes per component and per visit.
        rechecks: open defects whose remedial action is looked at.
    """
    minutes = settings.setup_minutes + rechecks * settings.recheck_minutes
    for kind in kinds:
        table = settings.minutes[kind]
        minutes += sum(table[c] * n for c, n in counts.items())
    return minutes


def travel_minutes(km: float, settings: PlanSettings) -> float:
    """Driving minutes for a great-circle distance, stretched by the road factor."""
    return km * settings.road_factor / settings.speed_kmh * 60.0
