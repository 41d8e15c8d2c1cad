"""A demo site's earthing: rod sizes, Wenner surveys and fall-of-potential traverses.

All invented. Survey readings are worked back from the ρ the scenario asks for,
through the same Wenner formula the engine uses, so the demo shows the ground
the scenario describes. A traverse is drawn from the potential of a hemisphere
electrode in uniform soil (the model behind the 61.8 % rule), sized to match the
rod, with a little scatter; its value at 61.8 % becomes the reading.
"""

from __future__ import annotations

import math
import random
import uuid
from datetime import UTC, datetime, time, timedelta
from typing import TYPE_CHECKING

from inspectkit.earthing_values import Traverse, make_traverse, survey_text
from inspectkit.engine.fall_of_potential import plateau_check
from inspectkit.engine.wenner import wenner_resistivity
from inspectkit.model import (
    ComponentKind,
    ElectrodeOrientation,
    ElectrodeType,
    Quantity,
    SoilSurvey,
)

if TYPE_CHECKING:
    from inspectkit.demo.scenario import EarthingSpec, SurveySpec
    from inspectkit.demo.visits import SiteHistory

#: Where the potential probe goes along a demo traverse, as fractions of E–C.
TRAVERSE_FRACTIONS = (0.1, 0.2, 0.3, 0.4, 0.52, 0.618, 0.72, 0.8, 0.9)


def add_earthing(history: SiteHistory, latest_inspection_id: str) -> list[SoilSurvey]:
    """Size the site's rods, take traverses on the latest complete visit; return the surveys.

    Draws from a generator of its own, seeded from the anchor and the site, so the
    rest of the demo (every other site's readings) is what it would be without it.
    """
    spec = history.spec.earthing
    if spec is None:
        return []
    rng = random.Random(f"inspectkit-demo-earthing:{history.anchor.isoformat()}:{history.spec.key}")
    _size_rods(history, spec)
    _traverses(history, spec, latest_inspection_id, rng)
    return [_survey(history, n, s, rng) for n, s in enumerate(spec.survey)]


def _size_rods(history: SiteHistory, spec: EarthingSpec) -> None:
    if spec.rod_length_m is None:
        return
    short = {s.tag: s.length_m for s in spec.short_rods}
    for tag in short:
        history.system.tagged(tag)
    sized = []
    for component in history.system.components:
        if (
            component.kind is ComponentKind.EARTH_ELECTRODE
            and component.electrode_type is ElectrodeType.ROD
        ):
            length = short.get(component.tag, spec.rod_length_m)
            update = {
                "electrode_orientation": ElectrodeOrientation.VERTICAL,
                "length_m": length,
                "diameter_m": spec.rod_diameter_mm / 1000,
            }
            if component.tag in short:
                update["material"] = f"copper-bonded steel rod, {length:g} m, refusal on rock"
            component = component.model_copy(update=update)
        sized.append(component)
    history.system.components[:] = sized


def _traverses(
    history: SiteHistory, spec: EarthingSpec, inspection_id: str, rng: random.Random
) -> None:
    by_tag = {c.id: c for c in history.system.components}
    wanted = {history.system.tagged(tag).id for tag in spec.traverse}
    for n, reading in enumerate(history.readings):
        if (
            reading.inspection_id != inspection_id
            or reading.component_id not in wanted
            or reading.quantity is not Quantity.EARTH_ISOLATED
            or reading.value is None
        ):
            continue
        rod = by_tag[reading.component_id]
        traverse = _hemisphere_traverse(
            rng, reading.value, rod.length_m or 3.0, rod.diameter_m or 0.016,
            spec.current_probe_m,
        )  # fmt: skip
        value = plateau_check(traverse.points, traverse.current_probe_m).resistance_ohm
        history.readings[n] = reading.model_copy(
            update={"traverse": traverse.to_text(), "value": float(f"{value:.4g}")}
        )


def _hemisphere_traverse(
    rng: random.Random, true_ohm: float, length_m: float, diameter_m: float, c: float
) -> Traverse:
    """R(x) = ρ/2π·(1/r − 1/(D−r) − 1/x + 1/(D−x)) with r the rod's equivalent hemisphere.

    A hemisphere of radius r has R = ρ/(2πr); Dwight's rod formula gives the r
    with the same resistance, r = L/(ln(8L/d) − 1), whatever ρ.
    """
    r = length_m / (math.log(8 * length_m / diameter_m) - 1)
    points = []
    for fraction in TRAVERSE_FRACTIONS:
        x = fraction * c
        shape = 1 - r / (c - r) - r / x + r / (c - x)
        scatter = math.exp(rng.gauss(0, 0.004))
        points.append((round(x, 2), round(max(true_ohm * shape * scatter, 0.01), 3)))
    return make_traverse(c, points)


def _survey(
    history: SiteHistory, number: int, spec: SurveySpec, rng: random.Random
) -> SoilSurvey:
    day = history.anchor - timedelta(days=spec.days_before)
    taken = datetime.combine(day, time(11, 0), UTC) + timedelta(minutes=number)
    points = [
        (a, round(rho / wenner_resistivity(a, 1.0, spec.depth_m), 4))
        for a, rho in spec.rho
    ]
    instrument = next(
        i for i, use in history.demo.instruments.values()
        if use == "earth" and (i.calibration_due is None or i.calibration_due >= day)
    )  # fmt: skip
    return SoilSurvey.model_validate(
        {
            "id": str(uuid.UUID(int=rng.getrandbits(128), version=4)),
            "site_id": history.site.id,
            "date": day,
            "direction": spec.direction,
            "probe_depth_m": spec.depth_m or None,
            "points": survey_text(points),
            "chosen_spacing_m": spec.chosen_spacing_m,
            "instrument_id": instrument.id,
            "created_at": taken,
            "updated_at": taken,
            "updated_by": history.visits[-1].inspection.updated_by,
        },
        context=history.demo.validation,
    )
