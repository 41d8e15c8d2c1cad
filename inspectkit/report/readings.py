"""A visit's readings as the report's table shows them: value, limit, result and soil, in words.

The result of each reading is the engine's (`check_site` as of the visit's day),
never a second copy of the rules.
"""

from __future__ import annotations

from collections import Counter

from inspectkit.engine.check import SiteCheck
from inspectkit.engine.history import electrode_count, series
from inspectkit.engine.results import SEVERITY_WORDS, Result
from inspectkit.model import (
    WALKING_ORDER,
    Component,
    Inspection,
    Method,
    Quantity,
    Reading,
    Severity,
    SiteRecords,
)
from inspectkit.profiles import Profile
from inspectkit.report.content import ReadingRow
from inspectkit.units import format_value

#: Words for the engine's severities, as a reading's result or the verdict.
RESULT_WORDS = {s: w.shout for s, w in SEVERITY_WORDS.items()}
#: Why a reading got its result, by the engine rule that gave it.
_RULE_REASONS = {
    "limit": "above the limit",
    "rise": "rise on earlier readings",
    "calibration": "instrument out of calibration",
    "unreliable": "marked doubtful",
}

#: How each method is written in a report.
METHOD_WORDS = {
    Method.FALL_OF_POTENTIAL_3P: "fall of potential (3-pole)",
    Method.FOUR_POLE: "4-pole",
    Method.CLAMP_ON: "clamp-on",
    Method.LOW_OHM_2W: "low-ohm, 2-wire",
    Method.LOW_OHM_4W: "low-ohm, 4-wire",
    Method.WENNER: "Wenner",
    Method.COUNTER_READ: "counter read",
}


def _reading_result(
    reading: Reading, results: list[Result], judged: bool, limit: float | None
) -> str:
    """The result word for a reading, from what the engine said about it."""
    if results:
        worst = max(results, key=lambda r: r.severity.rank)
        reasons = ", ".join(dict.fromkeys(_RULE_REASONS.get(r.rule, r.rule) for r in results))
        return f"{RESULT_WORDS[worst.severity]}: {reasons}"
    if not judged:
        return "SUPERSEDED: re-tested, see the later reading"
    if limit is None:
        return "RECORDED: no limit applies"
    return RESULT_WORDS[Severity.OK]


def _serial(records: SiteRecords, reading: Reading) -> str:
    """The serial of the instrument a reading was taken with, or "" when none is recorded."""
    instrument = records.instruments.get(reading.instrument_id or "")
    return instrument.serial if instrument else ""


def reading_rows(
    inspection: Inspection,
    records: SiteRecords,
    check: SiteCheck,
    profile: Profile,
    components: dict[str, Component],
) -> tuple[ReadingRow, ...]:
    by_reading: dict[str, list[Result]] = {}
    for result in check.results:
        for reading_id in filter(None, (result.reading_id, *result.reading_ids)):
            by_reading.setdefault(reading_id, []).append(result)
    latest = {group[-1].id for group in series(records.readings).values()}
    count = electrode_count(records, inspection.date)
    rows = []
    mine = [r for r in records.readings if r.inspection_id == inspection.id]
    # Each reading says its soil only where they differ; else the visit's line says it.
    per_reading = len({r.soil for r in mine if r.quantity in EARTH_QUANTITIES}) > 1
    order = {kind: n for n, kind in enumerate(WALKING_ORDER)}
    for reading in sorted(
        mine,
        key=lambda r: (
            order.get(components[r.component_id].kind, 99) if r.component_id in components else 99,
            components[r.component_id].tag if r.component_id in components else "",
            r.taken_at,
        ),
    ):
        component = components.get(reading.component_id)
        limit = profile.limit_for(reading.quantity, count)
        rows.append(
            ReadingRow(
                reading_id=reading.id,
                tag=component.tag if component else "?",
                component=component.kind.label if component else "unknown component",
                quantity=reading.quantity.label,
                method=METHOD_WORDS[reading.method],
                value=format_value(reading.value, reading.quantity, reading.over_range),
                limit=f"≤ {format_value(limit, reading.quantity)}" if limit is not None else "—",
                result=_reading_result(
                    reading, by_reading.get(reading.id, []), reading.id in latest, limit
                ),
                note=reading.note,
                soil=(
                    (reading.soil.value if reading.soil else "not recorded")
                    if per_reading and reading.quantity in EARTH_QUANTITIES
                    else ""
                ),
                instrument=_serial(records, reading),
            )
        )
    return tuple(rows)


#: Readings whose value depends on the state of the ground (common practice).
EARTH_QUANTITIES = frozenset(
    {Quantity.EARTH_ISOLATED, Quantity.EARTH_COMBINED, Quantity.SOIL_RESISTIVITY}
)


def soil_words(inspection: Inspection, readings: list[Reading]) -> str:
    """The ground's state as the earth readings recorded it, or the visit's, in words.

    One state for them all is said once; states that differ are counted, and each
    reading's own is printed in the readings table.
    """
    earth = [r for r in readings if r.quantity in EARTH_QUANTITIES]
    states = Counter(r.soil.value for r in earth if r.soil)
    if not states:
        return inspection.soil.value if inspection.soil else "not recorded"
    unrecorded = sum(1 for r in earth if r.soil is None)
    if len(states) == 1 and not unrecorded:
        (state,) = states
        return f"{state} (recorded with every earth reading)"
    parts = [f"{n} {state}" for state, n in states.most_common()]
    if unrecorded:
        parts.append(f"{unrecorded} not recorded")
    return f"differs by reading: {', '.join(parts)}; see each reading"
