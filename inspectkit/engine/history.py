"""What was on record on a given day: the visits that count, and readings in time order.

Every engine function judges a site "as of" a `today` it is given, so that a check
run with an earlier date sees only what had happened by then, and so that the
rules, the schedule and the trend all agree on which records count.
"""

from __future__ import annotations

from collections import defaultdict
from collections.abc import Iterable
from datetime import date
from operator import attrgetter

from inspectkit.model import (
    Component,
    ComponentKind,
    Finding,
    Inspection,
    InspectionKind,
    InspectionState,
    NotInspected,
    Quantity,
    Reading,
    SiteRecords,
)

#: Kinds of visit that include a visual inspection of the whole system. A
#: post-strike visit looks at the struck parts only, so it does not restart the
#: visual interval (our default); an amendment corrects paperwork, not a visit.
VISUAL_KINDS = frozenset({InspectionKind.VISUAL, InspectionKind.COMPLETE, InspectionKind.INITIAL})
#: Kinds of visit that test everything (IEC 62305-3 Annex E: a complete
#: inspection is a visual one plus the tests; the initial one after installation
#: is complete as well).
COMPLETE_KINDS = frozenset({InspectionKind.COMPLETE, InspectionKind.INITIAL})
#: Kinds of visit that settle a recorded strike: a post-strike visit, or a
#: complete one that tests everything anyway.
STRIKE_SETTLING_KINDS = COMPLETE_KINDS | {InspectionKind.POST_STRIKE}


def as_of(records: SiteRecords, today: date) -> SiteRecords:
    """The site's records as they stood at the end of `today`.

    Visits dated later, and their readings, findings and photos, are left out, and a
    finding resolved by a later visit is shown as still open. A reading belongs to
    its visit: it is kept or left out with it.
    """
    inspections = [i for i in records.inspections if i.date <= today]
    if len(inspections) == len(records.inspections):
        return records
    known = {i.id for i in inspections}
    findings = [
        f
        if f.resolved_by is None or f.resolved_by in known
        else f.model_copy(update={"resolved_by": None})
        for f in records.findings
        if f.inspection_id in known
    ]
    return SiteRecords(
        site=records.site,
        components=records.components,
        inspections=inspections,
        readings=[r for r in records.readings if r.inspection_id in known],
        findings=findings,
        photos=[p for p in records.photos if p.inspection_id in known],
        instruments=records.instruments,
        not_inspected=[n for n in records.not_inspected if n.inspection_id in known],
        geometry=records.geometry,
    )


def open_not_inspected(records: SiteRecords, today: date) -> list[tuple[NotInspected, date]]:
    """Components marked not inspected that no later visit has graded or measured since,
    with the day of the visit that marked them; those still in service, by day.

    A return visit is owed for each.
    """
    dates = {i.id: i.date for i in records.inspections}
    seen: dict[str, date] = {}
    for record in [*records.findings, *records.readings]:
        day = dates.get(record.inspection_id)
        if day is not None and record.component_id:
            seen[record.component_id] = max(day, seen.get(record.component_id, day))
    parts = {c.id: c for c in records.components}
    found = []
    for mark in records.not_inspected:
        day = dates.get(mark.inspection_id)
        part = parts.get(mark.component_id)
        if day is None or part is None or not in_service(part, today):
            continue
        if seen.get(mark.component_id, day) <= day:
            found.append((mark, day))
    return sorted(found, key=lambda item: item[1])


def counts_as_done(inspection: Inspection) -> bool:
    """A visit counts towards the schedule once it is signed or marked finished."""
    return inspection.state is InspectionState.SIGNED or inspection.finished


def in_service(component: Component, on: date) -> bool:
    """Installed by that day (or date unknown) and not yet retired."""
    if component.installed_on is not None and component.installed_on > on:
        return False
    return component.retired_on is None or component.retired_on > on


def electrode_count(records: SiteRecords, on: date) -> int:
    """Earth electrodes in service, for limits that scale with their number (BS 6651 practice)."""
    return sum(
        1
        for c in records.components
        if c.kind is ComponentKind.EARTH_ELECTRODE and in_service(c, on)
    )


#: Readings by (component id, quantity), each list oldest first.
History = dict[tuple[str, Quantity], list[Reading]]


def series(readings: Iterable[Reading]) -> History:
    """Readings grouped by component and quantity, each group oldest first.

    The rules, the schedule and the trends all need this grouping; `check_site`
    makes it once and hands it to each.
    """
    groups: History = defaultdict(list)
    for reading in readings:
        groups[_series_key(reading)].append(reading)
    for group in groups.values():
        group.sort(key=_by_time)
    return dict(groups)


_series_key = attrgetter("component_id", "quantity")
_by_time = attrgetter("taken_at")


def calibration_lapsed(records: SiteRecords, reading: Reading) -> bool:
    """The reading was taken after its instrument's calibration fell due."""
    if reading.instrument_id is None:
        return False
    instrument = records.instruments.get(reading.instrument_id)
    if instrument is None or instrument.calibration_due is None:
        return False
    return reading.taken_at.date() > instrument.calibration_due


def usable(records: SiteRecords, reading: Reading) -> bool:
    """A reading that proves something: a number, not doubtful, from a calibrated instrument."""
    return (
        reading.value is not None
        and not reading.over_range
        and not reading.unreliable
        and not calibration_lapsed(records, reading)
    )


def first_found(finding: Finding, findings: dict[str, Finding], dates: dict[str, date]) -> date:
    """The day a fault was first found: the start of its chain of repeats (`same_as_id`)."""
    seen: set[str] = set()
    day = dates.get(finding.inspection_id, date.max)
    while finding.same_as_id and finding.same_as_id not in seen:
        seen.add(finding.id)
        earlier = findings.get(finding.same_as_id)
        if earlier is None:
            break
        day = min(day, dates.get(earlier.inspection_id, day))
        finding = earlier
    return day
