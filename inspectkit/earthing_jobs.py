"""Earthing records as jobs: record a Wenner survey, list or withdraw one, size an electrode.

The `soil` and `electrode` commands and the screens call these and nothing else.
Each checks everything before it writes, in one transaction, so a refused entry
leaves the database as it was; a refusal names the input and what to type.
"""

from __future__ import annotations

from datetime import date, datetime
from typing import Any

from pydantic import ValidationError

from inspectkit.earthing_input import parse_survey
from inspectkit.model import (
    Component,
    ComponentKind,
    ElectrodeOrientation,
    Site,
    SoilSurvey,
    explain,
)
from inspectkit.store import Store
from inspectkit.units import UnitError, parse_length


class EarthingInputError(ValueError):
    """An entry refused before anything was written; `field` names the input at fault."""

    def __init__(self, field: str, message: str) -> None:
        super().__init__(message)
        self.field = field


def _validated(model: type[Any], data: dict[str, Any], now: datetime | date | None) -> Any:
    try:
        return model.model_validate(data, context={"now": now} if now is not None else None)
    except ValidationError as exc:
        first = exc.errors()[0]
        name = str(first["loc"][0]) if first["loc"] else "record"
        raise EarthingInputError(name, explain(exc).removeprefix(f"{name}: ")) from None


def _optional_length(text: str, field: str) -> float | None:
    if not text.strip():
        return None
    try:
        return parse_length(text, field)
    except UnitError as exc:
        raise EarthingInputError(field, str(exc).removeprefix(f"{field}: ")) from None


def record_survey(
    store: Store,
    site_id: str,
    day: date,
    points: str,
    *,
    direction: str = "",
    depth: str = "",
    chosen_spacing: str = "",
    instrument_id: str | None = None,
    note: str = "",
    now: datetime | None = None,
) -> SoilSurvey:
    """Save a Wenner survey typed as `1 m=25.1; 2 m=11.9; 4 m=5.6` (spacing=reading).

    Raises:
        EarthingInputError: no such site, or a point, the depth, the chosen
            spacing or the date is refused; nothing is written.
    """
    if store.get(Site, site_id) is None:
        raise EarthingInputError("site", f"no site with id {site_id}")
    try:
        stored = parse_survey(points)
    except UnitError as exc:
        raise EarthingInputError("points", str(exc)) from None
    data = {
        "site_id": site_id,
        "date": day,
        "direction": direction,
        "probe_depth_m": _optional_length(depth, "depth"),
        "points": stored,
        "chosen_spacing_m": _optional_length(chosen_spacing, "chosen_spacing_m"),
        "instrument_id": instrument_id,
        "note": note,
    }
    return store.save(_validated(SoilSurvey, data, now))


def withdraw_survey(store: Store, survey_id: str) -> SoilSurvey:
    """Take back a survey recorded by mistake; the audit log keeps it.

    Raises:
        EarthingInputError: no survey has that id.
    """
    survey = store.get(SoilSurvey, survey_id)
    if survey is None:
        raise EarthingInputError("survey", f"no soil survey with id {survey_id}")
    store.delete(SoilSurvey, survey_id)
    return survey


def size_electrode(
    store: Store,
    component: Component,
    *,
    orientation: str = "",
    length: str = "",
    diameter: str = "",
    ring_radius: str = "",
) -> Component:
    """Record an electrode's lie, length, diameter or ring radius (those given; others kept).

    Raises:
        EarthingInputError: the component is not an earth electrode, or a value is refused.
    """
    if component.kind is not ComponentKind.EARTH_ELECTRODE:
        raise EarthingInputError(
            "tag", f"{component.tag} is a {component.kind.label}; sizes are for earth electrodes"
        )
    changes: dict[str, Any] = {}
    if orientation.strip():
        try:
            changes["electrode_orientation"] = ElectrodeOrientation(orientation.strip().lower())
        except ValueError:
            allowed = ", ".join(o.value for o in ElectrodeOrientation)
            raise EarthingInputError(
                "orientation", f"{orientation!r} is not an orientation; use one of: {allowed}"
            ) from None
    for name, text in (("length_m", length), ("diameter_m", diameter),
                       ("ring_radius_m", ring_radius)):  # fmt: skip
        value = _optional_length(text, name)
        if value is not None:
            changes[name] = value
    updated = _validated(Component, {**component.model_dump(), **changes}, None)
    return store.save(updated)
