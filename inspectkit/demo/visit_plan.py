"""When a demo site was visited, by whom, and the names the scenario file gives visits.

Complete inspections are counted back from the anchor on the site's rhythm, visual
ones fall between them, and the initial one is at installation.
"""

from __future__ import annotations

import random
from datetime import UTC, date, datetime, time, timedelta
from itertools import pairwise

from dateutil.relativedelta import relativedelta

from inspectkit.demo.context import DemoContext, Visit, stamps
from inspectkit.demo.ground import soil_on, weather_in
from inspectkit.demo.scenario import ScenarioError, SiteSpec
from inspectkit.model import Inspection, InspectionKind, InspectionState, SoilCondition


def visit_plan(
    spec: SiteSpec, start: date, anchor: date, rng: random.Random
) -> list[tuple[InspectionKind, date]]:
    """The site's visits: initial, complete ones counted back, visuals between."""
    completes: list[date] = []
    day = anchor - timedelta(days=spec.last_complete_days)
    while day > start + timedelta(days=90):
        completes.append(day)
        day = day - relativedelta(months=spec.complete_every_months)
        day += timedelta(days=rng.randint(-5, 30))
    completes.reverse()
    visuals: list[date] = []
    every = spec.visual_every_months
    if every:
        for begin, end in pairwise([start, *completes]):
            visuals.extend(_visual_days(every, begin, end - timedelta(days=45), rng))
    if spec.visuals_after is not None:
        visuals.extend(anchor - timedelta(days=days) for days in spec.visuals_after)
    elif every and completes:
        visuals.extend(_visual_days(every, completes[-1], anchor - timedelta(days=7), rng))
    plan = [(InspectionKind.INITIAL, start)]
    plan += [(InspectionKind.COMPLETE, d) for d in completes]
    plan += [(InspectionKind.VISUAL, d) for d in visuals]
    return sorted(plan, key=lambda item: item[1])


def _visual_days(every_months: int, begin: date, before: date, rng: random.Random) -> list[date]:
    days = []
    day = begin
    while True:
        day = day + relativedelta(months=every_months)
        day -= timedelta(days=rng.randint(0, 15))
        if day >= before:
            return days
        days.append(day)


def new_visit(
    demo: DemoContext,
    site_id: str,
    inspectors: list[str],
    kind: InspectionKind,
    day: date,
    *,
    finished: bool = True,
) -> Visit:
    """An inspection of the site by one of its `inspectors` (keys), its clock at the start."""
    rng = demo.rng
    # The baseline is taken in normal ground, so later scatter is measured against it.
    soil = SoilCondition.NORMAL if kind is InspectionKind.INITIAL else soil_on(day, rng)
    key = rng.choice(inspectors)
    start = datetime.combine(day, time(8, 0), UTC)
    if finished:
        start += timedelta(minutes=rng.randint(0, 150))
    inspection = Inspection.model_validate(
        {
            "id": demo.new_id(),
            "site_id": site_id,
            "kind": kind,
            "date": day,
            "inspector_id": demo.inspectors[key].id,
            "weather": weather_in(soil, rng),
            "soil": soil,
            "state": InspectionState.DRAFT,
            "finished": finished,
            **stamps(start, demo.logins[key]),
        },
        context=demo.validation,
    )
    return Visit(inspection, start)


class VisitRefs(dict[str, Visit]):
    """The site's visits by the names the scenario file uses; a wrong name is reported."""

    def __missing__(self, name: str) -> Visit:
        known = ", ".join(sorted(self))
        raise ScenarioError(f"no visit {name!r} on this site; the site has: {known}")


def visit_refs(visits: list[Visit]) -> VisitRefs:
    """Names the scenario file uses for the site's finished visits (complete-1 …)."""
    refs = VisitRefs()
    finished = [v for v in visits if v.inspection.finished]
    for kind in InspectionKind:
        of_kind = [v for v in finished if v.inspection.kind is kind]
        for n, visit in enumerate(reversed(of_kind), start=1):
            refs[f"{kind.value}-{n}"] = visit
    refs["initial"] = refs["initial-1"]
    refs["latest"] = finished[-1]
    return refs
