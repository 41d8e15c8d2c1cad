"""A reading typed in the walkdown: checked, saved at once and judged; or taken back.

Every reading passes `intake.refusal` before it is saved, as one from the command line,
a CSV file or a bundle does.
"""

from __future__ import annotations

from datetime import datetime
from typing import Any

from inspectkit import intake
from inspectkit.earthing_values import Traverse
from inspectkit.engine.electrodes import traverse_reading
from inspectkit.engine.formula_inputs import EarthingError
from inspectkit.model import (
    DEFAULT_METHOD,
    JOINT_FOR,
    Component,
    Inspection,
    JointState,
    Method,
    Quantity,
    Reading,
    SoilCondition,
    utcnow,
)
from inspectkit.store import Store
from inspectkit.store.visit_queries import component_readings
from inspectkit.units import Measured, UnitError, parse
from inspectkit.walkdown.errors import WalkdownError, save_entry, validated
from inspectkit.walkdown.judging import ReadingOutcome, SiteContext, judge_reading, site_context
from inspectkit.walkdown.visit import open_inspection


def record_reading(
    store: Store,
    inspection_id: str,
    component_id: str,
    quantity: Quantity | str,
    text: str,
    method: Method | str | None = None,
    instrument_id: str | None = None,
    joint_state: JointState | str | None = None,
    soil: SoilCondition | str | None = None,
    note: str = "",
    *,
    unreliable: bool = False,
    taken_at: datetime | None = None,
    context: SiteContext | None = None,
    traverse: Traverse | None = None,
) -> ReadingOutcome:
    """Save what the inspector typed for one quantity of one component, and judge it.

    Typing again for the same component and quantity in the same visit corrects the
    reading rather than adding a second one. Nothing is saved unless the whole entry
    is valid.

    Args:
        text: What the instrument showed, as typed (`3.9`, `180 mΩ`, `OL`).
        method: How it was measured; the usual method for the quantity when None.
        joint_state: Open or closed; taken from the quantity for earth readings.
        unreliable: The inspector doubts the reading (leads, probes, weather): it is
            kept but does not count as a pass.
        taken_at: When it was read (default: now); it must lie on the visit's day
            (`intake.refusal`).
        context: The site's profile and parts, if the caller holds them already
            (the screen does, for the whole walk).
        traverse: A fall-of-potential traverse (`earthing_input.parse_traverse`);
            its value at 61.8 % of E–C is the reading, and `text` stays empty.

    Raises:
        WalkdownError: the text, method, state or note is not valid; the quantity,
            time or instrument does not fit (`intake.refusal`); or the inspection is
            signed or finished; `field` says which.
    """
    inspection = open_inspection(store, inspection_id)
    if context is None or context.site.id != inspection.site_id:
        context = site_context(store, inspection.site_id)
    component = context.part(component_id)
    quantity = _validated_enum(Quantity, quantity, "quantity")
    measured = _measured(text, quantity, traverse)
    if traverse is not None:
        method = method or Method.FALL_OF_POTENTIAL_3P
    now = utcnow()
    existing = component_readings(store, inspection_id, component_id, quantity)
    data: dict[str, Any] = {
        "inspection_id": inspection_id,
        "component_id": component_id,
        "quantity": quantity,
        "value": measured.value,
        "over_range": measured.over_range,
        "method": method or DEFAULT_METHOD[quantity],
        "joint_state": joint_state or JOINT_FOR.get(quantity),
        "instrument_id": instrument_id or None,
        "taken_at": taken_at or now,
        "soil": soil or None,
        "note": note,
        "unreliable": unreliable,
        "traverse": traverse.to_text() if traverse is not None else None,
    }
    if existing:
        data["id"] = existing[0].id
        data["created_at"] = existing[0].created_at
    reading = validated(Reading, data, now=now)
    _refuse_misfit(store, reading, inspection, component, context)
    reading = save_entry(store, reading)
    return judge_reading(store, inspection, reading, context)


def _measured(text: str, quantity: Quantity, traverse: Traverse | None) -> Measured:
    """The value typed for the quantity, or the one its traverse gives."""
    if traverse is not None:
        return traverse_value(traverse, text)
    try:
        return parse(text, quantity)
    except UnitError as exc:
        raise WalkdownError("value", str(exc)) from None


def _refuse_misfit(
    store: Store,
    reading: Reading,
    inspection: Inspection,
    component: Component,
    context: SiteContext,
) -> None:
    """Raise `intake.refusal`'s answer when the reading does not fit where it is going."""
    instrument = context.instrument(store, reading.instrument_id) if reading.instrument_id else None
    window = intake.reading_window(store)
    refused = intake.refusal(reading, inspection, component, instrument, window)
    if refused is not None:
        raise WalkdownError(refused.field, str(refused))


def traverse_value(traverse: Traverse, text: str) -> Measured:
    """The reading a traverse gives: its value at 61.8 % of E–C, to four significant digits.

    Raises:
        WalkdownError: a value was typed as well, or the traverse does not
            straddle 61.8 % of the E–C distance.
    """
    if text.strip():
        raise WalkdownError(
            "value", "a traverse gives the value (at 61.8 % of E–C); leave the value empty"
        )
    try:
        return Measured(traverse_reading(traverse))
    except EarthingError as exc:
        raise WalkdownError("traverse", str(exc)) from None


def withdraw_reading(
    store: Store, inspection_id: str, component_id: str, quantity: Quantity | str
) -> Reading:
    """Take back a reading saved by mistake (the wrong joint, the wrong visit).

    The reading leaves the visit, and the audit log keeps it; a bundle carries the
    withdrawal to the other laptops. A signed inspection's readings stay: amend it.

    Raises:
        WalkdownError: the inspection is signed, or there is no such reading.
    """
    open_inspection(store, inspection_id)
    quantity = _validated_enum(Quantity, quantity, "quantity")
    saved = component_readings(store, inspection_id, component_id, quantity)
    if not saved:
        raise WalkdownError("quantity", f"no {quantity.label} is saved for this component")
    with store.transaction():
        for reading in saved:
            store.delete(Reading, reading.id)
    return saved[0]


def _validated_enum(enum: type[Any], value: Any, name: str) -> Any:
    try:
        return enum(value)
    except ValueError:
        allowed = ", ".join(m.value for m in enum)
        raise WalkdownError(name, f"{value!r} is not a {name}; use one of: {allowed}") from None
