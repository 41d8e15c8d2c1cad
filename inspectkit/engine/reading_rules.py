"""Rules on a reading's own state: above its limit, taken with a lapsed instrument, marked
doubtful. A reading that proves nothing (doubtful, or lapsed) never counts as a pass.
"""

from __future__ import annotations

from collections.abc import Iterator
from functools import cache

from inspectkit.engine.history import calibration_lapsed, electrode_count
from inspectkit.engine.results import Result
from inspectkit.engine.site_facts import SiteFacts, reading_day, shown_value
from inspectkit.model import Quantity, Reading, Severity
from inspectkit.units import format_value
from inspectkit.wording import counted, was_were

#: Quantities with an acceptance limit, and what to do when a reading is above it.
LIMIT_ACTIONS = {
    Quantity.EARTH_ISOLATED: "check the electrode and its connection, then re-test",
    Quantity.EARTH_COMBINED: "check the test joints and electrodes, then re-test the system",
    Quantity.CONTINUITY: "check the joints and fixings along the conductor, then re-test",
    Quantity.BONDING: "clean and tighten the bond, then re-test",
}


@cache
def _limit_text(limit: float, quantity: Quantity) -> str:
    """A limit as the messages show it; a profile has few, and thousands of readings meet them."""
    return format_value(limit, quantity, digits=3)


def reading_limits(facts: SiteFacts) -> Iterator[Result]:
    """The latest reading of each component above the profile's limit for its quantity."""
    count = electrode_count(facts.records, facts.today)
    limits = {q: facts.profile.limit_for(q, count) for q in LIMIT_ACTIONS}
    for (_, quantity), reading in facts.latest.items():
        limit = limits.get(quantity)
        bound = reading.value
        if limit is None or (not reading.over_range and bound is not None and bound <= limit):
            continue
        if calibration_lapsed(facts.records, reading):
            continue  # it proves nothing either way: `lapsed_calibration` asks for a retake
        about = {**facts.about(reading), "limit": limit}
        tag, shown = about["component_tag"], shown_value(reading)
        limit_text = _limit_text(limit, quantity)
        if reading.over_range and bound is not None and bound < limit:
            yield facts.result(
                Severity.WATCH,
                "limit",
                f"{tag} {quantity.label} showed {shown}, which does not say whether it is "
                f"within the {limit_text} limit: re-test on a higher range.",
                **about,
            )
        elif reading.over_range or (bound is not None and bound > limit):
            yield facts.result(
                Severity.FAIL,
                "limit",
                f"{tag} {quantity.label} {shown} on {reading_day(reading)} is above the "
                f"{limit_text} limit: {LIMIT_ACTIONS[quantity]}.",
                **about,
            )


def lapsed_calibration(facts: SiteFacts) -> Iterator[Result]:
    """Latest readings taken with an instrument whose calibration had lapsed: retake them.

    They prove nothing, so they are neither a pass nor a fail: one result per instrument
    and visit lists them, so that a lapsed tester is one thing to put right, not a
    failure per electrode.
    """
    groups: dict[tuple[str, str], list[Reading]] = {}
    for reading in facts.latest.values():
        if calibration_lapsed(facts.records, reading):
            key = (reading.instrument_id or "", reading.inspection_id)
            groups.setdefault(key, []).append(reading)
    for (instrument_id, _), readings in sorted(groups.items(), key=lambda g: reading_day(g[1][0])):
        instrument = facts.records.instruments[instrument_id]
        due = instrument.calibration_due
        readings.sort(key=lambda r: facts.tag(r.component_id))
        tags = tuple(facts.tag(r.component_id) for r in readings)
        yield facts.result(
            Severity.RETAKE,
            "calibration",
            f"{counted(len(readings), 'reading')} of {reading_day(readings[0])} "
            f"({', '.join(tags)}) {was_were(len(readings))} taken with "
            f"the {instrument.description}, serial {instrument.serial}, whose calibration "
            f"lapsed on {due.isoformat() if due else '?'}: "
            f"{'it proves' if len(readings) == 1 else 'they prove'} nothing; retake "
            f"{'it' if len(readings) == 1 else 'them'} with a calibrated instrument.",
            component_id=readings[0].component_id if len(readings) == 1 else None,
            component_tag=tags[0] if len(readings) == 1 else None,
            reading_ids=tuple(r.id for r in readings),
            listed=tags,
        )


def doubtful_readings(facts: SiteFacts) -> Iterator[Result]:
    """Latest readings the inspector marked doubtful: they do not count as a pass."""
    for reading in facts.latest.values():
        if reading.unreliable:
            yield facts.result(
                Severity.WATCH,
                "unreliable",
                f"{facts.tag(reading.component_id)} {reading.quantity.label} "
                f"{shown_value(reading)} of {reading_day(reading)} is marked doubtful: "
                "re-test it at the next visit.",
                **facts.about(reading),
            )
